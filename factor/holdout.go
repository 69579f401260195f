package factor

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/internal/dense"
)

// Holdout holds the forecast-accuracy scores of the candidate numbers of
// factors (Criteria HoldoutLikelihood and HoldoutMinVariance): each k-factor
// model is fitted, exactly as Fit would, on the first Fit dates of the
// window and scored on the last Dates dates. Slices run over k = 0..MaxFactors.
type Holdout struct {
	Fit, Dates int
	// Assets is the number of assets scored: those observed on every
	// held-out date (the likelihood is that of their marginal).
	Assets int
	// Loss is the mean Gaussian negative log-likelihood per held-out date,
	// ½·(ln det Σ_k + r_tᵀ·Σ_k⁻¹·r_t) (the constant ½·N·ln 2π dropped),
	// minus that of k = 0, so Loss[0] = 0.
	Loss []float64
	// MinVariance is the realised variance, per period, over the held-out
	// dates of the minimum-variance portfolio Σ_k⁻¹1/(1ᵀΣ_k⁻¹1).
	MinVariance []float64
	// Likelihood and MinVarianceK are the choices of the one-standard-error
	// rule: the smallest k whose score exceeds the best one by no more than
	// the standard error of the paired per-date differences (Breiman,
	// Friedman, Olshen & Stone 1984; Hastie, Tibshirani & Friedman 2009,
	// Section 7.10). Best and BestMinVariance are the plain minimizers.
	Likelihood, MinVarianceK        int
	BestLikelihood, BestMinVariance int
}

// DefaultHoldoutShare is the share of the window's dates held out when
// Settings.HoldoutDates is 0 (common practice for a single validation split,
// no source).
const DefaultHoldoutShare = 0.25

// holdout scores k = 0..kmax on the last h dates of the centered,
// mean-imputed working copy z (the selection pass's data), after fitting on
// the dates before them. The fitted part is re-centered on its own means and
// the held-out part by the same means, so no held-out return enters a fit.
// Cost: one principal-components pass on the fitted part, plus
// O(T·N·kmax + h·N·kmax²) for the residuals and the scores.
func (d *data) holdout(r resolved, kmax int) (Holdout, error) {
	t, n := d.z.Dims()
	h := r.HoldoutDates
	if h == 0 {
		h = int(math.Round(DefaultHoldoutShare * float64(t)))
	}
	t1 := t - h
	out := Holdout{Fit: t1, Dates: h}
	if h < 2 || t1 < 2 {
		return out, fmt.Errorf("%w: holdout of %d dates out of %d", ErrSettings, h, t)
	}
	kmax = min(kmax, t1-1, n-1)
	fit := mat.DenseCopyOf(d.z.Slice(0, t1, 0, n))
	test := mat.DenseCopyOf(d.z.Slice(t1, t, 0, n))
	mean := make([]float64, n)
	for i := 0; i < t1; i++ {
		for j, v := range fit.RawRowView(i) {
			mean[j] += v
		}
	}
	for j := range mean {
		mean[j] /= float64(t1)
	}
	for _, m := range []*mat.Dense{fit, test} {
		rows, _ := m.Dims()
		for i := 0; i < rows; i++ {
			row := m.RawRowView(i)
			for j := range row {
				row[j] -= mean[j]
			}
		}
	}
	fd := &data{z: fit}
	var p pcs
	if kmax > 0 {
		p = fd.decompose(r, min(kmax+5, t1, n), r.PowerIters, r.Seed, nil)
		for kmax > 0 && !(p.sq[kmax-1] > 1e-10*p.sq[0]) {
			kmax--
		}
	}
	var fk *mat.SymDense
	var ret *mat.Dense
	if kmax > 0 {
		p = truncate(p, kmax)
		ret = factorReturns(p)
		fk = &mat.SymDense{}
		if _, _, err := ewma.Estimate(fk, ret, r.Covariance); err != nil {
			return out, fmt.Errorf("factor: holdout factor covariance: %w", err)
		}
	}
	// Residuals of the k-factor fit, updated one factor at a time; missing
	// cells of the fitted part are NaN for the specific variances.
	resid := mat.DenseCopyOf(fit)
	work := mat.NewDense(t1, n, nil)
	miss := make([]int, 0)
	for _, pos := range d.missing {
		if pos/n < t1 {
			miss = append(miss, pos)
		}
	}
	// On exactly low-rank data the residuals are rounding noise: keep the
	// specific variances above 1e-12 of the mean variance, so the held-out
	// rounding noise does not dominate the likelihood.
	var level float64
	for _, v := range fit.RawMatrix().Data {
		level += v * v
	}
	level = 1e-12 * level / float64(t1*n)
	// Score only the assets observed on every held-out date: the marginal
	// of the Gaussian over them is exact, where a mean-imputed cell would
	// count as a zero return the factors should have explained.
	gone := make([]bool, n)
	for _, pos := range d.missing {
		if pos/n >= t1 {
			gone[pos%n] = true
		}
	}
	var keep []int
	for j, g := range gone {
		if !g {
			keep = append(keep, j)
		}
	}
	if len(keep) < 2 {
		return out, fmt.Errorf("%w: %d assets observed on every held-out date", ErrTooFewObs, len(keep))
	}
	out.Assets = len(keep)
	if len(keep) < n {
		sub := mat.NewDense(h, len(keep), nil)
		for i := 0; i < h; i++ {
			row, dst := test.RawRowView(i), sub.RawRowView(i)
			for c, j := range keep {
				dst[c] = row[j]
			}
		}
		test = sub
	}
	ones := make([]float64, len(keep))
	for i := range ones {
		ones[i] = 1
	}
	var base float64
	var perLoss, perMV [][]float64 // per held-out date, per k
	for k := 0; k <= kmax; k++ {
		if k > 0 {
			u, s := p.u.ColView(k-1), p.s[k-1]
			vk := mat.Col(nil, k-1, p.v)
			for i := 0; i < t1; i++ {
				row := resid.RawRowView(i)
				c := u.AtVec(i) * s
				for j, v := range vk {
					row[j] -= c * v
				}
			}
		}
		work.Copy(resid)
		raw := work.RawMatrix()
		for _, pos := range miss {
			raw.Data[(pos/n)*raw.Stride+pos%n] = math.NaN()
		}
		spec, _, err := specificVariances(work, r)
		if err != nil {
			return out, err
		}
		for i, v := range spec {
			spec[i] = math.Max(v, level)
		}
		var b *mat.Dense
		var f *mat.SymDense
		if k > 0 {
			b = mat.DenseCopyOf(p.v.Slice(0, n, 0, k))
			f = mat.NewSymDense(k, nil)
			for a := 0; a < k; a++ {
				for c := a; c < k; c++ {
					f.SetSym(a, c, fk.At(a, c))
				}
			}
		}
		m, err := NewModel(b, f, spec, Info{})
		if err != nil {
			return out, fmt.Errorf("factor: holdout model with %d factors: %w", k, err)
		}
		if len(keep) < n {
			m = m.Submodel(keep)
		}
		pl, pm := m.holdoutScores(test, ones)
		loss, mv := meanOf(pl), meanOf(pm)
		if k == 0 {
			base = loss
		}
		out.Loss = append(out.Loss, loss-base)
		out.MinVariance = append(out.MinVariance, mv)
		perLoss, perMV = append(perLoss, pl), append(perMV, pm)
	}
	out.BestLikelihood = argmin(out.Loss)
	out.BestMinVariance = argmin(out.MinVariance)
	out.Likelihood = oneSE(perLoss, out.BestLikelihood)
	out.MinVarianceK = oneSE(perMV, out.BestMinVariance)
	return out, nil
}

// oneSE returns the smallest k ≤ best whose per-date scores exceed those of
// best by at most one standard error of the mean paired difference.
func oneSE(per [][]float64, best int) int {
	h := float64(len(per[best]))
	for k := 0; k < best; k++ {
		var s, s2 float64
		for t, v := range per[k] {
			d := v - per[best][t]
			s += d
			s2 += d * d
		}
		m := s / h
		se := math.Sqrt(math.Max(s2/h-m*m, 0) / (h - 1))
		if m <= se {
			return k
		}
	}
	return best
}

func meanOf(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

// holdoutScores returns, for each row of test, the Gaussian negative
// log-likelihood (up to the constant) and the squared return of the model's
// minimum-variance portfolio. With Σ = W·Wᵀ + D, W = B·L and the
// Woodbury inner matrix I + WᵀD⁻¹W = C·Cᵀ (Cholesky):
//
//	ln det Σ = Σ ln dᵢ + 2·Σ ln C_jj,   rᵀΣ⁻¹r = rᵀD⁻¹r − ‖C⁻¹·WᵀD⁻¹r‖².
//
// Cost O(h·N·K + N·K²).
func (m *Model) holdoutScores(test *mat.Dense, ones []float64) (loss, mv []float64) {
	h, n := test.Dims()
	logdet := 0.0
	for _, v := range m.d {
		logdet += math.Log(v)
	}
	var g *mat.Dense
	if m.k > 0 {
		logdet += m.inner.LogDet()
		scaled := mat.NewDense(n, m.k, nil)
		for i := 0; i < n; i++ {
			src, dst := m.bl.RawRowView(i), scaled.RawRowView(i)
			for j, v := range src {
				dst[j] = v / m.d[i]
			}
		}
		g = dense.Mul(nil, test, scaled)
	}
	w := m.SolveVecTo(nil, ones)
	var sw float64
	for _, v := range w {
		sw += v
	}
	loss, mv = make([]float64, h), make([]float64, h)
	var sol mat.VecDense
	for t := 0; t < h; t++ {
		row := test.RawRowView(t)
		var q, pr float64
		for i, v := range row {
			q += v * v / m.d[i]
			pr += v * w[i]
		}
		if g != nil {
			gt := mat.NewVecDense(m.k, g.RawRowView(t))
			if err := m.inner.SolveVecTo(&sol, gt); err == nil {
				q -= mat.Dot(gt, &sol)
			}
		}
		pr /= sw
		loss[t] = 0.5 * (logdet + q)
		mv[t] = pr * pr
	}
	return loss, mv
}
