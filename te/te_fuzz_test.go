package te

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/fuzzcheck"
)

// FuzzDecompose decodes arbitrary bytes into a covariance (dense, or factor
// form through the package's test factor model) and two weight vectors of
// the same length, and checks that NewAnalyzer and Decompose either return an
// error wrapping one of the package's sentinels, with its text in the message,
// or a decomposition whose numbers are finite and whose contributions sum to
// the tracking error (Euler's theorem for a function homogeneous of degree
// one; Litterman 1996). The seed corpus runs in every `go test`.

var sentinels = []error{ErrNonFinite, ErrNegative, ErrNotPSD, ErrEmpty, ErrDuplicate, ErrUncovered, ErrTooFewObs, ErrBand}

// specials: the top byte codes decode to NaN and +Inf
// (fuzzcheck.Bytes.Value); the seed corpora depend on it.
const specials = 2

func FuzzDecompose(f *testing.F) {
	f.Add([]byte{0, 3, 2, 10, 20, 30, 40, 50, 60, 100, 10, 100, 1, 2, 3, 50, 30, 20, 20, 40, 40})
	f.Add([]byte{1, 3, 0, 100, 10, 20, 100, 30, 100, 50, 30, 20, 20, 40, 40})
	f.Add([]byte{1, 2, 0, 100, 0x81, 100, 50, 50, 0, 100})
	f.Add([]byte{0, 2, 1, 10, 20, 100, 0, 5, 5, 0, 0, 0, 0})
	f.Add([]byte{1, 1, 0, 0, 0, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		b := fuzzcheck.Bytes(data)
		factored := b.Next()%2 == 0
		n, k := 1+int(b.Next()%8), int(b.Next()%4)
		var cov Covariance
		if factored {
			m := &factorModel{b: mat.NewDense(n, max(k, 1), nil), f: mat.NewSymDense(max(k, 1), nil), d: make([]float64, n)}
			if k == 0 { // the test model needs one column: a zero factor
				k = 1
			}
			a := mat.NewDense(k, k, nil)
			for i := 0; i < n; i++ {
				for j := 0; j < k; j++ {
					m.b.Set(i, j, b.Value(specials))
				}
			}
			for i := 0; i < k; i++ {
				for j := 0; j < k; j++ {
					a.Set(i, j, b.Value(specials)/10)
				}
			}
			m.f.SymOuterK(1, a)
			for i := range m.d {
				m.d[i] = b.Value(specials) / 100
			}
			cov = m
		} else {
			s := mat.NewSymDense(n, nil)
			for i := 0; i < n; i++ {
				for j := i; j < n; j++ {
					s.SetSym(i, j, b.Value(specials)/100)
				}
			}
			cov = s
		}
		p, bm := make([]float64, n), make([]float64, n)
		for i := range p {
			p[i] = b.Value(specials)
		}
		for i := range bm {
			bm[i] = b.Value(specials)
		}
		an, err := NewAnalyzer(cov)
		if err != nil {
			checkErr(t, err)
			return
		}
		d, err := an.Decompose(p, bm)
		if err != nil {
			checkErr(t, err)
			return
		}
		if !(d.TE >= 0) || math.IsInf(d.TE, 0) {
			t.Fatalf("TE = %v", d.TE)
		}
		sum, scale := 0.0, 0.0
		for i, c := range d.Contribution {
			if math.IsNaN(c) || math.IsInf(c, 0) || math.IsNaN(d.Marginal[i]) {
				t.Fatalf("contribution %d = %v, marginal %v", i, c, d.Marginal[i])
			}
			sum += c
			scale += math.Abs(c)
		}
		if d.TE > 0 && math.Abs(sum-d.TE) > 1e-9*math.Max(d.TE, scale) {
			t.Fatalf("contributions sum to %v, TE %v", sum, d.TE)
		}
		te, err := an.TrackingError(p, bm)
		if err != nil || math.Abs(te-d.TE) > 1e-12*math.Max(1, d.TE) {
			t.Fatalf("TrackingError %v (%v), Decompose %v", te, err, d.TE)
		}
	})
}

func checkErr(t *testing.T, err error) {
	t.Helper()
	fuzzcheck.Err(t, err, sentinels)
}
