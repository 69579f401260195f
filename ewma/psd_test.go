package ewma

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// gappyPanel returns a T×N panel of one-factor returns in which the first
// gaps columns have a listing gap at the start or a halt in the middle, the
// pattern of listings, delistings and halts, and the others are complete.
func gappyPanel(rng *rand.Rand, t, n, gaps int) *mat.Dense {
	x := mat.NewDense(t, n, nil)
	beta := make([]float64, n)
	for j := range beta {
		beta[j] = 0.5 + rng.Float64()
	}
	for i := 0; i < t; i++ {
		f := 0.01 * rng.NormFloat64()
		for j := 0; j < n; j++ {
			x.Set(i, j, beta[j]*f+0.02*rng.NormFloat64())
		}
	}
	for j := 0; j < gaps; j++ {
		if j%2 == 0 {
			for i := 0; i < 1+rng.IntN(t/2); i++ { // late listing
				x.Set(i, j, math.NaN())
			}
		} else {
			s := rng.IntN(t - 8)
			for i := s; i < s+1+rng.IntN(8); i++ { // halt
				x.Set(i, j, math.NaN())
			}
		}
	}
	return x
}

// TestMakePSDSubspace: where the estimate's range lies in the subspace of
// subspaceEigen, the repair from the small side equals the repair from
// gonum's eigendecomposition of the whole matrix (the route used before),
// to 1e-10 of the largest entry, for every estimator that repairs, with and
// without the mean and the unbiased factor; and the reports agree.
func TestMakePSDSubspace(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 3))
	const tt, n = 40, 200
	x := gappyPanel(rng, tt, n, 12)
	complete := mat.DenseCopyOf(x)
	for i := 0; i < tt; i++ {
		for j := 0; j < 12; j++ {
			complete.Set(i, j, 0.01*rng.NormFloat64())
		}
	}
	w, _ := Weights(nil, tt, 20)
	type est func(dst *mat.SymDense) (*mat.SymDense, *Report, error)
	cases := []struct {
		name string
		f    est
	}{
		{"covariance", func(d *mat.SymDense) (*mat.SymDense, *Report, error) { return Covariance(d, x, w, nil) }},
		{"covariance demean unbiased", func(d *mat.SymDense) (*mat.SymDense, *Report, error) {
			return Covariance(d, x, w, &Options{Demean: true, Unbiased: true})
		}},
		{"correlation", func(d *mat.SymDense) (*mat.SymDense, *Report, error) { return Correlation(d, x, w, nil) }},
		{"correlation demean", func(d *mat.SymDense) (*mat.SymDense, *Report, error) {
			return Correlation(d, x, nil, &Options{Demean: true})
		}},
		{"newey-west gaps", func(d *mat.SymDense) (*mat.SymDense, *Report, error) { return NeweyWest(d, x, w, 3, nil) }},
		{"newey-west complete", func(d *mat.SymDense) (*mat.SymDense, *Report, error) {
			return NeweyWest(d, complete, w, 3, &Options{Demean: true})
		}},
		{"estimate gaps", func(d *mat.SymDense) (*mat.SymDense, *Report, error) {
			return Estimate(d, x, Settings{VolHalfLife: 10, CorrHalfLife: 20})
		}},
		{"estimate lags", func(d *mat.SymDense) (*mat.SymDense, *Report, error) {
			return Estimate(d, x, Settings{VolHalfLife: 10, CorrHalfLife: 20, NeweyWestLags: 2})
		}},
	}
	if testing.Short() {
		// One of each kind: covariance, correlation, Newey–West, Estimate.
		cases = []struct {
			name string
			f    est
		}{cases[1], cases[2], cases[5], cases[7]}
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var route string
			repairRoute = func(r string) { route = r }
			got, rep, err := tc.f(nil)
			repairRoute = nil
			require.NoError(t, err)
			require.Equal(t, "subspace", route)
			require.True(t, rep.Checked)
			require.NotNil(t, rep.Repair, "a pairwise estimate with N > T is not PSD")
			// The same estimate, repaired by the full route.
			want, _ := withFullRepair(t, tc.f)
			big := maxAbsSym(want.(*mat.SymDense))
			worst := 0.0
			for i := 0; i < n; i++ {
				for j := i; j < n; j++ {
					worst = math.Max(worst, math.Abs(want.At(i, j)-got.At(i, j)))
				}
			}
			require.LessOrEqual(t, worst, 1e-10*big, "largest difference %.3g", worst)
			require.GreaterOrEqual(t, minEigen(t, got), -1e-12*big)
		})
	}
}

// withFullRepair runs f with the full eigendecomposition forced and
// returns its result.
func withFullRepair(t *testing.T, f func(*mat.SymDense) (*mat.SymDense, *Report, error)) (mat.Symmetric, *Report) {
	t.Helper()
	forceFullRepair = true
	defer func() { forceFullRepair = false }()
	got, rep, err := f(nil)
	require.NoError(t, err)
	return got, rep
}

// TestRepairNumpy: the repairs of a pairwise covariance and correlation
// with N = 96 > T = 24 (8 gapped columns), taken by the subspace route,
// equal numpy's: testdata/ewma/repair.json from make_repair.py, numpy
// 1.24.2 numpy.linalg.eigh of the pairwise matrix, eigenvalues clipped at
// zero and the diagonal restored (the formula in the script); to 1e-12 of
// the largest entry, MinEigenvalue to the same, Clipped exactly.
func TestRepairNumpy(t *testing.T) {
	b, err := os.ReadFile("../testdata/ewma/repair.json")
	require.NoError(t, err)
	type ref struct {
		Repaired      [][]float64 `json:"repaired"`
		MinEigenvalue float64     `json:"min_eigenvalue"`
		Clipped       int         `json:"clipped"`
	}
	var f struct {
		X           [][]*float64 `json:"x"`
		Covariance  ref          `json:"covariance"`
		Correlation ref          `json:"correlation"`
	}
	require.NoError(t, json.Unmarshal(b, &f))
	x := matrixOf(f.X)
	for _, tc := range []struct {
		name string
		ref  ref
		f    func() (*mat.SymDense, *Report, error)
	}{
		{"covariance", f.Covariance, func() (*mat.SymDense, *Report, error) { return Covariance(nil, x, nil, nil) }},
		{"correlation", f.Correlation, func() (*mat.SymDense, *Report, error) { return Correlation(nil, x, nil, nil) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var route string
			repairRoute = func(r string) { route = r }
			got, rep, err := tc.f()
			repairRoute = nil
			require.NoError(t, err)
			require.Equal(t, "subspace", route)
			require.NotNil(t, rep.Repair)
			want := symOf(tc.ref.Repaired)
			big := maxAbsSym(want)
			n := want.SymmetricDim()
			for i := 0; i < n; i++ {
				for j := i; j < n; j++ {
					require.InDelta(t, want.At(i, j), got.At(i, j), 1e-12*big, "(%d,%d)", i, j)
				}
			}
			require.InDelta(t, tc.ref.MinEigenvalue, rep.Repair.MinEigenvalue, 1e-12*big)
			require.Equal(t, tc.ref.Clipped, rep.Repair.Clipped)
		})
	}
}

// TestSubspaceRejects: a symmetric matrix that is not of the estimators'
// form (full rank, while the sums claim every column complete over 10
// dates) fails the probe, so makePSD takes the full decomposition and
// still repairs it as the full route does.
func TestSubspaceRejects(t *testing.T) {
	const n = 120
	rng := rand.New(rand.NewPCG(4, 4))
	a := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			a.SetSym(i, j, rng.NormFloat64())
		}
	}
	m := &sums{n: n, used: 10}
	c := mat.NewSymDense(n, nil)
	c.CopySym(a)
	_, _, ok := subspaceEigen(c, m)
	require.False(t, ok)

	var route string
	repairRoute = func(r string) { route = r }
	got := mat.NewSymDense(n, nil)
	got.CopySym(a)
	rep := makePSD(got, m)
	repairRoute = nil
	require.Equal(t, "full", route)
	want := mat.NewSymDense(n, nil)
	want.CopySym(a)
	wrep := makePSDFull(want)
	require.Equal(t, *wrep, *rep)
	require.True(t, mat.Equal(want, got))
}

// TestSubspaceRepairDeterministic: the subspace repair gives the same bits
// for any GOMAXPROCS (the sketch and probes are seeded, the products sum in
// a fixed order).
func TestSubspaceRepairDeterministic(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 5))
	x := gappyPanel(rng, 60, 600, 30)
	if testing.Short() {
		x = gappyPanel(rng, 30, 300, 15)
	}
	run := func(procs int) *mat.SymDense {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		var route string
		repairRoute = func(r string) { route = r }
		got, rep, err := Estimate(nil, x, Settings{VolHalfLife: 10, CorrHalfLife: 20})
		repairRoute = nil
		require.NoError(t, err)
		require.Equal(t, "subspace", route)
		require.NotNil(t, rep.Repair)
		return got
	}
	one, four := run(1), run(4)
	n := one.SymmetricDim()
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			require.Equal(t, math.Float64bits(one.At(i, j)), math.Float64bits(four.At(i, j)), "(%d,%d)", i, j)
		}
	}
}
