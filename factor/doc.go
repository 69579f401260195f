// Package factor builds statistical factor models of asset returns and
// applies them in factor form,
//
//	Σ = B·F·Bᵀ + D,
//
// with N assets, K factors, the N×K loadings B, the K×K factor covariance F
// and the diagonal N×N specific covariance D. A model is built in O(N·T·K)
// from a T×N return matrix (rows are dates, columns are assets, NaN marks a
// missing return) and applied in O(N·K); the dense N×N matrix is formed only
// when a caller asks for it (Model.CovarianceTo).
//
// Fit estimates the factors by principal components: a randomized truncated
// SVD (Halko, Martinsson & Tropp 2011) with an explicit seed, or the exact
// eigendecomposition of the smaller Gram matrix (the T×T one when N > T, the
// asymptotic principal components of Connor & Korajczyk 1986). Missing returns
// are filled by iterated low-rank imputation. The number of factors is fixed
// by the caller or chosen by Bai & Ng (2002) IC_p2; the Ahn & Horenstein
// (2013), Onatski (2010) and Marchenko–Pastur counts are reported beside it.
// Factor covariance comes from package ewma, specific variances from
// exponentially weighted residual variances shrunk toward a group mean and
// floored. Given the previous night's model, the factors are rotated onto it
// (orthogonal Procrustes) and the movement of the factor space is reported as
// principal angles.
//
// Settings.Adjust switches on corrections for the portfolios an optimizer
// builds and for volatility regimes, each reported in Info: the
// eigen-adjusted factor covariance (EigenAdjust; Menchero, Wang & Orr 2011),
// the dispersion-bias correction of the leading eigenvector
// (DispersionCorrect; Goldberg, Papanicolaou & Shkolnik 2022) and the
// volatility-regime multipliers of F and D (VolatilityRegime). The criteria
// HoldoutLikelihood and HoldoutMinVariance choose K by how well each
// candidate forecasts the last quarter of the window after a fit on the rest
// (Holdout).
//
// A Model is immutable once built and safe for concurrent use by many
// goroutines. NewModel rebuilds a model from its parts, so a store can save
// and load one bit-identically; package factor itself writes no files.
package factor
