package factor

import (
	"encoding/json"
	"math"
	"math/rand/v2"
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

// On simulated markets whose specific volatilities spread over a factor of
// 20 (lognormal, 0.4 %–8 %), the weighted factor space is closer to the
// true one than the plain principal components, and the true risk of the
// estimate's minimum-variance portfolio falls.
func TestWeightedOnHeteroskedasticMarkets(t *testing.T) {
	const dates, n, k, draws = 250, 300, 5, 4
	var angle0, angle1, loss0, loss1 float64
	for seed := uint64(0); seed < draws; seed++ {
		mk := heteroskedastic(seed, dates, n, k)
		s := baseSettings()
		s.K = k
		plain, err := Fit(mk.x, s)
		require.NoError(t, err)
		s.Adjust.Weighted, s.Adjust.WeightPasses = true, 2
		wtd, err := Fit(mk.x, s)
		require.NoError(t, err)
		a0, a1 := maxAngle(plain.LoadingsTo(nil), mk.b), maxAngle(wtd.LoadingsTo(nil), mk.b)
		l0, l1 := mvLoss(plain.CovarianceTo(nil), mk.sigma), mvLoss(wtd.CovarianceTo(nil), mk.sigma)
		t.Logf("draw %d: largest angle to the true factor space %.3f → %.3f rad; minimum-variance loss %.4g → %.4g (passes moved %v)",
			seed, a0, a1, l0, l1, wtd.Info().Weighting.Angles)
		angle0, angle1, loss0, loss1 = angle0+a0, angle1+a1, loss0+l0, loss1+l1
	}
	require.Less(t, angle1, 0.8*angle0)
	require.Less(t, loss1, loss0)
}

// heteroskedastic draws T dates of a K-factor market like simulate's
// (factor volatilities from 2 % down, loadings N(1, 0.5) on the first
// factor and N(0, 1) on the others) with lognormal specific volatilities
// from 0.4 % to 8 %, and its true covariance.
func heteroskedastic(seed uint64, t, n, k int) market {
	rng := rand.New(rand.NewPCG(seed, 99))
	m := market{x: mat.NewDense(t, n, nil), b: mat.NewDense(n, k, nil), f: mat.NewSymDense(k, nil), d: make([]float64, n)}
	vol := make([]float64, k)
	for j := range vol {
		vol[j] = 0.02 / (1 + 0.5*float64(j))
		m.f.SetSym(j, j, vol[j]*vol[j])
	}
	for i := 0; i < n; i++ {
		for j := 0; j < k; j++ {
			v := rng.NormFloat64()
			if j == 0 {
				v = 1 + 0.5*v
			}
			m.b.Set(i, j, v)
		}
		s := math.Exp(math.Log(0.004) + rng.Float64()*math.Log(20))
		m.d[i] = s * s
	}
	fr := make([]float64, k)
	for r := 0; r < t; r++ {
		for j := range fr {
			fr[j] = vol[j] * rng.NormFloat64()
		}
		for i := 0; i < n; i++ {
			v := math.Sqrt(m.d[i]) * rng.NormFloat64()
			for j, g := range fr {
				v += m.b.At(i, j) * g
			}
			m.x.Set(r, i, v)
		}
	}
	var bf, s mat.Dense
	bf.Mul(m.b, m.f)
	s.Mul(&bf, m.b.T())
	m.sigma = mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := s.At(i, j)
			if i == j {
				v += m.d[i]
			}
			m.sigma.SetSym(i, j, v)
		}
	}
	return m
}
