package shrink

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// lowRank returns the 200×200 matrix Σ_k λ_k u_k u_kᵀ with 40 orthonormal
// u_k from a seeded Gaussian and λ_k spread over four decades, and the
// first neg of them negated.
func lowRank(neg int) *mat.SymDense {
	const n, r = 200, 40
	rng := rand.New(rand.NewPCG(8, 9))
	g := mat.NewDense(n, r, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < r; j++ {
			g.Set(i, j, rng.NormFloat64())
		}
	}
	var qr mat.QR
	qr.Factorize(g)
	var q mat.Dense
	qr.QTo(&q)
	a := mat.NewSymDense(n, nil)
	for k := 0; k < r; k++ {
		l := math.Pow(10, -4*float64(k)/float64(r-1))
		if k < neg {
			l = -l * 1e-2
		}
		u := q.ColView(k)
		a.SymRankOne(a, l, u)
	}
	return a
}

// TestFloorLowRank: on singular matrices of rank 40 in 200 (positive
// semidefinite, and with negative eigenvalues), CapCondition and
// NearestPSD by the low-rank route give the matrix of the full
// eigendecomposition (gonum's EigenSym, the route used before) to 1e-12 of
// its largest eigenvalue, and the same report: Changed and Norm exactly or
// to rounding where the full route's rounding-level eigenvalues of the null
// space fall on the same side of the floor, MinBefore within 1e-14, and a
// CondBefore of +Inf for a singular matrix.
func TestFloorLowRank(t *testing.T) {
	cases := []struct {
		name  string
		neg   int
		floor float64 // NearestPSD's floor, or 0 for CapCondition(1e4)
	}{
		{"cap psd", 0, 0},
		{"cap indefinite", 3, 0},
		{"nearest psd, zero floor", 3, -1},
		{"nearest psd, floor", 0, 1e-3},
	}
	if testing.Short() {
		cases = cases[1:3]
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			a := lowRank(tc.neg)
			run := func() (*mat.SymDense, Repair) {
				var got *mat.SymDense
				var rep Repair
				var err error
				switch {
				case tc.floor == 0:
					got, rep, err = CapCondition(nil, a, 1e4)
				case tc.floor < 0:
					got, rep, err = NearestPSD(nil, a, 0)
				default:
					got, rep, err = NearestPSD(nil, a, tc.floor)
				}
				require.NoError(t, err)
				return got, rep
			}
			c := mat.NewSymDense(a.SymmetricDim(), nil)
			c.CopySym(a)
			_, _, ok := lowRankEigen(c)
			require.True(t, ok, "the low-rank route applies")
			got, rep := run()
			forceFullEigen = true
			want, wrep := run()
			forceFullEigen = false
			requireSymNear(t, want, got, 1e-12)
			require.InDelta(t, wrep.MinBefore, rep.MinBefore, 1e-14)
			require.True(t, math.IsInf(rep.CondBefore, 1))
			require.InDelta(t, wrep.MaxShift, rep.MaxShift, 1e-14)
			require.InDelta(t, wrep.MinAfter, rep.MinAfter, 1e-14)
			require.InDelta(t, wrep.CondAfter, rep.CondAfter, 1e-6*wrep.CondAfter)
			if tc.floor != -1 {
				require.Equal(t, wrep.Changed, rep.Changed)
				require.InDelta(t, wrep.Norm, rep.Norm, 1e-12)
			}
		})
	}
}

func requireSymNear(t *testing.T, want, got *mat.SymDense, tol float64) {
	t.Helper()
	n := want.SymmetricDim()
	worst := 0.0
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			worst = math.Max(worst, math.Abs(want.At(i, j)-got.At(i, j)))
		}
	}
	require.LessOrEqual(t, worst, tol, "largest difference %.3g", worst)
}
