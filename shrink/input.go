package shrink

import (
	"math"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// sample is validated, centred data: y = x − m row by row, with the
// normalised weights omega (nil for equal weights).
type sample struct {
	y     *mat.Dense
	omega []float64 // nil means 1/T each
	t, n  int
	w2    float64 // Σ ω_t², 1/T for equal weights
}

// weight returns ω_t.
func (s *sample) weight(t int) float64 {
	if s.omega == nil {
		return 1 / float64(s.t)
	}
	return s.omega[t]
}

// MaxValue is the largest magnitude of a return the estimators accept: the
// fourth moments of Ledoit–Wolf's intensity and the like must not overflow
// float64, and (1e70)⁴ = 1e280 leaves room for sums over any panel.
const MaxValue = 1e70

// newSample validates x and w and centres x on its weighted column means.
// minObs is the smallest number of rows (and of positive weights) allowed.
// It panics with mat.ErrShape when len(w) is not T.
func newSample(x mat.Matrix, w []float64, minObs int) (*sample, error) {
	t, n := x.Dims()
	if w != nil && len(w) != t {
		panic(mat.ErrShape)
	}
	y := mat.NewDense(t, n, nil)
	raw := y.RawMatrix()
	if err := copyChecked(raw, x); err != nil {
		return nil, err
	}
	omega, err := normWeights(w)
	if err != nil {
		return nil, err
	}
	obs := t
	if omega != nil {
		obs = 0
		for _, v := range omega {
			if v > 0 {
				obs++
			}
		}
	}
	if obs < minObs {
		return nil, &DataError{Row: -1, Col: -1, Value: float64(obs), Err: ErrTooFewObs}
	}
	s := &sample{y: y, omega: omega, t: t, n: n, w2: 1 / float64(t)}
	if omega != nil {
		s.w2 = 0
		for _, v := range omega {
			s.w2 += v * v
		}
	}
	forColumnChunks(n, func(c0, c1 int) {
		mean := make([]float64, c1-c0)
		for i := 0; i < t; i++ {
			wi := s.weight(i)
			for j, v := range raw.Data[i*raw.Stride+c0 : i*raw.Stride+c1] {
				if omega == nil {
					mean[j] += v
				} else {
					mean[j] += wi * v
				}
			}
		}
		if omega == nil {
			for j := range mean {
				mean[j] /= float64(t)
			}
		}
		for i := 0; i < t; i++ {
			row := raw.Data[i*raw.Stride+c0 : i*raw.Stride+c1]
			for j := range row {
				row[j] -= mean[j]
			}
		}
	})
	return s, nil
}

// copyChecked copies x into dst (same size), checking every value; the
// error names the first bad value in row-major order. Columns are shared
// among the cores in chunks; each chunk finds its own first bad value and
// the earliest (row, then column) is reported, as a serial scan would.
func copyChecked(dst blas64.General, x mat.Matrix) error {
	t, n := x.Dims()
	xd, isDense := x.(*mat.Dense)
	chunks := (n + colChunk - 1) / colChunk
	errs := make([]*DataError, chunks)
	forColumnChunks(n, func(c0, c1 int) {
		for i := 0; i < t; i++ {
			row := dst.Data[i*dst.Stride+c0 : i*dst.Stride+c1]
			if isDense {
				copy(row, xd.RawRowView(i)[c0:c1])
			}
			for j := range row {
				v := row[j]
				if !isDense {
					v = x.At(i, c0+j)
				}
				if math.IsNaN(v) || math.IsInf(v, 0) {
					errs[c0/colChunk] = &DataError{Row: i, Col: c0 + j, Value: v, Err: ErrNonFinite}
					return
				}
				if math.Abs(v) > MaxValue {
					errs[c0/colChunk] = &DataError{Row: i, Col: c0 + j, Value: v, Err: ErrOverflow}
					return
				}
				row[j] = v
			}
		}
	})
	var first *DataError
	for _, e := range errs {
		if e != nil && (first == nil || e.Row < first.Row) {
			first = e // chunks are in column order: ties keep the earlier
		}
	}
	if first != nil {
		return first
	}
	return nil
}

// colChunk is the width of the column chunks of forColumnChunks: 512
// columns of 1000 dates are 4 MB, at home in the shared cache.
const colChunk = 512

// forColumnChunks calls f(c0, c1) for the chunks [c0, c1) of n columns on
// all cores (dense.Parallel); f must treat each column by itself.
func forColumnChunks(n int, f func(c0, c1 int)) {
	dense.Parallel((n+colChunk-1)/colChunk, func(c int) {
		f(c*colChunk, min(n, (c+1)*colChunk))
	})
}

// normWeights checks w and returns w/Σw, or nil for nil w.
func normWeights(w []float64) ([]float64, error) {
	if w == nil {
		return nil, nil
	}
	var sum float64
	for i, v := range w {
		if !(v >= 0) || math.IsInf(v, 0) {
			return nil, &DataError{Row: i, Col: -1, Value: v, Err: ErrWeights}
		}
		sum += v
	}
	if sum == 0 {
		return nil, &DataError{Row: -1, Col: -1, Value: 0, Err: ErrWeights}
	}
	omega := make([]float64, len(w))
	for i, v := range w {
		omega[i] = v / sum
	}
	return omega, nil
}

// checkSym validates a symmetric input: finite entries. It returns a copy.
func checkSym(a mat.Symmetric) (*mat.SymDense, error) {
	n := a.SymmetricDim()
	c := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := a.At(i, j)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, &DataError{Row: i, Col: j, Value: v, Err: ErrNonFinite}
			}
			c.SetSym(i, j, v)
		}
	}
	return c, nil
}

func colsOf(x mat.Matrix) int { _, n := x.Dims(); return n }
