package ewma

import (
	"math"

	"github.com/riskmodel/riskmodel/internal/dense"
	"gonum.org/v1/gonum/mat"
)

// sums are the weighted sums from which every second moment is finished. All
// n×n slices are row-major with stride n and only their upper triangle
// (i ≤ j) is read, except p and q which are read in full.
//
//	s_ij   = Σ_t w_t m_ti m_tj x_ti x_tj
//	p_ij   = Σ_t w_t m_ti m_tj x_ti        (nil: s is already centred or zero mean)
//	q_ij   = Σ_t w_t m_ti m_tj x_ti²       (nil: not needed or nothing missing)
//	wt_ij  = Σ_t w_t m_ti m_tj
//	w2_ij  = Σ_t w_t² m_ti m_tj
//	cnt_ij = Σ_t [w_t > 0] m_ti m_tj
//
// Without missing data wt, w2 and cnt are the same for every pair: they are
// then nil and the scalars hold them.
type sums struct {
	n                    int
	s, p, q, wt, w2, cnt []float64
	wtS, w2S, cntS       float64
	missing              int // missing values in the used rows
	rows, used           int
	eff                  float64 // (Σw)²/Σw² over used rows
}

func (m *sums) pair(k int) (wt, w2, cnt float64) {
	if m.wt == nil {
		return m.wtS, m.w2S, m.cntS
	}
	return m.wt[k], m.w2[k], m.cnt[k]
}

// panelData is x copied to row-major form with NaN set to 0, the 0/1 mask of
// present values (nil when nothing is missing) and the effective weights.
type panelData struct {
	t, n    int
	x0      []float64
	mask    []float64
	w       []float64 // weight per row; 0 for unused rows
	missing int
	used    int
}

// load validates x and w and prepares a panelData. It panics if len(w) is
// not T.
func load(x mat.Matrix, w []float64, o Options) (*panelData, error) {
	t, n := x.Dims()
	if w != nil && len(w) != t {
		panic(mat.ErrShape)
	}
	d := &panelData{t: t, n: n, x0: make([]float64, t*n), w: make([]float64, t)}
	raw, isDense := x.(*mat.Dense)
	rowMissing := make([]bool, t)
	anyMissing := false
	for i := 0; i < t; i++ {
		wi := 1.0
		if w != nil {
			wi = w[i]
			if !(wi >= 0) || math.IsInf(wi, 1) {
				return nil, errAt(ErrWeight, i, -1, -1, wi)
			}
		}
		d.w[i] = wi
		row := d.x0[i*n : (i+1)*n]
		if isDense {
			copy(row, raw.RawRowView(i))
		} else {
			for j := range row {
				row[j] = x.At(i, j)
			}
		}
		for j, v := range row {
			if math.IsNaN(v) {
				rowMissing[i] = true
				anyMissing = true
			} else if math.IsInf(v, 0) {
				return nil, errAt(ErrNonFinite, i, j, -1, v)
			}
		}
	}
	if anyMissing {
		if o.CompleteCase {
			for i := range rowMissing {
				if rowMissing[i] {
					d.w[i] = 0
				}
			}
		} else {
			d.mask = make([]float64, t*n)
		}
	}
	count := make([]int, n)
	for i := 0; i < t; i++ {
		row := d.x0[i*n : (i+1)*n]
		if d.w[i] > 0 {
			d.used++
		}
		for j, v := range row {
			if math.IsNaN(v) {
				row[j] = 0
				if d.w[i] > 0 {
					d.missing++
				}
				continue
			}
			if d.mask != nil {
				d.mask[i*n+j] = 1
			}
			if d.w[i] > 0 {
				count[j]++
			}
		}
	}
	for j, c := range count {
		if c == 0 {
			return nil, errAt(ErrAllMissing, -1, j, -1, 0)
		}
		if c < 2 {
			return nil, errAt(ErrTooFewObs, -1, j, -1, float64(c))
		}
	}
	return d, nil
}

// columnMeans returns the weighted mean of each column over its own
// observations.
func (d *panelData) columnMeans() []float64 {
	mu := make([]float64, d.n)
	tot := make([]float64, d.n)
	for i := 0; i < d.t; i++ {
		wi := d.w[i]
		if wi == 0 {
			continue
		}
		row := d.x0[i*d.n : (i+1)*d.n]
		for j, v := range row {
			if d.mask == nil || d.mask[i*d.n+j] == 1 {
				mu[j] += wi * v
				tot[j] += wi
			}
		}
	}
	for j := range mu {
		mu[j] /= tot[j]
	}
	return mu
}

// products forms the sums of d with the shared dense kernel: (X0)ᵀW(X0) and,
// with missing data, MᵀWM, MᵀW²M and the counts MᵀM; with Demean and missing
// data the cross sums (X0)ᵀWM come from one product of [X0 M]. With needQ
// and missing data it also forms q = (X0∘X0)ᵀWM, the pairwise sums of squares
// a correlation needs.
func (d *panelData) products(demean, needQ bool) *sums {
	t, n := d.t, d.n
	m := &sums{n: n, missing: d.missing, rows: t, used: d.used}
	var sw, sw2 float64
	w2 := make([]float64, t)
	ind := make([]float64, t)
	for i, v := range d.w {
		sw += v
		sw2 += v * v
		w2[i] = v * v
		if v > 0 {
			ind[i] = 1
		}
	}
	m.eff = sw * sw / sw2
	if d.mask == nil {
		x := d.x0
		if demean {
			mu := d.columnMeans()
			x = make([]float64, t*n)
			for i := 0; i < t; i++ {
				for j := 0; j < n; j++ {
					x[i*n+j] = d.x0[i*n+j] - mu[j]
				}
			}
		}
		m.s = dense.XtWX(nil, mat.NewDense(t, n, x), d.w).RawSymmetric().Data
		m.wtS, m.w2S, m.cntS = sw, sw2, float64(d.used)
		return m
	}
	mk := mat.NewDense(t, n, d.mask)
	if demean {
		z := make([]float64, t*2*n)
		for i := 0; i < t; i++ {
			copy(z[i*2*n:], d.x0[i*n:(i+1)*n])
			copy(z[i*2*n+n:], d.mask[i*n:(i+1)*n])
		}
		g := dense.XtWX(nil, mat.NewDense(t, 2*n, z), d.w).RawSymmetric()
		m.s = make([]float64, n*n)
		m.p = make([]float64, n*n)
		m.wt = make([]float64, n*n)
		for i := 0; i < n; i++ {
			copy(m.s[i*n+i:(i+1)*n], g.Data[i*g.Stride+i:i*g.Stride+n])
			copy(m.wt[i*n+i:(i+1)*n], g.Data[(n+i)*g.Stride+n+i:(n+i)*g.Stride+2*n])
			// The block (X0)ᵀWM sits in the upper-right corner of g in full.
			copy(m.p[i*n:(i+1)*n], g.Data[i*g.Stride+n:i*g.Stride+2*n])
		}
	} else {
		m.s = dense.XtWX(nil, mat.NewDense(t, n, d.x0), d.w).RawSymmetric().Data
		m.wt = dense.XtWX(nil, mk, d.w).RawSymmetric().Data
	}
	m.w2 = dense.XtWX(nil, mk, w2).RawSymmetric().Data
	if needQ {
		sq := make([]float64, t*n)
		wm := make([]float64, t*n)
		for i := 0; i < t; i++ {
			for j := 0; j < n; j++ {
				k := i*n + j
				sq[k] = d.x0[k] * d.x0[k]
				wm[k] = d.w[i] * d.mask[k]
			}
		}
		// A general product: q is not symmetric.
		q := dense.MulTA(nil, mat.NewDense(t, n, sq), mat.NewDense(t, n, wm))
		m.q = q.RawMatrix().Data
	}
	m.cnt = dense.XtWX(nil, mk, ind).RawSymmetric().Data
	return m
}
