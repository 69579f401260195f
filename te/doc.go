// Package te computes ex-ante tracking error and explains it: by asset, by
// any grouping of assets a caller passes (sector, size bucket, country), by
// factor and specific risk, as exposure × volatility × correlation, and as
// hot spots and hedges. It also checks a tracking error against a mandate's
// band and measures the realised (ex-post) tracking error of a series of
// active returns.
//
// The package is a leaf: it imports gonum only. It reads a covariance through
// two small interfaces. Covariance is any mat.Symmetric, so a dense
// *mat.SymDense is one; Factored adds the factor form Σ = B·F·Bᵀ + D, which
// a factor model satisfies, and unlocks the factor/specific split and O(N·K)
// products. An Analyzer takes the model once and is reused for many
// portfolios.
//
// Units: weights are fractions of capital (0.01 = 1 %); every risk figure is
// per period, like the covariance. Annualize and the Annualized methods scale
// by √(periods per year), a number the caller gives (252 for daily data is
// common practice).
//
// Weights are vectors in the model's asset order. Align builds them from
// identifier → weight maps and the model's asset list.
package te
