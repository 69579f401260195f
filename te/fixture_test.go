package te

import (
	"encoding/json"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// fixtureCase is one case of testdata/te/fixture.json, written by
// testdata/te/make_fixture.py with numpy 1.24.2 (the calls are named there
// beside each value).
type fixtureCase struct {
	N            int         `json:"n"`
	K            int         `json:"k"`
	Cov          [][]float64 `json:"cov"`
	Loadings     [][]float64 `json:"loadings"`
	FactorCov    [][]float64 `json:"factor_cov"`
	Specific     []float64   `json:"specific"`
	Portfolio    []float64   `json:"portfolio"`
	Benchmark    []float64   `json:"benchmark"`
	Labels       []string    `json:"labels"`
	TE           float64     `json:"te"`
	Marginal     []float64   `json:"marginal"`
	Contribution []float64   `json:"contribution"`
	PortRisk     float64     `json:"portfolio_risk"`
	BenchRisk    float64     `json:"benchmark_risk"`
	Beta         float64     `json:"beta"`
	Correlation  []float64   `json:"correlation"`
	Hedge        []float64   `json:"hedge"`
	HedgedTE     []float64   `json:"hedged_te"`

	FactorVariance     float64   `json:"factor_variance"`
	SpecificVariance   float64   `json:"specific_variance"`
	FactorContribution []float64 `json:"factor_contribution"`
	AssetFactorPart    []float64 `json:"asset_factor_part"`
	AssetSpecificPart  []float64 `json:"asset_specific_part"`
	Groups             map[string]struct {
		ActiveWeight float64 `json:"active_weight"`
		Contribution float64 `json:"contribution"`
		Volatility   float64 `json:"volatility"`
		Factor       float64 `json:"factor"`
		Specific     float64 `json:"specific"`
	} `json:"groups"`
}

type fixture struct {
	Numpy  string      `json:"numpy"`
	Dense  fixtureCase `json:"dense"`
	Factor fixtureCase `json:"factor"`
	ExPost struct {
		Active  []float64 `json:"active"`
		StdDdof float64   `json:"std_ddof1"`
		RMS     float64   `json:"rms"`
		Mean    float64   `json:"mean"`
	} `json:"expost"`
}

func loadFixture(t *testing.T) *fixture {
	t.Helper()
	raw, err := os.ReadFile("../testdata/te/fixture.json")
	require.NoError(t, err)
	var f fixture
	require.NoError(t, json.Unmarshal(raw, &f))
	require.Equal(t, "1.24.2", f.Numpy)
	return &f
}

func flat(rows [][]float64) []float64 {
	var out []float64
	for _, r := range rows {
		out = append(out, r...)
	}
	return out
}

// checkAgainst compares a decomposition with a numpy fixture case.
func checkAgainst(t *testing.T, c *fixtureCase, d *Decomposition, tol float64) {
	t.Helper()
	require.InDelta(t, c.TE, d.TE, tol)
	require.InDeltaSlice(t, c.Marginal, d.Marginal, tol)
	require.InDeltaSlice(t, c.Contribution, d.Contribution, tol)
	require.InDelta(t, c.PortRisk, d.PortfolioRisk, tol)
	require.InDelta(t, c.BenchRisk, d.BenchmarkRisk, tol)
	require.InDelta(t, c.Beta, d.Beta, tol)
	require.InDeltaSlice(t, c.Correlation, d.Correlation, tol)
	require.InDeltaSlice(t, c.Hedge, d.Hedge, 1e-10) // hedges are O(1) trades
	require.InDeltaSlice(t, c.HedgedTE, d.HedgedTE, tol)
}

// TestNumpyDense checks the 50-asset dense case against numpy 1.24.2
// (np.sqrt(a @ S @ a), S @ a / te, a * (S @ a) / te; see make_fixture.py).
func TestNumpyDense(t *testing.T) {
	f := loadFixture(t)
	c := &f.Dense
	s := mat.NewSymDense(c.N, flat(c.Cov))
	for _, cov := range []Covariance{s, plainCov{s}} {
		an, err := NewAnalyzer(cov)
		require.NoError(t, err)
		d, err := an.Decompose(c.Portfolio, c.Benchmark)
		require.NoError(t, err)
		checkAgainst(t, c, d, 1e-12)
		te, err := an.TrackingError(c.Portfolio, c.Benchmark)
		require.NoError(t, err)
		require.InDelta(t, c.TE, te, 1e-12)
	}
}

// TestNumpyFactor checks a 50-asset, 4-factor model against numpy 1.24.2:
// x = B.T @ a, x @ F @ x, x * (F @ x) / te, group sums a_g @ S @ a / te and
// np.sqrt(a_g @ S @ a_g) (see make_fixture.py). The factor form and the dense
// BFBᵀ + D built by gonum are both checked.
func TestNumpyFactor(t *testing.T) {
	f := loadFixture(t)
	c := &f.Factor
	m := &factorModel{
		b: mat.NewDense(c.N, c.K, flat(c.Loadings)),
		f: mat.NewSymDense(c.K, flat(c.FactorCov)),
		d: c.Specific,
	}
	const tol = 1e-12
	for _, cov := range []Covariance{m, m.dense()} {
		an, err := NewAnalyzer(cov)
		require.NoError(t, err)
		d, err := an.Decompose(c.Portfolio, c.Benchmark)
		require.NoError(t, err)
		checkAgainst(t, c, d, tol)
		gs := d.Groups(c.Labels)
		require.Len(t, gs, len(c.Groups))
		for _, g := range gs {
			want := c.Groups[g.Label]
			require.InDelta(t, want.ActiveWeight, g.ActiveWeight, tol, g.Label)
			require.InDelta(t, want.Contribution, g.Contribution, tol, g.Label)
			require.InDelta(t, want.Volatility, g.Volatility, tol, g.Label)
			if d.Factored {
				require.InDelta(t, want.Factor, g.Factor, tol, g.Label)
				require.InDelta(t, want.Specific, g.Specific, tol, g.Label)
			}
		}
		if !d.Factored {
			continue
		}
		require.InDelta(t, c.FactorVariance, d.FactorVariance, tol)
		require.InDelta(t, c.SpecificVariance, d.SpecificVariance, tol)
		require.InDeltaSlice(t, c.AssetFactorPart, d.FactorPart, tol)
		require.InDeltaSlice(t, c.AssetSpecificPart, d.SpecificPart, tol)
		for k, s := range d.Factors {
			require.InDelta(t, c.FactorContribution[k], s.Contribution, tol)
		}
	}
}

// TestNumpyExPost checks Realized against numpy 1.24.2: np.std(r, ddof=1),
// np.mean(r) and np.sqrt(np.mean(r**2)).
func TestNumpyExPost(t *testing.T) {
	f := loadFixture(t)
	e, err := Realized(f.ExPost.Active, nil)
	require.NoError(t, err)
	require.InDelta(t, f.ExPost.StdDdof, e.TE, 1e-15)
	require.InDelta(t, f.ExPost.Mean, e.Mean, 1e-15)
	require.Equal(t, len(f.ExPost.Active), e.Count)
	z, err := Realized(f.ExPost.Active, &ExPostOptions{ZeroMean: true})
	require.NoError(t, err)
	require.InDelta(t, f.ExPost.RMS, z.TE, 1e-15)
	require.Zero(t, z.Mean)
}
