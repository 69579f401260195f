package ewma

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// makePSD checks that the symmetric a is positive semidefinite and, if not,
// sets its negative eigenvalues to zero and rescales to the original
// diagonal:
//
//	a = V Λ Vᵀ,   Â = V max(Λ, 0) Vᵀ,   a ← D^½ Â D^½,   D = diag(a)/diag(Â).
//
// Eigenvalues down to −tol count as zero (rounding), tol = n·ε·max|λ|; they
// are set to zero too but not counted in Repair.Clipped. It returns nil if no
// repair was needed. m, when not nil, holds the sums a was finished from; it
// tells which columns were observed on every used date (see subspaceEigen).
//
// The check is first a Cholesky factorization on all cores (N³/3 flops):
// a positive definite a needs nothing more. Otherwise the eigenpairs come
// from the smallest subspace known to hold the range of a (subspaceEigen), when
// that subspace has at most two thirds of the dimension of a and a probe confirms
// that a lies in it to rounding; the eigenvalues of a outside it are then
// exactly zero and need no clipping. Failing that, from gonum's
// eigendecomposition of a (O(N³), single-threaded). Cost with the subspace
// of dimension k: O(N²·k) on all cores plus a k×k eigendecomposition.
//
// References: Higham, N. J. (1988), "Computing a nearest symmetric positive
// semidefinite matrix", Linear Algebra Appl. 103:103–118 (the clipping);
// Halko, N., Martinsson, P. G. and Tropp, J. A. (2011), "Finding structure
// with randomness", SIAM Review 53(2):217–288 (the sketch and the probe).
func makePSD(a *mat.SymDense, m *sums) *Repair {
	n := a.SymmetricDim()
	if big := maxAbsSym(a); big > 1e150 {
		// Near overflow, the Cholesky check's products overflow and it can
		// pass a matrix that is not PSD: check and repair a scaled copy.
		scaled := mat.NewSymDense(n, nil)
		scaled.ScaleSym(1/big, a)
		rep := makePSD(scaled, m)
		if rep != nil {
			a.ScaleSym(big, scaled)
			rep.MinEigenvalue *= big
			rep.MaxChange *= big
		}
		return rep
	}
	if forceFullRepair {
		return makePSDFull(a)
	}
	var ch dense.Cholesky
	if ch.Factorize(a) {
		return nil
	}
	if vals, vecs, ok := subspaceEigen(a, m); ok {
		if repairRoute != nil {
			repairRoute("subspace")
		}
		return clipEigen(a, vals, vecs, n)
	}
	if repairRoute != nil {
		repairRoute("full")
	}
	return makePSDFull(a)
}

// Test hooks: forceFullRepair sends makePSD to the full decomposition (the
// reference route), repairRoute, if set, hears which route it took.
var (
	forceFullRepair bool
	repairRoute     func(string)
)

// makePSDFull is makePSD by gonum's eigendecomposition of all of a, without
// the checks before it.
func makePSDFull(a *mat.SymDense) *Repair {
	var es dense.EigenSym
	if !es.Factorize(a, true) {
		// Not reached for finite input; leave the matrix and say so.
		return &Repair{MinEigenvalue: math.NaN()}
	}
	var v mat.Dense
	es.VectorsTo(&v)
	return clipEigen(a, es.Values(nil), &v, a.SymmetricDim())
}

// clipEigen repairs a from k ascending eigenvalues vals and the matching
// eigenvectors in the columns of the N×k vecs; the other N − k eigenvalues
// of a are zero. It returns nil when no eigenvalue is below −tol.
func clipEigen(a *mat.SymDense, vals []float64, vecs *mat.Dense, n int) *Repair {
	k := len(vals)
	top := math.Max(math.Abs(vals[0]), math.Abs(vals[k-1]))
	tol := float64(n) * 0x1p-52 * top
	if vals[0] >= -tol {
		return nil
	}
	rep := &Repair{MinEigenvalue: vals[0]}
	pos := make([]float64, k)
	for j, l := range vals {
		if l < -tol {
			rep.Clipped++
		}
		pos[j] = math.Max(l, 0)
	}
	b := dense.XtWX(nil, vecs.T(), pos) // V·max(Λ, 0)·Vᵀ
	scale := make([]float64, n)
	for i := range scale {
		scale[i] = 1
		// A diagonal that is not positive (a Newey–West variance can be
		// negative) cannot be restored: keep the clipped matrix's there,
		// rather than a NaN from the square root of a negative ratio.
		if d, o := b.At(i, i), a.At(i, i); d > 0 && o > 0 {
			scale[i] = math.Sqrt(o / d)
		}
	}
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			nv := b.At(i, j) * scale[i] * scale[j]
			rep.MaxChange = math.Max(rep.MaxChange, math.Abs(nv-a.At(i, j)))
			a.SetSym(i, j, nv)
		}
	}
	return rep
}

// subspaceEigen returns the nonzero eigenpairs of a from a subspace that
// holds its range, or false when there is none small enough or a does not
// lie in it to rounding.
//
// Let F be the columns observed on every used date and P the others. Every
// pair in F shares all U used dates, so the F×F block of any of this
// package's estimates (covariance, correlation, Newey–West, with or without
// the mean) is X_Fᵀ·A·X_F for a U×U matrix A, scaled by a diagonal: its
// rank is at most U. The columns of a are then in the span of
//
//	[a_FF·Ω ; 0]   (Ω a |F|×(U+8) Gaussian sketch of the F×F block's range),
//	[a_FP ; 0]     (the F rows of the P columns),
//	[0 ; I_P]      (the P coordinates),
//
// of dimension at most U + 2|P|, after Halko, Martinsson and Tropp (2011),
// Algorithm 4.1 for the sketch. The basis is orthonormalized
// (dense.Orthonormalize), a is decomposed in it (dense.SubspaceEigen), and
// the decomposition is accepted only when the probed part of a outside the
// subspace is at most 64·N·ε·‖a‖₂, rounding; anything else (a pattern of
// gaps the argument does not cover) falls back to the full decomposition.
// The sketch is from a fixed seed, so the result is deterministic.
func subspaceEigen(a *mat.SymDense, m *sums) ([]float64, *mat.Dense, bool) {
	n := a.SymmetricDim()
	if m == nil || n < 64 {
		return nil, nil, false
	}
	var full, part []int
	for i := 0; i < n; i++ {
		if m.cnt == nil || m.cnt[i*n+i] == float64(m.used) {
			full = append(full, i)
		} else {
			part = append(part, i)
		}
	}
	sketch := min(m.used+8, len(full))
	if 3*(sketch+2*len(part)) > 2*n {
		return nil, nil, false
	}
	av := dense.SymView(a)
	// K = [a_FF·Ω, a_FP] with the P rows zero; Ω has zero P rows.
	omega := mat.NewDense(n, max(1, sketch), nil)
	if sketch > 0 {
		g := dense.Gaussian(len(full), sketch, 0x0b5e)
		for r, i := range full {
			omega.SetRow(i, g.RawRowView(r))
		}
	}
	k := mat.NewDense(n, max(1, sketch)+len(part), nil)
	y := dense.Mul(nil, av, omega)
	k.Slice(0, n, 0, max(1, sketch)).(*mat.Dense).Copy(y)
	for c, j := range part {
		for i := 0; i < n; i++ {
			k.Set(i, max(1, sketch)+c, av.At(i, j))
		}
	}
	for _, i := range part {
		row := k.RawRowView(i)
		clear(row)
	}
	qf := dense.Orthonormalize(k)
	rf := 0
	if !qf.IsEmpty() {
		_, rf = qf.Dims()
	}
	q := mat.NewDense(n, max(1, rf+len(part)), nil)
	if rf > 0 {
		q.Slice(0, n, 0, rf).(*mat.Dense).Copy(qf)
	}
	for c, i := range part {
		q.Set(i, rf+c, 1)
	}
	if rf+len(part) == 0 {
		return nil, nil, false
	}
	var se dense.SubspaceEigen
	if !se.Factorize(av, q) || !se.Exact() {
		return nil, nil, false
	}
	return se.Values, se.Vectors, true
}
