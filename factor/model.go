package factor

import (
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Model is a covariance in factor form,
//
//	Σ = B·F·Bᵀ + D,   D = diag(d),
//
// over N assets and K factors. It implements mat.Symmetric, so it can be
// passed wherever a covariance is expected, but At costs O(K) per element:
// use MulVecTo, QuadForm, SolveVecTo or CovarianceTo for anything in bulk.
// A Model is immutable and safe for concurrent use by many goroutines.
type Model struct {
	n, k int
	b    *mat.Dense    // N×K loadings
	f    *mat.SymDense // K×K factor covariance
	d    []float64     // N specific variances
	info Info

	// Derived once at construction, never changed.
	l  *mat.Dense // K×K with F = L·Lᵀ (symmetric-eigen square root)
	bl *mat.Dense // N×K, B·L: Σ = (BL)(BL)ᵀ + D
	// inner is the Cholesky factor of I + (BL)ᵀ·D⁻¹·(BL), the K×K matrix
	// of the Woodbury identity.
	inner mat.Cholesky
}

// NewModel returns the model Σ = B·F·Bᵀ + diag(d) built from copies of the
// N×K loadings, the K×K factor covariance and the N specific variances, with
// info as its record. It is how Fit and any other builder (or a store reading
// a saved model back) make a Model, so a round trip through NewModel is
// bit-identical. K = 0 (nil or empty loadings and factorCov) is a pure
// specific-risk model.
//
// NewModel panics with mat.ErrShape if the shapes disagree, or if
// info.FactorNames or info.Assets is neither nil nor of length K or N.
// It returns an error wrapping ErrNonFinite for a non-finite loading or
// factor covariance, ErrNotPSD if F has an eigenvalue below −1e-10·‖F‖₂,
// and ErrSpecificVariance for a specific variance that is not finite and
// positive. Eigenvalues of F in [−1e-10·‖F‖₂, 0) are treated as 0 in the
// square root (SqrtTo) and the Woodbury solve.
//
// Cost O(N·K² + K³).
func NewModel(loadings *mat.Dense, factorCov *mat.SymDense, specificVar []float64, info Info) (*Model, error) {
	n := len(specificVar)
	k := 0
	if loadings != nil && !loadings.IsEmpty() {
		var r int
		r, k = loadings.Dims()
		if r != n {
			panic(mat.ErrShape)
		}
	}
	fk := 0
	if factorCov != nil && !factorCov.IsEmpty() {
		fk = factorCov.SymmetricDim()
	}
	if fk != k || n == 0 {
		panic(mat.ErrShape)
	}
	if (info.FactorNames != nil && len(info.FactorNames) != k) || (info.Assets != nil && len(info.Assets) != n) {
		panic(mat.ErrShape)
	}
	for i, v := range specificVar {
		if !(v > 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%w: asset %d has %v", ErrSpecificVariance, i, v)
		}
	}
	m := &Model{n: n, k: k, d: append([]float64(nil), specificVar...), info: info.clone()}
	m.info.NumFactors = k
	if k == 0 {
		return m, nil
	}
	m.b = mat.DenseCopyOf(loadings)
	m.f = mat.NewSymDense(k, nil)
	m.f.CopySym(factorCov)
	for i := 0; i < n; i++ {
		for j, v := range m.b.RawRowView(i) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%w: loading of asset %d on factor %d is %v", ErrNonFinite, i, j, v)
			}
		}
	}
	for i := 0; i < k; i++ {
		for j := i; j < k; j++ {
			if v := m.f.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%w: factor covariance (%d, %d) is %v", ErrNonFinite, i, j, v)
			}
		}
	}
	if err := m.derive(); err != nil {
		return nil, err
	}
	return m, nil
}

// derive computes the square root of F, B·L and the Woodbury inner factor.
func (m *Model) derive() error {
	var eig dense.EigenSym
	if !eig.Factorize(m.f, true) {
		return fmt.Errorf("%w: eigendecomposition failed", ErrNotPSD)
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	top := math.Max(vals[len(vals)-1], 0)
	for i, v := range vals {
		if v < -1e-10*top || (top == 0 && v < 0) {
			return fmt.Errorf("%w: eigenvalue %d is %g (largest %g)", ErrNotPSD, i, v, top)
		}
		vals[i] = math.Sqrt(math.Max(v, 0))
	}
	k := m.k
	m.l = mat.NewDense(k, k, nil)
	for i := 0; i < k; i++ {
		for j := 0; j < k; j++ {
			m.l.Set(i, j, vecs.At(i, j)*vals[j])
		}
	}
	m.bl = mat.NewDense(m.n, k, nil)
	m.bl.Mul(m.b, m.l)
	// inner = I + Wᵀ·D⁻¹·W with W = B·L; always SPD since D > 0.
	scaled := mat.NewDense(m.n, k, nil)
	for i := 0; i < m.n; i++ {
		s := 1 / math.Sqrt(m.d[i])
		src, dst := m.bl.RawRowView(i), scaled.RawRowView(i)
		for j, v := range src {
			dst[j] = v * s
		}
	}
	in := mat.NewSymDense(k, nil)
	blas64.Syrk(blas.Trans, 1, scaled.RawMatrix(), 0, in.RawSymmetric())
	for i := 0; i < k; i++ {
		in.SetSym(i, i, in.At(i, i)+1)
	}
	if !m.inner.Factorize(in) {
		return fmt.Errorf("%w: Woodbury inner matrix not positive definite", ErrNotPSD)
	}
	return nil
}

// Dims returns N, N.
func (m *Model) Dims() (r, c int) { return m.n, m.n }

// SymmetricDim returns N.
func (m *Model) SymmetricDim() int { return m.n }

// T returns m: Σ is symmetric.
func (m *Model) T() mat.Matrix { return m }

// NumFactors returns K.
func (m *Model) NumFactors() int { return m.k }

// At returns Σ_ij = (BL)_i·(BL)_j + δ_ij·d_i, with F = L·Lᵀ. It costs O(K)
// per element, so a loop over all elements costs O(N²·K): it is slow, use
// CovarianceTo for the dense matrix. At panics with mat.ErrIndexOutOfRange
// for an index outside [0, N).
func (m *Model) At(i, j int) float64 {
	if uint(i) >= uint(m.n) || uint(j) >= uint(m.n) {
		panic(mat.ErrIndexOutOfRange)
	}
	var s float64
	if m.k > 0 {
		s = blas64.Dot(blas64.Vector{N: m.k, Inc: 1, Data: m.bl.RawRowView(i)}, blas64.Vector{N: m.k, Inc: 1, Data: m.bl.RawRowView(j)})
	}
	if i == j {
		s += m.d[i]
	}
	return s
}

// LoadingsTo copies B (N×K, rows in asset order, columns in factor order) to
// dst and returns it. A nil or empty dst is allocated; a dst of another size
// panics with mat.ErrShape.
func (m *Model) LoadingsTo(dst *mat.Dense) *mat.Dense {
	dst = dense.SizeDense(dst, m.n, m.k)
	if m.k > 0 {
		dst.Copy(m.b)
	}
	return dst
}

// FactorCovarianceTo copies F (K×K) to dst and returns it. A nil or empty
// dst is allocated; a dst of another size panics with mat.ErrShape.
func (m *Model) FactorCovarianceTo(dst *mat.SymDense) *mat.SymDense {
	dst = dense.SizeSym(dst, m.k)
	if m.k > 0 {
		dst.CopySym(m.f)
	}
	return dst
}

// SpecificVariancesTo copies diag(D) to dst (length N) and returns it. A nil
// or empty dst is allocated; a dst of another length panics with mat.ErrShape.
func (m *Model) SpecificVariancesTo(dst []float64) []float64 {
	dst = dense.SizeVec(dst, m.n)
	copy(dst, m.d)
	return dst
}

// Info returns a copy of the model's record.
func (m *Model) Info() Info { return m.info.clone() }

// FactorNames returns the factor labels: Info.FactorNames, or "pc1".."pcK"
// when none were given.
func (m *Model) FactorNames() []string {
	if m.info.FactorNames != nil {
		return append([]string(nil), m.info.FactorNames...)
	}
	names := make([]string, m.k)
	for i := range names {
		names[i] = "pc" + strconv.Itoa(i+1)
	}
	return names
}

// Assets returns a copy of the asset labels, or nil when none were given.
func (m *Model) Assets() []string {
	if m.info.Assets == nil {
		return nil
	}
	return append([]string(nil), m.info.Assets...)
}
