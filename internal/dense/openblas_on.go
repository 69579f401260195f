//go:build openblas

package dense

import (
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/netlib/blas/netlib"
)

// openBLAS reports the openblas build tag: on, the products of this package
// and every gonum product in the program go to the C BLAS the program is
// linked with (CGO_LDFLAGS=-lopenblas for OpenBLAS).
const openBLAS = true

func init() {
	blas64.Use(netlib.Implementation{})
}
