package factor

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// DefaultWeightPasses is the number of reweighted principal-component passes
// of Adjustments.Weighted when WeightPasses is zero. Connor & Korajczyk
// (1988) rescale once; in the package's simulations with widely spread
// specific volatilities the first pass takes the factor space most of the
// way (TestWeightedOnHeteroskedasticMarkets: the true minimum-variance loss
// falls by 50 % after one pass, 53 % after two), so one pass is the
// default and Weighting.Angles shows what a further pass would still move.
const DefaultWeightPasses = 1

// Weighting reports Adjustments.Weighted: the passes made and, for each
// pass, the largest principal angle (radians) between the factor space
// before and after it, so a user sees whether the reweighting converged.
type Weighting struct {
	Passes int
	Angles []float64
	// MinWeight and MaxWeight are the smallest and largest specific
	// volatilities the last pass divided by, relative to their median.
	MinWeight, MaxWeight float64
}

// weighted replaces the K principal components p of the working data by
// those of the data with each asset's column divided by its residual
// volatility under the current fit (Adjustments.Weighted):
//
//	σ̂_j² = mean over observed t of (z_tj − (U·S·Vᵀ)_tj)²,   Z̃ = Z·diag(1/σ̂),
//	Z̃ ≈ Ũ·S̃·Ṽᵀ (rank K),   span B = span diag(σ̂)·Ṽ.
//
// The K-dimensional factor space is then expressed in Fit's usual form: an
// orthonormal basis B of it (QR), rotated to the principal axes of the
// returns inside it (the eigenvectors of BᵀZᵀZB), so the loadings stay
// orthonormal, the factors are ordered by variance and the dispersion
// correction sees the leading one first. Under heteroskedastic specific
// risk the unweighted components lean toward the noisiest assets; dividing
// by σ̂ is the generalized-least-squares step of Connor & Korajczyk (1988)
// and the first step of the maximum-likelihood estimator of Bai & Li
// (2012). Cost per pass: one principal-components decomposition of T×N and
// O(T·N·K) products.
func (d *data) weighted(r resolved, p pcs, k int) (pcs, *Weighting) {
	t, n := d.z.Dims()
	passes := r.Adjust.WeightPasses
	if passes == 0 {
		passes = DefaultWeightPasses
	}
	missing := make([]bool, t*n)
	for _, pos := range d.missing {
		missing[pos] = true
	}
	obs := make([]int, n)
	for j := range obs {
		obs[j] = t
	}
	for _, pos := range d.missing {
		obs[pos%n]--
	}
	rep := &Weighting{Passes: passes}
	vol := make([]float64, n)
	// One T×N buffer: the current fit, then the rescaled data.
	fit := mat.NewDense(t, n, nil)
	scaled := &data{z: fit}
	for pass := 0; pass < passes; pass++ {
		// Residual volatility of each asset under the current fit.
		dense.Mul(fit, factorReturns(p), p.v.T())
		clear(vol)
		for i := 0; i < t; i++ {
			zr, fr, miss := d.z.RawRowView(i), fit.RawRowView(i), missing[i*n:(i+1)*n]
			for j, v := range zr {
				if !miss[j] {
					e := v - fr[j]
					vol[j] += e * e
				}
			}
		}
		for j := range vol {
			vol[j] = math.Sqrt(vol[j] / float64(max(obs[j], 1)))
		}
		// A floor at 1 % of the median volatility keeps an asset the fit
		// explains exactly (or a constant one) from dominating.
		med := median(vol)
		if !(med > 0) {
			// The fit explains most assets exactly: there is no noise to
			// weight by, and the factor space stays as it is.
			rep.Passes = pass
			break
		}
		floor := 0.01 * med
		for j := range vol {
			vol[j] = math.Max(vol[j], floor)
		}
		for i := 0; i < t; i++ {
			src, dst := d.z.RawRowView(i), scaled.z.RawRowView(i)
			for j := range dst {
				dst[j] = src[j] / vol[j]
			}
		}
		pw := scaled.weightedComponents(r, k, p.v, vol)
		b := mat.NewDense(n, k, nil)
		for j := 0; j < n; j++ {
			src, dst := pw.v.RawRowView(j), b.RawRowView(j)
			for c := range dst {
				dst[c] = src[c] * vol[j]
			}
		}
		orthonormalize(b)
		next := principalAxes(d.z, b, p.sq)
		ang := principalAngles(p.v, next.v)
		rep.Angles = append(rep.Angles, ang[len(ang)-1])
		p = next
		if pass == passes-1 {
			rep.MinWeight, rep.MaxWeight = slices.Min(vol)/med, slices.Max(vol)/med
		}
	}
	return p, rep
}

// weightedComponents returns the leading k principal components of the
// rescaled data d (columns divided by vol). As in the imputation's refits,
// the exact Gram route is used when min(T, N) ≤ 300 (gramLimit); otherwise
// the randomized one starts from the current loadings divided by vol
// (the weighted space's first guess) and takes two power iterations instead
// of PowerIters from a random sketch (one left a subspace distance of 2e-2
// to the exact route in TestWeightedRandomizedMatchesExact, two 1.4e-3).
func (d *data) weightedComponents(r resolved, k int, v *mat.Dense, vol []float64) pcs {
	t, n := d.z.Dims()
	if r.Solver == SolverGram && min(t, n) <= gramLimit {
		return truncate(d.decompose(r, k, r.PowerIters, r.Seed, nil), k)
	}
	start := mat.NewDense(n, k, nil)
	for j := 0; j < n; j++ {
		src, dst := v.RawRowView(j), start.RawRowView(j)
		for c := range dst {
			dst[c] = src[c] / vol[j]
		}
	}
	return truncate(randomizedSVD(d.z, k, r.Oversample, 2, r.Seed, start), k)
}

// principalAxes expresses the factor space of the orthonormal N×K basis b
// as principal components of z: R = Z·B, RᵀR = W·S²·Wᵀ (descending),
// U = R·W·S⁻¹, V = B·W. The returned spectrum is sq with its first K
// entries replaced by S², the variance the factor space captures.
func principalAxes(z, b *mat.Dense, sq []float64) pcs {
	t, _ := z.Dims()
	n, k := b.Dims()
	ret := dense.Mul(mat.NewDense(t, k, nil), z, b)
	g := mat.NewSymDense(k, nil)
	g.SymOuterK(1, ret.T())
	var es dense.EigenSym
	if !es.Factorize(g, true) {
		panic("factor: eigendecomposition of the factor space failed")
	}
	vals := es.Values(nil)
	var w mat.Dense
	es.VectorsTo(&w)
	// Descending order.
	order := make([]int, k)
	for i := range order {
		order[i] = k - 1 - i
	}
	wd := mat.NewDense(k, k, nil)
	s := make([]float64, k)
	for c, o := range order {
		for i := 0; i < k; i++ {
			wd.Set(i, c, w.At(i, o))
		}
		s[c] = math.Sqrt(math.Max(vals[o], 0))
	}
	sq = slices.Clone(sq)
	for c := 0; c < k && c < len(sq); c++ {
		sq[c] = s[c] * s[c]
	}
	out := pcs{u: dense.Mul(mat.NewDense(t, k, nil), ret, wd), v: dense.Mul(mat.NewDense(n, k, nil), b, wd), s: s, sq: sq}
	for c := 0; c < k; c++ {
		if s[c] > 0 {
			col := out.u.ColView(c).(*mat.VecDense)
			col.ScaleVec(1/s[c], col)
		}
	}
	fixSigns(out)
	return out
}

func median(x []float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}
