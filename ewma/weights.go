package ewma

import (
	"math"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Decay returns the decay factor λ of a half-life h in periods:
//
//	λ = 0.5^(1/h)
//
// so that an observation h periods old has half the weight of today's. It
// returns NaN for h ≤ 0 or non-finite h.
//
// References: J.P. Morgan/Reuters (1996), RiskMetrics — Technical Document,
// 4th ed., chapter 5.
func Decay(halfLife float64) float64 {
	if !validHalfLife(halfLife) {
		return math.NaN()
	}
	return math.Pow(0.5, 1/halfLife)
}

// HalfLife returns the half-life in periods of a decay factor λ:
//
//	h = ln 0.5 / ln λ
//
// +Inf for λ = 1 (equal weights) and NaN for λ outside (0, 1].
//
// References: J.P. Morgan/Reuters (1996), RiskMetrics — Technical Document,
// 4th ed., chapter 5.
func HalfLife(lambda float64) float64 {
	if !validDecay(lambda) {
		return math.NaN()
	}
	if lambda == 1 {
		return math.Inf(1)
	}
	return math.Ln2 / -math.Log(lambda)
}

// Weights returns n weights, oldest first and newest last, with λ = Decay(h):
//
//	w_i = λ^(n−1−i) / Σ_k λ^k,   i = 0 … n−1
//
// normalised to sum to 1, and writes them to dst. A nil or empty dst is
// allocated; a dst of another length than n panics with mat.ErrShape.
//
// Weights returns an error wrapping ErrHalfLife if h ≤ 0 or is not finite,
// and ErrLength if n < 1. Cost O(n).
//
// References: J.P. Morgan/Reuters (1996), RiskMetrics — Technical Document,
// 4th ed., chapter 5.
func Weights(dst []float64, n int, halfLife float64) ([]float64, error) {
	if !validHalfLife(halfLife) {
		return dst, errAt(ErrHalfLife, -1, -1, -1, halfLife)
	}
	return DecayWeights(dst, n, Decay(halfLife))
}

// DecayWeights is Weights for a decay factor 0 < λ ≤ 1 instead of a
// half-life; λ = 1 gives equal weights 1/n. It returns an error wrapping
// ErrDecay for λ outside (0, 1] and ErrLength if n < 1. Cost O(n).
//
// References: J.P. Morgan/Reuters (1996), RiskMetrics — Technical Document,
// 4th ed., chapter 5.
func DecayWeights(dst []float64, n int, lambda float64) ([]float64, error) {
	if !validDecay(lambda) {
		return dst, errAt(ErrDecay, -1, -1, -1, lambda)
	}
	if n < 1 {
		return dst, errAt(ErrLength, -1, -1, -1, float64(n))
	}
	dst = dense.SizeVec(dst, n)
	// Build from the newest backwards so every power is one multiplication
	// from its neighbour; the sum is accumulated from the small end.
	p := 1.0
	for i := n - 1; i >= 0; i-- {
		dst[i] = p
		p *= lambda
	}
	var s float64
	for _, v := range dst {
		s += v
	}
	for i := range dst {
		dst[i] /= s
	}
	return dst, nil
}

// RecursionWeights returns the n weights, oldest first, that the recursion
// m_t = λ m_{t−1} + (1 − λ) x_t started at m_0 = x_0 gives to x_0 … x_{n−1}:
//
//	w_0 = λ^(n−1),   w_i = (1 − λ) λ^(n−1−i)   for i ≥ 1
//
// They sum to 1. These are the weights of pandas' ewm(adjust=False) on
// complete data; with them every estimator of this package reproduces
// adjust=False results. Errors as for DecayWeights. Cost O(n).
//
// References: pandas 1.5.3 documentation, "Exponentially weighted window",
// adjust=False.
func RecursionWeights(dst []float64, n int, lambda float64) ([]float64, error) {
	if !validDecay(lambda) {
		return dst, errAt(ErrDecay, -1, -1, -1, lambda)
	}
	if n < 1 {
		return dst, errAt(ErrLength, -1, -1, -1, float64(n))
	}
	dst = dense.SizeVec(dst, n)
	p := 1.0
	for i := n - 1; i >= 1; i-- {
		dst[i] = (1 - lambda) * p
		p *= lambda
	}
	dst[0] = p
	return dst, nil
}

// EffectiveObs returns the effective number of observations of a weight
// vector (Kish's effective sample size):
//
//	n_eff = (Σ w)² / Σ w²
//
// It equals n for equal weights and is about (1 + λ)/(1 − λ) for long
// exponential windows. Zero for an empty or all-zero vector. Cost O(n).
//
// References: Kish, L. (1965), Survey Sampling, Wiley, section 11.7.
func EffectiveObs(w []float64) float64 {
	var s, s2 float64
	for _, v := range w {
		s += v
		s2 += v * v
	}
	if s2 == 0 {
		return 0
	}
	return s * s / s2
}

func validHalfLife(h float64) bool { return h > 0 && !math.IsInf(h, 1) && !math.IsNaN(h) }

func validDecay(l float64) bool { return l > 0 && l <= 1 }
