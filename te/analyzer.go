package te

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Covariance is the least te needs: any symmetric covariance (a *mat.SymDense
// is one).
type Covariance interface{ mat.Symmetric }

// Factored is a covariance in factor form Σ = B·F·Bᵀ + D; te uses it for the
// factor/specific split and to compute Σa in O(N·K). A factor model
// satisfies it.
type Factored interface {
	Covariance
	NumFactors() int
	LoadingsTo(dst *mat.Dense) *mat.Dense
	FactorCovarianceTo(dst *mat.SymDense) *mat.SymDense
	SpecificVariancesTo(dst []float64) []float64
}

// Analyzer holds a covariance in the form te computes with, built once per
// model and reused for many portfolios. It is read-only after NewAnalyzer and
// safe for concurrent use.
type Analyzer struct {
	n, k     int
	kp       int // K rounded up to a multiple of 4: the stride of B
	factored bool

	// Factor form: B (N×K row-major, kp values a row, zero past K), F
	// (K×K, both triangles), D.
	b blas64.General
	f blas64.General
	d []float64

	// Dense form.
	sym blas64.Symmetric

	diag []float64 // Σ_ii, for volatilities and hedges
	sd   []float64 // √Σ_ii
	isd  []float64 // 1/√Σ_ii, 0 where Σ_ii = 0
	idg  []float64 // 1/Σ_ii, 0 where Σ_ii = 0
}

// NewAnalyzer prepares cov for tracking-error analysis.
//
// If cov implements Factored, its loadings B, factor covariance F and
// specific variances D are copied once, and every product is computed in
// factor form:
//
//	Σa = B·(F·(Bᵀa)) + D·a      O(N·K + K²)
//
// Otherwise cov is dense: a *mat.SymDense (or any mat.RawSymmetricer) is used
// in place through its raw storage, without a copy, so it must not be changed
// while the Analyzer is in use; any other mat.Symmetric is copied once through
// At into a dense matrix (O(N²) memory). Σa is then the dense symmetric
// product, O(N²) in one pass over the stored triangle, and no factor split is available: see
// Decomposition.Factored.
//
// NewAnalyzer returns an *InputError wrapping ErrNonFinite for a non-finite
// element of B, F, D or a dense Σ, or ErrNegative for a negative specific or
// factor variance or diagonal element. It returns ErrEmpty for a model with
// no assets. It panics with mat.ErrShape if B, F and D have inconsistent
// dimensions. Cost: O(N·K²) for a factor form (the diagonal of Σ), O(N²) to
// validate a dense Σ.
func NewAnalyzer(cov Covariance) (*Analyzer, error) {
	n := cov.SymmetricDim()
	if n == 0 {
		return nil, ErrEmpty
	}
	var a *Analyzer
	var err error
	if fm, ok := cov.(Factored); ok {
		a, err = newFactored(fm, n)
	} else {
		a, err = newDense(cov, n)
	}
	if err != nil {
		return nil, err
	}
	// Reciprocals once here turn the per-portfolio divisions into products.
	vs := vectors(n, 3)
	a.sd, a.isd, a.idg = vs[0], vs[1], vs[2]
	for i, v := range a.diag {
		a.sd[i] = math.Sqrt(v)
		if v > 0 {
			a.isd[i], a.idg[i] = 1/a.sd[i], 1/v
		}
	}
	return a, nil
}

func newFactored(fm Factored, n int) (*Analyzer, error) {
	k := fm.NumFactors()
	// gonum has no 0×0 Dense: with no factors, B and F are not read.
	var bm *mat.Dense
	var fs *mat.SymDense
	if k > 0 {
		bm = fm.LoadingsTo(nil)
		if r, c := bm.Dims(); r != n || c != k {
			panic(mat.ErrShape)
		}
		fs = fm.FactorCovarianceTo(nil)
		if fs.SymmetricDim() != k {
			panic(mat.ErrShape)
		}
	}
	d := fm.SpecificVariancesTo(nil)
	if len(d) != n {
		panic(mat.ErrShape)
	}
	kp := (k + 3) &^ 3
	a := &Analyzer{n: n, k: k, kp: kp, factored: true,
		b: blas64.General{Rows: n, Cols: k, Stride: kp, Data: make([]float64, n*kp)},
		f: blas64.General{Rows: k, Cols: k, Stride: k, Data: make([]float64, k*k)},
	}
	vs := vectors(n, 2)
	a.d, a.diag = vs[0], vs[1]
	copy(a.d, d)
	for i := 0; i < n; i++ {
		row := a.b.Data[i*kp : i*kp+k]
		for j := range row {
			v := bm.At(i, j)
			if !finite(v) {
				return nil, &InputError{Field: "loadings", Index: i, Column: j, Value: v, Err: ErrNonFinite}
			}
			row[j] = v
		}
	}
	for i := 0; i < k; i++ {
		for j := 0; j < k; j++ {
			v := fs.At(i, j)
			if !finite(v) {
				return nil, &InputError{Field: "factor covariance", Index: i, Column: j, Value: v, Err: ErrNonFinite}
			}
			if i == j && v < 0 {
				return nil, &InputError{Field: "factor covariance", Index: i, Column: j, Value: v, Err: ErrNegative}
			}
			a.f.Data[i*k+j] = v
		}
	}
	for i, v := range a.d {
		if err := checkVar("specific variances", i, v); err != nil {
			return nil, err
		}
	}
	// Σ_ii = b_iᵀ F b_i + d_i.
	fb := make([]float64, k)
	for i := range a.diag {
		row := a.b.Data[i*kp : i*kp+k]
		gemv(blas.NoTrans, a.f, row, fb)
		a.diag[i] = max(0, dot(row, fb)) + a.d[i]
	}
	return a, nil
}

func newDense(cov Covariance, n int) (*Analyzer, error) {
	a := &Analyzer{n: n}
	if rs, ok := cov.(mat.RawSymmetricer); ok {
		a.sym = rs.RawSymmetric()
	} else {
		s := mat.NewSymDense(n, nil)
		s.CopySym(cov)
		a.sym = s.RawSymmetric()
	}
	a.diag = make([]float64, n)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := a.symAt(i, j)
			if !finite(v) {
				return nil, &InputError{Field: "covariance", Index: i, Column: j, Value: v, Err: ErrNonFinite}
			}
		}
		v := a.symAt(i, i)
		if v < 0 {
			return nil, &InputError{Field: "covariance", Index: i, Column: i, Value: v, Err: ErrNegative}
		}
		a.diag[i] = v
	}
	return a, nil
}

// symAt reads element (i, j) of the dense Σ from whichever triangle holds it.
func (a *Analyzer) symAt(i, j int) float64 {
	if (a.sym.Uplo == blas.Upper) != (i <= j) {
		i, j = j, i
	}
	return a.sym.Data[i*a.sym.Stride+j]
}

// Len returns the number of assets N.
func (a *Analyzer) Len() int { return a.n }

// NumFactors returns the number of factors K, 0 for a dense covariance.
func (a *Analyzer) NumFactors() int { return a.k }

// Factored reports whether the analyzer holds a factor form (and so gives the
// factor/specific split).
func (a *Analyzer) Factored() bool { return a.factored }

// MulVecTo sets dst to Σx and returns it; a nil or empty dst is allocated.
// For an optimizer the gradient of the tracking error is Σa / TE. It panics
// with mat.ErrShape if x or a non-empty dst does not have length N. x is not
// checked for finiteness. Cost O(N·K) in factor form, O(N²) dense.
func (a *Analyzer) MulVecTo(dst, x []float64) []float64 {
	if len(x) != a.n {
		panic(mat.ErrShape)
	}
	dst = dense.SizeVec(dst, a.n)
	if a.factored {
		bx := make([]float64, 2*a.k)
		a.factorMul(dst, x, bx[:a.k], bx[a.k:])
		return dst
	}
	symv(a.sym, x, dst, nil, nil)
	return dst
}

// factorMul sets dst = Σx, bx = Bᵀx and fbx = F·Bᵀx.
func (a *Analyzer) factorMul(dst, x, bx, fbx []float64) {
	dense.MulVecT(bx, a.b, x)
	gemv(blas.NoTrans, a.f, bx, fbx)
	dense.MulVecDiag(dst, a.b, fbx, a.d, x)
}

// TrackingError returns the ex-ante tracking error per period,
//
//	TE = √(aᵀΣa),   a = portfolio − benchmark,
//
// without the decomposition: the call an optimizer makes in a loop. Errors
// and panics are those of DecomposeTo. Cost O(N·K) in factor form, O(N²)
// dense.
func (a *Analyzer) TrackingError(portfolio, benchmark []float64) (float64, error) {
	act := make([]float64, a.n)
	var te2 float64
	if a.factored {
		// The passes of DecomposeTo, so that both give bit-identical TE.
		x := make([]float64, 3*a.kp)
		fv, sv, _, _, err := a.factorVariances(act, portfolio, benchmark, x[:a.kp], x[a.kp:2*a.kp], x[2*a.kp:])
		if err != nil {
			return 0, err
		}
		te2 = fv + sv
	} else {
		if err := a.checkWeights(portfolio, benchmark); err != nil {
			return 0, err
		}
		for i := range act {
			act[i] = portfolio[i] - benchmark[i]
		}
		sa := make([]float64, a.n)
		symv(a.sym, act, sa, nil, nil)
		var err error
		if te2, err = clampVariance(dot(act, sa), act, a.diag); err != nil {
			return 0, err
		}
	}
	return math.Sqrt(te2), nil
}

// factorVariances is the first pass of the factor form: act = p − b,
// x = Bᵀa and xb = Bᵀb in one pass over B (kp values each, zero past K),
// fx = F·x, and it returns
//
//	fv = xᵀFx = aᵀBFBᵀa,  sv = aᵀDa,  asb = aᵀΣb,  bsb = bᵀΣb
//
// (fv clamped to 0 when rounding made it slightly negative). The weights
// are checked here too: the sums are finite unless a weight is not (or
// they overflow), and then checkWeights names the culprit. fx is written
// in full, zero past K; x's and xb's padding is B's, zero.
func (a *Analyzer) factorVariances(act, p, b, x, xb, fx []float64) (fv, sv, asb, bsb float64, err error) {
	if len(p) != a.n || len(b) != a.n {
		panic(mat.ErrShape)
	}
	sv, dab, dbb := activeSums(act, p, b, a.d)
	if !finite(sv) || !finite(dab) || !finite(dbb) || !slices.ContainsFunc(p, nonzero) {
		if err := a.checkWeights(p, b); err != nil {
			return 0, 0, 0, 0, err
		}
	}
	k, kp := a.k, a.kp
	exposures(a.b.Data, kp, a.n, kp, act, b, x, xb)
	clear(fx[k:kp])
	gemv(blas.NoTrans, a.f, x[:k], fx[:k])
	fv = dot(x[:k], fx[:k])
	asb, bsb = a.crossTerms(x[:k], xb[:k])
	asb += dab
	bsb += dbb
	if fv < 0 {
		if fv, err = clampVariance(fv, x[:k], diagOf(a.f)); err != nil {
			return 0, 0, 0, 0, err
		}
	}
	return fv, sv, asb, bsb, nil
}

// crossTerms returns xᵀF·xb and xbᵀF·xb, summed over the rows of F in
// order: (F·xb)_r = Σ_c F_rc xb_c first, each in order of c.
func (a *Analyzer) crossTerms(x, xb []float64) (asb, bsb float64) {
	k := a.k
	for r := 0; r < k; r++ {
		row := a.f.Data[r*k : r*k+k][:len(xb)]
		var s float64
		for c, v := range row {
			s += v * xb[c]
		}
		asb += x[r] * s
		bsb += xb[r] * s
	}
	return asb, bsb
}

func nonzero(v float64) bool { return v != 0 }

// checkWeights panics on a length mismatch and reports non-finite weights and
// an empty portfolio.
func (a *Analyzer) checkWeights(portfolio, benchmark []float64) error {
	if len(portfolio) != a.n || len(benchmark) != a.n {
		panic(mat.ErrShape)
	}
	held := false
	for i, v := range portfolio {
		if !finite(v) {
			return &InputError{Field: "portfolio", Index: i, Column: -1, Value: v, Err: ErrNonFinite}
		}
		held = held || v != 0
	}
	for i, v := range benchmark {
		if !finite(v) {
			return &InputError{Field: "benchmark", Index: i, Column: -1, Value: v, Err: ErrNonFinite}
		}
	}
	if !held {
		return ErrEmpty
	}
	return nil
}

// clampVariance turns a quadratic form that rounding pushed slightly below
// zero into zero, and reports one that is clearly negative: Σ is then not
// positive semidefinite. The scale of rounding error is Σ|x_i|·√Σ_ii squared.
func clampVariance(v float64, x, diag []float64) (float64, error) {
	if v >= 0 {
		return v, nil
	}
	var s float64
	for i, xi := range x {
		s += math.Abs(xi) * math.Sqrt(diag[i])
	}
	if -v <= 1e-12*s*s {
		return 0, nil
	}
	return 0, &InputError{Field: "active variance", Index: -1, Column: -1, Value: v, Err: ErrNotPSD}
}

func checkVar(field string, i int, v float64) error {
	if !finite(v) {
		return &InputError{Field: field, Index: i, Column: -1, Value: v, Err: ErrNonFinite}
	}
	if v < 0 {
		return &InputError{Field: field, Index: i, Column: -1, Value: v, Err: ErrNegative}
	}
	return nil
}

// finite reports whether v is neither NaN nor ±Inf: for those, v − v is NaN.
func finite(v float64) bool { return v-v == 0 }

func vec(x []float64) blas64.Vector { return blas64.Vector{N: len(x), Inc: 1, Data: x} }

// gemv sets y = op(A)·x.
func gemv(t blas.Transpose, m blas64.General, x, y []float64) {
	if m.Rows == 0 || m.Cols == 0 {
		clear(y)
		return
	}
	blas64.Gemv(t, 1, m, vec(x), 0, vec(y))
}

func dot(x, y []float64) float64 {
	var s float64
	for i, v := range x {
		s += v * y[i]
	}
	return s
}
