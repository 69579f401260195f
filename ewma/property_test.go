package ewma

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

func minEigen(t *testing.T, a mat.Symmetric) float64 {
	t.Helper()
	var es mat.EigenSym
	require.True(t, es.Factorize(a, false))
	return es.Values(nil)[0]
}

// naiveCov is the definition of the package doc, written as plainly as
// possible: for each pair, the dates both are present, the renormalised
// weights, the pair's means.
func naiveCov(x mat.Matrix, w []float64, demean bool) *mat.SymDense {
	t, n := x.Dims()
	out := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			var sw, mi, mj float64
			for k := 0; k < t; k++ {
				a, b := x.At(k, i), x.At(k, j)
				if math.IsNaN(a) || math.IsNaN(b) {
					continue
				}
				sw += w[k]
				mi += w[k] * a
				mj += w[k] * b
			}
			mi, mj = mi/sw, mj/sw
			if !demean {
				mi, mj = 0, 0
			}
			var c float64
			for k := 0; k < t; k++ {
				a, b := x.At(k, i), x.At(k, j)
				if math.IsNaN(a) || math.IsNaN(b) {
					continue
				}
				c += w[k] * (a - mi) * (b - mj)
			}
			out.SetSym(i, j, c/sw)
		}
	}
	return out
}

func TestCovarianceProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 9))
	for _, tc := range []struct {
		name   string
		t, n   int
		gap    float64
		demean bool
		tol    float64
	}{
		{name: "one asset", t: 30, n: 1, tol: 1e-13},
		{name: "T > N complete", t: 60, n: 8, tol: 1e-13},
		{name: "T < N complete", t: 12, n: 40, demean: true, tol: 1e-13},
		{name: "T > N gaps", t: 80, n: 10, gap: 0.2, tol: 1e-13},
		{name: "T > N gaps demean", t: 80, n: 10, gap: 0.2, demean: true, tol: 1e-12},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := randomPanel(rng, tc.t, tc.n, tc.gap)
			orig := mat.DenseCopyOf(x)
			w, err := Weights(nil, tc.t, 15)
			require.NoError(t, err)
			worig := append([]float64(nil), w...)
			o := &Options{Demean: tc.demean}
			var c mat.SymDense
			_, rep, err := Covariance(&c, x, w, o)
			require.NoError(t, err)
			require.True(t, sameBits(orig, x), "input unchanged")
			require.Equal(t, worig, w, "weights unchanged")
			if rep.Repair == nil {
				// The definition, pair by pair.
				relClose(t, naiveCov(x, w, tc.demean), &c, tc.tol, "definition")
			}
			require.GreaterOrEqual(t, minEigen(t, &c), -1e-15*mat.Trace(&c), "PSD")
			require.Equal(t, tc.gap > 0, rep.Checked)

			// dst reuse gives the same answer; scaling the weights changes nothing.
			scaled := make([]float64, len(w))
			for i := range w {
				scaled[i] = 3 * w[i]
			}
			var c2 mat.SymDense
			_, _, err = Covariance(&c2, x, scaled, o)
			require.NoError(t, err)
			relClose(t, &c, &c2, 1e-13, "weights scale-free")
			_, _, err = Covariance(&c2, x, w, o)
			require.NoError(t, err)
			require.True(t, mat.Equal(&c, &c2), "dst reuse")

			var r mat.SymDense
			_, _, err = Correlation(&r, x, w, o)
			require.NoError(t, err)
			for i := 0; i < tc.n; i++ {
				require.Equal(t, 1.0, r.At(i, i))
				for j := 0; j < tc.n; j++ {
					require.LessOrEqual(t, math.Abs(r.At(i, j)), 1+1e-12)
				}
			}
			require.GreaterOrEqual(t, minEigen(t, &r), -1e-13*float64(tc.n), "PSD")
			if tc.gap == 0 {
				// Without gaps, the correlation is D^-½ Σ D^-½.
				for i := 0; i < tc.n; i++ {
					for j := 0; j < tc.n; j++ {
						require.InDelta(t, c.At(i, j)/math.Sqrt(c.At(i, i)*c.At(j, j)), r.At(i, j), 1e-13)
					}
				}
			}

			v, err := Variances(nil, x, w, o)
			require.NoError(t, err)
			for i := range v {
				require.InDelta(t, c.At(i, i), v[i], 1e-13*v[i], "diagonal = variance")
			}
		})
	}
}

// TestCompleteCase: CompleteCase equals dropping the rows with a gap (and
// their weights) before estimating.
func TestCompleteCase(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 4))
	x := randomPanel(rng, 60, 5, 0.05)
	w, _ := Weights(nil, 60, 12)
	var keep []int
	for i := 0; i < 60; i++ {
		ok := true
		for j := 0; j < 5; j++ {
			ok = ok && !math.IsNaN(x.At(i, j))
		}
		if ok {
			keep = append(keep, i)
		}
	}
	require.Less(t, len(keep), 60, "the draw has gaps")
	sub := mat.NewDense(len(keep), 5, nil)
	sw := make([]float64, len(keep))
	for k, i := range keep {
		sub.SetRow(k, x.RawRowView(i))
		sw[k] = w[i]
	}
	o := &Options{CompleteCase: true, Demean: true}
	var a, b mat.SymDense
	_, rep, err := Covariance(&a, x, w, o)
	require.NoError(t, err)
	require.Equal(t, len(keep), rep.Used)
	require.False(t, rep.Checked, "complete-case is PSD by construction")
	_, _, err = Covariance(&b, sub, sw, &Options{Demean: true})
	require.NoError(t, err)
	relClose(t, &b, &a, 1e-14, "complete case")
}

// TestPairwiseRepair builds a pairwise matrix that cannot be a covariance:
// assets 0 and 1 move together on one stretch, 1 and 2 on another, and 0 and
// 2 against each other on a third, so the pairwise correlations are near
// (+1, +1, −1). The repair must give a PSD matrix with the same diagonal and
// report it.
func TestPairwiseRepair(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	nan := math.NaN()
	x := mat.NewDense(60, 3, nil)
	for i := 0; i < 60; i++ {
		z := rng.NormFloat64() * 0.01
		e := func() float64 { return rng.NormFloat64() * 0.001 }
		switch {
		case i < 20:
			x.SetRow(i, []float64{z + e(), z + e(), nan})
		case i < 40:
			x.SetRow(i, []float64{nan, z + e(), z + e()})
		default:
			x.SetRow(i, []float64{z + e(), nan, -z + e()})
		}
	}
	var c, r mat.SymDense
	_, rep, err := Covariance(&c, x, nil, nil)
	require.NoError(t, err)
	require.NotNil(t, rep.Repair)
	require.Less(t, rep.Repair.MinEigenvalue, 0.0)
	require.Equal(t, 1, rep.Repair.Clipped)
	require.Greater(t, rep.Repair.MaxChange, 0.0)
	require.GreaterOrEqual(t, minEigen(t, &c), -1e-15*mat.Trace(&c))
	v, err := Variances(nil, x, nil, nil)
	require.NoError(t, err)
	for i := range v {
		require.InDelta(t, v[i], c.At(i, i), 1e-15, "diagonal kept")
	}
	_, rep, err = Correlation(&r, x, nil, nil)
	require.NoError(t, err)
	require.NotNil(t, rep.Repair)
	for i := 0; i < 3; i++ {
		require.InDelta(t, 1, r.At(i, i), 1e-14)
	}
	require.GreaterOrEqual(t, minEigen(t, &r), -1e-14)
}

func TestBadInput(t *testing.T) {
	nan := math.NaN()
	good := mat.NewDense(4, 2, []float64{0.01, 0.02, -0.01, 0.0, 0.02, -0.02, 0.0, 0.01})
	var c mat.SymDense
	for _, tc := range []struct {
		name string
		x    *mat.Dense
		w    []float64
		o    *Options
		err  error
	}{
		{name: "Inf value", x: mat.NewDense(3, 2, []float64{0.01, 0, math.Inf(1), 0, 0.02, 0.01}), err: ErrNonFinite},
		{name: "all-missing column", x: mat.NewDense(3, 2, []float64{0.01, nan, 0.02, nan, 0.03, nan}), err: ErrAllMissing},
		{name: "one observation", x: mat.NewDense(3, 2, []float64{0.01, 0.01, 0.02, nan, 0.03, nan}), err: ErrTooFewObs},
		{name: "pair never together", x: mat.NewDense(4, 2, []float64{0.01, nan, 0.02, nan, nan, 0.01, nan, 0.02}), err: ErrTooFewObs},
		{name: "one row", x: mat.NewDense(1, 2, []float64{0.01, 0.02}), err: ErrTooFewObs},
		{name: "negative weight", x: good, w: []float64{1, -1, 1, 1}, err: ErrWeight},
		{name: "NaN weight", x: good, w: []float64{1, nan, 1, 1}, err: ErrWeight},
		{name: "below minimum n_eff", x: good, o: &Options{MinEffectiveObs: 10}, err: ErrEffectiveObs},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, _, err := Covariance(&c, tc.x, tc.w, tc.o)
			require.ErrorIs(t, err, tc.err)
			var e *Error
			require.ErrorAs(t, err, &e)
			require.NotEmpty(t, err.Error())
			if tc.name != "pair never together" {
				_, err = Variances(nil, tc.x, tc.w, tc.o)
				require.ErrorIs(t, err, tc.err)
			}
		})
	}
	constant := mat.NewDense(4, 2, []float64{0.01, 0, -0.01, 0, 0.02, 0, 0.0, 0})
	_, _, err := Correlation(&c, constant, nil, nil)
	require.ErrorIs(t, err, ErrZeroVariance)
	_, _, err = Covariance(&c, constant, nil, nil)
	require.NoError(t, err, "a constant column has a covariance, zero")
	require.Zero(t, c.At(1, 1))
	_, _, err = Estimate(&c, good, Settings{VolHalfLife: 5})
	require.ErrorIs(t, err, ErrHalfLife)
	_, _, err = NeweyWest(&c, good, nil, 4, nil)
	require.ErrorIs(t, err, ErrLags)
	_, _, err = NeweyWest(&c, good, nil, -2, nil)
	require.ErrorIs(t, err, ErrLags)
}

func TestShapePanics(t *testing.T) {
	x := mat.NewDense(5, 3, nil)
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _, _ = Covariance(mat.NewSymDense(2, nil), x, nil, nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _, _ = Correlation(&mat.SymDense{}, x, make([]float64, 4), nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _, _ = NeweyWest(mat.NewSymDense(4, nil), x, nil, 1, nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = Variances(make([]float64, 2), x, nil, nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = Means(nil, x, make([]float64, 6), nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = Means(make([]float64, 4), x, nil, nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _, _ = Estimate(mat.NewSymDense(4, nil), x, Settings{VolHalfLife: 1, CorrHalfLife: 1}) })
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = Weights(make([]float64, 3), 4, 10) })
}

// TestNilDst: a nil dst is allocated and an empty one sized, each giving the
// same numbers as a dst of the right size (the gonum convention of
// DEVELOPERS.md), for every function and method that fills a dst.
func TestNilDst(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	x := randomPanel(rng, 60, 4, 0.1)
	w, err := Weights(nil, 60, 20)
	require.NoError(t, err)
	o := &Options{Demean: true}
	sym := map[string]func(dst *mat.SymDense) (*mat.SymDense, *Report, error){
		"Covariance":  func(d *mat.SymDense) (*mat.SymDense, *Report, error) { return Covariance(d, x, w, o) },
		"Correlation": func(d *mat.SymDense) (*mat.SymDense, *Report, error) { return Correlation(d, x, w, o) },
		"NeweyWest":   func(d *mat.SymDense) (*mat.SymDense, *Report, error) { return NeweyWest(d, x, w, 2, o) },
		"Estimate": func(d *mat.SymDense) (*mat.SymDense, *Report, error) {
			return Estimate(d, x, Settings{VolHalfLife: 10, CorrHalfLife: 30, Options: *o})
		},
	}
	r, err := NewRecursive(4, RecursiveSettings{HalfLife: 20, Options: *o})
	require.NoError(t, err)
	for i := 0; i < 60; i++ {
		require.NoError(t, r.Update(x.RawRowView(i)))
	}
	sym["Recursive.CovarianceTo"] = r.CovarianceTo
	sym["Recursive.CorrelationTo"] = r.CorrelationTo
	for name, f := range sym {
		t.Run(name, func(t *testing.T) {
			sized := mat.NewSymDense(4, nil)
			got, _, err := f(sized)
			require.NoError(t, err)
			require.Same(t, sized, got, "a dst of the right size is filled and returned")
			alloc, _, err := f(nil)
			require.NoError(t, err)
			require.Equal(t, sized.RawSymmetric().Data, alloc.RawSymmetric().Data)
			var empty mat.SymDense
			got, _, err = f(&empty)
			require.NoError(t, err)
			require.Same(t, &empty, got)
			require.Equal(t, sized.RawSymmetric().Data, empty.RawSymmetric().Data)
			require.PanicsWithValue(t, mat.ErrShape, func() { _, _, _ = f(mat.NewSymDense(3, nil)) })
		})
	}
	vec := map[string]func(dst []float64) ([]float64, error){
		"Means":                 func(d []float64) ([]float64, error) { return Means(d, x, w, o) },
		"Variances":             func(d []float64) ([]float64, error) { return Variances(d, x, w, o) },
		"Recursive.VariancesTo": r.VariancesTo,
		"Weights":               func(d []float64) ([]float64, error) { return Weights(d, 4, 10) },
		"DecayWeights":          func(d []float64) ([]float64, error) { return DecayWeights(d, 4, 0.9) },
		"RecursionWeights":      func(d []float64) ([]float64, error) { return RecursionWeights(d, 4, 0.9) },
	}
	for name, f := range vec {
		t.Run(name, func(t *testing.T) {
			sized := make([]float64, 4)
			got, err := f(sized)
			require.NoError(t, err)
			require.Same(t, &sized[0], &got[0])
			alloc, err := f(nil)
			require.NoError(t, err)
			require.Equal(t, sized, alloc)
			alloc, err = f([]float64{})
			require.NoError(t, err)
			require.Equal(t, sized, alloc)
			require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = f(make([]float64, 5)) })
		})
	}
}

// TestEstimate checks Σ = D·C·D against its parts, and that with equal
// half-lives and complete data it is the covariance itself.
func TestEstimate(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 8))
	x := randomPanel(rng, 120, 6, 0.1)
	s := Settings{VolHalfLife: 20, CorrHalfLife: 60, Options: Options{Demean: true}}
	var sig, c mat.SymDense
	_, rep, err := Estimate(&sig, x, s)
	require.NoError(t, err)
	wv, _ := Weights(nil, 120, 20)
	wc, _ := Weights(nil, 120, 60)
	v, err := Variances(nil, x, wv, &s.Options)
	require.NoError(t, err)
	_, _, err = Correlation(&c, x, wc, &s.Options)
	require.NoError(t, err)
	for i := 0; i < 6; i++ {
		for j := 0; j < 6; j++ {
			require.InDelta(t, math.Sqrt(v[i]*v[j])*c.At(i, j), sig.At(i, j), 1e-14)
		}
	}
	require.InDelta(t, EffectiveObs(wv), rep.VolEffectiveObs, 1e-12)
	require.Greater(t, rep.EffectiveObs, rep.VolEffectiveObs)

	full := randomPanel(rng, 120, 6, 0)
	var cov mat.SymDense
	for _, lags := range []int{0, 3, AutoLags} {
		same := Settings{VolHalfLife: 30, CorrHalfLife: 30, NeweyWestLags: lags}
		_, _, err = Estimate(&sig, full, same)
		require.NoError(t, err)
		w, _ := Weights(nil, 120, 30)
		_, rep, err = NeweyWest(&cov, full, w, lags, nil)
		require.NoError(t, err)
		relClose(t, &cov, &sig, 1e-12, "equal half-lives")
		if lags == AutoLags {
			// ⌊4(120/100)^(2/9)⌋ = 4.
			require.Equal(t, 4, rep.NeweyWestLags)
		}
	}
}

// TestNeweyWestLag: the lag rule ⌊4(T/100)^(2/9)⌋ of statsmodels 0.13.5
// S_hac_simple; T = 252 gives 4 (REFERENCES.md).
func TestNeweyWestLag(t *testing.T) {
	for _, tc := range []struct{ t, want int }{{252, 4}, {100, 4}, {1000, 6}, {20, 2}, {1, 1}, {0, 0}} {
		require.Equal(t, tc.want, NeweyWestLag(tc.t), "T=%d", tc.t)
	}
}

// TestNeweyWestWeighted: with weights, the adjustment equals its definition
// Γ_j = Σ_t w_t y_t y_{t−j}ᵀ / Σw written as L separate sums.
func TestNeweyWestWeighted(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	x := randomPanel(rng, 50, 3, 0)
	w, _ := Weights(nil, 50, 10)
	var got mat.SymDense
	_, _, err := NeweyWest(&got, x, w, 3, &Options{Demean: true})
	require.NoError(t, err)
	mu, _ := Means(nil, x, w, nil)
	want := naiveCov(x, w, true)
	for j := 1; j <= 3; j++ {
		b := 1 - float64(j)/4
		for p := 0; p < 3; p++ {
			for q := p; q < 3; q++ {
				var g float64
				for s := j; s < 50; s++ {
					g += w[s] * ((x.At(s, p)-mu[p])*(x.At(s-j, q)-mu[q]) + (x.At(s, q)-mu[q])*(x.At(s-j, p)-mu[p]))
				}
				want.SetSym(p, q, want.At(p, q)+b*g)
			}
		}
	}
	relClose(t, want, &got, 1e-12, "weighted Newey–West")
}

// TestDeterministic: bit-identical output for any GOMAXPROCS is a property
// of internal/dense; here the same call twice must agree bit for bit.
func TestDeterministic(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	x := randomPanel(rng, 300, 250, 0.05)
	w, _ := Weights(nil, 300, 40)
	var a, b mat.SymDense
	_, _, err := Covariance(&a, x, w, &Options{Demean: true})
	require.NoError(t, err)
	_, _, err = Covariance(&b, x, w, &Options{Demean: true})
	require.NoError(t, err)
	require.True(t, mat.Equal(&a, &b))
}

// sameBits compares two matrices bit for bit, so that NaN equals NaN.
func sameBits(a, b mat.Matrix) bool {
	r, c := a.Dims()
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			if math.Float64bits(a.At(i, j)) != math.Float64bits(b.At(i, j)) {
				return false
			}
		}
	}
	return true
}
