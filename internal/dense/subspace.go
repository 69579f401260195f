package dense

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// SymView returns the n×n symmetric a as a general matrix on a's own
// storage, after copying its upper triangle into its lower one (storage a
// *mat.SymDense never reads), so that the products of this package can take
// it without a copy. a's value as a symmetric matrix does not change. Cost
// N²/2 copies, no allocation of the matrix.
func SymView(a *mat.SymDense) *mat.Dense {
	raw := a.RawSymmetric()
	n, s := raw.N, raw.Stride
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			raw.Data[j*s+i] = raw.Data[i*s+j]
		}
	}
	var d mat.Dense
	if n > 0 {
		d.SetRawMatrix(blas64.General{Rows: n, Cols: n, Stride: s, Data: raw.Data})
	}
	return &d
}

// Gaussian returns an r×c matrix of independent standard normal draws from
// the PCG generator seeded with (seed, r·c): the same matrix for the same
// arguments on every machine.
func Gaussian(r, c int, seed uint64) *mat.Dense {
	g := mat.NewDense(r, c, nil)
	rng := rand.New(rand.NewPCG(seed, uint64(r*c)))
	for i, raw := 0, g.RawMatrix(); i < r*c; i++ {
		raw.Data[i] = rng.NormFloat64()
	}
	return g
}

// Orthonormalize returns an N×r matrix Q with orthonormal columns whose
// range holds the range of the N×m matrix k to working precision, r ≤ m;
// a column of k whose part outside the span found is at most 4e-13 of its
// norm adds no column. It returns an empty matrix for a zero k.
//
// Each round scales the remaining columns to unit norm, factors their Gram
// matrix G = WᵀW by a Cholesky factorization with diagonal pivoting,
// G = ΠRᵀRΠᵀ, stopped where the largest remaining pivot is below 1e-10,
// and takes Q = WΠ₁R₁₁⁻¹ for the r accepted columns, twice (CholeskyQR2,
// which restores orthogonality lost to the squared condition number of G).
// The columns the pivoting left out are projected off the span found so far
// (classical Gram–Schmidt, twice) and go to the next round, rescaled, so
// directions that are small in k are not lost to the squaring. At most
// eight rounds: a k whose directions span more decades than that resolves
// may come back short, which the callers' probe (SubspaceEigen.Residual)
// detects. Cost about 6·N·m² flops on all cores, plus O(m³)
// single-threaded for the m×m factorizations.
//
// References: Fukaya, T., Nakatsukasa, Y., Yanagisawa, Y. and Yamamoto, Y.
// (2014), "CholeskyQR2: a simple and communication-avoiding algorithm for
// computing a tall-skinny QR factorization on a large-scale parallel
// system", ScalA'14, 31–38; Higham, N. J. (2002), Accuracy and Stability of
// Numerical Algorithms, 2nd ed., §10.3 (Cholesky with complete pivoting);
// Giraud, L., Langou, J. and Rozložník, M. (2005), "The loss of
// orthogonality in the Gram–Schmidt orthogonalization process", Comput.
// Math. Appl. 50:1069–1075 (classical Gram–Schmidt twice).
func Orthonormalize(k *mat.Dense) *mat.Dense {
	_, m := k.Dims()
	ones := make([]float64, m)
	for j := range ones {
		ones[j] = 1
	}
	w, scale := unitColumns(mat.DenseCopyOf(k), ones, 0)
	var q *mat.Dense
	for round := 0; round < 8 && w != nil; round++ {
		if q != nil {
			project(w, q)
			// scale_j is the norm of what is left of column j of k,
			// relative to its own norm: below the limit it is rounding.
			w, scale = unitColumns(w, scale, orthoLimit)
			if w == nil {
				break
			}
		}
		perm, r := pivotedCholQR(w)
		if r == 0 {
			break
		}
		got := cholQR2(gatherCols(w, perm[:r]))
		if got == nil {
			break
		}
		if q != nil {
			// R⁻¹ can scale up what rounding left along q: project the
			// new columns again and restore their orthonormality.
			project(got, q)
			if got = cholQR2(got); got == nil {
				break
			}
			q = appendCols(q, got)
		} else {
			q = got
		}
		if _, c := w.Dims(); r == c {
			break
		}
		w = gatherCols(w, perm[r:])
		rest := make([]float64, len(perm)-r)
		for i, j := range perm[r:] {
			rest[i] = scale[j]
		}
		scale = rest
	}
	if q == nil {
		return &mat.Dense{}
	}
	return q
}

// project sets w to (I − qqᵀ)w by classical Gram–Schmidt, twice.
func project(w, q *mat.Dense) {
	for pass := 0; pass < 2; pass++ {
		var c mat.Dense
		MulTA(&c, q, w)
		SubMul(w, q, &c)
	}
}

// orthoLimit is the part of a column of k, relative to its norm, left
// outside the span found so far below which Orthonormalize takes it for
// rounding.
const orthoLimit = 4e-13

// unitColumns scales the columns of w to unit norm, keeping those whose
// norm times scale_j is above lim (zero and non-finite ones never), and
// returns them with their scale_j·norm, or nil when no column is left.
func unitColumns(w *mat.Dense, scale []float64, lim float64) (*mat.Dense, []float64) {
	n, m := w.Dims()
	raw := w.RawMatrix()
	norm := make([]float64, m)
	for i := 0; i < n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+m]
		for j, v := range row {
			norm[j] += v * v
		}
	}
	var keep []int
	var kept []float64
	for j, s := range norm {
		s = math.Sqrt(s)
		norm[j] = s
		if s*scale[j] > lim && s > 0 && !math.IsInf(s, 0) && !math.IsNaN(s) {
			keep = append(keep, j)
			kept = append(kept, s*scale[j])
		}
	}
	if len(keep) == 0 {
		return nil, nil
	}
	out := mat.NewDense(n, len(keep), nil)
	or := out.RawMatrix()
	for i := 0; i < n; i++ {
		src := raw.Data[i*raw.Stride:]
		dst := or.Data[i*or.Stride : i*or.Stride+len(keep)]
		for c, j := range keep {
			dst[c] = src[j] / norm[j]
		}
	}
	return out, kept
}

// cholQR2 orthonormalizes the columns of w by two CholeskyQR steps, or
// returns nil if the first finds their Gram matrix not positive definite.
func cholQR2(w *mat.Dense) *mat.Dense {
	q := cholQRStep(w)
	if q == nil {
		return nil
	}
	if q2 := cholQRStep(q); q2 != nil {
		q = q2
	}
	return q
}

// pivotedCholQR factors G = WᵀW with diagonal pivoting and returns the
// pivot order and the number of pivots above 1e-10 of the largest.
func pivotedCholQR(w *mat.Dense) ([]int, int) {
	perm, r, _ := pivotedCholesky(XtWX(nil, w, nil), 1e-10)
	return perm, r
}

// cholQRStep returns W·Π·R⁻¹ for the pivoted Cholesky factorization
// ΠᵀWᵀWΠ = RᵀR, on the columns whose pivots stay positive, or nil if there
// are none.
func cholQRStep(w *mat.Dense) *mat.Dense {
	perm, r, fac := pivotedCholesky(XtWX(nil, w, nil), 0)
	if r == 0 {
		return nil
	}
	_, m := w.Dims()
	inv := mat.NewDense(r, r, nil)
	// R⁻¹ column by column: R·z = e_j, back substitution.
	for j := 0; j < r; j++ {
		for i := j; i >= 0; i-- {
			s := 0.0
			if i == j {
				s = 1
			}
			for k := i + 1; k <= j; k++ {
				s -= fac[i*m+k] * inv.At(k, j)
			}
			inv.Set(i, j, s/fac[i*m+i])
		}
	}
	return Mul(nil, gatherCols(w, perm[:r]), inv)
}

// pivotedCholesky factors the symmetric positive semidefinite g as
// ΠRᵀRΠᵀ with the largest remaining diagonal as pivot, stopping when it is
// at most tol times the largest diagonal of g. It returns the pivot order,
// the rank r and R (r×m, upper trapezoidal in pivot order).
func pivotedCholesky(g *mat.SymDense, tol float64) (perm []int, r int, fac []float64) {
	m := g.SymmetricDim()
	a := make([]float64, m*m)
	for i := 0; i < m; i++ {
		for j := i; j < m; j++ {
			v := g.At(i, j)
			a[i*m+j], a[j*m+i] = v, v
		}
	}
	perm = make([]int, m)
	for i := range perm {
		perm[i] = i
	}
	top := 0.0
	for i := 0; i < m; i++ {
		top = math.Max(top, a[i*m+i])
	}
	lim := tol * top
	for k := 0; k < m; k++ {
		p, best := k, a[k*m+k]
		for i := k + 1; i < m; i++ {
			if d := a[i*m+i]; d > best {
				p, best = i, d
			}
		}
		if !(best > lim) {
			return perm, k, a
		}
		if p != k {
			perm[k], perm[p] = perm[p], perm[k]
			for i := 0; i < m; i++ { // swap rows k and p
				a[k*m+i], a[p*m+i] = a[p*m+i], a[k*m+i]
			}
			for i := 0; i < m; i++ { // swap columns k and p
				a[i*m+k], a[i*m+p] = a[i*m+p], a[i*m+k]
			}
		}
		d := math.Sqrt(a[k*m+k])
		a[k*m+k] = d
		row := a[k*m+k+1 : (k+1)*m]
		for j := range row {
			row[j] /= d
		}
		for i := k + 1; i < m; i++ {
			ri := a[k*m+i]
			if ri == 0 {
				continue
			}
			// The whole trailing block, both triangles: a later pivot
			// swap moves rows as well as columns.
			dst := a[i*m+k+1 : (i+1)*m]
			src := a[k*m+k+1 : (k+1)*m]
			for j := range dst {
				dst[j] -= ri * src[j]
			}
		}
	}
	return perm, m, a
}

func gatherCols(w *mat.Dense, cols []int) *mat.Dense {
	n, _ := w.Dims()
	out := mat.NewDense(n, len(cols), nil)
	raw, or := w.RawMatrix(), out.RawMatrix()
	for i := 0; i < n; i++ {
		src := raw.Data[i*raw.Stride:]
		dst := or.Data[i*or.Stride : i*or.Stride+len(cols)]
		for c, j := range cols {
			dst[c] = src[j]
		}
	}
	return out
}

func appendCols(a, b *mat.Dense) *mat.Dense {
	n, ca := a.Dims()
	_, cb := b.Dims()
	out := mat.NewDense(n, ca+cb, nil)
	out.Slice(0, n, 0, ca).(*mat.Dense).Copy(a)
	out.Slice(0, n, ca, ca+cb).(*mat.Dense).Copy(b)
	return out
}

// SubspaceEigen is the eigendecomposition of a symmetric N×N matrix A
// whose range lies in the span of the m orthonormal columns of Q, m < N:
//
//	M = QᵀAQ = VΛVᵀ,   A = (QV)Λ(QV)ᵀ  when  (I − QQᵀ)A = 0,
//
// so the m eigenvalues of the m×m matrix M, with the eigenvectors U = QV,
// are eigenpairs of A, and the other N − m eigenvalues of A are zero, with
// the orthogonal complement of range(Q) as eigenspace.
type SubspaceEigen struct {
	// Values holds the m eigenvalues of M in ascending order and Vectors
	// (N×m) the matching eigenvectors of A in its columns.
	Values  []float64
	Vectors *mat.Dense
	// Residual is a probabilistic upper bound on ‖(I − QQᵀ)A‖₂, the part
	// of A outside range(Q), from ten random probes ω_i (Halko, Martinsson
	// and Tropp 2011, eq. (4.3), α = 10): Residual = 10·√(2/π)·max_i
	// ‖(I − QQᵀ)Aω_i‖, which bounds it with probability at least
	// 1 − 10⁻¹⁰. When Residual is within rounding of zero the
	// decomposition is that of A itself.
	Residual float64
}

// Exact reports whether the decomposition is that of A itself to rounding:
// Residual at most 64·N·ε times the largest |eigenvalue| in the subspace,
// the acceptance rule of the low-rank repairs in ewma and shrink.
func (e *SubspaceEigen) Exact() bool {
	if len(e.Values) == 0 {
		return false
	}
	n, _ := e.Vectors.Dims()
	top := math.Max(math.Abs(e.Values[0]), math.Abs(e.Values[len(e.Values)-1]))
	return e.Residual <= 64*float64(n)*0x1p-52*top
}

// Factorize computes the decomposition of the symmetric a (given as a full
// N×N matrix, both triangles, as SymView returns) in the span of the
// orthonormal columns of q and reports whether gonum's eigensolver
// succeeded on M. It panics with mat.ErrShape if a is not square or q does
// not have N rows. Cost 2·N²·m (AQ) + 2·N·m² (M, U) flops on all cores, 20·N²
// for the probes, and one m×m symmetric eigendecomposition in gonum
// (O(m³), single-threaded) instead of one of order N.
//
// References: Halko, N., Martinsson, P. G. and Tropp, J. A. (2011), "Finding
// structure with randomness: probabilistic algorithms for constructing
// approximate matrix decompositions", SIAM Review 53(2):217–288, §4.3 and
// §5.3 (the eigendecomposition in a subspace, Algorithm 5.3).
func (e *SubspaceEigen) Factorize(a, q *mat.Dense) bool {
	n, c := a.Dims()
	qn, m := q.Dims()
	if n != c || qn != n {
		panic(mat.ErrShape)
	}
	aq := Mul(nil, a, q)
	var mm mat.Dense
	MulTA(&mm, q, aq)
	ms := mat.NewSymDense(m, nil)
	for i := 0; i < m; i++ {
		for j := i; j < m; j++ {
			ms.SetSym(i, j, 0.5*(mm.At(i, j)+mm.At(j, i)))
		}
	}
	var es EigenSym
	if !es.Factorize(ms, true) {
		return false
	}
	e.Values = es.Values(nil)
	var v mat.Dense
	es.VectorsTo(&v)
	e.Vectors = Mul(nil, q, &v)

	const probes = 10
	g := Gaussian(n, probes, 0x5eed)
	z := Mul(nil, a, g)
	for pass := 0; pass < 2; pass++ {
		var cz mat.Dense
		MulTA(&cz, q, z)
		SubMul(z, q, &cz)
	}
	worst := 0.0
	for j := 0; j < probes; j++ {
		worst = math.Max(worst, mat.Norm(z.ColView(j), 2))
	}
	e.Residual = 10 * math.Sqrt(2/math.Pi) * worst
	return true
}

// RangeFinder returns an N×r matrix Q with orthonormal columns whose range
// holds the range of the symmetric N×N matrix a (both triangles, as
// SymView returns) to rounding, and true, when a has rank r ≤ maxRank; it
// returns false once the basis would pass maxRank.
//
// It is the adaptive randomized range finder of Halko, Martinsson and
// Tropp (2011), Algorithm 4.2, in blocks of b = 64 Gaussian probes from a
// fixed seed: each block Y = (I − QQᵀ)·a·Ω is orthonormalized and appended
// to Q (Orthonormalize, then projected off Q again), until a whole block
// leaves nothing outside range(Q) but rounding, δ = max_j ‖y_j‖ at most
// 1e-12 of the norm of the column of a·Ω it came from; then ‖(I − QQᵀ)a‖ ≤
// 10·√(2/π)·δ with probability at least 1 − 10⁻⁶⁴ (§4.3, eq. (4.3)). The
// callers confirm with SubspaceEigen.Residual. Cost 2·N²·(r + b)
// flops for the probes and about 8·N·r·(r + b) for the projections, all
// on the multi-core kernel, plus O(b³) per block.
//
// References: Halko, N., Martinsson, P. G. and Tropp, J. A. (2011),
// "Finding structure with randomness: probabilistic algorithms for
// constructing approximate matrix decompositions", SIAM Review
// 53(2):217–288, Algorithm 4.2 and §4.3.
func RangeFinder(a *mat.Dense, maxRank int) (*mat.Dense, bool) {
	n, _ := a.Dims()
	const b = 64
	var q *mat.Dense
	for blk := 0; ; blk++ {
		y := Mul(nil, a, Gaussian(n, b, 0x7a11+uint64(blk)))
		before := colNorms(y)
		if q != nil {
			project(y, q)
		}
		after := colNorms(y)
		done := true
		for j := range after {
			if after[j] > 1e-12*before[j] {
				done = false
			}
		}
		if done {
			break
		}
		got := Orthonormalize(y)
		if got.IsEmpty() {
			break
		}
		if q != nil {
			project(got, q)
			if got = Orthonormalize(got); got.IsEmpty() {
				break
			}
			q = appendCols(q, got)
		} else {
			q = got
		}
		if _, r := q.Dims(); r > maxRank {
			return nil, false
		}
	}
	if q == nil {
		return &mat.Dense{}, true
	}
	return q, true
}

func colNorms(y *mat.Dense) []float64 {
	r, c := y.Dims()
	out := make([]float64, c)
	raw := y.RawMatrix()
	for i := 0; i < r; i++ {
		for j, v := range raw.Data[i*raw.Stride : i*raw.Stride+c] {
			out[j] += v * v
		}
	}
	for j := range out {
		out[j] = math.Sqrt(out[j])
	}
	return out
}
