package factor

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// Simulation checks against a known covariance: Bai & Ng (2002) show IC_p2
// is consistent for K as N, T → ∞; principal-components loadings converge to
// the true loading space (Bai & Ng 2002, Theorem 1; Connor & Korajczyk 1986).

func TestBaiNgRecoversK(t *testing.T) {
	for _, tc := range []struct {
		name    string
		t, n, k int
	}{
		{name: "tall", t: 400, n: 150, k: 4},
		{name: "wide", t: 150, n: 400, k: 5},
	} {
		t.Run(tc.name, func(t *testing.T) {
			sim := simulate(3, tc.t, tc.n, tc.k)
			m, err := Fit(sim.x, baseSettings())
			require.NoError(t, err)
			sel := m.Info().Selection
			require.Equal(t, tc.k, m.NumFactors(), "Bai–Ng IC_p2: %v", sel.ICp2)
			require.Equal(t, tc.k, sel.BaiNgP1)
			require.Equal(t, tc.k, sel.AhnHorensteinGR)
			require.Equal(t, tc.k, sel.OnatskiED)
			require.Equal(t, tc.k, sel.AhnHorensteinER)
			// The Marchenko–Pastur count assumes equal noise variances; with
			// specific volatilities spread over [1 %, 3 %] the noise edge lies
			// above σ̄²(1 + √(N/T))², so the count is only reported (≥ K).
			t.Logf("Marchenko–Pastur count %d, edge %.3g", sel.MarchenkoPastur, sel.Edge)
			require.GreaterOrEqual(t, sel.MarchenkoPastur, tc.k)
			require.Contains(t, m.Info().Reason, "bai-ng-icp2")
		})
	}
}

func TestAnglesShrinkWithT(t *testing.T) {
	const n, k = 120, 3
	prev := math.Inf(1)
	for _, dates := range []int{60, 240, 960} {
		sim := simulate(5, dates, n, k)
		s := baseSettings()
		s.K = k
		m, err := Fit(sim.x, s)
		require.NoError(t, err)
		a := maxAngle(m.LoadingsTo(nil), sim.b)
		t.Logf("T = %d: largest principal angle %.4f rad", dates, a)
		require.Less(t, a, prev)
		require.Less(t, a, 0.5)
		prev = a
	}
	require.Less(t, prev, 0.1)
}

// TestBeatsSampleCovariance: the model's Σ is closer to the truth than the
// sample covariance in Frobenius loss ‖Σ̂ − Σ‖_F and in the minimum-variance
// loss of Ledoit & Wolf (2017), "Nonlinear shrinkage of the covariance matrix
// for portfolio selection: Markowitz meets Goldilocks", Rev. Financial
// Studies 30(12):4349–4388, eq. (2.3) (from memory):
//
//	L(Σ̂, Σ) = (tr(Σ̂⁻¹ΣΣ̂⁻¹)/N) / (tr(Σ̂⁻¹)/N)² − 1/(tr(Σ⁻¹)/N).
func TestBeatsSampleCovariance(t *testing.T) {
	sim := simulate(9, 250, 100, 3)
	s := baseSettings()
	s.Covariance.VolHalfLife, s.Covariance.CorrHalfLife, s.SpecificHalfLife = 1e6, 1e6, 1e6
	m, err := Fit(sim.x, s)
	require.NoError(t, err)
	require.Equal(t, 3, m.NumFactors())
	model := m.CovarianceTo(nil)
	sample := sampleCov(sim.x)
	fm, fs := frobenius(model, sim.sigma), frobenius(sample, sim.sigma)
	lm, ls := mvLoss(model, sim.sigma), mvLoss(sample, sim.sigma)
	t.Logf("Frobenius loss model %.3g sample %.3g; MV loss model %.3g sample %.3g", fm, fs, lm, ls)
	require.Less(t, fm, fs)
	require.Less(t, lm, 0.8*ls)
}

func sampleCov(x *mat.Dense) *mat.SymDense {
	t, n := x.Dims()
	c := mat.DenseCopyOf(x)
	for j := 0; j < n; j++ {
		col := c.ColView(j)
		mu := mat.Sum(col) / float64(t)
		for i := 0; i < t; i++ {
			c.Set(i, j, c.At(i, j)-mu)
		}
	}
	s := mat.NewSymDense(n, nil)
	s.SymOuterK(1/float64(t), c.T())
	return s
}

func frobenius(a, b mat.Symmetric) float64 {
	var d mat.Dense
	d.Sub(a, b)
	return mat.Norm(&d, 2)
}

func mvLoss(est, truth *mat.SymDense) float64 {
	n := est.SymmetricDim()
	var inv, tinv mat.Dense
	if err := inv.Inverse(est); err != nil {
		panic(err)
	}
	if err := tinv.Inverse(truth); err != nil {
		panic(err)
	}
	var a, b mat.Dense
	a.Mul(&inv, truth)
	b.Mul(&a, &inv)
	fn := float64(n)
	return (mat.Trace(&b)/fn)/math.Pow(mat.Trace(&inv)/fn, 2) - 1/(mat.Trace(&tinv)/fn)
}

// TestRandomizedMatchesExact: the randomized SVD gives the exact (Gram)
// leading factor space to 1e-8 with 10 power iterations; the default 4 give
// about 1e-4 on these data (sketch of 20 columns for K = 5), which the test
// also checks so that a loss of accuracy is noticed.
func TestRandomizedMatchesExact(t *testing.T) {
	sim := simulate(13, 400, 290, 5)
	s := baseSettings()
	s.K = 5
	s.Solver = SolverGram
	exact, err := Fit(sim.x, s)
	require.NoError(t, err)
	s.Solver = SolverRandomized
	rnd, err := Fit(sim.x, s)
	require.NoError(t, err)
	require.True(t, mat.EqualApprox(projector(exact.LoadingsTo(nil)), projector(rnd.LoadingsTo(nil)), 1e-3))
	s.PowerIters = 10
	rnd, err = Fit(sim.x, s)
	require.NoError(t, err)
	require.True(t, mat.EqualApprox(projector(exact.LoadingsTo(nil)), projector(rnd.LoadingsTo(nil)), 1e-8))
	// B·F·Bᵀ does not depend on the basis chosen inside the factor space.
	se := exact.CovarianceTo(nil)
	require.True(t, mat.EqualApprox(se, rnd.CovarianceTo(nil), 1e-8*mat.Norm(se, math.Inf(1))))
	require.InDeltaSlice(t, exact.SpecificVariancesTo(nil), rnd.SpecificVariancesTo(nil), 1e-12)
	require.Equal(t, "pca-randomized", rnd.Info().Method)
	require.Equal(t, "pca-gram", exact.Info().Method)
}

// TestMissingData: with 10 % of returns missing at random, a late listing and
// an early delisting, the impute–refit iterations converge and recover the
// factor space about as well as the complete data do.
func TestMissingData(t *testing.T) {
	for _, method := range []Solver{SolverGram, SolverRandomized} {
		t.Run(method.String(), func(t *testing.T) {
			sim := simulate(17, 300, 150, 3)
			x := mat.DenseCopyOf(sim.x)
			rng := rand.New(rand.NewPCG(1, 2))
			for i := 0; i < 300; i++ {
				for j := 0; j < 150; j++ {
					if rng.Float64() < 0.1 || (j == 0 && i < 200) || (j == 1 && i > 100) {
						x.Set(i, j, math.NaN())
					}
				}
			}
			before := mat.DenseCopyOf(x)
			s := baseSettings()
			s.K, s.Solver = 3, method
			m, err := Fit(x, s)
			require.NoError(t, err)
			require.True(t, mat.Equal(before, x) || sameWithNaN(before, x), "input changed")
			im := m.Info().Imputation
			t.Logf("imputation: %+v", im)
			require.True(t, im.Converged)
			require.Greater(t, im.Iterations, 1)
			require.Less(t, im.Change, m.Info().Params.Tol)
			full, err := Fit(sim.x, s)
			require.NoError(t, err)
			am, af := maxAngle(m.LoadingsTo(nil), sim.b), maxAngle(full.LoadingsTo(nil), sim.b)
			t.Logf("largest angle to the truth: missing %.4f, complete %.4f", am, af)
			require.Less(t, am, 1.5*af+0.02)
			// The assets with long gaps keep sensible specific risk.
			d := m.SpecificVariancesTo(nil)
			require.InDelta(t, sim.d[0], d[0], 0.5*sim.d[0])
			require.InDelta(t, sim.d[1], d[1], 0.5*sim.d[1])
		})
	}
}

func sameWithNaN(a, b *mat.Dense) bool {
	r, c := a.Dims()
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			x, y := a.At(i, j), b.At(i, j)
			if x != y && !(math.IsNaN(x) && math.IsNaN(y)) {
				return false
			}
		}
	}
	return true
}
