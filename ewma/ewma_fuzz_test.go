package ewma

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/fuzzcheck"
)

// The fuzz targets decode arbitrary bytes into valid shapes (so that shape
// panics, which are documented programmer errors, cannot occur) and check
// that every estimator either returns an error wrapping one of the package's
// sentinels, with the sentinel's text in its message, or a finite, symmetric,
// positive semidefinite matrix. The seed corpora run in every `go test`.

var sentinels = []error{ErrHalfLife, ErrDecay, ErrLength, ErrWeight, ErrNonFinite,
	ErrAllMissing, ErrTooFewObs, ErrEffectiveObs, ErrZeroVariance, ErrLags, ErrState}

// specials: the top byte codes decode to NaN, ±Inf, 1e150 and 1e−150
// (fuzzcheck.Bytes.Value); the seed corpora depend on it.
const specials = 5

// fuzzMatrix decodes a T×N matrix with 1 ≤ T ≤ 12, 1 ≤ N ≤ 6, all scaled by a
// power of ten in 1e−8 … 1e7 so that scale-dependent tolerances are tested.
func fuzzMatrix(b *fuzzcheck.Bytes) *mat.Dense {
	t, n := 1+int(b.Next()%12), 1+int(b.Next()%6)
	return b.Dense(t, n, b.Scale(-8, 16), specials)
}

// fuzzWeights decodes nil (equal weights), a half-life's weights or raw weights.
func fuzzWeights(b *fuzzcheck.Bytes, t int) []float64 {
	switch b.Next() % 3 {
	case 0:
		return nil
	case 1:
		w, err := Weights(nil, t, 1+float64(b.Next()%20))
		if err != nil {
			panic(err)
		}
		return w
	}
	w := make([]float64, t)
	for i := range w {
		w[i] = b.Value(specials)
	}
	return w
}

func fuzzOptions(b *fuzzcheck.Bytes) *Options {
	c := b.Next()
	if c&1 == 0 {
		return nil
	}
	return &Options{Demean: c&2 != 0, CompleteCase: c&4 != 0, Unbiased: c&8 != 0,
		MinEffectiveObs: float64(c>>4) / 2}
}

// checkErr fails unless err wraps one of the package's sentinels.
func checkErr(t *testing.T, err error) {
	t.Helper()
	fuzzcheck.Err(t, err, sentinels)
}

// checkCov fails unless c is finite, symmetric and PSD (fuzzcheck.Cov).
func checkCov(t *testing.T, c mat.Symmetric, dataScale float64) {
	t.Helper()
	fuzzcheck.Cov(t, c, dataScale)
}

// squareScale returns the largest finite x_ij².
func squareScale(x mat.Matrix) float64 { return fuzzcheck.SquareScale(x) }

func FuzzEstimators(f *testing.F) {
	// t=4, n=2, scale 1; values; weights nil; options nil; which estimator.
	f.Add([]byte{3, 1, 8, 1, 2, 3, 4, 5, 6, 7, 8, 0, 0, 0, 0})
	f.Add([]byte{5, 2, 8, 1, 0xff, 3, 4, 5, 0xff, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 1, 7, 3, 1, 2})
	// Returns of 1e157 overflow the products: once NaN, now ErrNonFinite.
	f.Add([]byte{11, 5, 15, 0x10, 0x20, 0x30, 0xfc, 0xfb, 0, 0, 0, 2, 0xff, 1, 0x0f, 4, 3})
	f.Add([]byte{1, 0, 8, 5, 0, 1, 0, 3})
	f.Add([]byte{2, 2, 0, 0xfe, 1, 2, 3, 4, 5, 6, 7, 8, 0, 1, 5})
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		x := fuzzMatrix(&b)
		rows, n := x.Dims()
		w := fuzzWeights(&b, rows)
		opts := fuzzOptions(&b)
		which := b.Next() % 5
		lags := int(b.Next()%5) - 1 // −1 is AutoLags
		var dst mat.SymDense
		var err error
		switch which {
		case 0:
			_, _, err = Covariance(&dst, x, w, opts)
		case 1:
			_, _, err = Correlation(&dst, x, w, opts)
		case 2:
			var v []float64
			v, err = Variances(nil, x, w, opts)
			if err == nil {
				if len(v) != n {
					t.Fatalf("%d variances for %d columns", len(v), n)
				}
				for j, s := range v {
					if !(s >= 0) || math.IsInf(s, 0) {
						t.Fatalf("variance %d = %v", j, s)
					}
				}
			}
		case 3:
			_, _, err = NeweyWest(&dst, x, w, lags, opts)
		case 4:
			s := Settings{VolHalfLife: float64(b.Next() % 30), CorrHalfLife: float64(b.Next() % 30), NeweyWestLags: lags}
			if opts != nil {
				s.Options = *opts
			}
			_, _, err = Estimate(&dst, x, s)
		}
		if err != nil {
			checkErr(t, err)
			return
		}
		if which != 2 {
			checkCov(t, &dst, squareScale(x))
		}
	})
}

func FuzzRecursive(f *testing.F) {
	f.Add([]byte{4, 1, 8, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 0, 3, 1})
	f.Add([]byte{11, 3, 8, 0xff, 2, 3, 4, 0xff, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23, 24, 3, 5, 7})
	f.Add([]byte{6, 2, 8, 0xfe, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 0, 2, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		x := fuzzMatrix(&b)
		rows, n := x.Dims()
		opts := fuzzOptions(&b)
		s := RecursiveSettings{HalfLife: float64(b.Next() % 20), Window: int(b.Next() % 8), VariancesOnly: b.Next()&1 == 1}
		if opts != nil {
			s.Options = *opts
		}
		r, err := NewRecursive(n, s)
		if err != nil {
			checkErr(t, err)
			return
		}
		for i := 0; i < rows; i++ {
			if err := r.Update(x.RawRowView(i)); err != nil {
				checkErr(t, err)
				if !errors.Is(err, ErrNonFinite) {
					t.Fatalf("Update: %v", err)
				}
			}
		}
		var dst mat.SymDense
		if !s.VariancesOnly {
			if _, _, err := r.CovarianceTo(&dst); err != nil {
				checkErr(t, err)
			} else {
				checkCov(t, &dst, squareScale(x))
			}
		}
		if v, err := r.VariancesTo(nil); err != nil {
			checkErr(t, err)
		} else {
			for j, s := range v {
				if !(s >= 0) || math.IsInf(s, 0) {
					t.Fatalf("variance %d = %v", j, s)
				}
			}
		}
		// The state survives a round trip through its binary form.
		bin, err := r.MarshalBinary()
		if err != nil {
			t.Fatal(err)
		}
		var back Recursive
		if err := back.UnmarshalBinary(bin); err != nil {
			t.Fatalf("UnmarshalBinary of MarshalBinary: %v", err)
		}
		// Arbitrary bytes as a state are an error, never a panic.
		var junk Recursive
		if err := junk.UnmarshalBinary(data); err != nil {
			checkErr(t, err)
		}
	})
}
