//go:build amd64 && !purego

package dense

import "gonum.org/v1/gonum/lapack"

// The rotation kernels (eigensym_amd64.s).
//
//go:noescape
func rotateBackward16AVX2(mm int, c, s, a *float64, lda int)

//go:noescape
func rotateForward16AVX2(mm int, c, s, a *float64, lda int)

// rotate16 applies the rotations of rotateCols to the columns from i on,
// sixteen at a time with AVX2 while sixteen are left before c1, and
// returns the first column it left.
func rotate16(dir lapack.Direct, mm int, c, s, a []float64, lda, i, c1 int) int {
	if !vecAVX2 || mm < 2 || i+16 > c1 {
		return i
	}
	_, _, _ = c[mm-2], s[mm-2], a[(mm-1)*lda+c1-1]
	for ; i+16 <= c1; i += 16 {
		if dir == lapack.Backward {
			rotateBackward16AVX2(mm, &c[0], &s[0], &a[i], lda)
		} else {
			rotateForward16AVX2(mm, &c[0], &s[0], &a[i], lda)
		}
	}
	return i
}
