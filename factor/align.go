package factor

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// align rotates the loadings b (N×K, orthonormal) and the factor covariance
// f (K×K) by the orthogonal Procrustes rotation onto the previous model's
// loadings over the common assets, and reports the principal angles.
//
// With m = min(K, K_prev), M = B_cᵀ·B_prev,c[:, :m] = P·Σ·Qᵀ (full SVD), the
// rotation R = P·diag(Qᵀ, I_{K−m}) maximizes tr(R[:, :m]ᵀ·M), that is it
// minimizes ‖B_c·R[:, :m] − B_prev,c[:, :m]‖_F, and is orthogonal, so B·R
// stays orthonormal and (B·R)·(Rᵀ·F·R)·(B·R)ᵀ = B·F·Bᵀ.
func align(b *mat.Dense, f *mat.SymDense, prev *Model, idx []int) (*mat.Dense, *mat.SymDense, *Alignment, error) {
	n, k := b.Dims()
	if idx == nil && prev.n != n {
		return nil, nil, nil, fmt.Errorf("%w: %d assets now, %d before, and no PreviousIndex", ErrPrevious, n, prev.n)
	}
	var cur, old []int
	for i := 0; i < n; i++ {
		j := i
		if idx != nil {
			j = idx[i]
		}
		if j < 0 {
			continue
		}
		if j >= prev.n {
			return nil, nil, nil, fmt.Errorf("%w: PreviousIndex[%d] = %d outside the %d previous assets", ErrPrevious, i, j, prev.n)
		}
		cur = append(cur, i)
		old = append(old, j)
	}
	kp := prev.k
	if kp == 0 || len(cur) < max(k, kp)+1 {
		return nil, nil, nil, fmt.Errorf("%w: %d common assets for %d and %d factors", ErrPrevious, len(cur), k, kp)
	}
	c := len(cur)
	bc := mat.NewDense(c, k, nil)
	pc := mat.NewDense(c, kp, nil)
	for r := range cur {
		copy(bc.RawRowView(r), b.RawRowView(cur[r]))
		copy(pc.RawRowView(r), prev.b.RawRowView(old[r]))
	}
	m := min(k, kp)
	var mm mat.Dense
	mm.Mul(bc.T(), pc.Slice(0, c, 0, m))
	var svd mat.SVD
	if !svd.Factorize(&mm, mat.SVDFull) {
		return nil, nil, nil, fmt.Errorf("%w: SVD of the cross-product failed", ErrPrevious)
	}
	var p, q mat.Dense
	svd.UTo(&p)
	svd.VTo(&q)
	rot := mat.NewDense(k, k, nil)
	rot.Slice(0, k, 0, m).(*mat.Dense).Mul(p.Slice(0, k, 0, m), q.T())
	if m < k {
		rot.Slice(0, k, m, k).(*mat.Dense).Copy(p.Slice(0, k, m, k))
	}
	var nb, fr, rfr mat.Dense
	nb.Mul(b, rot)
	fr.Mul(f, rot)
	rfr.Mul(rot.T(), &fr)
	// Rᵀ·F·R is symmetric in exact arithmetic; keep its upper triangle.
	nf := mat.NewSymDense(k, nil)
	for i := 0; i < k; i++ {
		for j := i; j < k; j++ {
			nf.SetSym(i, j, rfr.At(i, j))
		}
	}

	angles := principalAngles(bc, pc)
	return &nb, nf, &Alignment{Common: c, Angles: angles, Rotation: slices.Clone(rot.RawMatrix().Data)}, nil
}

// principalAngles returns the principal angles between the column spaces of
// a and b (same number of rows), ascending, in radians: the arccosines of the
// singular values of Q_aᵀ·Q_b for orthonormal bases Q_a, Q_b (Björck & Golub
// 1973). There are min(cols(a), cols(b)) of them.
func principalAngles(a, b *mat.Dense) []float64 {
	qa := mat.DenseCopyOf(a)
	qb := mat.DenseCopyOf(b)
	orthonormalize(qa)
	orthonormalize(qb)
	var m mat.Dense
	m.Mul(qa.T(), qb)
	var svd mat.SVD
	if !svd.Factorize(&m, mat.SVDNone) {
		panic("factor: SVD for principal angles failed")
	}
	s := svd.Values(nil)
	out := make([]float64, len(s))
	for i, v := range s {
		out[i] = math.Acos(math.Min(1, v))
	}
	slices.Sort(out)
	return out
}
