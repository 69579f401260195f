//go:build amd64 && !purego

package dense

// The matrix–vector kernels (vec_amd64.s).
//
//go:noescape
func dotAxpyAVX2(n int, a, x, z *float64, s float64) float64

//go:noescape
func mulT16AVX2(rows int, b *float64, ldb int, x, y *float64)

//go:noescape
func mulT4AVX2(rows int, b *float64, ldb int, x, y *float64)

//go:noescape
func mulRowsAVX2(rows, k4 int, b *float64, ldb int, z, d, x, dst *float64)

//go:noescape
func axpyAVX2(n int, s float64, x, y *float64)

// axpy sets y ← y + s·x, rounded as axpyGo rounds it.
func axpy(s float64, x, y []float64) {
	n := len(x)
	if !vecAVX2 || n < 8 {
		axpyGo(s, x, y)
		return
	}
	_ = y[n-1]
	axpyAVX2(n, s, &x[0], &y[0])
}

// vecAVX2 reports whether the AVX2 matrix–vector kernels run here.
var vecAVX2 = detect().avx2

// dotAxpyVec returns Σ a_j x_j and adds s·a to z, reading a once.
func dotAxpyVec(a, x, z []float64, s float64) float64 {
	n := len(a)
	if !vecAVX2 || n == 0 {
		return dotAxpyGo(a, x, z, s)
	}
	_, _ = x[n-1], z[n-1]
	return dotAxpyAVX2(n, &a[0], &x[0], &z[0], s)
}

// mulTAdd adds Σ_{i<rows} x_i b_i (row i of b, stride ldb, k values) to y:
// sixteen and then four columns at a time, their sums in registers.
func mulTAdd(rows, k int, b []float64, ldb int, x, y []float64) {
	if rows == 0 || k == 0 {
		return
	}
	k4 := k &^ 3
	if !vecAVX2 || k4 == 0 {
		mulTAddGo(rows, 0, k, b, ldb, x, y)
		return
	}
	_, _, _ = b[(rows-1)*ldb+k-1], x[rows-1], y[k-1]
	c := 0
	for ; c+16 <= k4; c += 16 {
		mulT16AVX2(rows, &b[c], ldb, &x[0], &y[c])
	}
	for ; c < k4; c += 4 {
		mulT4AVX2(rows, &b[c], ldb, &x[0], &y[c])
	}
	mulTAddGo(rows, k4, k, b, ldb, x, y)
}

// mulRows sets dst_i = b_i·z (+ d_i x_i when d is not nil) for i < rows.
func mulRows(rows, k int, b []float64, ldb int, z, d, x, dst []float64) {
	if rows == 0 {
		return
	}
	r4, k4 := rows&^3, k&^3
	if !vecAVX2 || r4 == 0 || k4 == 0 {
		mulRowsGo(0, rows, k, b, ldb, z, d, x, dst)
		return
	}
	_, _, _ = b[(r4-1)*ldb+k-1], z[k-1], dst[r4-1]
	var dp, xp *float64
	if d != nil {
		_, _ = d[r4-1], x[r4-1]
		dp, xp = &d[0], &x[0]
	}
	mulRowsAVX2(r4, k4, &b[0], ldb, &z[0], dp, xp, &dst[0])
	if k4 < k {
		for i := 0; i < r4; i++ {
			row := b[i*ldb : i*ldb+k]
			s := dst[i]
			for c := k4; c < k; c++ {
				s += row[c] * z[c]
			}
			dst[i] = s
		}
	}
	mulRowsGo(r4, rows, k, b, ldb, z, d, x, dst)
}

// setVecAVX2 switches the kernels off and on again, for the tests of the
// portable loops; on is honoured only where the CPU has AVX2.
func setVecAVX2(on bool) { vecAVX2 = on && detect().avx2 }

//go:noescape
func symv4AVX2(n4 int, a *float64, lda int, x, z *float64, s *[4]float64, out *[4]float64)

// symvRows4 adds to out_r the dot products of rows r < 4 of a (lda apart,
// columns j < n) with x, and Σ_r s_r a_rj to z_j; it reports false, doing
// nothing, where the kernel does not run.
func symvRows4(n int, a []float64, lda int, x, z []float64, s *[4]float64, out *[4]float64) bool {
	n4 := n &^ 3
	if !vecAVX2 || n4 == 0 {
		return false
	}
	_, _, _ = a[3*lda+n-1], x[n-1], z[n-1]
	var d [4]float64
	symv4AVX2(n4, &a[0], lda, &x[0], &z[0], s, &d)
	for r := range 4 {
		row := a[r*lda : r*lda+n]
		acc := d[r]
		for j := n4; j < n; j++ {
			acc += row[j] * x[j]
			z[j] += s[r] * row[j]
		}
		out[r] += acc
	}
	return true
}

// VectorKernels reports whether the AVX2 vector kernels run on this CPU
// (and build), for packages with kernels of their own to follow the same
// choice.
func VectorKernels() bool { return vecAVX2 }
