package shrink

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/fuzzcheck"
)

// The fuzz targets decode arbitrary bytes into valid shapes (shape panics
// are documented programmer errors) and check that every estimator and
// conditioning tool returns either an error wrapping one of the package's
// sentinels, with its text in the message, or a finite, symmetric, positive
// semidefinite matrix. The seed corpora run in every `go test`.

var sentinels = []error{ErrNonFinite, ErrTooFewObs, ErrZeroVariance, ErrWeights,
	ErrNotSymmetric, ErrNotConverged, ErrBadParameter, ErrNoEigen, ErrRankDeficient, ErrOverflow}

// specials: the top byte codes decode to NaN, ±Inf, 1e150 and 1e−150
// (fuzzcheck.Bytes.Value); the seed corpora depend on it.
const specials = 5

// fuzzMatrix decodes a T×N matrix, 1 ≤ T ≤ 12, 1 ≤ N ≤ 6, scaled by a power of
// ten in 1e−8 … 1e7.
func fuzzMatrix(b *fuzzcheck.Bytes) *mat.Dense {
	t, n := 1+int(b.Next()%12), 1+int(b.Next()%6)
	return b.Dense(t, n, b.Scale(-8, 16), specials)
}

// fuzzSymmetric decodes an N×N symmetric matrix, 1 ≤ N ≤ 6, with a unit
// diagonal when corr is set (a candidate correlation matrix).
func fuzzSymmetric(b *fuzzcheck.Bytes) *mat.SymDense {
	n := 1 + int(b.Next()%6)
	scale := b.Scale(-8, 16)
	a := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			a.SetSym(i, j, b.Value(specials)*scale)
		}
	}
	return a
}

// fuzzWeights decodes nil (equal weights) or raw weights.
func fuzzWeights(b *fuzzcheck.Bytes, t int) []float64 {
	if b.Next()%2 == 0 {
		return nil
	}
	w := make([]float64, t)
	for i := range w {
		w[i] = b.Value(specials)
	}
	return w
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

// checkIntensity fails unless a shrinkage intensity is in [0, 1].
func checkIntensity(t *testing.T, s float64) {
	t.Helper()
	if !(s >= 0 && s <= 1) {
		t.Fatalf("intensity %v outside [0, 1]", s)
	}
}

func FuzzEstimators(f *testing.F) {
	for k := byte(0); k < 11; k++ {
		f.Add([]byte{5, 2, 8, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 0, k})
	}
	f.Add([]byte{2, 4, 8, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 0, 9})
	// Returns of 1e157 overflowed the fourth moments into a NaN matrix; now ErrOverflow.
	f.Add([]byte{7, 1, 15, 0xfc, 0xfb, 0, 0, 1, 2, 3, 4, 0, 1})
	f.Add([]byte{3, 2, 8, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6, 6, 1, 10, 0xff, 20, 30, 40, 50, 60, 70, 80, 5})
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		x := fuzzMatrix(&b)
		rows, _ := x.Dims()
		w := fuzzWeights(&b, rows)
		which := b.Next() % 11
		var (
			dst = &mat.SymDense{}
			err error
		)
		switch which {
		case 0:
			var r LinearResult
			dst, r, err = LedoitWolf(dst, x, w)
			if err == nil {
				checkIntensity(t, r.Intensity)
			}
		case 1:
			var r LinearResult
			dst, r, err = OAS(dst, x, w)
			if err == nil {
				checkIntensity(t, r.Intensity)
			}
		case 2:
			dst, _, err = ConstantCorrelation(dst, x, w)
		case 3:
			dst, _, err = SingleIndex(dst, x, w)
		case 4:
			dst, _, err = SchaferStrimmer(dst, x, w)
		case 5:
			dst, _, err = Nonlinear(dst, x, w)
		case 6:
			dst, _, err = ClipMarchenkoPastur(dst, x, w)
		case 7, 8:
			var m *Implicit
			if which == 7 {
				m, _, err = LedoitWolfImplicit(x, w)
			} else {
				m, _, err = OASImplicit(x, w)
			}
			if err == nil {
				dst = m.DenseTo(nil)
				checkImplicit(t, m, dst)
			}
		case 9:
			var r LinearResult
			r, err = LedoitWolfIntensity(x, w)
			if err == nil {
				checkIntensity(t, r.Intensity)
			}
			return
		case 10:
			var r LinearResult
			r, err = OASIntensity(x, w)
			if err == nil {
				checkIntensity(t, r.Intensity)
			}
			return
		}
		if err != nil {
			checkErr(t, err)
			return
		}
		checkCov(t, dst, squareScale(x))
	})
}

// checkImplicit compares the implicit matrix's products with its dense form.
func checkImplicit(t *testing.T, m *Implicit, d *mat.SymDense) {
	t.Helper()
	n := m.SymmetricDim()
	x := make([]float64, n)
	for i := range x {
		x[i] = float64(i%3) - 1
	}
	got := m.MulVecTo(nil, x)
	var want mat.VecDense
	want.MulVec(d, mat.NewVecDense(n, x))
	scale := mat.Norm(d, 1)
	for i := range got {
		if math.Abs(got[i]-want.AtVec(i)) > 1e-9*scale {
			t.Fatalf("MulVecTo %v, dense %v", got, want.RawVector().Data)
		}
		if m.At(i, i) != d.At(i, i) && math.Abs(m.At(i, i)-d.At(i, i)) > 1e-12*scale {
			t.Fatalf("At(%d,%d) %v, dense %v", i, i, m.At(i, i), d.At(i, i))
		}
	}
	if q := m.QuadForm(x); q < -1e-10*scale*float64(n) {
		t.Fatalf("QuadForm %v < 0", q)
	}
}

func FuzzConditioning(f *testing.F) {
	for k := byte(0); k < 4; k++ {
		f.Add([]byte{2, 8, 100, 50, 20, 100, 90, 100, k, 10})
	}
	f.Add([]byte{3, 8, 100, 120, 130, 100, 0x81, 100, 0xff, 0, 5})
	f.Add([]byte{0, 15, 0xfc, 1, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		a := fuzzSymmetric(&b)
		which := b.Next() % 4
		param := float64(b.Next()) // a floor's or a condition cap's raw byte
		var (
			dst = &mat.SymDense{}
			err error
		)
		switch which {
		case 0:
			dst, _, err = NearestPSD(dst, a, param/100*math.Abs(a.At(0, 0)))
		case 1:
			dst, _, err = CapCondition(dst, a, param)
		case 2:
			var c float64
			c, err = Condition(a)
			if err == nil && !(c >= 1) {
				t.Fatalf("condition number %v", c)
			}
			return
		case 3:
			dst, _, err = NearestCorrelation(dst, a, &NearCorrOptions{MaxIter: 200})
			if err == nil {
				for i := 0; i < dst.SymmetricDim(); i++ {
					if math.Abs(dst.At(i, i)-1) > 1e-12 {
						t.Fatalf("diagonal %d = %v", i, dst.At(i, i))
					}
				}
			}
		}
		if err != nil {
			checkErr(t, err)
			return
		}
		checkCov(t, dst, absScale(a))
	})
}

// A matrix of extreme range once made Condition panic inside gonum's
// values-only eigensolver (found by FuzzEstimators of package ewma).
func TestConditionExtremeRange(t *testing.T) {
	a := mat.NewSymDense(3, []float64{
		5e283, 5e-17, 0,
		5e-17, 7.68e-18, 7.68e-18,
		0, 7.68e-18, 7.68e-18,
	})
	c, err := Condition(a)
	if err != nil {
		t.Fatal(err)
	}
	// The matrix is singular: rows 2 and 3 differ only by the 5e-17 that is
	// lost beside 5e283, so λ_min is 0 up to rounding and the condition huge.
	if !(c > 1e280) {
		t.Fatalf("condition %v", c)
	}
}

// absScale returns the largest |a_ij|.
func absScale(a mat.Symmetric) float64 {
	n := a.SymmetricDim()
	s := 0.0
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			s = math.Max(s, math.Abs(a.At(i, j)))
		}
	}
	return s
}
