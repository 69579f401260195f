package riskmodel

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/internal/fuzzcheck"
	"github.com/riskmodel/riskmodel/shrink"
)

// FuzzBuild decodes arbitrary bytes into a small panel (up to 24 dates × 6
// assets, with gaps) and build options, and checks that Build either returns
// an error wrapping an exported sentinel of the library, with the sentinel's
// text in its message, or a model whose covariance is finite, symmetric and
// positive semidefinite. The seed corpus runs in every `go test`.

var buildSentinels = []error{ErrMethod, ErrEmpty, ErrDuplicate, ErrImpossible, ErrNonFinite,
	ErrUnsorted, ErrUnknownAsset, ErrPeriodsPerYear, ErrInvalidModel,
	ewma.ErrHalfLife, ewma.ErrDecay, ewma.ErrLength, ewma.ErrWeight, ewma.ErrNonFinite,
	ewma.ErrAllMissing, ewma.ErrTooFewObs, ewma.ErrEffectiveObs, ewma.ErrZeroVariance, ewma.ErrLags,
	shrink.ErrNonFinite, shrink.ErrTooFewObs, shrink.ErrZeroVariance, shrink.ErrWeights,
	shrink.ErrNotConverged, shrink.ErrBadParameter, shrink.ErrNoEigen, shrink.ErrRankDeficient, shrink.ErrOverflow,
	factor.ErrNonFinite, factor.ErrNoObservations, factor.ErrEmptyDate, factor.ErrTooManyFactors,
	factor.ErrTooFewObs, factor.ErrSettings, factor.ErrNotPSD, factor.ErrSpecificVariance,
	factor.ErrPrevious, factor.ErrSingular, factor.ErrEmptySector, factor.ErrCap}

// fuzzBuildPanel decodes a T×N panel of returns in [−0.5, 0.77] (0xff is a
// missing return).
func fuzzBuildPanel(b *fuzzcheck.Bytes) *Panel {
	t, n := 2+int(b.Next()%23), 1+int(b.Next()%6)
	dates := make([]Date, t)
	for i := range dates {
		dates[i] = DateOf(2024, 1, 1).AddDays(i)
	}
	assets := make([]string, n)
	r := mat.NewDense(t, n, nil)
	for j := range assets {
		assets[j] = "QX" + string(rune('A'+j))
		for i := 0; i < t; i++ {
			c := b.Next()
			v := (float64(c) - 128) / 250
			if c == 0xff {
				v = math.NaN()
			}
			r.Set(i, j, v)
		}
	}
	p, err := NewPanel(dates, assets, r, 252)
	if err != nil {
		panic(err)
	}
	return p
}

func FuzzBuild(f *testing.F) {
	for k := range Methods {
		seed := []byte{byte(k), 3, 2, 10, 4, 20, 16}
		for i := 0; i < 160; i++ {
			seed = append(seed, byte(i*37+k*11))
		}
		f.Add(seed)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		method := Methods[int(b.Next())%len(Methods)]
		opts := &BuildOptions{
			Method: method,
			Window: int(b.Next() % 30),
			MinObs: int(b.Next() % 6),
			Factor: FactorOptions{K: int(b.Next() % 4)},
			EWMA:   EWMAOptions{VolHalfLife: float64(b.Next() % 30), CorrHalfLife: float64(b.Next() % 30)},
		}
		if c := b.Next(); c%4 == 0 {
			opts.EWMA.NeweyWestLags = int(c/4%3) - 1
		}
		p := fuzzBuildPanel(&b)
		sectors, caps := map[string]string{}, map[string]float64{}
		for _, a := range p.assets {
			sectors[a] = string(rune('A' + b.Next()%2))
			caps[a] = float64(b.Next()) * 1e7
		}
		opts.Sectors, opts.MarketCaps = sectors, caps
		tt, _ := p.Dims()
		m, _, err := Build(p, p.Date(tt-1), opts)
		if err != nil {
			for _, s := range buildSentinels {
				if errors.Is(err, s) {
					if !strings.Contains(err.Error(), s.Error()) {
						t.Fatalf("message %q lacks %q", err, s)
					}
					return
				}
			}
			t.Fatalf("error wraps no sentinel: %T %v", err, err)
		}
		c := m.Covariance()
		n := c.SymmetricDim()
		if n != len(m.Assets) || n == 0 {
			t.Fatalf("covariance of %d assets for %d names", n, len(m.Assets))
		}
		d := mat.NewSymDense(n, nil)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				v := c.At(i, j)
				if math.IsNaN(v) || math.IsInf(v, 0) || v != c.At(j, i) {
					t.Fatalf("%s: entry (%d,%d) = %v, transposed %v", method, i, j, v, c.At(j, i))
				}
				if j >= i {
					d.SetSym(i, j, v)
				}
			}
		}
		var e mat.EigenSym
		if !e.Factorize(d, true) {
			t.Fatalf("eigendecomposition failed")
		}
		vals := e.Values(nil)
		if scale := math.Max(math.Abs(vals[0]), math.Abs(vals[n-1])); vals[0] < -1e-10*scale {
			t.Fatalf("%s: not PSD: eigenvalues %v", method, vals)
		}
	})
}
