//go:build !openblas

package dense

// openBLAS reports the openblas build tag: off, the products run on the
// kernels of this package and no cgo is compiled.
const openBLAS = false
