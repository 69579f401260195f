package dense

// kernel is a register-blocked micro-kernel: fn(k, a, lda, b, c, ldc) adds
// to the mr×nr block of c (row stride ldc) the product Σ_p a_p b_pᵀ, where b
// holds k packed rows of nr values and a k rows of mr values, lda apart (mr
// for a sliver of its own, nr for part of a sliver of b's packing). Each element is summed from
// zero in order of p, then added to c by one addition.
type kernel struct {
	name   string
	mr, nr int
	fused  bool // each step a_p·b_p + acc is rounded once (FMA)
	fn     func(k int, a []float64, lda int, b, c []float64, ldc int)
}

// goKernel is the portable kernel, used when the CPU lacks AVX2 and FMA or
// with the purego build tag.
var goKernel = kernel{name: "go", mr: 2, nr: 4, fn: kernGo}

// best is the fastest kernel the CPU and operating system support, chosen
// once at start-up.
var best = selectKernel()

// kernGo is the 2×4 micro-kernel in Go: eight accumulators and the six
// values of a step fit in the sixteen floating-point registers of amd64, so
// nothing spills. The explicit float64 conversions round each product before
// it is added: they forbid the compiler to fuse multiply and add, so the
// portable path gives the same bits on every architecture.
func kernGo(k int, a []float64, lda int, b, c []float64, ldc int) {
	var c00, c01, c02, c03, c10, c11, c12, c13 float64
	b = b[:4*k]
	for p := 0; len(b) >= 4; p += lda {
		a0, a1 := a[p], a[p+1]
		b0, b1, b2, b3 := b[0], b[1], b[2], b[3]
		c00 += float64(a0 * b0)
		c01 += float64(a0 * b1)
		c02 += float64(a0 * b2)
		c03 += float64(a0 * b3)
		c10 += float64(a1 * b0)
		c11 += float64(a1 * b1)
		c12 += float64(a1 * b2)
		c13 += float64(a1 * b3)
		b = b[4:]
	}
	r := c[:4]
	r[0] += c00
	r[1] += c01
	r[2] += c02
	r[3] += c03
	r = c[ldc : ldc+4]
	r[0] += c10
	r[1] += c11
	r[2] += c12
	r[3] += c13
}
