package main

import (
	"errors"
	"math"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// errInfeasible reports caps that cannot hold a fully invested portfolio.
var errInfeasible = errors.New("the maximum weights sum to less than 1: no fully invested portfolio fits")

// project sets dst to the Euclidean projection of v onto the capped simplex
// {w : Σ w_i = 1, 0 ≤ w_i ≤ caps_i} and returns it. The projection is
// w_i = min(caps_i, max(0, v_i − τ)), where the sum s(τ) is continuous and
// non-increasing in τ; τ is bracketed by bisection until the set of names at
// 0, at their cap and in between stops changing, then solved exactly on
// that linear piece. Cost O(N log(1/ε)).
func project(dst, v, caps []float64) ([]float64, error) {
	n := len(v)
	if dst == nil {
		dst = make([]float64, n)
	}
	var capSum float64
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, x := range v {
		capSum += caps[i]
		if caps[i] > 0 {
			lo, hi = math.Min(lo, x-caps[i]), math.Max(hi, x)
		}
	}
	if capSum < 1-1e-12 {
		return nil, errInfeasible
	}
	sum := func(tau float64) float64 {
		var s float64
		for i, x := range v {
			s += math.Min(caps[i], math.Max(0, x-tau))
		}
		return s
	}
	// s(lo) = capSum ≥ 1 and s(hi) = 0.
	lo -= 1
	for it := 0; it < 200 && hi-lo > 1e-15*math.Max(1, math.Abs(hi)); it++ {
		mid := lo + (hi-lo)/2
		if sum(mid) >= 1 {
			lo = mid
		} else {
			hi = mid
		}
	}
	// On the piece containing τ, the free names (0 < v_i − τ < cap_i) give
	// Σ_free (v_i − τ) + Σ_capped cap_i = 1.
	tau := lo
	var free int
	var freeSum, capped float64
	for i, x := range v {
		switch d := x - tau; {
		case caps[i] <= 0 || d <= 0:
		case d >= caps[i]:
			capped += caps[i]
		default:
			free++
			freeSum += x
		}
	}
	if free > 0 {
		tau = (freeSum + capped - 1) / float64(free)
	}
	for i, x := range v {
		dst[i] = math.Min(caps[i], math.Max(0, x-tau))
	}
	return dst, nil
}

// mulVec is Σx.
type mulVec func(dst, x []float64) []float64

// rebalance minimises (w − b)ᵀΣ(w − b) over the capped simplex from the
// start w0 by projected gradient with step 1/L, L = 2·lambdaMax (λ_max of
// Σ on the plane Σ w_i = 1, from tangentEigenvalue). It returns
// the weights, the per-period tracking error at each accepted step (the
// first is the projected start's) and whether the weights settled (no
// weight moved more than tol in the last step) within maxIter iterations.
func rebalance(mul mulVec, b, w0, caps []float64, lambdaMax float64, maxIter int, tol float64) ([]float64, []float64, bool, error) {
	n := len(b)
	w, err := project(nil, w0, caps)
	if err != nil {
		return nil, nil, false, err
	}
	a := make([]float64, n)
	g := make([]float64, n)
	v := make([]float64, n)
	next := make([]float64, n)
	te := func(w []float64) float64 {
		for i := range a {
			a[i] = w[i] - b[i]
		}
		mul(g, a)
		var q float64
		for i := range a {
			q += a[i] * g[i]
		}
		return math.Sqrt(math.Max(q, 0))
	}
	step := 1 / (2 * lambdaMax)
	path := []float64{te(w)}
	for it := 0; it < maxIter; it++ {
		// g holds Σ(w − b) from the last te call.
		for i := range v {
			v[i] = w[i] - step*2*g[i]
		}
		if _, err := project(next, v, caps); err != nil {
			return nil, nil, false, err
		}
		if f := te(next); f > path[len(path)-1]*(1+1e-12) {
			// λ_max was underestimated: halve the step and retry from w.
			step /= 2
			te(w)
			continue
		}
		te(next) // leave Σ(next − b) in g
		var moved float64
		for i := range w {
			moved = math.Max(moved, math.Abs(next[i]-w[i]))
		}
		w, next = next, w
		path = append(path, te(w))
		if moved < tol {
			return w, path, true, nil
		}
	}
	return w, path, false, nil
}

// tangentEigenvalue returns the largest eigenvalue of Σ on the plane
// Σ_i w_i = 1, λ_max(QΣQ) with Q = I − 11ᵀ/n (dense.PlaneTopEigenvalue,
// Lanczos), raised by 1 % so that 1/(2λ) stays a safe step. Every feasible
// point lies on that plane, so the difference of two of them does too, and
// the gradient step needs the curvature of f only in those directions (Beck
// & Teboulle 2009: L is a Lipschitz constant of ∇f on the feasible set). In
// an equity market the largest eigenvector of Σ lies close to the
// equal-weighted portfolio, which Q removes, so λ_max(QΣQ) is several times
// smaller than λ_max(Σ) and the step as many times longer; rebalance halves
// the step should the estimate still fall short. Where QΣQ is zero (one
// name, or names that are all alike) it falls back to 1ᵀΣ1/n, and to 1 when
// Σ is zero too or there are no names.
func tangentEigenvalue(mul mulVec, n int) float64 {
	top, equal := dense.PlaneTopEigenvalue(n, func(dst, x []float64) { mul(dst, x) })
	if top <= 1e-12*equal || top <= 0 {
		top = equal
	}
	if top <= 0 {
		top = 1
	}
	return 1.01 * top
}
