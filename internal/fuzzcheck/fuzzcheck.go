// Package fuzzcheck holds the properties every fuzz target of the library
// checks, so that each package's targets state them the same way: an error
// wraps one of the package's exported sentinels and says so in its message,
// and a returned covariance is finite, exactly symmetric and positive
// semidefinite. It is used only by tests.
package fuzzcheck

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Err fails t unless err wraps one of sentinels and its message contains
// that sentinel's text.
func Err(t testing.TB, err error, sentinels []error) {
	t.Helper()
	for _, s := range sentinels {
		if errors.Is(err, s) {
			if !strings.Contains(err.Error(), s.Error()) {
				t.Fatalf("message %q lacks %q", err, s)
			}
			return
		}
	}
	t.Fatalf("error wraps no sentinel: %T %v", err, err)
}

// Cov fails t unless c is finite, exactly symmetric and positive
// semidefinite: its eigenvalues are at least −1e−10 times the larger of its
// largest absolute eigenvalue and dataScale (the largest squared input, so
// that a covariance that is zero up to rounding, as for constant columns,
// passes).
func Cov(t testing.TB, c mat.Symmetric, dataScale float64) {
	t.Helper()
	n := c.SymmetricDim()
	if n == 0 {
		t.Fatalf("empty result without an error")
	}
	big := 0.0
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := c.At(i, j)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("entry (%d,%d) = %v", i, j, v)
			}
			if v != c.At(j, i) {
				t.Fatalf("not symmetric at (%d,%d)", i, j)
			}
			big = math.Max(big, math.Abs(v))
		}
	}
	if big == 0 {
		return
	}
	// Scaled to entries of at most 1: gonum's Dsterf panics on some
	// matrices with entries near 1e284 (lapack: insufficient length of a).
	a := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			a.SetSym(i, j, c.At(i, j)/big)
		}
	}
	var e mat.EigenSym
	if !e.Factorize(a, true) { // the values-only path (Dsterf) panics on such a matrix
		t.Fatalf("eigendecomposition failed")
	}
	vals := e.Values(nil)
	scale := math.Max(math.Max(math.Abs(vals[0]), math.Abs(vals[n-1])), dataScale/big)
	if vals[0] < -1e-10*scale {
		t.Fatalf("not PSD: smallest eigenvalue %g, largest %g (times %g)", vals[0], vals[n-1], big)
	}
}

// SquareScale returns the largest finite x_ij², the data scale of Cov.
func SquareScale(x mat.Matrix) float64 {
	r, c := x.Dims()
	s := 0.0
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			if v := x.At(i, j); !math.IsInf(v, 0) && !math.IsNaN(v) {
				s = math.Max(s, v*v)
			}
		}
	}
	return s
}
