package factor

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// pcs is a truncated singular value decomposition a ≈ U·diag(s)·Vᵀ of the
// centered T×N data, singular values descending.
type pcs struct {
	u *mat.Dense // T×r
	s []float64  // r
	v *mat.Dense // N×r
	// sq holds the squared singular values known: all min(T, N) of them for
	// the Gram path, the l of the sketch for the randomized path.
	sq []float64
}

// randomizedSVD returns the leading r singular triplets of a by the
// randomized range finder with subspace iteration (Halko, Martinsson & Tropp
// 2011, Algorithms 4.4 and 5.1): a Gaussian test matrix of l = r + over
// columns (or the warm start, an N×l matrix such as the previous right
// singular vectors), iters passes of orthonormalized power iteration, then an
// exact SVD of the small projected matrix. All products run on the kernel of
// internal/dense on all cores, which sums every element in a fixed order, so
// the result does not depend on GOMAXPROCS. Cost O(T·N·l·(2·iters + 2)).
func randomizedSVD(a *mat.Dense, r, over, iters int, seed uint64, start *mat.Dense) pcs {
	t, n := a.Dims()
	l := min(r+over, t, n)
	omega := mat.NewDense(n, l, nil)
	if start != nil {
		_, c := start.Dims()
		c = min(c, l)
		omega.Slice(0, n, 0, c).(*mat.Dense).Copy(start.Slice(0, n, 0, c))
		if c < l {
			gaussian(omega.Slice(0, n, c, l).(*mat.Dense), seed)
		}
	} else {
		gaussian(omega, seed)
	}
	q := dense.Mul(mat.NewDense(t, l, nil), a, omega)
	z := mat.NewDense(n, l, nil)
	orthonormalize(q)
	for i := 0; i < iters; i++ {
		dense.MulTA(z, a, q)
		orthonormalize(z)
		dense.Mul(q, a, z)
		orthonormalize(q)
	}
	// Bᵀ = AᵀQ (N×l) = Q₂R₂; R₂ = P·Σ·Wᵀ; so A ≈ Q·Bᵀᵀ = (Q·W)·Σ·(Q₂·P)ᵀ.
	dense.MulTA(z, a, q)
	rr := orthonormalize(z)
	var svd mat.SVD
	if !svd.Factorize(rr, mat.SVDFull) {
		panic("factor: SVD of the projected matrix failed")
	}
	s := svd.Values(nil)
	var p, w mat.Dense
	svd.UTo(&p)
	svd.VTo(&w)
	out := pcs{u: mat.NewDense(t, r, nil), v: mat.NewDense(n, r, nil), s: s[:r]}
	dense.Mul(out.u, q, w.Slice(0, l, 0, r))
	dense.Mul(out.v, z, p.Slice(0, l, 0, r))
	out.sq = make([]float64, l)
	for i, v := range s {
		out.sq[i] = v * v
	}
	fixSigns(out)
	return out
}

// gramSVD returns the leading r singular triplets of a, and squared
// singular values, from the smaller Gram matrix G: A·Aᵀ (T×T) when N > T, the
// asymptotic principal components of Connor & Korajczyk (1986), otherwise
// AᵀA (N×N), formed by internal/dense on all cores. When G is at most
// gramLimit on a side it is eigen-decomposed exactly (every squared singular
// value is returned); otherwise the leading l = r + over eigenpairs come from
// iters rounds of subspace iteration on G from a seeded Gaussian start with a
// final Rayleigh–Ritz step (Halko, Martinsson & Tropp 2011, Algorithm 4.4
// applied to G; each round on G counts as two power iterations on A). The
// other side's singular vectors are A·v/σ or Aᵀ·u/σ. Cost O(T·N·min(T, N))
// for G, plus O(min(T, N)³) exact or O(iters·min(T, N)²·l) subspace.
func gramSVD(a *mat.Dense, r, over, iters int, seed uint64) (pcs, bool) {
	t, n := a.Dims()
	var g *mat.SymDense
	if n > t {
		g = dense.XWXt(nil, a, nil)
	} else {
		g = dense.XtWX(nil, a, nil)
	}
	m := g.SymmetricDim()
	var vals []float64 // descending
	var top *mat.Dense // m×r
	if m <= gramLimit {
		var eig dense.EigenSym
		if !eig.Factorize(g, true) {
			return pcs{}, false
		}
		asc := eig.Values(nil)
		var vecs mat.Dense
		eig.VectorsTo(&vecs)
		vals = make([]float64, m)
		top = mat.NewDense(m, r, nil)
		for i := range vals {
			vals[i] = asc[m-1-i]
		}
		for j := 0; j < r; j++ {
			for i := 0; i < m; i++ {
				top.Set(i, j, vecs.At(i, m-1-j))
			}
		}
	} else {
		var ok bool
		vals, top, ok = subspaceEig(g, r, over, iters, seed)
		if !ok {
			return pcs{}, false
		}
	}
	out := pcs{sq: make([]float64, len(vals)), s: make([]float64, r)}
	for i, v := range vals {
		out.sq[i] = math.Max(v, 0)
	}
	for j := 0; j < r; j++ {
		out.s[j] = math.Sqrt(out.sq[j])
	}
	rows := t
	if n > t {
		rows = n
	}
	other := mat.NewDense(rows, r, nil)
	if n > t {
		dense.MulTA(other, a, top)
		out.u, out.v = top, other
	} else {
		dense.Mul(other, a, top)
		out.u, out.v = other, top
	}
	for j := 0; j < r; j++ {
		if out.s[j] > 0 {
			col := other.ColView(j).(*mat.VecDense)
			col.ScaleVec(1/out.s[j], col)
		}
	}
	fixSigns(out)
	return out, true
}

// subspaceEig returns the leading l = r + over eigenvalues (descending) of
// the symmetric positive semidefinite g and its leading r eigenvectors, by
// subspace iteration with a Rayleigh–Ritz step.
func subspaceEig(g *mat.SymDense, r, over, iters int, seed uint64) ([]float64, *mat.Dense, bool) {
	m := g.SymmetricDim()
	l := min(r+over, m)
	q := mat.NewDense(m, l, nil)
	gaussian(q, seed)
	y := mat.NewDense(m, l, nil)
	full := fullCopy(g) // a general copy the kernel reads in place
	for i := 0; i <= iters; i++ {
		dense.Mul(y, full, q)
		q, y = y, q
		orthonormalize(q)
	}
	dense.Mul(y, full, q)
	h := mat.NewSymDense(l, nil)
	hq := dense.MulTA(nil, q, y)
	for i := 0; i < l; i++ {
		for j := i; j < l; j++ {
			h.SetSym(i, j, 0.5*(hq.At(i, j)+hq.At(j, i)))
		}
	}
	var eig dense.EigenSym
	if !eig.Factorize(h, true) {
		return nil, nil, false
	}
	asc := eig.Values(nil)
	var w mat.Dense
	eig.VectorsTo(&w)
	vals := make([]float64, l)
	wr := mat.NewDense(l, r, nil)
	for i := range vals {
		vals[i] = asc[l-1-i]
	}
	for j := 0; j < r; j++ {
		for i := 0; i < l; i++ {
			wr.Set(i, j, w.At(i, l-1-j))
		}
	}
	return vals, dense.Mul(nil, q, wr), true
}

// fullCopy returns g as a general matrix, both triangles from g's upper
// storage: Dense.Copy reads a Symmetric element by element through At.
func fullCopy(g *mat.SymDense) *mat.Dense {
	raw := g.RawSymmetric()
	m := raw.N
	full := mat.NewDense(m, m, nil)
	data := full.RawMatrix().Data
	for i := 0; i < m; i++ {
		row := raw.Data[i*raw.Stride+i : i*raw.Stride+m]
		copy(data[i*m+i:], row)
		for j, v := range row[1:] {
			data[(i+1+j)*m+i] = v
		}
	}
	return full
}

// fixSigns makes the largest-magnitude entry of each right singular vector
// positive, flipping the left vector with it, so that a decomposition has one
// sign convention whatever route computed it.
func fixSigns(p pcs) {
	n, r := p.v.Dims()
	for j := 0; j < r; j++ {
		best, at := -1.0, 0
		for i := 0; i < n; i++ {
			if v := math.Abs(p.v.At(i, j)); v > best {
				best, at = v, i
			}
		}
		if p.v.At(at, j) < 0 {
			vc := p.v.ColView(j).(*mat.VecDense)
			vc.ScaleVec(-1, vc)
			uc := p.u.ColView(j).(*mat.VecDense)
			uc.ScaleVec(-1, uc)
		}
	}
}

// gaussian fills m with standard normal draws from a PCG source seeded with
// seed, row by row, so the draws depend only on the seed and the shape.
func gaussian(m *mat.Dense, seed uint64) {
	rng := rand.New(rand.NewPCG(seed, 0x9e3779b97f4a7c15))
	r, c := m.Dims()
	for i := 0; i < r; i++ {
		row := m.RawRowView(i)[:c]
		for j := range row {
			row[j] = rng.NormFloat64()
		}
	}
}

// orthonormalize replaces the r×c matrix y (r ≥ c) by the Q of its thin QR
// factorization and returns R (c×c). It uses LAPACK Geqrf and Orgqr on the
// thin matrix, never the full r×r Q.
func orthonormalize(y *mat.Dense) *mat.Dense {
	raw := y.RawMatrix()
	c := raw.Cols
	tau := make([]float64, c)
	work := []float64{0}
	lapack64.Geqrf(raw, tau, work, -1)
	lw := int(work[0])
	lapack64.Orgqr(raw, tau, work, -1)
	lw = max(lw, int(work[0]), 1)
	work = make([]float64, lw)
	lapack64.Geqrf(raw, tau, work, lw)
	rr := mat.NewDense(c, c, nil)
	for i := 0; i < c; i++ {
		for j := i; j < c; j++ {
			rr.Set(i, j, raw.Data[i*raw.Stride+j])
		}
	}
	lapack64.Orgqr(raw, tau, work, lw)
	return rr
}
