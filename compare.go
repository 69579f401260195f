package riskmodel

import (
	"cmp"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/te"
)

// DefaultCompareTop is the number of largest risk changes Compare lists.
const DefaultCompareTop = 10

// CompareOptions configure Compare. A nil *CompareOptions or a zero field
// means the documented default.
type CompareOptions struct {
	// Top is the number of largest changes in asset risk to list; default
	// DefaultCompareTop.
	Top int
	// Portfolio and Benchmark, if Portfolio is set, are the test portfolio
	// whose tracking error both models forecast. Held assets a model does
	// not cover count as cash (zero risk) for that model.
	Portfolio, Benchmark map[string]float64
}

// Comparison says how a new model differs from the previous one: the
// day-over-day check a nightly job logs before it publishes.
type Comparison struct {
	Previous, Current Date // the two models' as-of dates
	// Common assets are in both models; Added are only in the new one and
	// Removed only in the previous one.
	Common, Added, Removed int

	// Angles are the principal angles, in radians and ascending, between the
	// two models' factor loading spaces over the common assets: 0 means the
	// factor space did not move, π/2 that a direction is new. There are
	// min(K_prev, K_new) of them; nil unless both models are in factor form.
	Angles []float64

	// RiskKind is "specific" when both models are in factor form (the
	// changes are in specific volatility √d_i) and "total" otherwise (in
	// total volatility √Σ_ii). Changes lists the Top common assets with the
	// largest absolute change, largest first; volatilities are annualised.
	RiskKind string
	Changes  []RiskChange

	// TEPrevious and TECurrent are the annualised tracking errors of the
	// test portfolio under the previous and the new model; HasTE is false
	// (and they are 0) without a test portfolio.
	HasTE                     bool
	TEPrevious, TECurrent     float64
	CashPrevious, CashCurrent float64 // held weight treated as cash by each model
}

// RiskChange is one asset's annualised volatility under two models.
type RiskChange struct {
	Asset             string
	Previous, Current float64
}

// Change returns Current − Previous.
func (c RiskChange) Change() float64 { return c.Current - c.Previous }

// MaxAngle returns the largest principal angle, 0 when there is none.
func (c *Comparison) MaxAngle() float64 {
	if len(c.Angles) == 0 {
		return 0
	}
	return c.Angles[len(c.Angles)-1]
}

// Compare compares the model next with the model prev. The principal angles
// θ_k between the column spaces of the two loading matrices (over the common
// assets, rows in the same order) are
//
//	cos θ_k = σ_k(Q_prevᵀ Q_next),   Q from the thin QR factorization of B
//
// (Björck & Golub 1973), so they do not depend on any rotation of the factors.
// The tracking errors are √(aᵀΣa)·√PeriodsPerYear with each model's own
// periods per year.
//
// Compare returns an error from package te when the test portfolio has a
// non-finite weight or holds nothing. Cost O(N·K²) for factor models, O(N)
// for the risk changes of dense ones, plus the two tracking errors.
//
// References:
//
// Björck, Å. & Golub, G. H. (1973). Numerical methods for computing angles
// between linear subspaces. Mathematics of Computation 27(123), 579–594.
func Compare(prev, next *Model, opts *CompareOptions) (*Comparison, error) {
	var o CompareOptions
	if opts != nil {
		o = *opts
	}
	if o.Top == 0 {
		o.Top = DefaultCompareTop
	}
	c := &Comparison{Previous: prev.AsOf, Current: next.AsOf, RiskKind: "total"}
	pos := make(map[string]int, len(prev.Assets))
	for i, a := range prev.Assets {
		pos[a] = i
	}
	var ip, in []int // positions of the common assets in prev and next
	for i, a := range next.Assets {
		if j, ok := pos[a]; ok {
			ip = append(ip, j)
			in = append(in, i)
		}
	}
	c.Common = len(in)
	c.Added = len(next.Assets) - c.Common
	c.Removed = len(prev.Assets) - c.Common

	specific := prev.Factor != nil && next.Factor != nil
	if specific {
		c.RiskKind = "specific"
		c.Angles = principalAngles(prev.Factor.LoadingsTo(nil), next.Factor.LoadingsTo(nil), ip, in)
	}
	riskPrev, riskNext := assetVols(prev, specific), assetVols(next, specific)
	for k := range in {
		c.Changes = append(c.Changes, RiskChange{
			Asset:    next.Assets[in[k]],
			Previous: riskPrev[ip[k]] * math.Sqrt(prev.PeriodsPerYear),
			Current:  riskNext[in[k]] * math.Sqrt(next.PeriodsPerYear),
		})
	}
	slices.SortStableFunc(c.Changes, func(a, b RiskChange) int {
		return cmp.Compare(math.Abs(b.Change()), math.Abs(a.Change()))
	})
	c.Changes = c.Changes[:min(o.Top, len(c.Changes))]

	if o.Portfolio != nil {
		var err error
		if c.TEPrevious, c.CashPrevious, err = annualTE(prev, o.Portfolio, o.Benchmark); err != nil {
			return nil, err
		}
		if c.TECurrent, c.CashCurrent, err = annualTE(next, o.Portfolio, o.Benchmark); err != nil {
			return nil, err
		}
		c.HasTE = true
	}
	return c, nil
}

// assetVols returns each asset's specific volatility √d_i (a factor model,
// when specific is true) or total volatility √Σ_ii, per period. A comparison
// across forms (factor against dense) compares total against total.
func assetVols(m *Model, specific bool) []float64 {
	var v []float64
	if specific {
		v = m.Factor.SpecificVariancesTo(nil)
	} else {
		c := m.Covariance()
		v = make([]float64, len(m.Assets))
		for i := range v {
			v[i] = c.At(i, i)
		}
	}
	for i, x := range v {
		v[i] = math.Sqrt(math.Max(x, 0))
	}
	return v
}

// principalAngles returns the principal angles between the column spaces of
// the rows rp of bp and the rows rn of bn, ascending; nil when either has no
// factor or there are fewer common rows than factors.
func principalAngles(bp, bn *mat.Dense, rp, rn []int) []float64 {
	if bp == nil || bn == nil {
		return nil
	}
	_, kp := bp.Dims()
	_, kn := bn.Dims()
	n := len(rp)
	if kp == 0 || kn == 0 || n < max(kp, kn) {
		return nil
	}
	qp, qn := orthoRows(bp, rp), orthoRows(bn, rn)
	var prod mat.Dense
	prod.Mul(qp.T(), qn)
	var svd mat.SVD
	if !svd.Factorize(&prod, mat.SVDNone) {
		return nil
	}
	s := svd.Values(nil) // descending
	out := make([]float64, len(s))
	for i, x := range s {
		out[i] = math.Acos(math.Min(1, math.Max(-1, x)))
	}
	return out
}

// orthoRows returns an orthonormal basis (n×k) of the columns of b's rows
// rows, by a thin QR factorization.
func orthoRows(b *mat.Dense, rows []int) *mat.Dense {
	_, k := b.Dims()
	sub := mat.NewDense(len(rows), k, nil)
	for i, r := range rows {
		sub.SetRow(i, b.RawRowView(r))
	}
	var qr mat.QR
	qr.Factorize(sub)
	var q mat.Dense
	qr.QTo(&q)
	return mat.DenseCopyOf(q.Slice(0, len(rows), 0, k))
}

// annualTE returns the annualised tracking error of portfolio against
// benchmark under m, with uncovered holdings as cash, and the held weight
// treated as cash.
func annualTE(m *Model, portfolio, benchmark map[string]float64) (float64, float64, error) {
	al, err := te.Align(m.Assets, portfolio, benchmark, &te.AlignOptions{UncoveredAsCash: true})
	if err != nil {
		return 0, 0, err
	}
	an, err := te.NewAnalyzer(m.Covariance())
	if err != nil {
		return 0, 0, err
	}
	x, err := an.TrackingError(al.Portfolio, al.Benchmark)
	if err != nil {
		return 0, 0, err
	}
	return te.Annualize(x, m.PeriodsPerYear), al.CashPortfolio + al.CashBenchmark, nil
}
