// Package ewma computes exponentially weighted moments of a T×N matrix of
// returns (rows are dates, oldest first; columns are assets; NaN is missing):
// weights from a half-life or a decay, weighted means, variances, covariances
// and correlations, the Newey–West adjustment for serial correlation, the
// risk forecast Σ = D·C·D with separate volatility and correlation
// half-lives, and a recursive state that rolls a covariance forward one day
// in O(N²) without recomputing history.
//
// # Conventions
//
// Weights are observation weights on rows, newest last. Every estimator
// divides by the total weight of the observations it uses, so weights need
// not sum to 1 and a weight vector from Weights drops straight in:
//
//	Σ̂_ij = Σ_t w_t x_ti x_tj / Σ_t w_t            (zero mean, the default)
//	Σ̂_ij = Σ_t w_t (x_ti − μ_i)(x_tj − μ_j) / Σ_t w_t   (Options.Demean)
//
// This is the biased ("population") weighted moment, the convention of
// pandas' ewm(...).cov(bias=True). Options.Unbiased multiplies by
//
//	(Σw)² / ((Σw)² − Σw²)
//
// computed over the observations used, which is pandas' bias=False default;
// the two differ by a factor of about 1 + 1/n_eff.
//
// # Missing data
//
// By default moments are pairwise: an entry (i, j) uses the dates on which
// both assets are present, with the weights renormalised over those dates
// (and the means, with Demean, taken over those dates too). The weights keep
// their position in time: a missing day does not move older days closer. This
// is pandas' ewm(adjust=True, ignore_na=False) convention. A pairwise matrix
// need not be positive semidefinite; when any value is missing, the result is
// checked and, if needed, repaired by an eigenvalue floor at zero followed by
// rescaling to the original diagonal, and the repair is reported. With
// Options.CompleteCase only the dates on which every asset is present are
// used, and the result is positive semidefinite by construction.
//
// Results go to a dst that comes first, as in gonum: the functions
// (Covariance, Means, …) and the methods that fill a destination (named …To,
// as Recursive.CovarianceTo) allocate a nil or empty dst and return it. A
// dst of the wrong size panics with mat.ErrShape, as does other shape
// misuse. Inputs are never modified. Bad data returns an error wrapping one
// of the exported sentinels.
package ewma
