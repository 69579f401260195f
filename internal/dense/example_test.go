package dense_test

import (
	"fmt"

	"github.com/riskmodel/riskmodel/internal/dense"
	"gonum.org/v1/gonum/mat"
)

func ExampleXtWX() {
	// Three dates of returns on two assets, the last date weighted twice.
	x := mat.NewDense(3, 2, []float64{
		0.01, 0.02,
		-0.01, 0.00,
		0.02, -0.01,
	})
	s := dense.XtWX(nil, x, []float64{1, 1, 2})
	fmt.Printf("%.4f %.4f\n%.4f %.4f\n", s.At(0, 0), s.At(0, 1), s.At(1, 0), s.At(1, 1))
	// Output:
	// 0.0010 -0.0002
	// -0.0002 0.0006
}
