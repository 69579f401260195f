package factor

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/internal/dense"
)

// Fit builds a statistical factor model from the T×N returns x (rows are
// dates, oldest first; columns are assets; NaN is missing):
//
//	X − 1μᵀ ≈ U·S·Vᵀ (rank K),   B = V,   factor returns R = U·S = (X − 1μᵀ)·V,
//	Σ = B·F·Bᵀ + D,   F = ewma.Estimate(R),   D = diag(shrunk, floored residual variances).
//
// The loadings are orthonormal (BᵀB = I), so factor k's return is that of
// the portfolio with weights column k of B. μ is each asset's mean return
// (zero with AssumeCentered).
//
// Principal components: the exact eigendecomposition of the smaller Gram
// matrix (SolverGram; the T×T one when N > T) or the randomized truncated
// SVD (SolverRandomized) with Oversample extra columns and PowerIters power
// iterations from a Gaussian sketch seeded with Seed. The result is
// deterministic for a given seed, bit-identical for any GOMAXPROCS.
//
// Missing returns are imputed by iterated rank-K fits (hard impute, an EM
// algorithm for the principal-components model): start from each asset's
// mean; then repeatedly set every missing cell to μ_j plus its value in the
// current rank-K fit, update the means and refit (randomized: one power
// iteration warm-started from the previous V). The iteration stops when the
// imputed values change by less than Tol relative to the data,
//
//	‖X̂_new − X̂_old‖_missing / ‖X − 1μᵀ‖_F < Tol,
//
// or after MaxIter refits; Info.Imputation reports which. K and the
// selection diagnostics are computed on the mean-imputed data of the first
// pass, before any refit. Observed returns are never changed; residuals and
// specific variances use observed cells only.
//
// Number of factors: K if given, else the Criterion over k = 0..MaxFactors;
// all criteria are reported in Info.Selection (see Selection). The holdout
// criteria also refit on the first dates and score the last HoldoutDates
// (see Holdout). MaxFactors is capped at the data's numerical rank, so
// exactly low-rank data can choose all of their factors.
//
// Corrections (Settings.Adjust, see Adjustments): the dispersion-corrected
// leading eigenvector, the eigen-adjusted F and the volatility-regime
// multipliers of F and D, each reported in Info.
//
// Specific variances: d̂_i is the exponentially weighted variance of asset
// i's residuals around zero (ewma.Variances, half-life SpecificHalfLife,
// weights renormalized over its observed dates, divisor Σw). It is shrunk
// toward the plain mean d̄_g of its group,
//
//	d̃_i = (1 − λ_g)·d̂_i + λ_g·d̄_g,   λ_g = min(1, Σ_{i∈g} Var̂(d̂_i) / Σ_{i∈g} (d̂_i − d̄_g)²),
//
// the intensity of Schäfer & Strimmer (2005), Table 1, target "diagonal,
// common variance", applied within each group, with
// Var̂(d̂_i) = Σŵ²·Σŵ_t(e_ti² − d̂_i)²/(1 − Σŵ²) for the normalized weights ŵ
// (or the fixed SpecificShrink), then floored at SpecificFloor (default 1 %
// of the median d̃; common practice, no source), so no asset has zero risk.
//
// Alignment: with Previous, the factors are rotated by the orthogonal R that
// minimizes ‖B·R − B_prev‖_F over the common assets (orthogonal Procrustes,
// Schönemann 1966), so factors keep their order and sign night to night;
// Info.Alignment holds R and the principal angles between the two loading
// spaces (Björck & Golub 1973). The rotation is applied after F and D are
// estimated, as B ← B·R and F ← Rᵀ·F·R, which leaves B·F·Bᵀ unchanged
// whatever the half-lives: D is bit-identical with or without Previous and
// B·F·Bᵀ equal up to the rounding of the two K×K products. (Estimating F on
// rotated factor returns would not be: with different volatility and
// correlation half-lives D·C·D is not rotation-equivariant.)
//
// Fit panics with mat.ErrShape if Groups, Assets or PreviousIndex is neither
// nil nor of length N. It returns an error wrapping ErrSettings for bad
// settings, ErrTooFewObs for T or N below 2, ErrTooManyFactors for
// K ≥ min(N, T) or K above the rank of the data, ErrNonFinite for an Inf
// (naming date and asset), ErrNoObservations for an asset with fewer than 2
// observations, ErrEmptyDate for a date with none, ErrPrevious for a previous
// model that does not fit, ErrSettings or ErrTooFewObs for a holdout or a
// regime burn-in the window is too short for, and errors of package ewma.
//
// Cost: O(T·N·l·(2·PowerIters + 2)) for the randomized SVD with
// l = max(K, MaxFactors + 5) + Oversample, plus O(T·N·(K + Oversample)) per
// impute–refit step, plus O(T·N·K) for the residuals. Memory: one T×N copy of
// the data plus O((T + N)·l); no N×N matrix.
//
// References:
// Halko, N., Martinsson, P.G. and Tropp, J.A. (2011), "Finding structure
// with randomness", SIAM Review 53(2):217–288.
// Connor, G. and Korajczyk, R.A. (1986), "Performance measurement with the
// arbitrage pricing theory", J. Financial Economics 15(3):373–394.
// Bai, J. and Ng, S. (2002), "Determining the number of factors in
// approximate factor models", Econometrica 70(1):191–221.
// Ahn, S.C. and Horenstein, A.R. (2013), "Eigenvalue ratio test for the
// number of factors", Econometrica 81(3):1203–1227.
// Onatski, A. (2010), "Determining the number of factors from empirical
// distribution of eigenvalues", Rev. Economics and Statistics 92(4):1004–1016.
// Schäfer, J. and Strimmer, K. (2005), "A shrinkage approach to large-scale
// covariance matrix estimation", Stat. Appl. Genet. Mol. Biol. 4(1):32.
// Schönemann, P.H. (1966), "A generalized solution of the orthogonal
// Procrustes problem", Psychometrika 31(1):1–10.
// Björck, Å. and Golub, G.H. (1973), "Numerical methods for computing angles
// between linear subspaces", Math. Comp. 27(123):579–594.
// Troyanskaya, O. et al. (2001), "Missing value estimation methods for DNA
// microarrays", Bioinformatics 17(6):520–525 (iterated SVD imputation).
func Fit(x mat.Matrix, s Settings) (*Model, error) {
	t, n := x.Dims()
	if (s.Groups != nil && len(s.Groups) != n) || (s.Assets != nil && len(s.Assets) != n) ||
		(s.PreviousIndex != nil && len(s.PreviousIndex) != n) {
		panic(mat.ErrShape)
	}
	if t < 2 || n < 2 {
		return nil, fmt.Errorf("%w: T = %d, N = %d", ErrTooFewObs, t, n)
	}
	r, err := s.resolve(t, n)
	if err != nil {
		return nil, err
	}
	d, err := prepare(x, r.AssumeCentered)
	if err != nil {
		return nil, err
	}
	info := Info{Method: r.Solver.String(), Params: r.params(), Assets: s.Assets}

	// First pass on the mean-imputed data: spectrum, selection, K.
	sketch := min(max(r.K, r.kmax+5), t, n)
	p := d.decompose(r, sketch, r.PowerIters, r.Seed, nil)
	total := d.sumSquares()
	lam := make([]float64, len(p.sq))
	for i, v := range p.sq {
		lam[i] = v / float64(t)
	}
	sel := selectFactors(lam, total/float64(t), n, t, r.kmax)
	if r.K == 0 && (r.Criterion == HoldoutLikelihood || r.Criterion == HoldoutMinVariance) {
		h, err := d.holdout(r, sel.MaxFactors)
		if err != nil {
			return nil, err
		}
		sel.Holdout = &h
	}
	info.Selection = &sel
	k := r.K
	if k > 0 {
		info.Reason = fmt.Sprintf("fixed by caller (%s would choose %d over k = 0..%d)", r.Criterion, sel.chosen(r.Criterion, r.HoldoutBest), sel.MaxFactors)
	} else {
		k = sel.chosen(r.Criterion, r.HoldoutBest)
		info.Reason = fmt.Sprintf("%s choice over k = 0..%d", r.Criterion, sel.MaxFactors)
		if r.HoldoutBest && sel.Holdout != nil {
			info.Reason = fmt.Sprintf("%s choice (best held-out score) over k = 0..%d", r.Criterion, sel.MaxFactors)
		}
	}
	if k > 0 && !(p.sq[k-1] > 1e-10*p.sq[0]) {
		return nil, fmt.Errorf("%w: K = %d but the data have numerical rank below it", ErrTooManyFactors, k)
	}
	p = truncate(p, k)

	info.Imputation = Imputation{Missing: len(d.missing), Converged: true}
	if len(d.missing) > 0 && k > 0 {
		p, info.Imputation = d.impute(r, p, k)
	}

	// Everything is estimated on the unrotated factors; the alignment comes
	// last and only re-expresses the result, so Σ does not depend on whether
	// a previous model was given.
	if r.Adjust.Weighted && k > 0 {
		p, info.Weighting = d.weighted(r, p, k)
	}
	b, ret := p.v, factorReturns(p)
	if r.Adjust.Dispersion && k > 0 {
		ret, info.Dispersion = d.dispersion(r, b, p.sq)
	}
	var f *mat.SymDense
	if k > 0 {
		f = &mat.SymDense{}
		if _, _, err := ewma.Estimate(f, ret, r.Covariance); err != nil {
			return nil, fmt.Errorf("factor: factor covariance: %w", err)
		}
		if r.Adjust.Eigen {
			a := r.Adjust.resolved()
			var err error
			if f, info.Eigen, err = EigenAdjust(f, f, EigenAdjustSettings{
				Covariance: r.Covariance, Dates: t, Sims: a.EigenSims, Scale: a.EigenScale, Seed: r.Seed,
			}); err != nil {
				return nil, err
			}
		}
	}

	resid := d.residuals(ret, b)
	spec, sp, err := specificVariances(resid, r)
	if err != nil {
		return nil, err
	}
	info.Specific = sp
	if r.Adjust.Regime {
		if err := regime(r, f, spec, ret, resid, &info); err != nil {
			return nil, err
		}
	}

	if s.Previous != nil && k > 0 {
		var al *Alignment
		b, f, al, err = align(b, f, s.Previous, s.PreviousIndex)
		if err != nil {
			return nil, err
		}
		info.Alignment = al
	}
	return NewModel(b, f, spec, info)
}

// data is the working copy of the returns: centered, with missing cells
// holding their current imputed (centered) value.
type data struct {
	z       *mat.Dense
	missing []int // row-major positions of missing cells
}

// prepare copies x, validates it and centers each column over its
// observations; missing cells start at the column mean (0 after centering).
// Columns are handled in blocks spread over the cores; each column is still
// summed over its dates in order, so the means do not depend on GOMAXPROCS,
// and errors name the first bad cell in row-major order.
func prepare(x mat.Matrix, assumeCentered bool) (*data, error) {
	t, n := x.Dims()
	var src []float64
	stride := n
	if rm, ok := x.(mat.RawMatrixer); ok {
		raw := rm.RawMatrix()
		src, stride = raw.Data, raw.Stride
	} else {
		src = mat.DenseCopyOf(x).RawMatrix().Data
	}
	z := mat.NewDense(t, n, nil)
	zd := z.RawMatrix().Data
	obs := make([]int, n)
	sum := make([]float64, n)
	const width = 256 // columns per block
	blocks := (n + width - 1) / width
	type scan struct {
		missing []int
		inf     int    // row-major position of the block's first Inf, or -1
		seen    []bool // seen[i]: date i has an observation in the block
	}
	scans := make([]scan, blocks)
	dense.Parallel(blocks, func(b int) {
		lo, hi := b*width, min((b+1)*width, n)
		sc := scan{inf: -1, seen: make([]bool, t)}
		for i := 0; i < t; i++ {
			row := src[i*stride : i*stride+hi]
			for j := lo; j < hi; j++ {
				v := row[j]
				switch {
				case math.IsNaN(v):
					sc.missing = append(sc.missing, i*n+j)
					continue
				case math.IsInf(v, 0):
					if sc.inf < 0 {
						sc.inf = i*n + j
					}
					continue
				}
				obs[j]++
				sum[j] += v
				sc.seen[i] = true
			}
		}
		scans[b] = sc
	})
	inf, empty := -1, -1
	var missing []int
	for i := 0; i < t && empty < 0; i++ {
		seen := false
		for b := range scans {
			seen = seen || scans[b].seen[i]
		}
		if !seen {
			empty = i
		}
	}
	for b := range scans {
		if p := scans[b].inf; p >= 0 && (inf < 0 || p < inf) {
			inf = p
		}
		missing = append(missing, scans[b].missing...)
	}
	// The sequential scan meets an Inf before the end of its own date.
	if inf >= 0 && (empty < 0 || inf/n <= empty) {
		i, j := inf/n, inf%n
		return nil, fmt.Errorf("%w: %v at date %d, asset %d", ErrNonFinite, src[i*stride+j], i, j)
	}
	if empty >= 0 {
		return nil, fmt.Errorf("%w: date %d", ErrEmptyDate, empty)
	}
	if blocks > 1 {
		slices.Sort(missing) // row-major, as the imputation expects
	}
	for j, c := range obs {
		if c < 2 {
			return nil, fmt.Errorf("%w: asset %d has %d observations, need 2", ErrNoObservations, j, c)
		}
		sum[j] /= float64(c)
		if assumeCentered {
			sum[j] = 0
		}
	}
	dense.Parallel(blocks, func(b int) {
		lo, hi := b*width, min((b+1)*width, n)
		for i := 0; i < t; i++ {
			row := src[i*stride : i*stride+hi]
			out := zd[i*n : i*n+hi]
			for j := lo; j < hi; j++ {
				if v := row[j]; !math.IsNaN(v) {
					out[j] = v - sum[j]
				}
			}
		}
	})
	return &data{z: z, missing: missing}, nil
}

func (d *data) sumSquares() float64 {
	raw := d.z.RawMatrix()
	var s float64
	for _, v := range raw.Data[:raw.Rows*raw.Stride] {
		s += v * v
	}
	return s
}

// decompose returns the leading r principal components of the current data.
func (d *data) decompose(s resolved, r, iters int, seed uint64, start *mat.Dense) pcs {
	if s.Solver == SolverGram {
		p, ok := gramSVD(d.z, r, s.Oversample, iters, seed)
		if !ok {
			panic("factor: eigendecomposition of the Gram matrix failed")
		}
		return p
	}
	return randomizedSVD(d.z, r, s.Oversample, iters, seed, start)
}

// impute runs the impute–refit iterations described in Fit.
func (d *data) impute(s resolved, p pcs, k int) (pcs, Imputation) {
	t, n := d.z.Dims()
	raw := d.z.RawMatrix()
	scale := math.Sqrt(d.sumSquares())
	info := Imputation{Missing: len(d.missing)}
	shift := make([]float64, n)
	fitted := make([]float64, len(d.missing))
	for it := 1; it <= s.MaxIter; it++ {
		clear(shift)
		var change float64
		for m, pos := range d.missing {
			i, j := pos/n, pos%n
			var v float64
			ui, vj := p.u.RawRowView(i), p.v.RawRowView(j)
			for c := 0; c < k; c++ {
				v += ui[c] * p.s[c] * vj[c]
			}
			fitted[m] = v
			delta := v - raw.Data[i*raw.Stride+j]
			change += delta * delta
			shift[j] += delta
		}
		// Completed value c = μ + z; the new column mean moves by shift/T.
		for j := range shift {
			shift[j] /= float64(t)
		}
		for i := 0; i < t; i++ {
			row := raw.Data[i*raw.Stride : i*raw.Stride+n]
			for j := range row {
				row[j] -= shift[j]
			}
		}
		for m, pos := range d.missing {
			i, j := pos/n, pos%n
			raw.Data[i*raw.Stride+j] = fitted[m] - shift[j]
		}
		scale = math.Sqrt(d.sumSquares())
		info.Change = math.Sqrt(change) / scale
		info.Iterations = it
		if s.Solver == SolverGram && min(t, n) <= gramLimit {
			p = truncate(d.decompose(s, k, 0, 0, nil), k)
		} else {
			// One warm-started subspace step: no oversampling, no extra power iteration.
			p = randomizedSVD(d.z, k, 0, 0, 0, p.v)
		}

		if info.Change < s.Tol {
			info.Converged = true
			break
		}
	}
	return p, info
}

// residuals overwrites the working copy with the residuals Z − R·Bᵀ, NaN at
// missing cells, and returns it.
func (d *data) residuals(ret, b *mat.Dense) *mat.Dense {
	if b != nil {
		dense.SubMul(d.z, ret, b.T())
	}
	raw := d.z.RawMatrix()
	_, n := d.z.Dims()
	for _, pos := range d.missing {
		raw.Data[(pos/n)*raw.Stride+pos%n] = math.NaN()
	}
	return d.z
}

// truncate keeps the leading k components of p.
func truncate(p pcs, k int) pcs {
	if k == 0 {
		return pcs{s: nil, sq: p.sq}
	}
	t, _ := p.u.Dims()
	n, _ := p.v.Dims()
	return pcs{
		u:  mat.DenseCopyOf(p.u.Slice(0, t, 0, k)),
		v:  mat.DenseCopyOf(p.v.Slice(0, n, 0, k)),
		s:  append([]float64(nil), p.s[:k]...),
		sq: p.sq,
	}
}

// factorReturns returns U·S, T×K.
func factorReturns(p pcs) *mat.Dense {
	if p.u == nil {
		return nil
	}
	ret := mat.DenseCopyOf(p.u)
	t, k := ret.Dims()
	for i := 0; i < t; i++ {
		row := ret.RawRowView(i)
		for c := 0; c < k; c++ {
			row[c] *= p.s[c]
		}
	}
	return ret
}
