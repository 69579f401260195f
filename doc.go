// Package riskmodel turns a raw panel of daily stock returns — with gaps,
// listings, delistings and outliers — into a validated covariance forecast
// that a portfolio optimizer can use directly and that an analyst can use to
// explain ex-ante tracking error.
//
// # Packages
//
// The root package handles data in and out and wires the estimators together:
//
//   - Panel: T dates × N assets of simple returns, NaN for missing, with the
//     asset identifiers, calendar dates (Date) and periods per year.
//   - Readers and writers for returns (Parquet long format; CSV long or wide),
//     asset metadata and holdings. Every bad row is an error naming the file,
//     line or row, column and value (FileError); nothing is dropped silently.
//   - Quality: the data-quality report (coverage, missing share, listings and
//     delistings, implausible returns, robust outliers, stale runs).
//   - Build: any estimator by name (Methods) over a window as of a date, with
//     a report of what it did to the data; Validate: finite, positive
//     definite, condition number, coverage and a bias statistic.
//   - SaveModel, LoadModel and Store.Publish: the model folder (Parquet plus a
//     manifest with checksums, itself covered by model.sha256) and the atomic
//     switch of the current model under the store's lock, with backfills and
//     retention (PublishOptions); InferFrequency for the periods per year.
//   - Compare (night to night) and Attribute (the analyst's decomposition of
//     ex-ante tracking error by group, factor and single name, with hedges).
//
// The root package is what a program that builds, publishes, loads and
// explains models needs, and nothing else. Two concerns of the module live
// under internal/, because they serve this module and are not an API:
// internal/demo simulates the invented demo market with its true covariance
// (the oracle of the tests and the source of testdata/demo), and
// internal/evaluate ranks estimators out of sample for examples/evaluate.
//
// Reports are rendered by methods of the result they render: an Attribution
// writes itself as text, CSV, JSON or HTML (WriteText, WriteCSV, WriteJSON,
// WriteHTML), as the evaluation's result does in its own package. Every
// format of one result is a view of the same fields, so they sit beside the
// type whose fields they show, and each takes an io.Writer so that a program
// decides where the bytes go.
//
// The math packages speak gonum (mat.Matrix with rows as dates and columns as
// assets, mat.Symmetric, []float64 weights) and know nothing of files:
//
//   - ewma: exponentially weighted weights, moments, covariance and
//     correlation with missing data, separate volatility and correlation
//     half-lives, Newey–West adjustment and a recursive daily update.
//   - shrink: dense covariance estimators (Ledoit–Wolf with several targets,
//     OAS, Schäfer–Strimmer, analytical nonlinear shrinkage, Marchenko–Pastur
//     clipping) and conditioning tools (nearest correlation matrix, PSD repair,
//     condition-number cap).
//   - factor: factor models Σ = B·F·Bᵀ + D — statistical (principal
//     components), exposure-based (sector and style factors by
//     cross-sectional regression) and a hybrid of both — applied in O(N·K)
//     without forming the N×N matrix.
//   - te: ex-ante tracking error and its decomposition into factor and
//     specific parts, by group, factor and single name.
//
// The arrows point down: ewma, shrink and te import none of the other
// packages; factor may use ewma and shrink; the root package uses them all.
// The dense products they share run on one multi-core kernel under
// internal/dense, which users cannot import.
//
// # Data flow
//
// Read returns, metadata and holdings; build a Panel; select a window as of a
// date and drop assets with too few observations; estimate a covariance (a
// dense estimator from ewma or shrink, or a factor model); validate it
// (finite, symmetric, positive semidefinite, condition number, coverage);
// publish it atomically; use it in an optimizer (Σx) or in te.
//
// # Conventions
//
// Shapes: return matrices are T×N, rows are dates (oldest first), columns are
// assets. Covariances are N×N in the column order of the returns.
//
// Units: returns are simple decimal returns per period (0.01 is 1 %). A
// simple return at or below −1 is impossible and is an error. Every risk
// figure is per period unless a function says it annualises; annualising
// multiplies a variance by the periods per year (252 for daily data, common
// practice) and a volatility by its square root.
//
// Missing values: NaN inside matrices; absent, empty or NA in files. Inf is
// never missing: it is an error. Each estimator documents how it treats
// missing data.
//
// Divisors: each estimator documents its divisor. Where an estimator is
// checked against a reference library it follows that library's convention
// (for example 1/T for the Ledoit–Wolf family, as in the paper and in
// scikit-learn).
//
// Errors and panics: shape misuse by a programmer panics, as gonum does with
// mat.ErrShape. Bad data from files or callers is an error that names what
// is wrong and where; sentinel errors are exported for errors.Is. A usable but
// degraded result (a repaired covariance, say) is returned with a report of
// what was changed: every covariance that leaves the library is symmetric and
// positive semidefinite, and any repair needed to reach that is reported.
//
// Determinism: the same input gives bit-identical output whatever
// GOMAXPROCS is; randomized algorithms take an explicit seed.
//
// Forecasts are estimates, not investment advice: validate any model under
// your own governance before relying on it.
package riskmodel
