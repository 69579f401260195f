package dense

import (
	"math"

	"gonum.org/v1/gonum/blas/blas64"
)

// LargestEigenvalue returns the largest eigenvalue of the symmetric positive
// semidefinite n×n operator mul (dst = A·x) by the power method from a fixed start, stopping
// when the Rayleigh quotient changes by less than 1e-9 relative.
func LargestEigenvalue(n int, mul func(dst, x []float64)) float64 {
	x := startVector(n)
	y := make([]float64, n)
	var lambda float64
	for it := 0; it < 500; it++ {
		mul(y, x)
		next := blas64.Dot(blas64.Vector{N: n, Inc: 1, Data: x}, blas64.Vector{N: n, Inc: 1, Data: y})
		if normalize(y) == 0 {
			return 0
		}
		x, y = y, x
		if it > 2 && math.Abs(next-lambda) <= 1e-9*math.Abs(next) {
			return next
		}
		lambda = next
	}
	return lambda
}

// startVector returns the unit start of the iterations: fixed, so that the
// result is deterministic, with weight on every direction.
func startVector(n int) []float64 {
	x := make([]float64, n)
	for i := range x {
		x[i] = 1 + 0.5*math.Sin(float64(i+1))
	}
	normalize(x)
	return x
}

func normalize(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v * v
	}
	s = math.Sqrt(s)
	if s == 0 {
		return 0
	}
	for i := range x {
		x[i] /= s
	}
	return s
}
