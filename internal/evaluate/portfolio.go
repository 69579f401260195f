package evaluate

import (
	"math"
	"math/rand/v2"
	"slices"

	"github.com/riskmodel/riskmodel"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
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
	lmax   float64 // largest eigenvalue of Σ (power iteration)
}

// newCovOp prepares the operations of c, a *factor.Model or a *mat.SymDense.
// A dense c that is not positive definite, or whose condition number passes
// gmvMaxCond, is solved with the ridge gmvRidge and flagged.
// Cost: O(N·K) for a factor model; one Cholesky, O(N³/3), for a dense one.
func newCovOp(c riskmodel.Covariance) *covOp {
	n := c.SymmetricDim()
	op := &covOp{n: n}
	switch s := c.(type) {
	case *factor.Model:
		op.mul = func(dst, x []float64) { s.MulVecTo(dst, x) }
		op.solve = func(dst, x []float64) { s.SolveVecTo(dst, x) }
	case *mat.SymDense:
		// A full copy: Gemv reads rows with unit stride, about twice as
		// fast as Symv on one triangle, and the long-only solver calls it
		// hundreds of times.
		full := evalFull(s).RawMatrix()
		op.mul = func(dst, x []float64) {
			blas64.Gemv(blas.NoTrans, 1, full, blas64.Vector{N: n, Inc: 1, Data: x}, 0, blas64.Vector{N: n, Inc: 1, Data: dst})
		}
		var chol mat.Cholesky
		if !chol.Factorize(s) || chol.Cond() > gmvMaxCond {
			var tr float64
			for i := 0; i < n; i++ {
				tr += s.At(i, i)
			}
			r := mat.NewSymDense(n, nil)
			r.CopySym(s)
			delta := gmvRidge * math.Max(tr/float64(n), math.SmallestNonzeroFloat64)
			for i := 0; i < n; i++ {
				r.SetSym(i, i, r.At(i, i)+delta)
			}
			op.ridged = true
			if !chol.Factorize(r) {
				op.solve = nil
				break
			}
		}
		op.solve = func(dst, x []float64) {
			v := mat.NewVecDense(n, dst)
			err := chol.SolveVecTo(v, mat.NewVecDense(n, x))
			if _, ill := err.(mat.Condition); err != nil && !ill {
				for i := range dst {
					dst[i] = math.NaN()
				}
			}
		}
	default:
		panic("riskmodel: evaluate: covariance is neither *factor.Model nor *mat.SymDense")
	}
	op.lmax = dense.LargestEigenvalue(n, op.mul)
	return op
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
//	f(w) = ½ wᵀΣw − cᵀw   subject to  w ≥ 0,  Σᵢ wᵢ = 1,  wᵢ = 0 off support
//
// (c nil means 0: the long-only minimum-variance portfolio; c = Σb gives the
// long-only portfolio of least tracking error against b) by accelerated
// projected gradient (FISTA, step 1/λmax) with an adaptive restart whenever
// the momentum points uphill, projecting onto the simplex by sorting. It stops
// when the Frank–Wolfe gap
//
//	g(w)ᵀw − minᵢ∈support gᵢ,   g = Σw − c,
//
// which bounds f(w) − f* from above, is below simplexTol·wᵀΣw, or after
// simplexMaxIter steps. support lists the allowed assets (nil: all). Cost:
// one product with Σ per step.
//
// References: Beck, A. & Teboulle, M. (2009), "A fast iterative
// shrinkage-thresholding algorithm for linear inverse problems", SIAM J.
// Imaging Sciences 2(1):183–202. O'Donoghue, B. & Candès, E. (2015),
// "Adaptive restart for accelerated gradient schemes", Foundations of
// Computational Mathematics 15(3):715–732. Duchi, J., Shalev-Shwartz, S.,
// Singer, Y. & Chandra, T. (2008), "Efficient projections onto the ℓ1-ball
// for learning in high dimensions", ICML, 272–279 (the sort-based simplex
// projection).
func (op *covOp) simplexQP(c []float64, support []int) ([]float64, simplexResult) {
	n := op.n
	if support == nil {
		support = make([]int, n)
		for i := range support {
			support[i] = i
		}
	}
	m := len(support)
	step := 1 / math.Max(op.lmax, math.SmallestNonzeroFloat64)
	w := make([]float64, n)
	for _, i := range support {
		w[i] = 1 / float64(m)
	}
	y := slices.Clone(w)
	prev := make([]float64, n)
	g := make([]float64, n)
	z := make([]float64, m)
	buf := make([]float64, m)
	theta := 1.0
	var res simplexResult
	grad := func(dst, x []float64) {
		op.mul(dst, x)
		if c != nil {
			for i := range dst {
				dst[i] -= c[i]
			}
		}
	}
	for res.Iterations = 1; res.Iterations <= simplexMaxIter; res.Iterations++ {
		grad(g, y)
		copy(prev, w)
		for k, i := range support {
			z[k] = y[i] - step*g[i]
		}
		projectSimplex(z, buf)
		for k, i := range support {
			w[i] = z[k]
		}
		// Optimality check at w.
		grad(g, w)
		var gw, cw float64
		gmin := math.Inf(1)
		for _, i := range support {
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
		for _, i := range support {
			up += (y[i] - w[i]) * (w[i] - prev[i])
		}
		if up > 0 {
			next, beta = 1, 0
		}
		theta = next
		for _, i := range support {
			y[i] = w[i] + beta*(w[i]-prev[i])
		}
	}
	res.Iterations = simplexMaxIter
	return w, res
}

// projectSimplex replaces z by its Euclidean projection onto the simplex
// {x ≥ 0, Σx = 1}: x = max(z − τ, 0) with τ from the sorted values. buf has
// the length of z. Cost O(m log m).
func projectSimplex(z, buf []float64) {
	copy(buf, z)
	slices.Sort(buf)
	var cum float64
	tau := 0.0
	for k := len(buf) - 1; k >= 0; k-- {
		cum += buf[k]
		t := (cum - 1) / float64(len(buf)-k)
		if k == 0 || buf[k-1] <= t {
			tau = t
			break
		}
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

func evalSum(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s
}
