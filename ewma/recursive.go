package ewma

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// RecursiveSettings configure a Recursive state. HalfLife has no sensible
// zero and is required.
type RecursiveSettings struct {
	HalfLife float64 // half-life of the weights, in periods; required
	// Window is the number of most recent days the state covers. Zero means
	// every day ever added, with weights decaying forever (nothing is
	// dropped). With Window > 0 the state keeps the last Window return
	// vectors, so that the oldest can be taken out when a new day arrives.
	Window int
	// VariancesOnly keeps the variances alone: O(N) memory and O(N) per
	// update, and Covariance and Correlation panic.
	VariancesOnly bool
	Options       // missing data, mean and bias handling, as for Covariance
}

// Recursive is the state of an exponentially weighted covariance that is
// rolled forward one day at a time: the nightly job loads yesterday's state,
// calls Update with today's return vector and reads today's covariance, all
// without recomputing history.
//
// The state holds, for every pair i ≤ j, the sums of Covariance with the
// unnormalised weights λ^a of a day of age a (today a = 0):
//
//	s_ij = Σ λ^a m_i m_j x_i x_j,   wt_ij = Σ λ^a m_i m_j,   w2_ij = Σ λ^(2a) m_i m_j,
//	n_ij = Σ m_i m_j,   q_ij = Σ λ^a m_i m_j x_i²,   and with Demean p_ij = Σ λ^a m_i m_j x_i
//
// (m is 1 for a present value, 0 for NaN). Update multiplies each by λ (λ²
// for w2), adds today's terms and, when the window is full, subtracts the
// terms of the day that leaves it, whose weight is then λ^Window:
//
//	s_ij ← λ s_ij + x_i x_j − λ^Window x°_i x°_j
//
// x° being the dropped day's returns, read from the ring of the last Window
// days that the state keeps (Window × N values). Because the dropped day's
// own vector is subtracted, the result equals the batch Covariance over the
// same window with Weights(Window, HalfLife) up to rounding (tested to 1e-12
// relative). The subtraction can lose accuracy when a dropped day dominates
// the sums (a huge return λ^Window-weighted against small ones); rebuilding
// the state from history now and then bounds this.
//
// A Recursive state serialises with MarshalBinary and UnmarshalBinary; a
// loaded state continues bit for bit as the saved one would have.
type Recursive struct {
	n, window int
	lambda    float64
	lambdaW   float64 // λ^Window, the weight of the day that leaves
	varOnly   bool
	opts      Options

	days    int       // updates so far
	ring    []float64 // window×n, the last days as given (NaN kept)
	next    int       // ring slot written next: the oldest day once full
	filled  int       // days in the ring
	missing int       // missing values in the used days of the state
	used    int       // days with at least a usable row
	sw, sw2 float64   // Σ λ^a and Σ λ^(2a) over used days

	// n×n row-major, upper triangle used (p in full); length n with
	// VariancesOnly.
	s, p, q, wt, w2, cnt []float64

	x0, mk, ox0, omk []float64 // scratch for the new and the dropped day
}

// NewRecursive returns an empty state for n assets. It panics if n < 1 or
// s.Window < 0, and returns an error wrapping ErrHalfLife for a bad
// half-life. Memory: O(n²) (seven n×n arrays; six without Demean) plus the
// window, or O(n) with VariancesOnly.
func NewRecursive(n int, s RecursiveSettings) (*Recursive, error) {
	if n < 1 || s.Window < 0 {
		panic(mat.ErrShape)
	}
	if !validHalfLife(s.HalfLife) {
		return nil, errAt(ErrHalfLife, -1, -1, -1, s.HalfLife)
	}
	r := &Recursive{n: n, window: s.Window, varOnly: s.VariancesOnly, opts: s.Options}
	r.lambda = Decay(s.HalfLife)
	r.lambdaW = math.Pow(r.lambda, float64(s.Window))
	r.alloc()
	return r, nil
}

func (r *Recursive) alloc() {
	n := r.n
	size := n * n
	if r.varOnly {
		size = n
	}
	r.s = make([]float64, size)
	r.wt = make([]float64, size)
	r.w2 = make([]float64, size)
	r.cnt = make([]float64, size)
	if r.opts.Demean {
		r.p = make([]float64, size)
	}
	if !r.varOnly {
		r.q = make([]float64, size)
	}
	r.ring = make([]float64, r.window*n)
	r.x0 = make([]float64, n)
	r.mk = make([]float64, n)
	r.ox0 = make([]float64, n)
	r.omk = make([]float64, n)
}

// N returns the number of assets.
func (r *Recursive) N() int { return r.n }

// Days returns the number of days added so far.
func (r *Recursive) Days() int { return r.days }

// Len returns the number of days the estimate covers: min(Days, Window), or
// Days for an unbounded window.
func (r *Recursive) Len() int {
	if r.window == 0 {
		return r.days
	}
	return r.filled
}

// split writes x with NaN as 0 into x0 and the 0/1 mask into mk, applying
// CompleteCase; it reports the number of missing values and whether the
// day is used (every day is, except a day with a gap under CompleteCase).
func (r *Recursive) split(x, x0, mk []float64) (missing int, usable bool) {
	for j, v := range x {
		if math.IsNaN(v) {
			x0[j], mk[j] = 0, 0
			missing++
		} else {
			x0[j], mk[j] = v, 1
		}
	}
	if missing > 0 && r.opts.CompleteCase {
		clear(x0)
		clear(mk)
		return 0, false
	}
	return missing, true
}

// Update adds today's return vector x (length N, NaN for missing) as the
// newest day and, when the window is full, drops the oldest. It does not
// allocate. Cost O(N²), or O(N) with VariancesOnly.
//
// Update panics with mat.ErrShape if len(x) ≠ N and returns an error wrapping
// ErrNonFinite (the state unchanged) if x holds an Inf.
func (r *Recursive) Update(x []float64) error {
	if len(x) != r.n {
		panic(mat.ErrShape)
	}
	for j, v := range x {
		if math.IsInf(v, 0) {
			return errAt(ErrNonFinite, r.days, j, -1, v)
		}
	}
	miss, usable := r.split(x, r.x0, r.mk)
	lw := 0.0 // weight of the dropped day; 0 while the window fills
	if r.window > 0 && r.filled == r.window {
		old := r.ring[r.next*r.n : (r.next+1)*r.n]
		om, ou := r.split(old, r.ox0, r.omk)
		lw = r.lambdaW
		r.missing -= om
		if ou {
			r.used--
			r.sw -= lw
			r.sw2 -= lw * lw
		}
	} else {
		clear(r.ox0)
		clear(r.omk)
	}
	l := r.lambda
	r.sw, r.sw2 = l*r.sw, l*l*r.sw2
	if usable {
		r.used++
		r.sw++
		r.sw2++
	}
	r.missing += miss
	if r.varOnly {
		r.updateDiag(lw)
	} else {
		r.updatePairs(lw)
	}
	if r.window > 0 {
		copy(r.ring[r.next*r.n:], x)
		r.next = (r.next + 1) % r.window
		r.filled = min(r.filled+1, r.window)
	}
	r.days++
	return nil
}

func (r *Recursive) updateDiag(lw float64) {
	l, l2, lw2 := r.lambda, r.lambda*r.lambda, lw*lw
	for i := 0; i < r.n; i++ {
		a, m := r.x0[i], r.mk[i]
		oa, om := r.ox0[i], r.omk[i]
		r.s[i] = l*r.s[i] + a*a - lw*oa*oa
		r.wt[i] = l*r.wt[i] + m - lw*om
		r.w2[i] = l2*r.w2[i] + m - lw2*om
		r.cnt[i] += m - om
		if r.p != nil {
			r.p[i] = l*r.p[i] + a - lw*oa
		}
	}
}

func (r *Recursive) updatePairs(lw float64) {
	n := r.n
	l, l2, lw2 := r.lambda, r.lambda*r.lambda, lw*lw
	x0, mk, ox0, omk := r.x0, r.mk, r.ox0, r.omk
	for i := 0; i < n; i++ {
		a, m, oa, om := x0[i], mk[i], ox0[i], omk[i]
		s := r.s[i*n+i : (i+1)*n]
		wt := r.wt[i*n+i : (i+1)*n]
		w2 := r.w2[i*n+i : (i+1)*n]
		cnt := r.cnt[i*n+i : (i+1)*n]
		xs, ms, oxs, oms := x0[i:], mk[i:], ox0[i:], omk[i:]
		for k := range s {
			s[k] = l*s[k] + a*xs[k] - lw*oa*oxs[k]
			mm, omm := m*ms[k], om*oms[k]
			wt[k] = l*wt[k] + mm - lw*omm
			w2[k] = l2*w2[k] + mm - lw2*omm
			cnt[k] += mm - omm
		}
		// p_ij = Σ λ^a x_i m_j and q_ij = Σ λ^a x_i² m_j over the full row:
		// x0 is 0 where x is missing, so m_i is implied.
		if r.p != nil {
			p := r.p[i*n : (i+1)*n]
			for k := range p {
				p[k] = l*p[k] + a*mk[k] - lw*oa*omk[k]
			}
		}
		q := r.q[i*n : (i+1)*n]
		aa, oaa := a*a, lw*oa*oa
		for k := range q {
			q[k] = l*q[k] + aa*mk[k] - oaa*omk[k]
		}
	}
}

func (r *Recursive) sums() *sums {
	m := &sums{n: r.n, s: r.s, p: r.p, wt: r.wt, w2: r.w2, cnt: r.cnt,
		missing: r.missing, rows: r.Len(), used: r.used}
	if r.missing > 0 {
		m.q = r.q
	}
	if r.sw2 > 0 {
		m.eff = r.sw * r.sw / r.sw2
	}
	return m
}

var errVariancesOnly = "ewma: Recursive state keeps variances only"

// CovarianceTo sets dst to the covariance of the days in the state, the
// same estimate as the batch Covariance over those days with
// Weights(Len, HalfLife) and the state's Options, and returns dst with
// diagnostics.
// With missing values (and CompleteCase off) the result is checked and, if
// needed, repaired as in Covariance, at the cost given there; otherwise the cost
// is O(N²).
//
// A nil or empty dst is allocated. It panics with mat.ErrShape if dst is
// neither nil, empty nor N×N, and
// with a string value if the state keeps variances only. Errors as for the
// batch Covariance.
func (r *Recursive) CovarianceTo(dst *mat.SymDense) (*mat.SymDense, *Report, error) {
	if r.varOnly {
		panic(errVariancesOnly)
	}
	dst = dense.SizeSym(dst, r.n)
	if err := r.ready(); err != nil {
		return dst, nil, err
	}
	m := r.sums()
	rep := &Report{}
	if err := finishCov(dst, m, r.opts, r.opts.Unbiased, rep); err != nil {
		return dst, rep, err
	}
	if r.missing > 0 {
		rep.Checked = true
		rep.Repair = makePSD(dst, m)
	}
	return dst, rep, nil
}

// CorrelationTo sets dst to the correlation of the days in the state, as the
// batch Correlation would over those days. Panics, errors and cost as for
// Covariance, plus ErrZeroVariance.
func (r *Recursive) CorrelationTo(dst *mat.SymDense) (*mat.SymDense, *Report, error) {
	if r.varOnly {
		panic(errVariancesOnly)
	}
	dst = dense.SizeSym(dst, r.n)
	if err := r.ready(); err != nil {
		return dst, nil, err
	}
	m := r.sums()
	rep := &Report{}
	if err := finishCov(dst, m, r.opts, false, rep); err != nil {
		return dst, rep, err
	}
	if err := correlate(dst, m); err != nil {
		return dst, rep, err
	}
	if r.missing > 0 {
		rep.Checked = true
		rep.Repair = makePSD(dst, m)
	}
	return dst, rep, nil
}

// VariancesTo sets dst to the variances of the days in the state, as the
// batch Variances would over those days, and returns dst. A nil or empty
// dst is allocated. Cost O(N). It panics with mat.ErrShape if dst is neither
// nil, empty nor of length N; errors as for the batch Variances.
func (r *Recursive) VariancesTo(dst []float64) ([]float64, error) {
	dst = dense.SizeVec(dst, r.n)
	if err := r.ready(); err != nil {
		return dst, err
	}
	step := r.n + 1
	if r.varOnly {
		step = 1
	}
	for i := range dst {
		k := i * step
		wt, w2, cnt := r.wt[k], r.w2[k], r.cnt[k]
		if cnt == 0 {
			return dst, errAt(ErrAllMissing, -1, i, -1, 0)
		}
		if cnt < 2 {
			return dst, errAt(ErrTooFewObs, -1, i, -1, cnt)
		}
		eff := wt * wt / w2
		if r.opts.MinEffectiveObs > 0 && eff < r.opts.MinEffectiveObs {
			return dst, errAt(ErrEffectiveObs, -1, i, -1, eff)
		}
		v := r.s[k] / wt
		if r.p != nil {
			mu := r.p[k] / wt
			v -= mu * mu
		}
		if r.opts.Unbiased {
			v *= wt * wt / (wt*wt - w2)
		}
		if math.IsInf(v, 0) || math.IsNaN(v) {
			// Finite returns whose squares overflow float64.
			return dst, errAt(ErrNonFinite, -1, i, -1, v)
		}
		// Taking the oldest day out of the sums can leave a rounding
		// residue just below zero for a (nearly) constant column.
		dst[i] = max(v, 0)
	}
	return dst, nil
}

// ready reports the errors of an empty state or a column with no data, as
// the batch functions do.
func (r *Recursive) ready() error {
	step := r.n + 1
	if r.varOnly {
		step = 1
	}
	for i := 0; i < r.n; i++ {
		if c := r.cnt[i*step]; c == 0 {
			return errAt(ErrAllMissing, -1, i, -1, 0)
		} else if c < 2 {
			return errAt(ErrTooFewObs, -1, i, -1, c)
		}
	}
	return nil
}
