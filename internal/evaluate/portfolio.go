package evaluate

import (
	"math"
	"math/rand/v2"
	"slices"
	"sync"

	"github.com/riskmodel/riskmodel"

	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/internal/dense"
)

// The portfolios the evaluation builds from a forecast. Each works through
// covOp, so a factor model is used in factor form (O(N·K) per product) and a
// dense one through one Cholesky factorization.

// gmvRidge is the ridge, as a share of the mean variance, added to a dense
// forecast that is not positive definite (a sample covariance with fewer
// dates than assets) before solving for the minimum-variance portfolio. The
// evaluation counts every date it was needed. Common practice, no source.
const gmvRidge = 1e-6

// gmvMaxCond is the condition number above which a dense forecast counts as
// singular and gets the ridge: past it a solve keeps fewer than 4 digits.
const gmvMaxCond = 1e12

// covOp is a forecast covariance seen through the operations the evaluation
// needs.
type covOp struct {
	n      int
	mul    func(dst, x []float64) // dst = Σx
	solve  func(dst, x []float64) // dst = Σ⁻¹x, of the ridged matrix if ridged
	ridged bool
	lmax   float64 // Lipschitz constant of the long-only solver's gradient on the simplex (see tangentLipschitz)

	// Of a dense forecast: the matrix, its rows in full (both triangles,
	// for products with sparse vectors) and its Cholesky factor when it is
	// positive definite without the ridge (nil otherwise), which the
	// minimum-variance loss reuses.
	sym  *mat.SymDense
	full []float64
	chol *dense.Cholesky
	cond float64  // condition estimate of the unridged matrix; +Inf if not positive definite
	sc   *scratch // the N×N buffers of a dense forecast
	// Of a factor forecast.
	fm *factor.Model
}

// sparseShare is the share of nonzero entries below which a product with a
// dense forecast adds the rows of the nonzero entries (N·nnz) instead of
// passing over the whole matrix (N²). Common practice, no source.
const sparseShare = 0.25

// scratch holds the N×N buffers of a dense forecast's scoring — the full
// copy of the matrix, its Cholesky factors, the ridged copy and the
// inverse of the minimum-variance loss — so that the forecasts of a
// rebalance date, scored one after another, reuse them instead of
// allocating (and the runtime zeroing) four N×N matrices each. A covOp
// built on a scratch owns it until its scoring ends; scratchPool passes
// them from one date to the next.
type scratch struct {
	full, ridge, inv []float64
	chol, ridgeChol  dense.Cholesky
}

var scratchPool = sync.Pool{New: func() any { return new(scratch) }}

// grow returns b resliced to n, or a new slice when b is too short; the
// contents are not cleared.
func grow(b []float64, n int) []float64 {
	if cap(b) < n {
		return make([]float64, n)
	}
	return b[:n]
}

// newCovOp prepares the operations of c, a *factor.Model or a *mat.SymDense,
// on buffers of its own (newCovOpIn).
func newCovOp(c riskmodel.Covariance) *covOp { return newCovOpIn(c, new(scratch)) }

// newCovOpIn prepares the operations of c, a *factor.Model or a
// *mat.SymDense, a dense one in the buffers of sc.
// A dense c that is not positive definite, or whose condition number passes
// gmvMaxCond, is solved with the ridge gmvRidge and flagged.
// Cost: O(N·K) for a factor model; for a dense one a Cholesky factorization
// on all cores (dense.Cholesky, N³/3 flops), LAPACK's condition estimate
// (dpocon, O(N²)) and a full copy of the matrix (N² memory).
func newCovOpIn(c riskmodel.Covariance, sc *scratch) *covOp {
	n := c.SymmetricDim()
	op := &covOp{n: n, sc: sc}
	switch s := c.(type) {
	case *factor.Model:
		op.fm = s
		op.mul = func(dst, x []float64) { s.MulVecTo(dst, x) }
		op.solve = func(dst, x []float64) { s.SolveVecTo(dst, x) }
	case *mat.SymDense:
		op.sym = s
		sc.full = grow(sc.full, n*n)
		op.full = sc.full
		evalFullTo(op.full, s)
		raw := s.RawSymmetric()
		op.mul = func(dst, x []float64) {
			nnz := 0
			for _, v := range x {
				if v != 0 {
					nnz++
				}
			}
			if float64(nnz) > sparseShare*float64(n) {
				dense.SymVec(dst, raw, x)
				return
			}
			clear(dst)
			for j, v := range x {
				if v != 0 {
					evalAxpy(v, op.full[j*n:(j+1)*n], dst)
				}
			}
		}
		ch := &sc.chol
		op.cond = math.Inf(1)
		if ch.Factorize(s) {
			op.chol = ch
			op.cond = choleskyCond(ch, s)
		}
		if op.cond > gmvMaxCond {
			var tr float64
			for i := 0; i < n; i++ {
				tr += s.At(i, i)
			}
			sc.ridge = grow(sc.ridge, n*n)
			r := mat.NewSymDense(n, sc.ridge)
			r.CopySym(s)
			delta := gmvRidge * math.Max(tr/float64(n), math.SmallestNonzeroFloat64)
			for i := 0; i < n; i++ {
				r.SetSym(i, i, r.At(i, i)+delta)
			}
			op.ridged = true
			ch = &sc.ridgeChol
			if !ch.Factorize(r) {
				op.solve = nil
				break
			}
		}
		op.solve = func(dst, x []float64) { ch.SolveVecTo(dst, x) }
	default:
		panic("riskmodel: evaluate: covariance is neither *factor.Model nor *mat.SymDense")
	}
	op.lmax = op.tangentLipschitz()
	return op
}

// tangentLipschitz returns the largest eigenvalue of PΣP, P = I − 11ᵀ/N
// the projection onto the portfolios of zero net weight, by Lanczos
// (dense.PlaneTopEigenvalue), floored at 1e-12 of 1ᵀΣ1/N so that a forecast
// with no risk off the equal-weighted direction still gives a finite step.
//
// The long-only solver moves only within the plane Σᵢ wᵢ = 1, where the
// gradient Σw − c changes by Σ(w − w′) with w − w′ of zero net weight: its
// Lipschitz constant there is λmax(PΣP), not λmax(Σ) (Beck & Teboulle 2009,
// whose step 1/L needs L only on the feasible set). In an equity market the
// top eigenvector of Σ is close to the equal-weighted portfolio (every
// stock loads on the market), so λmax(PΣP) is a few times smaller than
// λmax(Σ) and the solver takes about half the steps (measured on
// simulated markets of 1500–3000 assets, 3–25 sectors, the same objective
// to 11 digits). Cost: the Lanczos products, O(N²) each dense.
func (op *covOp) tangentLipschitz() float64 {
	top, equal := dense.PlaneTopEigenvalue(op.n, op.mul)
	return math.Max(top, 1e-12*equal)
}

// choleskyCond returns an estimate of the 1-norm condition number
// ‖A‖₁·‖A⁻¹‖₁ of a from its Cholesky factor, as LAPACK's dpocon (and gonum's
// mat.Cholesky.Cond) computes it: ‖A⁻¹‖₁ by Hager's estimator with Higham's
// refinements (LAPACK's dlacn2), here with the multi-core solves of
// dense.Cholesky instead of dpocon's scaled single-core ones (dlatrs). A
// non-finite estimate (a near-singular a) is +Inf. Cost a few solves, O(N²)
// each.
//
// References: Hager, W. W. (1984), "Condition estimates", SIAM J. Sci.
// Stat. Comput. 5(2):311–316. Higham, N. J. (1988), "FORTRAN codes for
// estimating the one-norm of a real or complex matrix, with applications to
// condition estimation", ACM Trans. Math. Software 14(4):381–396
// (Algorithm 4.1, which dlacn2 implements).
func choleskyCond(ch *dense.Cholesky, a *mat.SymDense) float64 {
	n := a.SymmetricDim()
	norm := lapack64.Lansy(lapack.MaxColumnSum, a.RawSymmetric(), make([]float64, n))
	est := invNorm1(n, func(dst, x []float64) { ch.SolveVecTo(dst, x) })
	c := norm * est
	if math.IsNaN(c) || math.IsInf(c, 0) {
		return math.Inf(1)
	}
	return c
}

// invNorm1 estimates ‖B‖₁ of a symmetric B given by its products
// (dst = B·x), by Higham's Algorithm 4.1 (LAPACK's dlacn2 with at most five
// iterations and its alternating-sign vector as a safeguard). For a
// symmetric B, Bᵀx is B·x.
func invNorm1(n int, mul func(dst, x []float64)) float64 {
	const itmax = 5
	x, y := make([]float64, n), make([]float64, n)
	sign := make([]float64, n)
	norm1 := func(v []float64) float64 {
		var s float64
		for _, e := range v {
			s += math.Abs(e)
		}
		return s
	}
	argmax := func(v []float64) int {
		j := 0
		for i, e := range v {
			if math.Abs(e) > math.Abs(v[j]) {
				j = i
			}
		}
		return j
	}
	signOf := func(v float64) float64 {
		if v >= 0 {
			return 1
		}
		return -1
	}
	for i := range x {
		x[i] = 1 / float64(n)
	}
	mul(y, x)
	if n == 1 {
		return math.Abs(y[0])
	}
	est := norm1(y)
	for i, v := range y {
		sign[i] = signOf(v)
	}
	mul(x, sign)
	j := argmax(x)
	for iter := 2; ; iter++ {
		clear(x)
		x[j] = 1
		mul(y, x)
		old := est
		est = norm1(y)
		same := true
		for i, v := range y {
			if signOf(v) != sign[i] {
				same = false
				break
			}
		}
		if same || est <= old {
			break
		}
		for i, v := range y {
			sign[i] = signOf(v)
		}
		mul(x, sign)
		last := j
		j = argmax(x)
		if x[last] == math.Abs(x[j]) || iter >= itmax { // as dlacn2: x[last], not |x[last]|
			break
		}
	}
	// The alternating-sign vector guards against a poor estimate.
	for i := range x {
		x[i] = (1 + float64(i)/float64(n-1))
		if i%2 == 1 {
			x[i] = -x[i]
		}
	}
	mul(y, x)
	if alt := 2 * norm1(y) / float64(3*n); alt > est {
		est = alt
	}
	return est
}

// sub returns the forecast on the assets at positions idx, as a covOp.
// Cost: that of newCovOp on len(idx) assets.
func (op *covOp) sub(idx []int) *covOp {
	if op.fm != nil {
		return newCovOp(op.fm.Submodel(idx))
	}
	return newCovOp(subSym(op.sym, idx))
}

// quad returns xᵀΣx.
func (op *covOp) quad(x, tmp []float64) float64 {
	op.mul(tmp, x)
	return evalDot(x, tmp)
}

// minVariance returns the unconstrained global minimum-variance portfolio
//
//	w = Σ⁻¹1 / (1ᵀΣ⁻¹1)
//
// or nil when the forecast could not be factorized even with the ridge.
// Cost: one solve.
func (op *covOp) minVariance() []float64 {
	if op.solve == nil {
		return nil
	}
	one := make([]float64, op.n)
	for i := range one {
		one[i] = 1
	}
	w := make([]float64, op.n)
	op.solve(w, one)
	s := evalSum(w)
	if !(math.Abs(s) > 0) || math.IsInf(s, 0) {
		return nil
	}
	for i := range w {
		w[i] /= s
	}
	return w
}

// simplexResult reports how the long-only solver ended.
type simplexResult struct {
	Iterations int
	Gap        float64 // Frank–Wolfe gap at the end: an upper bound on f(w) − f*
	Converged  bool
}

// Settings of the long-only solver.
const (
	simplexMaxIter = 5000
	simplexTol     = 1e-7 // gap relative to the portfolio variance wᵀΣw
)

// simplexQP minimizes the quadratic
//
//	f(w) = ½ wᵀΣw − cᵀw   subject to  w ≥ 0,  Σᵢ wᵢ = 1
//
// (c nil means 0: the long-only minimum-variance portfolio; c = Σb gives the
// long-only portfolio of least tracking error against b) by accelerated
// projected gradient (FISTA, step 1/L with L the largest eigenvalue of Σ on
// the simplex's plane: tangentLipschitz) with an adaptive restart whenever
// the momentum points uphill, projecting onto the simplex by Michelot's
// algorithm (projectSimplex). It stops when the Frank–Wolfe gap
//
//	g(w)ᵀw − minᵢ gᵢ,   g = Σw − c,
//
// which bounds f(w) − f* from above, is below simplexTol·wᵀΣw, or after
// simplexMaxIter steps. The gradient at the extrapolated point
// y = w + β(w − w_prev) is the same combination of the gradients at w and
// w_prev (g is affine), so each step costs one product with Σ, at w, and
// that product is sparse once the iterates are (see covOp.mul).
//
// References: Beck, A. & Teboulle, M. (2009), "A fast iterative
// shrinkage-thresholding algorithm for linear inverse problems", SIAM J.
// Imaging Sciences 2(1):183–202. O'Donoghue, B. & Candès, E. (2015),
// "Adaptive restart for accelerated gradient schemes", Foundations of
// Computational Mathematics 15(3):715–732. Duchi, J., Shalev-Shwartz, S.,
// Singer, Y. & Chandra, T. (2008), "Efficient projections onto the ℓ1-ball
// for learning in high dimensions", ICML, 272–279 (the sort-based simplex
// projection).
func (op *covOp) simplexQP(c []float64) ([]float64, simplexResult) {
	n := op.n
	step := 1 / math.Max(op.lmax, math.SmallestNonzeroFloat64)
	w := make([]float64, n)
	for i := range w {
		w[i] = 1 / float64(n)
	}
	grad := func(dst, x []float64) {
		op.mul(dst, x)
		if c != nil {
			for i := range dst {
				dst[i] -= c[i]
			}
		}
	}
	prev, gprev := make([]float64, n), make([]float64, n)
	g := make([]float64, n)
	grad(g, w)
	y, gy := slices.Clone(w), slices.Clone(g)
	z := make([]float64, n)
	buf := make([]float64, n)
	theta := 1.0
	var res simplexResult
	for res.Iterations = 1; res.Iterations <= simplexMaxIter; res.Iterations++ {
		copy(prev, w)
		copy(gprev, g)
		for i := range z {
			z[i] = y[i] - step*gy[i]
		}
		projectSimplex(z, buf)
		copy(w, z)
		// Optimality check at w.
		grad(g, w)
		var gw, cw float64
		gmin := math.Inf(1)
		for i := range w {
			gw += g[i] * w[i]
			gmin = math.Min(gmin, g[i])
			if c != nil {
				cw += c[i] * w[i]
			}
		}
		variance := gw + cw // wᵀΣw = gᵀw + cᵀw
		res.Gap = gw - gmin
		if res.Gap <= simplexTol*math.Abs(variance) || res.Gap == 0 {
			res.Converged = true
			return w, res
		}
		next := (1 + math.Sqrt(1+4*theta*theta)) / 2
		beta := (theta - 1) / next
		// Restart when the step from prev to w and the momentum disagree.
		var up float64
		for i := range w {
			up += (y[i] - w[i]) * (w[i] - prev[i])
		}
		if up > 0 {
			next, beta = 1, 0
		}
		theta = next
		for i := range w {
			y[i] = w[i] + beta*(w[i]-prev[i])
			gy[i] = g[i] + beta*(g[i]-gprev[i])
		}
	}
	res.Iterations = simplexMaxIter
	return w, res
}

// trackingQP returns the long-only portfolio of the assets at positions
// support (in increasing order) with the least forecast tracking error
// against b, where sb = Σb: simplexQP on the forecast of those assets alone,
// whose objective ½ wᵀΣw − (Σb)ᵀw is the tracking error's up to a constant.
// The weights are over all N assets (0 off support). Cost: newCovOp on the
// support, and steps of O(m²) for m names.
func (op *covOp) trackingQP(sb []float64, support []int) ([]float64, simplexResult) {
	sop := op.sub(support)
	c := make([]float64, len(support))
	for k, i := range support {
		c[k] = sb[i]
	}
	ws, res := sop.simplexQP(c)
	w := make([]float64, op.n)
	for k, i := range support {
		w[i] = ws[k]
	}
	return w, res
}

// projectSimplex replaces z by its Euclidean projection onto the simplex
// {x ≥ 0, Σx = 1}: x = max(z − τ, 0), with τ by Michelot's algorithm as
// Condat (2016) states it: τ = (Σ_{i∈S} zᵢ − 1)/|S| over the candidates S,
// starting from all, then S = {zᵢ > τ} again until no candidate drops out
// (τ only grows, and the largest zᵢ always stays). buf has the length of z.
// Cost O(m) per pass, a few passes; no sort.
//
// References: Michelot, C. (1986), "A finite algorithm for finding the
// projection of a point onto the canonical simplex of Rⁿ", J. Optimization
// Theory and Applications 50(1):195–200. Condat, L. (2016), "Fast
// projection onto the simplex and the ℓ1 ball", Mathematical Programming
// 158:575–585.
func projectSimplex(z, buf []float64) {
	act := append(buf[:0], z...)
	var sum float64
	for _, v := range act {
		sum += v
	}
	tau := (sum - 1) / float64(len(act))
	for {
		keep := act[:0]
		sum = 0
		for _, v := range act {
			if v > tau {
				keep = append(keep, v)
				sum += v
			}
		}
		if len(keep) == len(act) {
			break
		}
		act = keep
		tau = (sum - 1) / float64(len(act))
	}
	for k := range z {
		z[k] = math.Max(z[k]-tau, 0)
	}
}

// Random test portfolios. Every draw comes from the rand.Rand it is given,
// seeded per rebalance date, so the portfolios do not depend on the order in
// which dates are processed.

// Bounds on the number of names of a random portfolio.
const (
	randomMinNames = 5
	randomMaxNames = 50
)

// randomLongOnly draws a long-only portfolio over n assets: a uniformly chosen
// number of names between randomMinNames and randomMaxNames (at most n),
// chosen at random, with weights from a flat Dirichlet distribution
// (independent unit exponentials divided by their sum).
func randomLongOnly(rs *rand.Rand, n int) []float64 {
	lo, hi := min(randomMinNames, n), min(randomMaxNames, n)
	k := lo + rs.IntN(hi-lo+1)
	w := make([]float64, n)
	var total float64
	for _, i := range rs.Perm(n)[:k] {
		w[i] = rs.ExpFloat64()
		total += w[i]
	}
	for i := range w {
		w[i] /= total
	}
	return w
}

// randomActive draws the active weights d − b of a random long-only
// portfolio d (randomLongOnly) against the benchmark b. The bias statistic
// does not depend on the scale of the active weights, so any mix
// (1 − c)·b + c·d tests the same thing.
func randomActive(rs *rand.Rand, b []float64) []float64 {
	a := randomLongOnly(rs, len(b))
	for i := range a {
		a[i] -= b[i]
	}
	return a
}

// largestNames returns the indexes of the m largest weights of b, ties broken
// by index, in increasing index order.
func largestNames(b []float64, m int) []int {
	idx := make([]int, len(b))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(i, j int) int {
		switch {
		case b[i] > b[j]:
			return -1
		case b[i] < b[j]:
			return 1
		}
		return 0
	})
	idx = idx[:min(m, len(idx))]
	slices.Sort(idx)
	return idx
}

func evalDot(x, y []float64) float64 {
	var s float64
	for i, v := range x {
		s += v * y[i]
	}
	return s
}

// evalAxpy adds s·x to y by dense.Axpy: each product rounded before it is
// added, so the digits of the plain loop, on the AVX2 kernel.
func evalAxpy(s float64, x, y []float64) { dense.Axpy(s, x, y) }

func evalSum(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s
}
