package dense

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/gonum"
	"gonum.org/v1/gonum/mat"
)

// EigenSym is the symmetric eigendecomposition of gonum's mat.EigenSym,
// with the same results bit for bit, computed faster when the eigenvectors
// are wanted.
//
// gonum finds the eigenvectors by the implicit QL/QR iteration (LAPACK's
// dsteqr), which applies every plane rotation to two columns of the N×N
// matrix of vectors in scalar Go (Dlasr); those rotations were about 40 %
// of the CPU time of an evaluation of the demo market. EigenSym runs the
// same iteration on the transposed matrix, where a rotation touches two
// contiguous rows, and takes each column down the whole sequence of a
// sweep's rotations in registers (sixteen columns at a time with AVX2),
// the columns split over up to GOMAXPROCS goroutines: every element sees
// the same rotations in the same order with the same roundings, so the
// values and the vectors are those of mat.EigenSym exactly. The reduction
// to tridiagonal form (gonum's Dsytrd and Dorgtr) is unchanged. Cost
// O(N³), about 2.3× faster than mat.EigenSym at N = 500 to 1000
// (BenchmarkEigenSym).
type EigenSym struct {
	values  []float64
	vectors *mat.Dense
}

// Factorize computes the eigenvalues of the symmetric a, and its
// eigenvectors when vectors is true, and reports whether the iteration
// converged, as mat.EigenSym.Factorize does.
func (e *EigenSym) Factorize(a mat.Symmetric, vectors bool) bool {
	e.values, e.vectors = nil, nil
	if !vectors {
		var es mat.EigenSym
		if !es.Factorize(a, false) {
			return false
		}
		e.values = es.Values(nil)
		return true
	}
	n := a.SymmetricDim()
	sd := mat.NewSymDense(n, nil)
	sd.CopySym(a)
	raw := sd.RawSymmetric()
	w := make([]float64, n)
	if !syevVectors(n, raw.Data, raw.Stride, w) {
		return false
	}
	e.values = w
	e.vectors = mat.NewDense(n, n, raw.Data)
	return true
}

// Values returns the eigenvalues in ascending order, in dst if it is not
// nil (it must then have length N). It panics without a successful
// factorization.
func (e *EigenSym) Values(dst []float64) []float64 {
	if e.values == nil {
		panic("dense: EigenSym without a successful factorization")
	}
	if dst == nil {
		dst = make([]float64, len(e.values))
	}
	if len(dst) != len(e.values) {
		panic(mat.ErrSliceLengthMismatch)
	}
	copy(dst, e.values)
	return dst
}

// VectorsTo stores the eigenvectors in the columns of dst, in the order of
// Values, resizing a zero dst. It panics if the vectors were not computed.
func (e *EigenSym) VectorsTo(dst *mat.Dense) {
	if e.vectors == nil {
		panic("dense: EigenSym without eigenvectors")
	}
	n, _ := e.vectors.Dims()
	if dst.IsEmpty() {
		dst.ReuseAs(n, n)
	} else if r, c := dst.Dims(); r != n || c != n {
		panic(mat.ErrShape)
	}
	dst.Copy(e.vectors)
}

// syevVectors is gonum's Dsyev with the eigenvectors (lapack.EVCompute) on
// the upper triangle of the n×n row-major a: the eigenvalues go to w in
// ascending order and a is overwritten with the eigenvectors in its
// columns. The steps and the workspace sizes are Dsyev's, so the blocking
// of Dsytrd, and with it every rounding, is the same.
func syevVectors(n int, a []float64, lda int, w []float64) bool {
	var impl gonum.Implementation
	if n == 0 {
		return true
	}
	if n == 1 {
		w[0] = a[0]
		a[0] = 1
		return true
	}
	const (
		safmin = 0x1p-1022 // LAPACK's dlamch('S')
		eps    = 0x1p-52   // dlamch('P')
	)
	smlnum := safmin / eps
	bignum := 1 / smlnum
	rmin, rmax := math.Sqrt(smlnum), math.Sqrt(bignum)
	nb := impl.Ilaenv(1, "DSYTRD", "U", n, -1, -1, -1)
	work := make([]float64, max(1, (nb+2)*n))
	anrm := impl.Dlansy(lapack.MaxAbs, blas.Upper, n, a, lda, work)
	var sigma float64
	switch {
	case anrm > 0 && anrm < rmin:
		sigma = rmin / anrm
	case anrm > rmax:
		sigma = rmax / anrm
	}
	if sigma != 0 {
		impl.Dlascl(lapack.UpperTri, 0, 0, 1, sigma, n, n, a, lda)
	}
	off, tau, rest := work[:n], work[n:2*n], work[2*n:]
	impl.Dsytrd(blas.Upper, n, a, lda, w, off, tau, rest, len(rest))
	impl.Dorgtr(blas.Upper, n, a, lda, tau, rest, len(rest))
	transposeSquare(n, a, lda)
	ok := steqrTransposed(n, w, off, a, lda, work[n:])
	transposeSquare(n, a, lda)
	if !ok {
		return false
	}
	if sigma != 0 {
		for i := range w[:n] {
			w[i] *= 1 / sigma
		}
	}
	return true
}

// transposeSquare transposes the n×n row-major a in place.
func transposeSquare(n int, a []float64, lda int) {
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			a[i*lda+j], a[j*lda+i] = a[j*lda+i], a[i*lda+j]
		}
	}
}

// rotateRows applies the plane rotations (c[j], s[j]) to rows r0+j and
// r0+j+1 of the n-column row-major zt, j = 0, …, mm−2, in the order dir
// gives: what gonum's Dlasr(Left, Variable, dir) does on those rows, which
// is Dlasr(Right, …) of the transpose, with the same arithmetic per element
// (an identity rotation is skipped, as there). Each column goes down the
// whole sequence of rotations with the row it carries in registers, sixteen
// columns at a time with AVX2 (eight in the Go loops), and the columns are
// split over up to GOMAXPROCS goroutines when the work pays for them.
func rotateRows(dir lapack.Direct, mm, n int, c, s, zt []float64, r0, ldz int) {
	a := zt[r0*ldz:]
	const minWork = 1 << 15 // rotated elements below which one goroutine does it
	parts := min(procs(), max(1, (mm-1)*n/minWork), n/8)
	if parts <= 1 {
		rotateCols(dir, mm, c, s, a, ldz, 0, n)
		return
	}
	Parallel(parts, func(p int) {
		rotateCols(dir, mm, c, s, a, ldz, p*n/parts&^15, (p+1)*n/parts&^15+(p+1)/parts*(n&15))
	})
}

// rotateCols is rotateRows on the columns c0..c1−1 of the mm rows of a.
func rotateCols(dir lapack.Direct, mm int, c, s, a []float64, lda, c0, c1 int) {
	last := (mm - 1) * lda
	i := rotate16(dir, mm, c, s, a, lda, c0, c1)
	if dir == lapack.Backward {
		for ; i+8 <= c1; i += 8 {
			rotateBackward8(mm, c, s, a, lda, i)
		}
		for ; i < c1; i++ {
			y := a[last+i]
			for j := mm - 2; j >= 0; j-- {
				ct, st := c[j], s[j]
				x := a[j*lda+i]
				if ct == 1 && st == 0 {
					a[(j+1)*lda+i], y = y, x
					continue
				}
				a[(j+1)*lda+i], y = ct*y-st*x, st*y+ct*x
			}
			a[i] = y
		}
		return
	}
	for ; i+8 <= c1; i += 8 {
		rotateForward8(mm, c, s, a, lda, i)
	}
	for ; i < c1; i++ {
		y := a[i]
		for j := 0; j < mm-1; j++ {
			ct, st := c[j], s[j]
			x := a[(j+1)*lda+i]
			if ct == 1 && st == 0 {
				a[j*lda+i], y = y, x
				continue
			}
			a[j*lda+i], y = st*x+ct*y, ct*x-st*y
		}
		a[last+i] = y
	}
}

// rotateBackward8 is the Backward case of rotateCols on the eight columns
// from i: rotation j takes row j and row j+1 as rotation j+1 left it, which
// the loop carries in y0…y7; eight independent chains keep the
// floating-point units busy.
func rotateBackward8(mm int, c, s, a []float64, lda, i int) {
	last := (mm - 1) * lda
	r := a[last+i : last+i+8]
	y0, y1, y2, y3, y4, y5, y6, y7 := r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7]
	c, s = c[:mm-1], s[:mm-1]
	for j := mm - 2; j >= 0; j-- {
		o := j*lda + i
		x := a[o : o+8 : o+8]
		up := a[o+lda : o+lda+8 : o+lda+8]
		ct, st := c[j], s[j]
		if ct == 1 && st == 0 {
			up[0], up[1], up[2], up[3], up[4], up[5], up[6], up[7] = y0, y1, y2, y3, y4, y5, y6, y7
			y0, y1, y2, y3, y4, y5, y6, y7 = x[0], x[1], x[2], x[3], x[4], x[5], x[6], x[7]
			continue
		}
		x0, x1, x2, x3, x4, x5, x6, x7 := x[0], x[1], x[2], x[3], x[4], x[5], x[6], x[7]
		up[0], up[1], up[2], up[3] = ct*y0-st*x0, ct*y1-st*x1, ct*y2-st*x2, ct*y3-st*x3
		up[4], up[5], up[6], up[7] = ct*y4-st*x4, ct*y5-st*x5, ct*y6-st*x6, ct*y7-st*x7
		y0, y1, y2, y3 = st*y0+ct*x0, st*y1+ct*x1, st*y2+ct*x2, st*y3+ct*x3
		y4, y5, y6, y7 = st*y4+ct*x4, st*y5+ct*x5, st*y6+ct*x6, st*y7+ct*x7
	}
	r = a[i : i+8]
	r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7] = y0, y1, y2, y3, y4, y5, y6, y7
}

// rotateForward8 is the Forward case of rotateCols on the eight columns
// from i: rotation j takes row j as rotation j−1 left it, carried in
// y0…y7, and row j+1.
func rotateForward8(mm int, c, s, a []float64, lda, i int) {
	r := a[i : i+8]
	y0, y1, y2, y3, y4, y5, y6, y7 := r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7]
	c, s = c[:mm-1], s[:mm-1]
	for j := 0; j < mm-1; j++ {
		o := j*lda + i
		lo := a[o : o+8 : o+8]
		x := a[o+lda : o+lda+8 : o+lda+8]
		ct, st := c[j], s[j]
		if ct == 1 && st == 0 {
			lo[0], lo[1], lo[2], lo[3], lo[4], lo[5], lo[6], lo[7] = y0, y1, y2, y3, y4, y5, y6, y7
			y0, y1, y2, y3, y4, y5, y6, y7 = x[0], x[1], x[2], x[3], x[4], x[5], x[6], x[7]
			continue
		}
		x0, x1, x2, x3, x4, x5, x6, x7 := x[0], x[1], x[2], x[3], x[4], x[5], x[6], x[7]
		lo[0], lo[1], lo[2], lo[3] = st*x0+ct*y0, st*x1+ct*y1, st*x2+ct*y2, st*x3+ct*y3
		lo[4], lo[5], lo[6], lo[7] = st*x4+ct*y4, st*x5+ct*y5, st*x6+ct*y6, st*x7+ct*y7
		y0, y1, y2, y3 = ct*x0-st*y0, ct*x1-st*y1, ct*x2-st*y2, ct*x3-st*y3
		y4, y5, y6, y7 = ct*x4-st*y4, ct*x5-st*y5, ct*x6-st*y6, ct*x7-st*y7
	}
	last := (mm - 1) * lda
	r = a[last+i : last+i+8]
	r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7] = y0, y1, y2, y3, y4, y5, y6, y7
}

// steqrTransposed is gonum's Dsteqr with lapack.EVOrig on the transpose zt
// of the matrix of vectors: every Dlasr(Right) on columns of z is the
// Dlasr(Left) on the same rows of zt, and the column swaps of the final
// sort are row swaps. d (n) holds the diagonal and e (n−1) the
// off-diagonal of the tridiagonal matrix, work at least 2n−2. Apart from
// that transposition the iteration, its constants and its tests are
// Dsteqr's (gonum v0.17.0 lapack/gonum/dsteqr.go, Copyright ©2016 The Gonum
// Authors, BSD 3-clause licence; a transcription of LAPACK's dsteqr),
// including a scaling state that, as there, is not reset between blocks.
func steqrTransposed(n int, d, e, zt []float64, ldz int, work []float64) bool {
	var impl gonum.Implementation
	const (
		eps    = 0x1p-53 // dlamch('E')
		safmin = 0x1p-1022
	)
	eps2 := eps * eps
	safmax := 1 / safmin
	ssfmax := math.Sqrt(safmax) / 3
	ssfmin := math.Sqrt(safmin) / eps2
	const maxit = 30
	nmaxit := n * maxit
	jtot := 0
	l1 := 0
	nm1 := n - 1
	const (
		down = iota + 1
		up
	)
	iscale := 0
	for {
		if l1 > n-1 {
			// Order the eigenvalues and the eigenvectors: selection sort, as
			// Dsteqr does, so that ties keep Dsteqr's order.
			for ii := 1; ii < n; ii++ {
				i := ii - 1
				k := i
				p := d[i]
				for j := ii; j < n; j++ {
					if d[j] < p {
						k = j
						p = d[j]
					}
				}
				if k != i {
					d[k] = d[i]
					d[i] = p
					ri, rk := zt[i*ldz:i*ldz+n], zt[k*ldz:k*ldz+n]
					for c := range ri {
						ri[c], rk[c] = rk[c], ri[c]
					}
				}
			}
			return true
		}
		if l1 > 0 {
			e[l1-1] = 0
		}
		var m int
		if l1 <= nm1 {
			for m = l1; m < nm1; m++ {
				test := math.Abs(e[m])
				if test == 0 {
					break
				}
				if test <= (math.Sqrt(math.Abs(d[m]))*math.Sqrt(math.Abs(d[m+1])))*eps {
					e[m] = 0
					break
				}
			}
		}
		l := l1
		lsv := l
		lend := m
		lendsv := lend
		l1 = m + 1
		if lend == l {
			continue
		}

		// Scale the submatrix in rows and columns l to lend.
		anorm := impl.Dlanst(lapack.MaxAbs, lend-l+1, d[l:], e[l:])
		switch {
		case anorm == 0:
			continue
		case anorm > ssfmax:
			iscale = down
			impl.Dlascl(lapack.General, 0, 0, anorm, ssfmax, lend-l+1, 1, d[l:], 1)
			impl.Dlascl(lapack.General, 0, 0, anorm, ssfmax, lend-l, 1, e[l:], 1)
		case anorm < ssfmin:
			iscale = up
			impl.Dlascl(lapack.General, 0, 0, anorm, ssfmin, lend-l+1, 1, d[l:], 1)
			impl.Dlascl(lapack.General, 0, 0, anorm, ssfmin, lend-l, 1, e[l:], 1)
		}

		// Choose between QL and QR.
		if math.Abs(d[lend]) < math.Abs(d[l]) {
			lend = lsv
			l = lendsv
		}
		if lend > l {
			// QL iteration. Look for a small subdiagonal element.
			for {
				if l != lend {
					for m = l; m < lend; m++ {
						v := math.Abs(e[m])
						if v*v <= (eps2*math.Abs(d[m]))*math.Abs(d[m+1])+safmin {
							break
						}
					}
				} else {
					m = lend
				}
				if m < lend {
					e[m] = 0
				}
				p := d[l]
				if m == l {
					l++
					if l > lend {
						break
					}
					continue
				}
				if m == l+1 {
					d[l], d[l+1], work[l], work[n-1+l] = impl.Dlaev2(d[l], e[l], d[l+1])
					rotateRows(lapack.Backward, 2, n, work[l:], work[n-1+l:], zt, l, ldz)
					e[l] = 0
					l += 2
					if l > lend {
						break
					}
					continue
				}
				if jtot == nmaxit {
					break
				}
				jtot++

				// Form the shift.
				g := (d[l+1] - p) / (2 * e[l])
				r := impl.Dlapy2(g, 1)
				g = d[m] - p + e[l]/(g+math.Copysign(r, g))
				s := 1.0
				c := 1.0
				p = 0.0
				for i := m - 1; i >= l; i-- {
					f := s * e[i]
					b := c * e[i]
					c, s, r = impl.Dlartg(g, f)
					if i != m-1 {
						e[i+1] = r
					}
					g = d[i+1] - p
					r = (d[i]-g)*s + 2*c*b
					p = s * r
					d[i+1] = g + p
					g = c*r - b
					work[i] = c
					work[n-1+i] = -s
				}
				rotateRows(lapack.Backward, m-l+1, n, work[l:], work[n-1+l:], zt, l, ldz)
				d[l] -= p
				e[l] = g
			}
		} else {
			// QR iteration. Look for a small superdiagonal element.
			for {
				if l != lend {
					for m = l; m > lend; m-- {
						v := math.Abs(e[m-1])
						if v*v <= (eps2*math.Abs(d[m])*math.Abs(d[m-1]) + safmin) {
							break
						}
					}
				} else {
					m = lend
				}
				if m > lend {
					e[m-1] = 0
				}
				p := d[l]
				if m == l {
					l--
					if l < lend {
						break
					}
					continue
				}
				if m == l-1 {
					d[l-1], d[l], work[m], work[n-1+m] = impl.Dlaev2(d[l-1], e[l-1], d[l])
					rotateRows(lapack.Forward, 2, n, work[m:], work[n-1+m:], zt, l-1, ldz)
					e[l-1] = 0
					l -= 2
					if l < lend {
						break
					}
					continue
				}
				if jtot == nmaxit {
					break
				}
				jtot++

				// Form the shift.
				g := (d[l-1] - p) / (2 * e[l-1])
				r := impl.Dlapy2(g, 1)
				g = d[m] - p + (e[l-1])/(g+math.Copysign(r, g))
				s := 1.0
				c := 1.0
				p = 0.0
				for i := m; i < l; i++ {
					f := s * e[i]
					b := c * e[i]
					c, s, r = impl.Dlartg(g, f)
					if i != m {
						e[i-1] = r
					}
					g = d[i] - p
					r = (d[i+1]-g)*s + 2*c*b
					p = s * r
					d[i] = g + p
					g = c*r - b
					work[i] = c
					work[n-1+i] = s
				}
				rotateRows(lapack.Forward, l-m+1, n, work[m:], work[n-1+m:], zt, m, ldz)
				d[l] -= p
				e[l-1] = g
			}
		}

		// Undo the scaling.
		switch iscale {
		case down:
			impl.Dlascl(lapack.General, 0, 0, ssfmax, anorm, lendsv-lsv+1, 1, d[lsv:], 1)
			impl.Dlascl(lapack.General, 0, 0, ssfmax, anorm, lendsv-lsv, 1, e[lsv:], 1)
		case up:
			impl.Dlascl(lapack.General, 0, 0, ssfmin, anorm, lendsv-lsv+1, 1, d[lsv:], 1)
			impl.Dlascl(lapack.General, 0, 0, ssfmin, anorm, lendsv-lsv, 1, e[lsv:], 1)
		}
		if jtot >= nmaxit {
			break
		}
	}
	for i := 0; i < n-1; i++ {
		if e[i] != 0 {
			return false
		}
	}
	return true
}
