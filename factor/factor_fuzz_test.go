package factor

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/fuzzcheck"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/shrink"
)

// The fuzz targets decode arbitrary bytes into valid shapes (shape panics are
// documented programmer errors) and check that Fit, FitExposure and NewModel
// either return an error wrapping an exported sentinel (this package's, or
// ewma's and shrink's, whose estimators Fit runs), with the sentinel's text in
// the message, or a model whose covariance is finite, symmetric and positive
// semidefinite. The seed corpora run in every `go test`.

var sentinels = []error{ErrNonFinite, ErrNoObservations, ErrEmptyDate, ErrTooManyFactors,
	ErrTooFewObs, ErrSettings, ErrNotPSD, ErrSpecificVariance, ErrPrevious, ErrSingular, ErrEmptySector, ErrCap,
	ewma.ErrHalfLife, ewma.ErrNonFinite, ewma.ErrAllMissing, ewma.ErrTooFewObs, ewma.ErrZeroVariance,
	ewma.ErrEffectiveObs, ewma.ErrLags, ewma.ErrWeight,
	shrink.ErrNonFinite, shrink.ErrTooFewObs, shrink.ErrZeroVariance, shrink.ErrNoEigen, shrink.ErrOverflow}

// specials: the top byte codes decode to NaN (missing) and ±Inf
// (fuzzcheck.Bytes.Value); the seed corpora depend on it.
const specials = 3

// fuzzMatrix decodes a T×N matrix with 2 ≤ T ≤ 17, 2 ≤ N ≤ 9.
func fuzzMatrix(b *fuzzcheck.Bytes) *mat.Dense {
	t, n := 2+int(b.Next()%16), 2+int(b.Next()%8)
	return b.Dense(t, n, b.Scale(-6, 8), specials)
}

func checkErr(t *testing.T, err error) {
	t.Helper()
	fuzzcheck.Err(t, err, sentinels)
}

// checkModel fails unless the model's dense covariance is finite, symmetric
// and positive semidefinite (eigenvalues ≥ −1e−10 · max|λ|), and its
// specific variances are positive.
func checkModel(t *testing.T, m *Model) {
	t.Helper()
	c := m.CovarianceTo(nil)
	n := c.SymmetricDim()
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if v := c.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) || v != c.At(j, i) {
				t.Fatalf("entry (%d,%d) = %v, transposed %v", i, j, v, c.At(j, i))
			}
		}
	}
	for i, d := range m.SpecificVariancesTo(nil) {
		if !(d > 0) || math.IsInf(d, 0) {
			t.Fatalf("specific variance %d = %v", i, d)
		}
	}
	var e mat.EigenSym
	if !e.Factorize(c, true) {
		t.Fatalf("eigendecomposition failed")
	}
	v := e.Values(nil)
	if scale := math.Max(math.Abs(v[0]), math.Abs(v[n-1])); v[0] < -1e-10*scale {
		t.Fatalf("not PSD: smallest eigenvalue %g, largest %g", v[0], v[n-1])
	}
}

// seedBytes returns n bytes of a fixed pseudo-random sequence (a 64-bit
// linear congruential generator, Knuth's MMIX constants), with every byte
// ≥ 0xfd, which would decode as an infinity, replaced, and every tenth byte
// 0xff (a missing value) when gaps is set.
func seedBytes(seed uint64, n int, gaps bool) []byte {
	out := make([]byte, n)
	for i := range out {
		seed = seed*6364136223846793005 + 1442695040888963407
		c := byte(seed >> 56)
		if c >= 0xfd {
			c = 0x7f
		}
		if gaps && i%10 == 9 {
			c = 0xff
		}
		out[i] = c
	}
	return out
}

func FuzzFit(f *testing.F) {
	for seed := uint64(1); seed <= 6; seed++ {
		f.Add(seedBytes(seed, 200, seed%2 == 0))
	}
	f.Add([]byte{10, 4, 4, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 0x81, 0x90, 1, 0, 10, 20, 10})
	f.Add([]byte{3, 6, 4, 0xff, 2, 3, 4, 5, 6, 7, 8, 9, 0xff, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 2, 1, 5, 5, 5})
	f.Add([]byte{15, 1, 5, 10, 10, 10, 10, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 0, 2, 3, 7, 8, 9})
	f.Add([]byte{2, 2, 4, 0xfe, 1, 2, 3, 4, 5, 6, 7, 0, 0, 1, 1, 1})
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		c := b.Next()
		s := Settings{
			K:                int(c % 4),
			Criterion:        Criterion(b.Next() % 4),
			Solver:           Solver(c / 4 % 3),
			Seed:             uint64(b.Next()),
			MaxIter:          int(b.Next() % 6),
			SpecificHalfLife: float64(b.Next() % 20),
			Covariance: ewma.Settings{VolHalfLife: float64(b.Next() % 20), CorrHalfLife: float64(b.Next() % 20),
				NeweyWestLags: int(b.Next()%3) - 1},
			AssumeCentered:   c&64 != 0,
			NoSpecificShrink: c&128 != 0,
		}
		x := fuzzMatrix(&b)
		m, err := Fit(x, s)
		if err != nil {
			checkErr(t, err)
			return
		}
		checkModel(t, m)
	})
}

func FuzzFitExposure(f *testing.F) {
	for seed := uint64(1); seed <= 4; seed++ {
		f.Add(seedBytes(seed, 200, seed%2 == 0))
	}
	f.Add([]byte{12, 4, 4, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25, 26, 27, 28, 29, 30, 31, 32, 33, 34, 0, 1, 0, 1, 10, 20, 30, 40, 3, 3, 10, 10, 10})
	f.Add([]byte{8, 6, 4, 0xff, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 0xff, 17, 18, 19, 20, 0, 0, 0, 1, 1, 2, 2, 2, 0, 5, 5, 5, 5, 5, 5, 5, 5, 2, 2, 9, 9, 9})
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		vol, mom := int(b.Next()%5)-1, int(b.Next()%5)-1
		sh, vh, ch := float64(b.Next()%20), float64(b.Next()%20), float64(b.Next()%20)
		x := fuzzMatrix(&b)
		_, n := x.Dims()
		sectors := make([]string, n)
		caps := make([]float64, n)
		for j := range sectors {
			sectors[j] = string(rune('A' + b.Next()%3))
		}
		for j := range caps {
			caps[j] = float64(b.Next()) * 1e6
		}
		s := ExposureSettings{
			Sectors:          sectors,
			StaticCaps:       caps,
			VolatilityWindow: vol,
			MomentumWindow:   mom,
			MomentumSkip:     -1,
			SpecificHalfLife: sh,
			Covariance:       ewma.Settings{VolHalfLife: vh, CorrHalfLife: ch},
		}
		m, _, err := FitExposure(x, s)
		if err != nil {
			checkErr(t, err)
			return
		}
		checkModel(t, m)
	})
}

func FuzzNewModel(f *testing.F) {
	for seed := uint64(1); seed <= 4; seed++ {
		f.Add(seedBytes(seed, 60, false))
	}
	f.Add([]byte{3, 2, 10, 20, 30, 40, 50, 60, 100, 10, 100, 1, 2, 3})
	f.Add([]byte{2, 1, 10, 20, 0x81, 1, 2})
	f.Add([]byte{4, 0, 1, 2, 3, 4})
	f.Add([]byte{2, 2, 10, 20, 30, 40, 100, 200, 0x81, 1, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		n, k := 1+int(b.Next()%8), int(b.Next()%4)
		var (
			loadings *mat.Dense
			cov      *mat.SymDense
		)
		if k > 0 {
			loadings = mat.NewDense(n, k, nil)
			for i := 0; i < n; i++ {
				for j := 0; j < k; j++ {
					loadings.Set(i, j, b.Value(specials))
				}
			}
			a := mat.NewDense(k, k, nil)
			for i := 0; i < k; i++ {
				for j := 0; j < k; j++ {
					a.Set(i, j, b.Value(specials))
				}
			}
			cov = mat.NewSymDense(k, nil)
			if b.Next()%2 == 0 {
				cov.SymOuterK(1, a) // positive semidefinite
			} else {
				for i := 0; i < k; i++ {
					for j := i; j < k; j++ {
						cov.SetSym(i, j, a.At(i, j))
					}
				}
			}
		}
		spec := make([]float64, n)
		for i := range spec {
			spec[i] = (math.Abs(b.Value(specials)) + 0.01) / 100
		}
		m, err := NewModel(loadings, cov, spec, Info{})
		if err != nil {
			checkErr(t, err)
			return
		}
		checkModel(t, m)
		// The Woodbury solve inverts the covariance.
		x := make([]float64, n)
		x[0] = 1
		y := m.SolveVecTo(nil, x)
		back := m.MulVecTo(nil, y)
		for i := range back {
			if math.Abs(back[i]-x[i]) > 1e-6*(1+math.Abs(y[i])) {
				t.Fatalf("Σ·Σ⁻¹e₀ = %v", back)
			}
		}
	})
}
