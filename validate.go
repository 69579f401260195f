package riskmodel

import (
	"fmt"
	"math"

	"github.com/riskmodel/riskmodel/internal/dense"
	"gonum.org/v1/gonum/mat"
)

// DefaultMaxCondition is the condition number above which Validate reports a
// model as ill-conditioned for an optimizer (common practice, no source: a
// covariance whose condition number passes 1e8 loses half the digits of a
// double in a solve).
const DefaultMaxCondition = 1e8

// ValidateOptions configure Validate. A nil *ValidateOptions or a zero field
// means the documented default.
type ValidateOptions struct {
	// Universe lists assets the model must cover; nil skips the check.
	Universe []string
	// MaxCondition is the largest acceptable condition number; default
	// DefaultMaxCondition.
	MaxCondition float64
	// Returns, if set, holds realised returns (a trailing window) for the bias
	// statistic of the Portfolio's forecast.
	Returns *Panel
	// Portfolio maps assets to the weights of the test portfolio of the bias
	// statistic; nil means equal weights over the model's assets.
	Portfolio map[string]float64
}

// Validation is the result of Validate. Problems lists, in words, every
// check that failed; a model with no problems is safe to publish.
type Validation struct {
	Finite    bool
	Symmetric bool
	// PositiveDefinite is true when the smallest eigenvalue is positive (a
	// Cholesky factorization succeeded for a dense model; D > 0 and F
	// positive semidefinite for a factor model).
	PositiveDefinite bool
	// MinEigenvalue and MaxEigenvalue are the extreme eigenvalues, found by
	// the Lanczos method on Σ⁻¹ and Σ (each within about 1e-9 relative of an
	// eigenvalue, or after 300 steps), and Condition their ratio.
	MinEigenvalue, MaxEigenvalue, Condition float64
	Uncovered                               []string // Universe assets missing from the model
	Bias                                    *Bias    // nil without Returns
	Problems                                []string
}

// OK reports whether every check passed.
func (v *Validation) OK() bool { return len(v.Problems) == 0 }

// Bias is the bias statistic of a forecast: the standard deviation of the
// test portfolio's realised returns divided by its forecast volatility. It is
// near 1 for a good forecast; the approximate 95 % band 1 ± √(2/T) over T
// observations is common practice, no single source. Validate computes it on
// the trailing window the caller passes, which usually overlaps the dates the
// model was fitted on, so it is an in-sample sanity check.
type Bias struct {
	Observations int
	First, Last  Date // the first and last dates of the returns
	Value        float64
	Lower, Upper float64
	Inside       bool
}

// Validate checks that a model is fit to hand to an optimizer: finite,
// symmetric, positive definite, with a condition number below the maximum,
// covering the universe, and with a plausible bias statistic when returns
// are given. Cost: O(N²) per Lanczos step and one Cholesky (O(N³)) for a
// dense model; O(N·K) per step for a factor model.
func Validate(m *Model, opts *ValidateOptions) *Validation {
	var o ValidateOptions
	if opts != nil {
		o = *opts
	}
	if o.MaxCondition == 0 {
		o.MaxCondition = DefaultMaxCondition
	}
	v := &Validation{Finite: true, Symmetric: true}
	if err := m.check(); err != nil {
		v.problem("%v", err)
		return v
	}
	var op operators
	if m.Factor != nil {
		op = v.factorOperators(m)
	} else if op = v.denseOperators(m); op.mul == nil {
		return v
	}
	v.spectrum(len(m.Assets), op, o.MaxCondition)
	v.coverage(m, o.Universe)
	if o.Returns != nil {
		v.bias(m, o.Returns, o.Portfolio)
	}
	return v
}

func (v *Validation) problem(format string, args ...any) {
	v.Problems = append(v.Problems, fmt.Sprintf(format, args...))
}

// operators are a model's covariance as products: mul sets dst = Σx, solve
// sets dst = Σ⁻¹x and reports whether the solve gave finite numbers.
type operators struct {
	mul   func(dst, x []float64)
	solve func(dst, x []float64) bool
}

// factorOperators: NewModel has already checked finiteness, F ⪰ 0 and D > 0,
// and a factor model is symmetric by construction, so it is positive
// definite; Σx and the Woodbury solve cost O(N·K).
func (v *Validation) factorOperators(m *Model) operators {
	f := m.Factor
	v.PositiveDefinite = true
	return operators{
		mul:   func(dst, x []float64) { f.MulVecTo(dst, x) },
		solve: func(dst, x []float64) bool { f.SolveVecTo(dst, x); return true },
	}
}

// denseOperators checks a dense covariance element by element and factors
// it by the blocked multi-core Cholesky of internal/dense (O(N³/3)). It
// returns no operators when an element is not finite.
func (v *Validation) denseOperators(m *Model) operators {
	s := m.Dense
	n := len(m.Assets)
	raw := s.RawSymmetric()
	for i := 0; i < n && v.Finite; i++ {
		for _, x := range raw.Data[i*raw.Stride+i : i*raw.Stride+n] {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				v.Finite = false
				break
			}
		}
	}
	if !v.Finite {
		v.problem("the covariance has a non-finite element")
		return operators{}
	}
	// A SymDense stores one triangle, so it is symmetric by construction;
	// check the diagonal, which must be a variance.
	for i := 0; i < n; i++ {
		if s.At(i, i) < 0 {
			v.problem("asset %s has a negative variance %g", m.Assets[i], s.At(i, i))
			break
		}
	}
	var chol dense.Cholesky // blocked, on all cores
	v.PositiveDefinite = chol.Factorize(s)
	return operators{
		mul: func(dst, x []float64) { dense.SymVec(dst, raw, x) },
		solve: func(dst, x []float64) bool {
			for _, y := range chol.SolveVecTo(dst, x) {
				if math.IsNaN(y) || math.IsInf(y, 0) {
					return false
				}
			}
			return true
		},
	}
}

// spectrum sets the extreme eigenvalues by the Lanczos method on Σ and, when Σ
// is positive definite, on Σ⁻¹, and the condition number from them.
func (v *Validation) spectrum(n int, op operators, maxCondition float64) {
	v.MaxEigenvalue = dense.TopEigenvalue(n, op.mul)
	if v.PositiveDefinite {
		inv := dense.TopEigenvalue(n, func(dst, x []float64) {
			if !op.solve(dst, x) {
				clear(dst)
			}
		})
		if inv > 0 {
			v.MinEigenvalue = 1 / inv
		}
	}
	if !v.PositiveDefinite || !(v.MinEigenvalue > 0) {
		v.problem("the covariance is not positive definite")
		v.Condition = math.Inf(1)
		return
	}
	v.Condition = v.MaxEigenvalue / v.MinEigenvalue
	if v.Condition > maxCondition {
		v.problem("condition number %.3g is above the maximum %.3g", v.Condition, maxCondition)
	}
}

// coverage lists the universe's assets that the model lacks.
func (v *Validation) coverage(m *Model, universe []string) {
	if universe == nil {
		return
	}
	have := make(map[string]bool, len(m.Assets))
	for _, a := range m.Assets {
		have[a] = true
	}
	for _, a := range universe {
		if !have[a] {
			v.Uncovered = append(v.Uncovered, a)
		}
	}
	if len(v.Uncovered) > 0 {
		v.problem("%d universe assets are not covered, first %s", len(v.Uncovered), v.Uncovered[0])
	}
}

// bias sets the bias statistic of the test portfolio over the returns.
func (v *Validation) bias(m *Model, r *Panel, portfolio map[string]float64) {
	b, err := BiasStatistic(m, r, portfolio)
	if err != nil {
		v.problem("bias statistic: %v", err)
		return
	}
	v.Bias = b
	if p := b.Problem(); p != "" {
		v.problem("%s", p)
	}
}

// BiasStatistic computes the bias statistic of the model's forecast for a
// portfolio (nil: equal weights over the model's assets) over the returns of
// r. Assets of the portfolio that r lacks, and missing returns, count as a
// zero return on that date. The portfolio's assets must all be in the model.
func BiasStatistic(m *Model, r *Panel, portfolio map[string]float64) (*Bias, error) {
	n := len(m.Assets)
	w := make([]float64, n)
	if portfolio == nil {
		for i := range w {
			w[i] = 1 / float64(n)
		}
	} else {
		pos := make(map[string]int, n)
		for i, a := range m.Assets {
			pos[a] = i
		}
		for a, x := range portfolio {
			i, ok := pos[a]
			if !ok {
				return nil, fmt.Errorf("portfolio asset %s is not in the model", a)
			}
			w[i] = x
		}
	}
	sigma := math.Sqrt(quadForm(m, w))
	if !(sigma > 0) {
		return nil, fmt.Errorf("the portfolio's forecast volatility is %g", sigma)
	}
	t, _ := r.Dims()
	if t < 2 {
		return nil, fmt.Errorf("%w: %d dates of returns", ErrEmpty, t)
	}
	cols := make([]int, n)
	for i, a := range m.Assets {
		j, ok := r.Column(a)
		if !ok {
			j = -1
		}
		cols[i] = j
	}
	z := make([]float64, t)
	for d := 0; d < t; d++ {
		var ret float64
		for i, j := range cols {
			if j >= 0 {
				if x := r.At(d, j); !math.IsNaN(x) {
					ret += w[i] * x
				}
			}
		}
		z[d] = ret / sigma
	}
	var mean, ss float64
	for _, x := range z {
		mean += x
	}
	mean /= float64(t)
	for _, x := range z {
		ss += (x - mean) * (x - mean)
	}
	b := &Bias{Observations: t, First: r.Date(0), Last: r.Date(t - 1), Value: math.Sqrt(ss / float64(t-1))}
	half := math.Sqrt(2 / float64(t))
	b.Lower, b.Upper = 1-half, 1+half
	b.Inside = b.Value >= b.Lower && b.Value <= b.Upper
	return b, nil
}

// quadForm returns wᵀΣw for the model's covariance.
func quadForm(m *Model, w []float64) float64 {
	if m.Factor != nil {
		return m.Factor.QuadForm(w)
	}
	x := mat.NewVecDense(len(w), w)
	return mat.Inner(x, m.Dense, x)
}
