package ewma

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// finishCov writes the covariance of m into dst (upper triangle, then
// symmetric) and fills the observation fields of rep. It does not check
// positive semidefiniteness. unbiased applies the Σw² correction. An entry
// that overflows (returns near 1e154 or above) is ErrNonFinite.
func finishCov(dst *mat.SymDense, m *sums, o Options, unbiased bool, rep *Report) error {
	n := m.n
	raw := dst.RawSymmetric()
	rep.Rows, rep.Used, rep.EffectiveObs, rep.Missing = m.rows, m.used, m.eff, m.missing
	rep.MinPairEffectiveObs = math.Inf(1)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			k := i*n + j
			wt, w2, cnt := m.pair(k)
			if cnt < 2 {
				return errAt(ErrTooFewObs, -1, i, j, cnt)
			}
			eff := wt * wt / w2
			if eff < rep.MinPairEffectiveObs {
				rep.MinPairEffectiveObs, rep.MinPair = eff, [2]int{i, j}
			}
			c := m.s[k] / wt
			if m.p != nil {
				c -= (m.p[k] / wt) * (m.p[j*n+i] / wt)
			}
			if unbiased {
				c *= wt * wt / (wt*wt - w2)
			}
			if i == j && c < 0 {
				// A rounding residue (demeaning, or the recursive state's
				// window subtraction) for a (nearly) constant column.
				c = 0
			}
			if math.IsInf(c, 0) || math.IsNaN(c) {
				// Finite returns whose products overflow float64.
				return errAt(ErrNonFinite, -1, i, j, c)
			}
			raw.Data[i*raw.Stride+j] = c
		}
	}
	if o.MinEffectiveObs > 0 && rep.MinPairEffectiveObs < o.MinEffectiveObs {
		p := rep.MinPair
		return errAt(ErrEffectiveObs, -1, p[0], p[1], rep.MinPairEffectiveObs)
	}
	return nil
}

// correlate turns the biased covariance in dst into a correlation in place.
// Without missing data (m.q nil) it divides by the diagonal; with pairwise
// data each covariance is divided by the two variances over the dates the
// pair shares, so that |C_ij| ≤ 1 (pandas' convention: its pairwise
// DataFrame.ewm().corr() masks each column with the other's gaps).
func correlate(dst *mat.SymDense, m *sums) error {
	if m.q == nil {
		return normalise(dst)
	}
	n := m.n
	raw := dst.RawSymmetric()
	for i := 0; i < n; i++ {
		if v := raw.Data[i*raw.Stride+i]; !(v > 0) {
			return errAt(ErrZeroVariance, -1, i, -1, v)
		}
	}
	for i := 0; i < n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+n]
		for j := i + 1; j < n; j++ {
			wt := m.wt[i*n+j]
			vi, vj := m.q[i*n+j]/wt, m.q[j*n+i]/wt
			if m.p != nil {
				mi, mj := m.p[i*n+j]/wt, m.p[j*n+i]/wt
				vi -= mi * mi
				vj -= mj * mj
			}
			if !(vi > 0) || !(vj > 0) {
				return errAt(ErrZeroVariance, -1, i, j, math.Min(vi, vj))
			}
			row[j] /= math.Sqrt(vi * vj)
		}
		row[i] = 1
	}
	return nil
}

// normalise divides the covariance in dst by its own diagonal.
func normalise(dst *mat.SymDense) error {
	n := dst.SymmetricDim()
	raw := dst.RawSymmetric()
	sd := make([]float64, n)
	for i := range sd {
		v := raw.Data[i*raw.Stride+i]
		if !(v > 0) {
			return errAt(ErrZeroVariance, -1, i, -1, v)
		}
		sd[i] = math.Sqrt(v)
	}
	for i := 0; i < n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+n]
		for j := i + 1; j < n; j++ {
			row[j] /= sd[i] * sd[j]
		}
		row[i] = 1
	}
	return nil
}

// mirror copies the computed upper triangle of a raw n×n row-major buffer
// into dst; dst's own storage is upper-triangular so nothing else is needed.
func copyUpper(dst *mat.SymDense, src []float64, n int) {
	raw := dst.RawSymmetric()
	for i := 0; i < n; i++ {
		copy(raw.Data[i*raw.Stride+i:i*raw.Stride+n], src[i*n+i:(i+1)*n])
	}
}

// maxAbsSym returns the largest |a_ij|.
func maxAbsSym(a *mat.SymDense) float64 {
	n := a.SymmetricDim()
	m := 0.0
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			m = math.Max(m, math.Abs(a.At(i, j)))
		}
	}
	return m
}
