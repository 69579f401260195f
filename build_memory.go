package riskmodel

// FactorForm reports whether the method builds a factor model (Σ = B·F·Bᵀ +
// D, kept in factor form) rather than a dense N×N covariance.
func FactorForm(method string) bool {
	switch method {
	case MethodFactor, MethodExposure, MethodHybrid, "":
		return true
	}
	return false
}

// BuildMemory estimates, in bytes, the peak memory of building a model of
// the method on a window of dates × assets, validating it and saving it: the
// figure a job checks against the machine before it starts.
//
// A dense method holds the N×N estimate (8·N² bytes) while Validate factors
// a copy of it (the Cholesky factor, another 8·N²), and the estimators work
// in that much again (the sample moment matrix beside the result, or the
// eigenvectors of the nonlinear and Marchenko–Pastur methods), so the peak
// is about 3 × 8·N² plus the window's returns; saving streams the matrix.
// A factor model holds copies of the T×N window (centred returns, the
// imputed copy, residuals) and N×K loadings with K ≤ 30 or so: about
// 6 × 8·T·N. The estimates were measured against the peak resident set of
// the nightly job (N = 500 to 6000) and err on the high side; they exclude
// the previous model a job compares with (LoadedMemory).
func BuildMemory(method string, dates, assets int) int64 {
	t, n := int64(dates), int64(assets)
	const base = 64 << 20 // the program, the readers' buffers, the Parquet writer
	if FactorForm(method) {
		return base + 6*8*t*n + 8*n*64
	}
	return base + 3*8*n*n + 3*8*t*n
}

// LoadedMemory is the memory, in bytes, that a loaded model of n assets
// holds: 8·N² for a dense one, 8·N·(K+1) plus F for a factor one.
func LoadedMemory(m *Model) int64 {
	if m == nil {
		return 0
	}
	n := int64(len(m.Assets))
	if m.Factor != nil {
		k := int64(m.Factor.NumFactors())
		return 8*n*(k+1) + 8*k*k
	}
	return 8 * n * n
}
