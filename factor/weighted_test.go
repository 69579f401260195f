package factor

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// The weighted factor space against a plain numpy transcription of its
// steps (testdata/factor/weighted.py, numpy 1.24.2: numpy.linalg.svd,
// numpy.linalg.qr, numpy.linalg.eigh): the projector onto the final factor
// space and its singular values, deterministic parts, to rounding.
func TestWeightedMatchesNumpy(t *testing.T) {
	raw, err := os.ReadFile("../testdata/factor/weighted.json")
	require.NoError(t, err)
	var fx struct {
		K, Passes      int
		X              [][]float64 `json:"x"`
		Projector      [][]float64 `json:"projector"`
		SingularValues []float64   `json:"singular_values"`
	}
	require.NoError(t, json.Unmarshal(raw, &fx))
	s := baseSettings()
	s.K, s.Solver = fx.K, SolverGram
	s.Adjust.Weighted, s.Adjust.WeightPasses = true, fx.Passes
	x := rowsToDense(fx.X)
	d, err := prepare(x, false)
	require.NoError(t, err)
	r, err := s.resolve(x.Dims())
	require.NoError(t, err)
	p := truncate(d.decompose(r, fx.K, 0, 0, nil), fx.K)
	p, rep := d.weighted(r, p, fx.K)
	require.Equal(t, fx.Passes, rep.Passes)
	require.Len(t, rep.Angles, fx.Passes)
	require.Greater(t, rep.Angles[0], rep.Angles[1], "the second pass moves the space less than the first")
	var proj mat.Dense
	proj.Mul(p.v, p.v.T())
	require.True(t, mat.EqualApprox(&proj, rowsToDense(fx.Projector), 1e-10), "projector onto the factor space")
	require.InDeltaSlice(t, fx.SingularValues, p.s, 1e-12)

	// Fit reports it and keeps the loadings orthonormal.
	m, err := Fit(x, s)
	require.NoError(t, err)
	require.NotNil(t, m.Info().Weighting)
	require.Equal(t, fx.Passes, m.Info().Params.Adjust.WeightPasses)
	b := m.LoadingsTo(nil)
	var g mat.Dense
	g.Mul(b.T(), b)
	require.True(t, mat.EqualApprox(&g, eye(fx.K), 1e-12), "BᵀB = I")
	proj.Mul(b, b.T())
	require.True(t, mat.EqualApprox(&proj, rowsToDense(fx.Projector), 1e-10))
}

// principalAxes re-expresses a principal-component subspace as itself: fed
// the plain fit's loadings it gives back the plain fit.
func TestPrincipalAxesOfThePlainFit(t *testing.T) {
	mk := simulate(3, 120, 40, 3)
	s := baseSettings()
	s.K, s.Solver = 3, SolverGram
	d, err := prepare(mk.x, false)
	require.NoError(t, err)
	r, err := s.resolve(mk.x.Dims())
	require.NoError(t, err)
	p := truncate(d.decompose(r, 3, 0, 0, nil), 3)
	q := principalAxes(d.z, p.v, p.sq)
	require.InDeltaSlice(t, p.s, q.s, 1e-12*p.s[0])
	require.True(t, mat.EqualApprox(p.v, q.v, 1e-10))
	require.True(t, mat.EqualApprox(p.u, q.u, 1e-9))
}

// On simulated markets whose specific volatilities spread widely
// (lognormal, log standard deviation 0.8: 95 % between 0.4 % and 9.6 % a
// day), the weighted factor space is closer to the true one (the distance
// of the projectors) than the plain principal components, and the true
// risk of the estimate's minimum-variance portfolio falls, after one pass
// (the default) and more after two.
func TestWeightedOnHeteroskedasticMarkets(t *testing.T) {
	const dates, n, k, draws = 250, 300, 5, 4
	var dist, loss [3]float64 // plain, one pass, two passes
	for seed := uint64(0); seed < draws; seed++ {
		mk := spreadMarket(seed, dates, n, k, 0.8)
		for passes := 0; passes <= 2; passes++ {
			s := baseSettings()
			s.K = k
			s.Adjust.Weighted, s.Adjust.WeightPasses = passes > 0, passes
			m, err := Fit(mk.x, s)
			require.NoError(t, err)
			d, l := subspaceDistance(m.LoadingsTo(nil), mk.b), mvLoss(m.CovarianceTo(nil), mk.sigma)
			t.Logf("draw %d, %d passes: distance to the true factor space %.3f, minimum-variance loss %.4g", seed, passes, d, l)
			dist[passes] += d / draws
			loss[passes] += l / draws
		}
	}
	require.Less(t, dist[1], 0.85*dist[0])
	require.Less(t, loss[1], 0.8*loss[0])
	require.Less(t, dist[2], dist[1])
	require.Less(t, loss[2], loss[1])
}

// subspaceDistance is ‖P_a − P_b‖_F / √2 for the projectors onto the column
// spaces: √(Σ sin² θ_i) over the principal angles θ_i.
func subspaceDistance(a, b mat.Matrix) float64 {
	var s float64
	for _, th := range principalAngles(mat.DenseCopyOf(a), mat.DenseCopyOf(b)) {
		s += math.Sin(th) * math.Sin(th)
	}
	return math.Sqrt(s)
}

// The randomized route's weighted pass (a warm start and one power
// iteration) finds the exact route's weighted factor space.
func TestWeightedRandomizedMatchesExact(t *testing.T) {
	mk := spreadMarket(4, 300, 500, 5, 0.8)
	fit := func(solver Solver) *Model {
		s := baseSettings()
		s.K, s.Solver, s.Adjust.Weighted = 5, solver, true
		m, err := Fit(mk.x, s)
		require.NoError(t, err)
		return m
	}
	exact, rnd := fit(SolverGram), fit(SolverRandomized)
	d := subspaceDistance(exact.LoadingsTo(nil), rnd.LoadingsTo(nil))
	t.Logf("distance between the exact and randomized weighted factor spaces %.2e", d)
	require.Less(t, d, 5e-3)
}
