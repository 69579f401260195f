// Package shrink holds well-conditioned dense covariance estimators and the
// tools that make any symmetric matrix safe to hand to a portfolio optimizer.
//
// Every estimator takes a T×N matrix of returns (rows are dates, columns are
// assets) and optional observation weights w of length T (nil means equal
// weights; weights need not sum to one, they are normalised to ω_t = w_t/Σw).
// Each returns the covariance and a result struct with its diagnostics.
//
// Conventions shared by the estimators:
//
//   - The data are centred on their (weighted) column means before anything
//     else; the sample covariance is S = Σ_t ω_t (x_t − m)(x_t − m)ᵀ, which
//     with equal weights is the divisor-T covariance of the Ledoit–Wolf
//     papers and of scikit-learn. Estimators that follow a reference with
//     another divisor say so (Schäfer–Strimmer: T−1 as in R corpcor;
//     nonlinear shrinkage: T−1 as in Ledoit & Wolf 2020).
//   - Where an estimator needs the variance of an entry of S, weighted data
//     use the variance of a weighted mean, Σ_t ω_t² (a_t − ā)², which is the
//     papers' (1/T²) Σ_t (a_t − ā)² when the weights are equal. Where an
//     estimator needs a sample size n, weighted data use Kish's effective size
//     1/Σω_t², which is T when the weights are equal.
//   - Inputs must be finite; the first non-finite value is reported by row and
//     column in a *DataError. Nothing here has a missing-data rule.
//   - The result goes to dst, which comes first; a nil or empty dst is
//     allocated, and the methods that fill a destination end in To
//     (Implicit.DenseTo). Shape misuse (a dst or weight vector of the wrong
//     size) panics with mat.ErrShape before any data are read, as gonum
//     does. Inputs are never modified.
//   - Where N > T nothing eigen-decomposes an N×N matrix: the spectral
//     estimators work in the T×T Gram space, and the linear estimators have an
//     implicit form (Implicit) whose product costs O(N·T).
package shrink
