package ewma

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// varianceBlock is the number of columns one worker of variancesDense
// handles at a time: a block of a row fits in a few cache lines per row.
const varianceBlock = 256

// variancesDense is Variances's path for a *mat.Dense without
// CompleteCase. It reads x in place, one block of columns per worker, instead
// of copying it as the general path does. Per column it performs the same
// additions in the same order as the general path, so the results are
// bit-identical to it and independent of GOMAXPROCS; errors are those of the
// general path, in the same order (the first bad weight or Inf in row-major
// order, then the first column with too few observations).
func variancesDense(dst []float64, x *mat.Dense, w []float64, o Options) ([]float64, error) {
	t, n := x.Dims()
	if w != nil && len(w) != t {
		panic(mat.ErrShape)
	}
	badW := t // the first row with an invalid weight
	for i := 0; i < t && w != nil; i++ {
		if wi := w[i]; !(wi >= 0) || math.IsInf(wi, 1) {
			badW = i
			break
		}
	}
	raw := x.RawMatrix()
	mu := make([]float64, n)
	ss := make([]float64, n)
	tot := make([]float64, n)
	tot2 := make([]float64, n)
	count := make([]int, n)
	infAt := make([]int, n) // the first row of an Inf in each column, t if none
	weight := func(i int) float64 {
		if w == nil {
			return 1
		}
		return w[i]
	}
	column := func(j0, j1 int) {
		for j := j0; j < j1; j++ {
			infAt[j] = t
		}
		for i := 0; i < t; i++ {
			wi := weight(i)
			row := raw.Data[i*raw.Stride+j0 : i*raw.Stride+j1]
			for k, v := range row {
				j := j0 + k
				switch {
				case math.IsNaN(v):
				case math.IsInf(v, 0):
					if i < infAt[j] {
						infAt[j] = i
					}
				case wi > 0:
					count[j]++
					if o.Demean {
						mu[j] += wi * v
						tot[j] += wi
					}
				}
			}
		}
		if o.Demean {
			for j := j0; j < j1; j++ {
				mu[j] /= tot[j]
				tot[j] = 0
			}
		}
		for i := 0; i < t; i++ {
			wi := weight(i)
			if wi == 0 {
				continue
			}
			row := raw.Data[i*raw.Stride+j0 : i*raw.Stride+j1]
			for k, v := range row {
				if math.IsNaN(v) {
					continue
				}
				j := j0 + k
				e := v - mu[j]
				ss[j] += wi * e * e
				tot[j] += wi
				tot2[j] += wi * wi
			}
		}
	}
	dense.Parallel((n+varianceBlock-1)/varianceBlock, func(b int) {
		j0 := b * varianceBlock
		column(j0, min(j0+varianceBlock, n))
	})

	// The general path stops at the first problem in row-major order, a
	// row's weight before its values.
	infRow, infCol := t, -1
	for j, i := range infAt {
		if i < infRow {
			infRow, infCol = i, j
		}
	}
	switch {
	case badW < t && badW <= infRow:
		return dst, errAt(ErrWeight, badW, -1, -1, w[badW])
	case infRow < t:
		return dst, errAt(ErrNonFinite, infRow, infCol, -1, raw.Data[infRow*raw.Stride+infCol])
	}
	for j, c := range count {
		if c == 0 {
			return dst, errAt(ErrAllMissing, -1, j, -1, 0)
		}
		if c < 2 {
			return dst, errAt(ErrTooFewObs, -1, j, -1, float64(c))
		}
	}
	return finishVariances(dst, ss, tot, tot2, o)
}

// finishVariances turns the weighted sums of squares into variances, with
// the effective-observation check and the bias correction of Options.
func finishVariances(dst, ss, tot, tot2 []float64, o Options) ([]float64, error) {
	for j := range dst {
		eff := tot[j] * tot[j] / tot2[j]
		if o.MinEffectiveObs > 0 && eff < o.MinEffectiveObs {
			return dst, errAt(ErrEffectiveObs, -1, j, -1, eff)
		}
		v := ss[j] / tot[j]
		if o.Unbiased {
			v *= tot[j] * tot[j] / (tot[j]*tot[j] - tot2[j])
		}
		if math.IsInf(v, 0) || math.IsNaN(v) {
			// Finite returns whose squares overflow float64.
			return dst, errAt(ErrNonFinite, -1, j, -1, v)
		}
		dst[j] = v
	}
	return dst, nil
}
