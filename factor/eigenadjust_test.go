package factor

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
)

type eigenFixture struct {
	Source         string
	K, Dates, Sims int
	VolHalfLife    float64 `json:"vol_half_life"`
	CorrHalfLife   float64 `json:"corr_half_life"`
	Scale          float64
	F0             []float64 `json:"f0"`
	Eigenvalues    []float64
	Bias           []float64
	BiasSE         []float64 `json:"bias_se"`
	Gamma          []float64
	Adjusted       []float64
	SimReturns     []float64 `json:"sim_returns"`
	SimEstimate    []float64 `json:"sim_estimate"`
	SimRatios      []float64 `json:"sim_ratios"`
}

func loadEigenFixture(t *testing.T) eigenFixture {
	t.Helper()
	raw, err := os.ReadFile("../testdata/factor/eigenadjust.json")
	require.NoError(t, err)
	var f eigenFixture
	require.NoError(t, json.Unmarshal(raw, &f))
	return f
}

// TestEigenAdjustFixture checks EigenAdjust against the plain numpy
// transcription of Menchero, Wang & Orr (2011) in
// testdata/factor/eigenadjust.py (numpy 1.24.2): the deterministic steps
// (the re-estimate of one simulated history, the ratios D̃/D of its
// eigenportfolios, γ and F̃ from a given bias curve) exactly, and the bias
// curve v(k), a Monte Carlo expectation drawn from another random stream,
// within four combined standard errors.
func TestEigenAdjustFixture(t *testing.T) {
	fx := loadEigenFixture(t)
	k := fx.K
	f0 := mat.NewSymDense(k, fx.F0)
	cov := ewma.Settings{VolHalfLife: fx.VolHalfLife, CorrHalfLife: fx.CorrHalfLife}

	// One simulated history: the same estimator, the same ratios.
	r := mat.NewDense(fx.Dates, k, fx.SimReturns)
	var fm mat.SymDense
	_, _, err := ewma.Estimate(&fm, r, cov)
	require.NoError(t, err)
	require.True(t, mat.EqualApprox(&fm, mat.NewSymDense(k, fx.SimEstimate), 1e-15))
	ratios, err := eigenRatios(f0, &fm)
	require.NoError(t, err)
	require.InDeltaSlice(t, fx.SimRatios, ratios, 1e-9)

	// D₀ and the rescaling from numpy's bias curve.
	vals, vecs, err := eigenDesc(f0)
	require.NoError(t, err)
	for i, v := range fx.Eigenvalues {
		require.InEpsilon(t, v, vals[i], 1e-12)
	}
	gamma := make([]float64, k)
	for i, v := range fx.Bias {
		gamma[i] = fx.Scale*(v-1) + 1
	}
	require.InDeltaSlice(t, fx.Gamma, gamma, 1e-14)
	adj := mat.NewSymDense(k, nil)
	scaleEigen(adj, vals, vecs, gamma)
	require.True(t, mat.EqualApprox(adj, mat.NewSymDense(k, fx.Adjusted), 1e-17), "F̃ = U₀·diag(γ²D₀)·U₀ᵀ")

	// The bias curve: an expectation, compared within Monte Carlo error.
	_, rep, err := EigenAdjust(nil, f0, EigenAdjustSettings{Covariance: cov, Dates: fx.Dates, Sims: fx.Sims, Scale: fx.Scale, Seed: 3})
	require.NoError(t, err)
	for i := range fx.Bias {
		se := math.Hypot(fx.BiasSE[i], rep.BiasError[i])
		t.Logf("rank %d: v numpy %.5f ± %.5f, Go %.5f ± %.5f", i+1, fx.Bias[i], fx.BiasSE[i], rep.Bias[i], rep.BiasError[i])
		require.InDelta(t, fx.Bias[i], rep.Bias[i], 4*se)
	}
	// The smallest eigenportfolio is the most under-forecast (v > 1).
	require.Greater(t, rep.Bias[k-1], rep.Bias[0])
	require.Greater(t, rep.Bias[k-1], 1.02)
}

// eigenMarket is a stationary Gaussian K-factor covariance with eigenvalues
// spread over two orders of magnitude and a random rotation.
func eigenMarket(seed uint64, k int) *mat.SymDense {
	rng := rand.New(rand.NewPCG(seed, 11))
	g := mat.NewDense(k, k, nil)
	for i := 0; i < k; i++ {
		for j := 0; j < k; j++ {
			g.Set(i, j, rng.NormFloat64())
		}
	}
	q := orthonormalize(g)
	s := mat.NewDense(k, k, nil)
	for j := 0; j < k; j++ {
		sd := 0.015 * math.Pow(0.01, float64(j)/float64(2*(k-1)))
		for i := 0; i < k; i++ {
			s.Set(i, j, q.At(i, j)*sd)
		}
	}
	f := mat.NewSymDense(k, nil)
	f.SymOuterK(1, s)
	return f
}

// TestEigenAdjustSimulation: on simulated factor returns with a known
// covariance (K = 20, T = 120, half-lives 60 and 120), the true-to-forecast
// variance ratio of the estimate's eigenportfolios moves toward 1 after the
// adjustment and the minimum-variance loss (Ledoit & Wolf 2017, see
// TestBeatsSampleCovariance) falls. With a stationary Gaussian truth the
// simulation measures the whole bias, so a = 1 is right: a = 2 over-corrects
// the smallest eigenportfolio (ratio below 1), and γ grows with a.
func TestEigenAdjustSimulation(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation")
	}
	const k, dates, reps = 20, 120, 12
	truth := eigenMarket(5, k)
	cov := ewma.Settings{VolHalfLife: 60, CorrHalfLife: 120}
	var chol mat.Cholesky
	require.True(t, chol.Factorize(truth))
	var l mat.TriDense
	chol.LTo(&l)
	scales := []float64{1, 2}
	// ratio[s][j]: mean over reps of u_jᵀΣu_j / u_jᵀF̂u_j for the eigenvectors u_j of the forecast.
	plain := make([]float64, k)
	adjusted := [][]float64{make([]float64, k), make([]float64, k)}
	var lossPlain, lossAdj float64
	for rep := 0; rep < reps; rep++ {
		rng := rand.New(rand.NewPCG(uint64(rep), 99))
		z := mat.NewDense(dates, k, nil)
		for i := 0; i < dates; i++ {
			for j := 0; j < k; j++ {
				z.Set(i, j, rng.NormFloat64())
			}
		}
		var x mat.Dense
		x.Mul(z, l.T())
		var est mat.SymDense
		_, _, err := ewma.Estimate(&est, &x, cov)
		require.NoError(t, err)
		r, err := eigenRatios(truth, &est)
		require.NoError(t, err)
		for j := range r {
			plain[j] += r[j] / reps
		}
		lossPlain += mvLoss(&est, truth) / reps
		for s, a := range scales {
			adj, _, err := EigenAdjust(nil, &est, EigenAdjustSettings{Covariance: cov, Dates: dates, Sims: 100, Scale: a, Seed: uint64(rep)})
			require.NoError(t, err)
			r, err := eigenRatios(truth, adj)
			require.NoError(t, err)
			for j := range r {
				adjusted[s][j] += r[j] / reps
			}
			if a == 1 {
				lossAdj += mvLoss(adj, truth) / reps
			}
		}
	}
	dev := func(r []float64) float64 {
		var s float64
		for _, v := range r {
			s += math.Abs(v - 1)
		}
		return s / float64(len(r))
	}
	t.Logf("mean |ratio − 1| over eigenportfolios: plain %.4f, a = 1 %.4f, a = 2 %.4f", dev(plain), dev(adjusted[0]), dev(adjusted[1]))
	t.Logf("smallest eigenportfolio ratio: plain %.3f, a = 1 %.3f, a = 2 %.3f", plain[k-1], adjusted[0][k-1], adjusted[1][k-1])
	t.Logf("minimum-variance loss: plain %.4g, adjusted %.4g", lossPlain, lossAdj)
	require.Greater(t, plain[k-1], 1.1, "the smallest eigenportfolio is under-forecast")
	require.Less(t, dev(adjusted[0]), 0.5*dev(plain))
	require.Less(t, math.Abs(adjusted[0][k-1]-1), math.Abs(plain[k-1]-1)/2)
	require.Less(t, adjusted[1][k-1], adjusted[0][k-1], "a larger a scales the small eigenvalues up more")
	require.Less(t, adjusted[1][k-1], 1.0, "a = 2 over-corrects a stationary Gaussian market")
	require.Less(t, lossAdj, lossPlain)
}

func TestEigenAdjustDeterministic(t *testing.T) {
	f := eigenMarket(2, 8)
	s := EigenAdjustSettings{Covariance: ewma.Settings{VolHalfLife: 63, CorrHalfLife: 126}, Dates: 200, Sims: 50, Seed: 7}
	prev := runtime.GOMAXPROCS(1)
	a, ra, err := EigenAdjust(nil, f, s)
	runtime.GOMAXPROCS(prev)
	require.NoError(t, err)
	b, rb, err := EigenAdjust(nil, f, s)
	require.NoError(t, err)
	require.Equal(t, a.RawSymmetric().Data, b.RawSymmetric().Data)
	require.Equal(t, ra.Bias, rb.Bias)
	require.Equal(t, DefaultEigenScale, ra.Scale)
	// Settings errors and the input left alone.
	orig := mat.NewSymDense(8, nil)
	orig.CopySym(f)
	_, _, err = EigenAdjust(nil, f, EigenAdjustSettings{Covariance: s.Covariance, Dates: 1})
	require.ErrorIs(t, err, ErrSettings)
	_, _, err = EigenAdjust(nil, f, EigenAdjustSettings{Covariance: s.Covariance, Dates: 100, Scale: -1})
	require.ErrorIs(t, err, ErrSettings)
	require.Equal(t, orig.RawSymmetric().Data, f.RawSymmetric().Data)
	require.Panics(t, func() { EigenAdjust(mat.NewSymDense(3, nil), f, s) })
}

// TestEigenPlainEstimate: the simulations' fast path equals ewma.Estimate of
// the rotated returns (complete data, zero mean, no lags).
func TestEigenPlainEstimate(t *testing.T) {
	f := eigenMarket(3, 7)
	vals, vecs, err := eigenDesc(f)
	require.NoError(t, err)
	s := EigenAdjustSettings{Covariance: ewma.Settings{VolHalfLife: 30, CorrHalfLife: 90}, Dates: 150}
	rng := rand.New(rand.NewPCG(1, 2))
	y := mat.NewDense(150, 7, nil)
	for i := 0; i < 150; i++ {
		for j := 0; j < 7; j++ {
			y.Set(i, j, rng.NormFloat64()*math.Sqrt(vals[j]))
		}
	}
	var r mat.Dense
	r.Mul(y, vecs.T())
	var want mat.SymDense
	_, _, err = ewma.Estimate(&want, &r, s.Covariance)
	require.NoError(t, err)
	got := plainEstimate(y, vecs, s)
	for i := 0; i < 7; i++ {
		for j := 0; j < 7; j++ {
			require.InEpsilon(t, want.At(i, j), got.At(i, j), 1e-10)
		}
	}
}
