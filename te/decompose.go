package te

import (
	"math"

	"gonum.org/v1/gonum/blas/blas64"
)

// Decomposition is the ex-ante tracking error of one portfolio against one
// benchmark, and its Euler allocation. All figures are per period; see
// Annualized. Slices indexed by asset have length N, in the model's order;
// Factors has length K.
//
// A Decomposition is made by DecomposeTo; its Groups methods need the
// Analyzer that made it. When the tracking error is zero (the portfolio equals the benchmark) every
// contribution, marginal contribution, percent and correlation is 0, not
// NaN.
type Decomposition struct {
	// TE is √(aᵀΣa) with a = portfolio − benchmark.
	TE float64
	// FactorVariance and SpecificVariance split TE² = xᵀFx + aᵀDa, x = Bᵀa.
	// For a dense covariance they are 0 and Factored is false.
	FactorVariance, SpecificVariance float64
	// Factored reports whether the factor/specific split, FactorPart,
	// SpecificPart, Factors and Specific are available. When false they are
	// zero or nil: a dense Σ carries no split, and te does not invent one.
	Factored bool

	// PortfolioRisk √(pᵀΣp) and BenchmarkRisk √(bᵀΣb) are total risks.
	PortfolioRisk, BenchmarkRisk float64
	// Beta is the portfolio's beta to the benchmark, pᵀΣb / bᵀΣb; 0 when the
	// benchmark has zero risk.
	Beta float64

	Active       []float64 // a_i = p_i − b_i
	Marginal     []float64 // (Σa)_i / TE
	Contribution []float64 // a_i (Σa)_i / TE; sums to TE
	Percent      []float64 // 100 · Contribution_i / TE
	FactorPart   []float64 // a_i (BFx)_i / TE
	SpecificPart []float64 // a_i² d_i / TE; FactorPart + SpecificPart = Contribution

	// Menchero–Davis form of each asset's contribution, a_i · σ_i · ρ_i:
	// Volatility σ_i = √Σ_ii and Correlation ρ_i = (Σa)_i / (σ_i TE), the
	// correlation of asset i's return with the active return.
	Volatility  []float64
	Correlation []float64

	// Litterman's hedges: Hedge_i is the trade in asset i alone (against
	// cash, which carries no risk) that minimises the tracking error,
	// −(Σa)_i / Σ_ii, and HedgedTE_i the tracking error after it,
	// √(TE² − (Σa)_i²/Σ_ii). Hedge is 0 and HedgedTE is TE for an asset
	// with Σ_ii = 0. The subtraction cancels for a near-perfect hedge, so
	// HedgedTE is accurate to about √ε·TE ≈ 1e-8·TE there.
	Hedge    []float64
	HedgedTE []float64

	// Factors holds each factor's exposure x_k, its volatility √F_kk, its
	// correlation with the active return and its contribution
	// x_k (Fx)_k / TE. Specific holds the same for the specific part taken
	// as one source of risk with exposure 1: volatility √(aᵀDa), correlation
	// √(aᵀDa)/TE, contribution aᵀDa/TE. Factor contributions plus the
	// specific contribution sum to TE.
	Factors  []Source
	Specific Source

	an  *Analyzer
	sa  []float64 // Σa
	fx  []float64 // F·x (factor form), for groups
	buf []float64 // scratch K-vectors
	gsc []float64 // scratch of GroupsTo
}

// Source is one source of tracking error in the Menchero–Davis form
//
//	Contribution = Exposure · Volatility · Correlation
//
// with Percent = 100 · Contribution / TE.
type Source struct {
	Exposure, Volatility, Correlation, Contribution, Percent float64
}

// Decompose returns the decomposition of the tracking error of portfolio
// against benchmark. It is DecomposeTo with a nil dst.
func (a *Analyzer) Decompose(portfolio, benchmark []float64) (*Decomposition, error) {
	return a.DecomposeTo(nil, portfolio, benchmark)
}

// DecomposeTo sets dst to the decomposition of the tracking error of
// portfolio against benchmark (both in the model's asset order) and returns
// it. A nil dst is allocated; a non-nil one is reused, its slices kept when
// they have the capacity, so repeated calls do not allocate (on error its
// contents are unspecified). The inputs are not modified. With a = p − b, x = Bᵀa:
//
//	TE² = aᵀΣa = xᵀFx + aᵀDa
//	marginal_i = (Σa)_i / TE,   contribution_i = a_i (Σa)_i / TE
//	factor k:   x_k (Fx)_k / TE,   asset i specific part: a_i² d_i / TE
//
// The contributions sum to TE (Euler's theorem: TE is homogeneous of degree
// one in a).
//
// DecomposeTo panics with mat.ErrShape if portfolio or benchmark does not have
// length N. It returns an *InputError wrapping ErrNonFinite for a non-finite
// weight (naming the vector and index), ErrEmpty if the portfolio holds
// nothing (all weights zero), and an *InputError wrapping ErrNotPSD if aᵀΣa
// is clearly negative. Cost O(N·K + K²) in factor form, O(N²) dense (Σa and Σb
// in one pass over Σ).
//
// References:
//
// Litterman, R. (1996). Hot spots and hedges. Journal of Portfolio
// Management, special issue (issue and pages not verified here).
//
// Menchero, J. & Davis, B. (2011). Risk contribution is exposure times
// volatility times correlation. Journal of Portfolio Management 37(2), 97–106.
func (a *Analyzer) DecomposeTo(dst *Decomposition, portfolio, benchmark []float64) (*Decomposition, error) {
	if !a.factored {
		if err := a.checkWeights(portfolio, benchmark); err != nil {
			return nil, err
		}
	}
	if dst == nil {
		dst = &Decomposition{}
	}
	n, k := a.n, a.k
	d := dst
	d.an = a
	d.Factored = a.factored
	d.sizeVectors(n, a.factored)
	act := d.Active

	// te2 = aᵀΣa, asb = aᵀΣb, bsb = bᵀΣb.
	var te2, asb, bsb float64
	if a.factored {
		kp := a.kp
		d.fx = grow(d.fx, kp)
		d.buf = grow(d.buf, 2*kp)
		if cap(d.Factors) < k {
			d.Factors = make([]Source, k)
		}
		d.Factors = d.Factors[:k]
		// One pass over B for x = Bᵀa and Bᵀb; the second, below, gives
		// Σa = B·(Fx) + D·a and every per-asset figure.
		fv, sv, ab, bb, err := a.factorVariances(act, portfolio, benchmark, d.buf[:kp], d.buf[kp:], d.fx)
		if err != nil {
			return nil, err
		}
		d.FactorVariance, d.SpecificVariance = fv, sv
		te2, asb, bsb = fv+sv, ab, bb
	} else {
		for i := range act {
			act[i] = portfolio[i] - benchmark[i]
		}
		d.FactorPart, d.SpecificPart, d.Factors, d.fx = nil, nil, nil, nil
		d.FactorVariance, d.SpecificVariance = 0, 0
		d.buf = grow(d.buf, n)
		sb := d.buf
		symv(a.sym, act, d.sa, benchmark, sb)
		te2 = dot(act, d.sa)
		asb = dot(act, sb)
		bsb = dot(benchmark, sb)
		var err error
		if te2, err = clampVariance(te2, act, a.diag); err != nil {
			return nil, err
		}
	}
	te := math.Sqrt(te2)
	d.TE = te
	bsb = max(0, bsb)
	d.BenchmarkRisk = math.Sqrt(bsb)
	// pᵀΣp = aᵀΣa + 2aᵀΣb + bᵀΣb and pᵀΣb = aᵀΣb + bᵀΣb, from p = a + b.
	d.PortfolioRisk = math.Sqrt(max(0, te2+2*asb+bsb))
	d.Beta = 0
	if bsb > 0 {
		d.Beta = (asb + bsb) / bsb
	}

	inv := 0.0
	if te > 0 {
		inv = 1 / te
	}
	if a.factored {
		f := factorRows{b: a.b.Data, ldb: a.kp, kp: a.kp, fx: d.fx,
			act: act, d: a.d, isd: a.isd, idg: a.idg,
			sa: d.sa, fp: d.FactorPart, sp: d.SpecificPart, mg: d.Marginal, ct: d.Contribution,
			pc: d.Percent, cr: d.Correlation, hg: d.Hedge, ht: d.HedgedTE}
		factorFigures(&f, te2, inv)
	} else {
		d.perAsset(te2, inv)
	}
	copy(d.Volatility, a.sd)
	if a.factored {
		x := d.buf[:k]
		for j := range d.Factors {
			sd := math.Sqrt(a.f.Data[j*k+j])
			c := x[j] * d.fx[j] * inv
			s := Source{Exposure: x[j], Volatility: sd, Contribution: c, Percent: 100 * c * inv}
			if sd > 0 {
				s.Correlation = d.fx[j] * inv / sd
			}
			d.Factors[j] = s
		}
		sd := math.Sqrt(d.SpecificVariance)
		c := d.SpecificVariance * inv
		d.Specific = Source{Exposure: 1, Volatility: sd, Correlation: sd * inv, Contribution: c, Percent: 100 * c * inv}
	} else {
		d.Specific = Source{}
	}
	return d, nil
}

// perAsset fills the per-asset figures of a dense Σ from Σa (d.sa); the
// factor form has its own pass, factorFigures. (Shared among two cores they were
// slower: waking a goroutine costs more than the AVX2 loop.)
func (d *Decomposition) perAsset(te2, inv float64) {
	n := d.an.n
	act := d.Active[:n]
	// Slices cut to the same length as act let the compiler drop bounds
	// checks and keep the headers in registers (stores through d could
	// otherwise alias them).
	sa, mg, ct, pc := d.sa[:n], d.Marginal[:n], d.Contribution[:n], d.Percent[:n]
	cr, hg, ht := d.Correlation[:n], d.Hedge[:n], d.HedgedTE[:n]
	isd, idg := d.an.isd[:n], d.an.idg[:n]
	// The first assets four at a time with AVX2 (the same roundings), the
	// rest here.
	done := vectorFigures(act, sa, isd, idg, mg, ct, pc, cr, hg, ht, te2, inv)
	for i := done; i < n; i++ {
		ai := act[i]
		sai := sa[i]
		mg[i] = sai * inv
		c := ai * sai * inv
		ct[i] = c
		pc[i] = 100 * c * inv
		// isd and idg are 0 where Σ_ii = 0: correlation and hedge 0, TE kept.
		cr[i] = sai * inv * isd[i]
		h := -sai * idg[i]
		hg[i] = h
		ht[i] = math.Sqrt(max(0, te2+float64(sai*h)))
	}
}

// Annual is a decomposition's headline figures annualised.
type Annual struct {
	TE, PortfolioRisk, BenchmarkRisk float64
}

// Annualized returns TE, PortfolioRisk and BenchmarkRisk scaled by
// √periodsPerYear (see Annualize). Contributions scale by the same factor.
func (d *Decomposition) Annualized(periodsPerYear float64) Annual {
	return Annual{
		TE:            Annualize(d.TE, periodsPerYear),
		PortfolioRisk: Annualize(d.PortfolioRisk, periodsPerYear),
		BenchmarkRisk: Annualize(d.BenchmarkRisk, periodsPerYear),
	}
}

// sizeVectors gives every per-asset slice of d length n (FactorPart and
// SpecificPart only for a factor form), keeping them when they all have the
// capacity, else allocating them together (vectors).
func (d *Decomposition) sizeVectors(n int, factored bool) {
	all := [...]*[]float64{&d.Active, &d.sa, &d.Marginal, &d.Contribution, &d.Percent, &d.Volatility,
		&d.Correlation, &d.Hedge, &d.HedgedTE, &d.FactorPart, &d.SpecificPart}
	vs := all[:len(all)-2]
	if factored {
		vs = all[:]
	}
	for _, v := range vs {
		if cap(*v) < n {
			for j, s := range vectors(n, len(vs)) {
				*vs[j] = s
			}
			break
		}
	}
	for _, v := range vs {
		*v = (*v)[:n]
	}
}

// vectors returns count slices of length and capacity n cut from one
// allocation, each starting an odd number of 64-byte lines after the one
// before. Slices allocated one by one at these sizes sit at the same
// offset modulo 4096 bytes, so that a loop over a dozen of them at once
// maps them all to the same sets of the L1 cache (8 ways) and misses
// nearly every time; staggered, they spread over the sets.
func vectors(n, count int) [][]float64 {
	stride := (n + 7) &^ 7 // whole lines of 8 values
	if stride/8%2 == 0 {
		stride += 8
	}
	buf := make([]float64, stride*count)
	vs := make([][]float64, count)
	for j := range vs {
		vs[j] = buf[j*stride : j*stride+n : j*stride+n]
	}
	return vs
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

func diagOf(m blas64.General) []float64 {
	d := make([]float64, m.Rows)
	for i := range d {
		d[i] = max(0, m.Data[i*m.Stride+i])
	}
	return d
}
