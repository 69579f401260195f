//go:build amd64 && !purego

package dense

// The assembly kernels (kernel_amd64.s). The pointers address the first
// elements of the packed slivers and of the block of C.
//
//go:noescape
func kern4x12(k int, a *float64, lda int, b, c *float64, ldc int)

//go:noescape
func kern8x24(k int, a *float64, lda int, b, c *float64, ldc int)

var (
	avx2Kernel   = kernel{name: "avx2", mr: 4, nr: 12, fused: true, fn: kernAVX2}
	avx512Kernel = kernel{name: "avx512", mr: 8, nr: 24, fused: true, fn: kernAVX512}
)

// kernAVX2 checks the slice bounds the assembly relies on, then runs it.
func kernAVX2(k int, a []float64, lda int, b, c []float64, ldc int) {
	_ = c[3*ldc+11]
	if k > 0 {
		_, _ = a[(k-1)*lda+3], b[12*k-1]
	}
	kern4x12(k, &a[0], lda, &b[0], &c[0], ldc)
}

func kernAVX512(k int, a []float64, lda int, b, c []float64, ldc int) {
	_ = c[7*ldc+23]
	if k > 0 {
		_, _ = a[(k-1)*lda+7], b[24*k-1]
	}
	kern8x24(k, &a[0], lda, &b[0], &c[0], ldc)
}

func selectKernel() kernel {
	ks := kernels()
	return ks[len(ks)-1]
}

// kernels lists every kernel this build can run on this CPU, slowest first.
func kernels() []kernel {
	f := detect()
	ks := []kernel{goKernel}
	if f.avx2 {
		ks = append(ks, avx2Kernel)
	}
	if f.avx512 {
		ks = append(ks, avx512Kernel)
	}
	return ks
}
