package factor_test

import (
	"math"
	"math/rand/v2"
	"runtime"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
)

// smallExposureProblem is an invented market of 24 assets in 3 sectors over
// 40 dates with per-date caps, the three built-in styles on short windows
// and a few missing returns.
func smallExposureProblem(seed uint64) (*mat.Dense, factor.ExposureSettings) {
	const t, n = 40, 24
	rng := rand.New(rand.NewPCG(seed, 11))
	names := []string{"Kilns", "Ferries", "Mints"}
	sec := make([]string, n)
	beta := make([]float64, n)
	caps := mat.NewDense(t, n, nil)
	for j := range sec {
		sec[j] = names[j%3]
		beta[j] = 1 + 0.3*rng.NormFloat64()
		c := math.Exp(7 + rng.NormFloat64())
		for i := 0; i < t; i++ {
			c *= math.Exp(0.01 * rng.NormFloat64())
			caps.Set(i, j, c)
		}
	}
	x := mat.NewDense(t, n, nil)
	for i := 0; i < t; i++ {
		m := 0.01 * rng.NormFloat64()
		f := []float64{0.004 * rng.NormFloat64(), 0.004 * rng.NormFloat64(), 0.004 * rng.NormFloat64()}
		for j := 0; j < n; j++ {
			x.Set(i, j, beta[j]*m+f[j%3]+0.01*(1+float64(j%4))*rng.NormFloat64())
		}
	}
	x.Set(12, 4, math.NaN())
	x.Set(20, 7, math.NaN())
	x.Set(33, 7, math.NaN())
	return x, factor.ExposureSettings{
		Sectors: sec, Caps: caps, VolatilityWindow: 6, MomentumWindow: 10, MomentumSkip: 2,
		Covariance:       ewma.Settings{VolHalfLife: 20, CorrHalfLife: 30},
		SpecificHalfLife: 20,
	}
}

// TestExposureProperties checks what holds by construction: the constraint,
// the normal equations, the standardisation, missing cells, inputs left
// unchanged and bit-identical results whatever GOMAXPROCS.
func TestExposureProperties(t *testing.T) {
	x, s := smallExposureProblem(1)
	x0 := mat.DenseCopyOf(x)
	c0 := mat.DenseCopyOf(s.Caps)
	m, reg, err := factor.FitExposure(x, s)
	require.NoError(t, err)
	require.True(t, sameNaN(x, x0), "returns unchanged")
	require.True(t, mat.Equal(s.Caps, c0), "caps unchanged")
	require.Equal(t, []string{"market", "Ferries", "Kilns", "Mints", "size", "volatility", "momentum"}, reg.FactorNames)
	require.Equal(t, 10, reg.First)
	_, n := x.Dims()
	const tol = 1e-12

	for _, cs := range reg.Dates {
		i := cs.Row
		f := mat.Row(nil, i, reg.FactorReturns)
		// Σ_s c_s f_s = 0 with c_s the sector's cap among the date's assets.
		var sum, scale float64
		for j := 0; j < n; j++ {
			if math.IsNaN(x.At(i, j)) {
				continue
			}
			q := map[string]int{"Ferries": 1, "Kilns": 2, "Mints": 3}[s.Sectors[j]]
			sum += s.Caps.At(i, j) * f[q]
			scale += s.Caps.At(i, j) * math.Abs(f[q])
		}
		require.InDelta(t, 0, sum/scale, tol, "constraint, row %d", i)
		// The constant is in the design: Σ √cap_i·u_i = 0.
		var wu, w float64
		for j := 0; j < n; j++ {
			if u := reg.SpecificReturns.At(i, j); !math.IsNaN(u) {
				wu += math.Sqrt(s.Caps.At(i, j)) * u
				w += math.Sqrt(s.Caps.At(i, j)) * math.Abs(u)
			}
		}
		require.InDelta(t, 0, wu/w, tol, "weighted residuals, row %d", i)
		require.True(t, cs.R2 > 0 && cs.R2 < 1, "R² %v", cs.R2)
		require.Len(t, cs.T, len(reg.FactorNames))
		require.GreaterOrEqual(t, cs.Cond, 1.0)
	}
	require.True(t, math.IsNaN(reg.SpecificReturns.At(20, 7)), "missing return stays missing")
	require.Equal(t, n-1, reg.Dates[20-reg.First].Assets)

	// Loadings as of the last close: styles with cap-weighted mean 0 and
	// root-mean-square deviation 1 under the last row's caps.
	b := m.LoadingsTo(nil)
	tr, _ := x.Dims()
	for c := 4; c < 7; c++ {
		var sw, sx, ss float64
		for j := 0; j < n; j++ {
			cp := s.Caps.At(tr-1, j)
			sw += cp
			sx += cp * b.At(j, c)
			ss += b.At(j, c) * b.At(j, c)
		}
		require.InDelta(t, 0, sx/sw, tol, reg.FactorNames[c])
		require.InDelta(t, 1, ss/float64(n), tol, reg.FactorNames[c])
	}

	// Bit-identical on one core and on all.
	prev := runtime.GOMAXPROCS(1)
	m1, reg1, err := factor.FitExposure(x, s)
	runtime.GOMAXPROCS(prev)
	require.NoError(t, err)
	require.True(t, mat.Equal(reg.FactorReturns, reg1.FactorReturns) || sameNaN(reg.FactorReturns, reg1.FactorReturns))
	require.True(t, sameNaN(reg.SpecificReturns, reg1.SpecificReturns))
	require.Equal(t, m.SpecificVariancesTo(nil), m1.SpecificVariancesTo(nil))
	require.True(t, mat.Equal(m.FactorCovarianceTo(nil), m1.FactorCovarianceTo(nil)))
}

// sameNaN reports whether a and b are equal bit for bit, NaN matching NaN.
func sameNaN(a, b *mat.Dense) bool {
	ra, rb := a.RawMatrix().Data, b.RawMatrix().Data
	if len(ra) != len(rb) {
		return false
	}
	for i, v := range ra {
		if math.Float64bits(v) != math.Float64bits(rb[i]) {
			return false
		}
	}
	return true
}

// TestExposureNoLookAhead: a date's exposures use only earlier returns.
// Adding c to every return of row r0 leaves the rows before it bit for bit
// and, at r0, moves only the market's return, by exactly c (the exposures
// of r0 did not see the change and the constant is in the design).
func TestExposureNoLookAhead(t *testing.T) {
	x, s := smallExposureProblem(2)
	_, base, err := factor.FitExposure(x, s)
	require.NoError(t, err)
	const r0, c = 25, 0.013
	y := mat.DenseCopyOf(x)
	_, n := y.Dims()
	for j := 0; j < n; j++ {
		y.Set(r0, j, y.At(r0, j)+c)
	}
	_, moved, err := factor.FitExposure(y, s)
	require.NoError(t, err)
	_, k := base.FactorReturns.Dims()
	require.True(t, sameNaN(mat.DenseCopyOf(base.FactorReturns.Slice(0, r0, 0, k)), mat.DenseCopyOf(moved.FactorReturns.Slice(0, r0, 0, k))))
	fb, fm := mat.Row(nil, r0, base.FactorReturns), mat.Row(nil, r0, moved.FactorReturns)
	require.InDelta(t, fb[0]+c, fm[0], 1e-14)
	require.InDeltaSlice(t, fb[1:], fm[1:], 1e-14)
	require.InDeltaSlice(t, mat.Row(nil, r0, base.SpecificReturns)[:4], mat.Row(nil, r0, moved.SpecificReturns)[:4], 1e-14)
	// A later date's exposures do see it: the volatility style changes.
	require.NotEqual(t, base.FactorReturns.At(r0+1, 5), moved.FactorReturns.At(r0+1, 5))
}

// TestExposureSpecific checks D against the rule written out naively:
// d̂_i = Σ_t w_t u_ti² / Σ_t w_t over the observed dates, weights
// 0.5^(age/h) (ewma.Weights), then d_i = (1 − λ)·d̂_i + λ·mean of its group
// for a fixed λ, floored at 1 % of the median (Fit's rule).
func TestExposureSpecific(t *testing.T) {
	x, s := smallExposureProblem(4)
	s.SpecificShrink = 0.4
	m, reg, err := factor.FitExposure(x, s)
	require.NoError(t, err)
	tr, n := x.Dims()
	raw := make([]float64, n)
	for j := 0; j < n; j++ {
		var sw, su float64
		for i := reg.First; i < tr; i++ {
			u := reg.SpecificReturns.At(i, j)
			if math.IsNaN(u) {
				continue
			}
			w := math.Pow(0.5, float64(tr-1-i)/s.SpecificHalfLife)
			sw += w
			su += w * u * u
		}
		raw[j] = su / sw
	}
	mean := map[string]float64{}
	count := map[string]float64{}
	for j, g := range s.Sectors {
		mean[g] += raw[j]
		count[g]++
	}
	want := make([]float64, n)
	for j, g := range s.Sectors {
		want[j] = 0.6*raw[j] + 0.4*mean[g]/count[g]
	}
	got := m.SpecificVariancesTo(nil)
	for j := range want {
		require.InDelta(t, 1, got[j]/want[j], 1e-12, "asset %d", j)
	}
	info := m.Info()
	require.Equal(t, []float64{0.4, 0.4, 0.4}, info.Specific.Shrink)
	require.Equal(t, 0, info.Specific.Floored)
}

// TestExposureBadInput: bad data returns an error wrapping the sentinel and
// naming the place; shape misuse panics with mat.ErrShape.
func TestExposureBadInput(t *testing.T) {
	for _, c := range []struct {
		name  string
		edit  func(x *mat.Dense, s *factor.ExposureSettings)
		err   error
		words []string
	}{
		{name: "empty sector", edit: func(x *mat.Dense, s *factor.ExposureSettings) {
			for j, g := range s.Sectors {
				if g == "Mints" {
					x.Set(17, j, math.NaN())
				}
			}
		}, err: factor.ErrEmptySector, words: []string{`"Mints"`, "date 17"}},
		{name: "Inf return", edit: func(x *mat.Dense, _ *factor.ExposureSettings) { x.Set(3, 5, math.Inf(1)) }, err: factor.ErrNonFinite, words: []string{"date 3", "asset 5"}},
		{name: "return at -100%", edit: func(x *mat.Dense, _ *factor.ExposureSettings) { x.Set(3, 5, -1) }, err: factor.ErrNonFinite, words: []string{"date 3"}},
		{name: "Inf characteristic", edit: func(x *mat.Dense, s *factor.ExposureSettings) {
			v := make([]float64, 24)
			v[9] = math.Inf(-1)
			s.Characteristics = []factor.Characteristic{{Name: "leverage", Static: v}}
		}, err: factor.ErrNonFinite, words: []string{`"leverage"`, "asset 9"}},
		{name: "constant characteristic", edit: func(x *mat.Dense, s *factor.ExposureSettings) {
			s.Characteristics = []factor.Characteristic{{Name: "flat", Static: make([]float64, 24)}}
		}, err: factor.ErrSingular, words: []string{`"flat"`}},
		{name: "negative cap", edit: func(x *mat.Dense, s *factor.ExposureSettings) { s.Caps.(*mat.Dense).Set(8, 2, -5) }, err: factor.ErrCap, words: []string{"date 8", "asset 2"}},
		{name: "no half-life", edit: func(x *mat.Dense, s *factor.ExposureSettings) { s.SpecificHalfLife = 0 }, err: factor.ErrSettings},
		{name: "no covariance half-life", edit: func(x *mat.Dense, s *factor.ExposureSettings) { s.Covariance.VolHalfLife = 0 }, err: factor.ErrSettings},
		{name: "winsor below 1", edit: func(x *mat.Dense, s *factor.ExposureSettings) { s.Winsor = 0.5 }, err: factor.ErrSettings},
		{name: "skip beyond window", edit: func(x *mat.Dense, s *factor.ExposureSettings) { s.MomentumSkip = 10 }, err: factor.ErrSettings},
		{name: "look-back too long", edit: func(x *mat.Dense, s *factor.ExposureSettings) { s.MomentumWindow = 39 }, err: factor.ErrTooFewObs},
		{name: "duplicate factor name", edit: func(x *mat.Dense, s *factor.ExposureSettings) {
			s.Characteristics = []factor.Characteristic{{Name: "size", Static: make([]float64, 24)}}
		}, err: factor.ErrSettings, words: []string{`"size"`}},
		{name: "empty sector label", edit: func(x *mat.Dense, s *factor.ExposureSettings) { s.Sectors[0] = "" }, err: factor.ErrSettings},
	} {
		t.Run(c.name, func(t *testing.T) {
			x, s := smallExposureProblem(5)
			c.edit(x, &s)
			_, _, err := factor.FitExposure(x, s)
			require.ErrorIs(t, err, c.err)
			for _, w := range c.words {
				require.True(t, strings.Contains(err.Error(), w), "%q should name %s", err, w)
			}
		})
	}
	x, s := smallExposureProblem(5)
	for name, edit := range map[string]func(s *factor.ExposureSettings){
		"sectors":     func(s *factor.ExposureSettings) { s.Sectors = s.Sectors[:3] },
		"caps":        func(s *factor.ExposureSettings) { s.Caps = mat.NewDense(3, 24, nil) },
		"static caps": func(s *factor.ExposureSettings) { s.Caps, s.StaticCaps = nil, make([]float64, 5) },
		"characteristic": func(s *factor.ExposureSettings) {
			s.Characteristics = []factor.Characteristic{{Name: "q", Static: []float64{1}}}
		},
		"groups": func(s *factor.ExposureSettings) { s.Groups = []string{"a"} },
		"assets": func(s *factor.ExposureSettings) { s.Assets = []string{"a"} },
		"characteristicT": func(s *factor.ExposureSettings) {
			s.Characteristics = []factor.Characteristic{{Name: "q", Values: mat.NewDense(2, 24, nil)}}
		},
	} {
		ss := s
		ss.Sectors = append([]string(nil), s.Sectors...)
		edit(&ss)
		require.PanicsWithValue(t, mat.ErrShape, func() { _, _, _ = factor.FitExposure(x, ss) }, name)
	}
}

// TestExposureEdgeCases: one sector (no sector factor: it would be the market),
// static caps, no styles at all, and an asset with no cap on a date.
func TestExposureEdgeCases(t *testing.T) {
	x, s := smallExposureProblem(6)
	one := s
	one.Sectors = make([]string, 24)
	for j := range one.Sectors {
		one.Sectors[j] = "All"
	}
	_, reg, err := factor.FitExposure(x, one)
	require.NoError(t, err)
	require.Equal(t, []string{"market", "size", "volatility", "momentum"}, reg.FactorNames)
	_, regS, err := factor.FitExposure(x, s)
	require.NoError(t, err)
	require.Less(t, reg.Dates[5].R2, regS.Dates[5].R2, "dropping the sectors cannot raise R²")

	bare := s
	bare.NoSize, bare.VolatilityWindow, bare.MomentumWindow = true, -1, -1
	bare.Caps, bare.StaticCaps = nil, mat.Row(nil, 0, s.Caps)
	m, reg, err := factor.FitExposure(x, bare)
	require.NoError(t, err)
	require.Equal(t, 0, reg.First)
	require.Equal(t, 4, m.NumFactors())

	gap := s
	caps := mat.DenseCopyOf(s.Caps)
	caps.Set(30, 11, math.NaN())
	gap.Caps = caps
	_, reg, err = factor.FitExposure(x, gap)
	require.NoError(t, err)
	require.True(t, math.IsNaN(reg.SpecificReturns.At(30, 11)), "no cap: out of the date's regression")
	require.Equal(t, 23, reg.Dates[30-reg.First].Assets)
}
