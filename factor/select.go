package factor

import (
	"fmt"
	"math"
	"slices"
)

// Criterion chooses the number of factors when Settings.K is 0.
type Criterion int

const (
	// BaiNgICp2 minimizes Bai & Ng (2002) IC_p2 over k = 0..MaxFactors (default).
	BaiNgICp2 Criterion = iota
	// BaiNgICp1 minimizes Bai & Ng (2002) IC_p1.
	BaiNgICp1
	// EigenvalueRatio maximizes Ahn & Horenstein (2013) ER.
	EigenvalueRatio
	// GrowthRatio maximizes Ahn & Horenstein (2013) GR.
	GrowthRatio
	// Onatski is the edge-distribution estimator of Onatski (2010).
	Onatski
	// MarchenkoPastur counts eigenvalues above the Marchenko–Pastur edge.
	MarchenkoPastur
	// HoldoutLikelihood minimizes the Gaussian negative log-likelihood of
	// the held-out last dates of the window under each k-factor model
	// fitted on the dates before them (see Holdout).
	HoldoutLikelihood
	// HoldoutMinVariance minimizes the held-out realised variance of each
	// k-factor model's minimum-variance portfolio (see Holdout).
	HoldoutMinVariance
)

var criterionNames = [...]string{"bai-ng-icp2", "bai-ng-icp1", "ahn-horenstein-er", "ahn-horenstein-gr", "onatski-ed", "marchenko-pastur", "holdout-likelihood", "holdout-min-variance"}

// String returns the criterion's name as recorded in Params.
func (c Criterion) String() string {
	if c < 0 || int(c) >= len(criterionNames) {
		return fmt.Sprintf("Criterion(%d)", int(c))
	}
	return criterionNames[c]
}

// Selection holds the number-of-factors diagnostics, all computed from the
// eigenvalues λ_1 ≥ λ_2 ≥ … of the sample covariance S = XᵀX/T (divisor T) of
// the centered, imputed T×N data X. Slices indexed by k run over
// k = 0..MaxFactors.
type Selection struct {
	MaxFactors int
	// Eigenvalues are λ_1..λ_p, p = MaxFactors + 5 (zeros past the rank).
	// On the randomized path the ones past K carry the sketch's error.
	Eigenvalues []float64
	Total       float64 // tr S = Σ of all eigenvalues
	// V is the mean squared residual of the k-factor fit,
	// V(k) = (tr S − Σ_{j≤k} λ_j)/N = (1/NT)·Σ ê².
	V []float64
	// ICp1(k) = ln V(k) + k·((N+T)/(NT))·ln(NT/(N+T)) and
	// ICp2(k) = ln V(k) + k·((N+T)/(NT))·ln min(N, T): Bai & Ng (2002), eq. (9).
	ICp1, ICp2 []float64
	// ER(k) = λ_k/λ_{k+1} and GR(k) = ln(1 + λ_k/W_k)/ln(1 + λ_{k+1}/W_{k+1}),
	// W_k = Σ_{j>k} λ_j, with the mock eigenvalue λ_0 = tr S/ln min(N, T):
	// Ahn & Horenstein (2013), eqs. (3.3)–(3.4) (equation numbers from memory).
	ER, GR []float64
	// OnatskiDelta is the final threshold δ = 2|β̂| of the edge-distribution
	// estimator; Onatski (2010), Section 3.
	OnatskiDelta float64
	// NoiseVariance σ² and Edge λ₊ = σ²(1 + √(N/T))² of the Marchenko–Pastur
	// count, with σ² = (tr S − Σ_{j≤k} λ_j)/(N − k) iterated to a fixed point.
	NoiseVariance, Edge float64
	// The number of factors each criterion gives.
	BaiNgP1, BaiNgP2, AhnHorensteinER, AhnHorensteinGR, OnatskiED, MarchenkoPastur int
	// Holdout holds the forecast-accuracy scores; nil unless a holdout
	// criterion was asked for.
	Holdout *Holdout
}

func (s Selection) clone() Selection {
	out := s
	out.Eigenvalues = slices.Clone(s.Eigenvalues)
	out.V = slices.Clone(s.V)
	out.ICp1 = slices.Clone(s.ICp1)
	out.ICp2 = slices.Clone(s.ICp2)
	out.ER = slices.Clone(s.ER)
	out.GR = slices.Clone(s.GR)
	if s.Holdout != nil {
		h := *s.Holdout
		h.Loss = slices.Clone(h.Loss)
		h.MinVariance = slices.Clone(h.MinVariance)
		out.Holdout = &h
	}
	return out
}

// chosen returns the number of factors criterion c gives.
func (s *Selection) chosen(c Criterion, best bool) int {
	switch c {
	case BaiNgICp1:
		return s.BaiNgP1
	case EigenvalueRatio:
		return s.AhnHorensteinER
	case GrowthRatio:
		return s.AhnHorensteinGR
	case Onatski:
		return s.OnatskiED
	case MarchenkoPastur:
		return s.MarchenkoPastur
	case HoldoutLikelihood, HoldoutMinVariance:
		if s.Holdout == nil {
			return s.BaiNgP2
		}
		h := s.Holdout
		if c == HoldoutMinVariance && h.flatMinVariance() {
			// Every k gives the same held-out minimum-variance risk (exactly
			// low-rank data: identical assets): the score cannot choose, so
			// the likelihood does.
			c = HoldoutLikelihood
		}
		switch {
		case c == HoldoutLikelihood && best:
			return s.Holdout.BestLikelihood
		case c == HoldoutLikelihood:
			return s.Holdout.Likelihood
		case best:
			return s.Holdout.BestMinVariance
		}
		return s.Holdout.MinVarianceK
	}
	return s.BaiNgP2
}

// selectFactors computes every criterion from the descending eigenvalues lam
// of S (at least kmax+5 of them, or all), their sum total, and the panel size.
// kmax is lowered to the numerical rank (eigenvalues above 1e-10·λ_1), so that
// exactly low-rank data can choose all their factors. Cost O(kmax²).
func selectFactors(lam []float64, total float64, n, t, kmax int) Selection {
	p := kmax + 5
	ev := make([]float64, p)
	copy(ev, lam)
	positive := 0
	for _, v := range ev {
		if v > 1e-10*ev[0] {
			positive++
		}
	}
	kmax = max(0, min(kmax, positive))
	s := Selection{MaxFactors: kmax, Eigenvalues: ev, Total: total}
	nf, tf := float64(n), float64(t)
	pen := (nf + tf) / (nf * tf)
	resid := total
	for k := 0; k <= kmax; k++ {
		if k > 0 {
			resid -= ev[k-1]
		}
		v := math.Max(resid, total*1e-300) / nf
		s.V = append(s.V, v)
		s.ICp1 = append(s.ICp1, math.Log(v)+float64(k)*pen*math.Log(nf*tf/(nf+tf)))
		s.ICp2 = append(s.ICp2, math.Log(v)+float64(k)*pen*math.Log(math.Min(nf, tf)))
	}
	s.BaiNgP1 = argmin(s.ICp1)
	s.BaiNgP2 = argmin(s.ICp2)

	// Ahn–Horenstein with the mock eigenvalue at k = 0.
	mock := total / math.Log(math.Max(math.Min(nf, tf), 3))
	lamk := func(k int) float64 {
		if k == 0 {
			return mock
		}
		return ev[k-1]
	}
	w := func(k int) float64 { // Σ_{j>k} λ_j
		r := total
		for j := 0; j < k; j++ {
			r -= ev[j]
		}
		return math.Max(r, total*1e-300)
	}
	for k := 0; k <= kmax; k++ {
		s.ER = append(s.ER, lamk(k)/lamk(k+1))
		s.GR = append(s.GR, math.Log1p(lamk(k)/w(k))/math.Log1p(lamk(k+1)/w(k+1)))
	}
	s.AhnHorensteinER = argmax(s.ER)
	s.AhnHorensteinGR = argmax(s.GR)

	s.OnatskiED, s.OnatskiDelta = onatski(ev, kmax)
	s.MarchenkoPastur, s.NoiseVariance, s.Edge = mpCount(ev, total, n, t, kmax)
	return s
}

// onatski is the edge-distribution estimator of Onatski (2010), Section 3:
// starting from j = kmax+1, regress λ_j..λ_{j+4} on (j−1)^{2/3}..(j+3)^{2/3},
// set δ = 2|β̂|, take K = max{i ≤ kmax : λ_i − λ_{i+1} ≥ δ} (0 if none), set
// j = K+1 and repeat until K is unchanged (at most 20 rounds).
func onatski(ev []float64, kmax int) (int, float64) {
	j := kmax + 1
	k, delta := 0, 0.0
	for round := 0; round < 20; round++ {
		var sx, sy, sxx, sxy float64
		for i := 0; i < 5; i++ {
			x := math.Pow(float64(j-1+i), 2.0/3)
			y := ev[j-1+i]
			sx += x
			sy += y
			sxx += x * x
			sxy += x * y
		}
		beta := (5*sxy - sx*sy) / (5*sxx - sx*sx)
		delta = 2 * math.Abs(beta)
		k = 0
		for i := kmax; i >= 1; i-- {
			if ev[i-1]-ev[i] >= delta {
				k = i
				break
			}
		}
		if k+1 == j {
			break
		}
		j = k + 1
	}
	return k, delta
}

// mpEdge returns the upper edge σ²(1 + √(N/T))² of the Marchenko–Pastur law
// for an N×N sample covariance of T observations with noise variance σ².
// Laloux, Cizeau, Bouchaud & Potters (1999).
func mpEdge(sigma2 float64, n, t int) float64 {
	r := 1 + math.Sqrt(float64(n)/float64(t))
	return sigma2 * r * r
}

// mpCount counts eigenvalues above the Marchenko–Pastur edge, estimating the
// noise variance from the eigenvalues below it; at most kmax are counted.
func mpCount(ev []float64, total float64, n, t, kmax int) (int, float64, float64) {
	k := 0
	var sigma2, edge float64
	for round := 0; round < 50; round++ {
		rest := total
		for j := 0; j < k; j++ {
			rest -= ev[j]
		}
		sigma2 = math.Max(rest, 0) / float64(n-k)
		edge = mpEdge(sigma2, n, t)
		next := 0
		for next < kmax && ev[next] > edge {
			next++
		}
		if next == k {
			break
		}
		k = next
	}
	return k, sigma2, edge
}

func argmin(x []float64) int {
	best := 0
	for i, v := range x {
		if v < x[best] {
			best = i
		}
	}
	return best
}

func argmax(x []float64) int {
	best := 0
	for i, v := range x {
		if v > x[best] {
			best = i
		}
	}
	return best
}

// flatMinVariance reports whether the held-out minimum-variance risks of
// all k agree to 1e-9 relative, so that they cannot choose a k.
func (h *Holdout) flatMinVariance() bool {
	if len(h.MinVariance) == 0 {
		return false
	}
	lo, hi := h.MinVariance[0], h.MinVariance[0]
	for _, v := range h.MinVariance {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	return hi-lo <= 1e-9*math.Abs(hi)
}
