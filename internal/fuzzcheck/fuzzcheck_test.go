package fuzzcheck

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// recorder is a testing.TB that records a failure instead of stopping.
type recorder struct {
	testing.TB
	failed string
}

func (r *recorder) Helper() {}
func (r *recorder) Fatalf(format string, args ...any) {
	if r.failed == "" {
		r.failed = fmt.Sprintf(format, args...)
	}
}

func TestCovAcceptsAndRejects(t *testing.T) {
	for _, tc := range []struct {
		name string
		c    mat.Symmetric
		fail bool
	}{
		{"PSD", mat.NewSymDense(2, []float64{2, 1, 1, 2}), false},
		{"zero", mat.NewSymDense(2, nil), false},
		{"indefinite", mat.NewSymDense(2, []float64{1, 2, 2, 1}), true},
		{"NaN", mat.NewSymDense(2, []float64{1, math.NaN(), math.NaN(), 1}), true},
		{"not symmetric", asym{mat.NewDense(2, 2, []float64{1, 0.5, 0.4, 1})}, true},
	} {
		r := &recorder{TB: t}
		Cov(r, tc.c, 1)
		if (r.failed != "") != tc.fail {
			t.Errorf("%s: failure %q, want failure %v", tc.name, r.failed, tc.fail)
		}
	}
}

// asym is a square matrix that claims to be symmetric.
type asym struct{ *mat.Dense }

func (a asym) SymmetricDim() int { r, _ := a.Dims(); return r }

func TestErrNeedsSentinelAndText(t *testing.T) {
	sentinel := errors.New("pkg: bad value")
	for _, tc := range []struct {
		name string
		err  error
		fail bool
	}{
		{"wrapped", fmt.Errorf("column 3: %w", sentinel), false},
		{"other error", errors.New("something"), true},
	} {
		r := &recorder{TB: t}
		Err(r, tc.err, []error{sentinel})
		if (r.failed != "") != tc.fail {
			t.Errorf("%s: failure %q, want failure %v", tc.name, r.failed, tc.fail)
		}
	}
	if SquareScale(mat.NewDense(1, 3, []float64{-3, math.Inf(1), 2})) != 9 {
		t.Error("SquareScale must skip Inf and square the largest magnitude")
	}
}
