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

func ExampleXWXt() {
	// The Gram matrix of three dates, the last weighted four times: its
	// entries are √w_s √w_t x_s·x_t.
	x := mat.NewDense(3, 2, []float64{
		0.01, 0.02,
		-0.01, 0.00,
		0.02, -0.01,
	})
	g := dense.XWXt(nil, x, []float64{1, 1, 4})
	for i := 0; i < 3; i++ {
		fmt.Printf("%.4f %.4f %.4f\n", g.At(i, 0), g.At(i, 1), g.At(i, 2))
	}
	// Output:
	// 0.0005 -0.0001 0.0000
	// -0.0001 0.0001 -0.0004
	// 0.0000 -0.0004 0.0020
}

func ExampleMulTA() {
	// Returns of two assets on three dates against one factor's returns.
	x := mat.NewDense(3, 2, []float64{
		0.01, 0.02,
		-0.01, 0.00,
		0.02, -0.01,
	})
	f := mat.NewDense(3, 1, []float64{0.01, -0.02, 0.03})
	p := dense.MulTA(nil, x, f)
	fmt.Printf("%.4f %.4f\n", p.At(0, 0), p.At(1, 0))
	// Output:
	// 0.0009 -0.0001
}

func ExampleSubMul() {
	// Residuals of two dates of returns on three assets after one factor:
	// E = X − r·bᵀ, with factor returns r and loadings b.
	x := mat.NewDense(2, 3, []float64{
		0.02, 0.01, -0.01,
		-0.01, 0.00, 0.02,
	})
	r := mat.NewDense(2, 1, []float64{0.01, -0.01})
	b := mat.NewDense(3, 1, []float64{1.5, 1.0, 0.5})
	dense.SubMul(x, r, b.T())
	fmt.Printf("%.4f %.4f %.4f\n%.4f %.4f %.4f\n", x.At(0, 0), x.At(0, 1), x.At(0, 2), x.At(1, 0), x.At(1, 1), x.At(1, 2))
	// Output:
	// 0.0050 0.0000 -0.0150
	// 0.0050 0.0100 0.0250
}

func ExampleMul() {
	// Two assets' returns on three dates projected on two portfolios.
	x := mat.NewDense(3, 2, []float64{
		0.01, 0.02,
		-0.01, 0.00,
		0.02, -0.01,
	})
	p := mat.NewDense(2, 2, []float64{
		0.5, 1,
		0.5, -1,
	})
	y := dense.Mul(nil, x, p)
	fmt.Printf("%.4f %.4f\n%.4f %.4f\n%.4f %.4f\n", y.At(0, 0), y.At(0, 1), y.At(1, 0), y.At(1, 1), y.At(2, 0), y.At(2, 1))
	// Output:
	// 0.0150 -0.0100
	// -0.0050 -0.0100
	// 0.0050 0.0300
}
