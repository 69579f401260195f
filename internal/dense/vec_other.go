//go:build !amd64 || purego

package dense

const vecAVX2 = false

func axpy(s float64, x, y []float64) { axpyGo(s, x, y) }

func dotAxpyVec(a, x, z []float64, s float64) float64 { return dotAxpyGo(a, x, z, s) }

func mulTAdd(rows, k int, b []float64, ldb int, x, y []float64) {
	mulTAddGo(rows, 0, k, b, ldb, x, y)
}

func mulRows(rows, k int, b []float64, ldb int, z, d, x, dst []float64) {
	mulRowsGo(0, rows, k, b, ldb, z, d, x, dst)
}

func setVecAVX2(bool) {}

func symvRows4(int, []float64, int, []float64, []float64, *[4]float64, *[4]float64) bool {
	return false
}

// VectorKernels reports whether the AVX2 vector kernels run: never in this
// build.
func VectorKernels() bool { return false }
