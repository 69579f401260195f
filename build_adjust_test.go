package riskmodel_test

import (
	"github.com/riskmodel/riskmodel"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
)

func TestParseVariant(t *testing.T) {
	o, err := riskmodel.ParseVariant("factor+holdout+eigen+dispersion+regime+k12")
	require.NoError(t, err)
	require.Equal(t, riskmodel.MethodFactor, o.Method)
	require.Equal(t, factor.HoldoutLikelihood.String(), o.Factor.Criterion)
	require.Equal(t, factor.Adjustments{Eigen: true, Dispersion: true, Regime: true}, o.Adjust)
	require.Equal(t, 12, o.Factor.K)
	o, err = riskmodel.ParseVariant("ledoit-wolf+regime")
	require.NoError(t, err)
	require.True(t, o.Adjust.Regime)
	for _, bad := range []string{"nope", "factor+x", "ledoit-wolf+eigen", "ledoit-wolf+weighted", "factor+k0"} {
		_, err := riskmodel.ParseVariant(bad)
		require.ErrorIs(t, err, riskmodel.ErrMethod, bad)
	}
}

// TestBuildAdjustments: every correction is recorded in the model's
// settings and notes, and a dense estimate is scaled by exactly the
// reported regime multiplier.
func TestBuildAdjustments(t *testing.T) {
	p := smallDemo(t).Panel
	tt, _ := p.Dims()
	asof := p.Date(tt - 1)
	o, err := riskmodel.ParseVariant("factor+holdout+weighted+eigen+dispersion+regime")
	require.NoError(t, err)
	require.True(t, o.Adjust.Weighted)
	o.Window = 300
	m, rep, err := riskmodel.Build(p, asof, &o)
	require.NoError(t, err)
	info := m.Factor.Info()
	require.NotNil(t, info.Selection.Holdout)
	require.NotNil(t, info.Eigen)
	require.NotNil(t, info.Weighting)
	require.NotNil(t, info.Dispersion)
	require.NotNil(t, info.FactorRegime)
	require.NotNil(t, info.SpecificRegime)
	require.Len(t, rep.Notes, len(m.Notes))
	for _, k := range []string{"criterion", "eigen_sims", "eigen_scale", "dispersion", "weight_passes", "regime_half_life"} {
		require.Contains(t, m.Settings, k)
	}
	plain, _, err := riskmodel.Build(p, asof, &riskmodel.BuildOptions{Method: riskmodel.MethodLedoitWolf, Window: 300})
	require.NoError(t, err)
	adj, rep, err := riskmodel.Build(p, asof, &riskmodel.BuildOptions{Method: riskmodel.MethodLedoitWolf, Window: 300, Adjust: factor.Adjustments{Regime: true}})
	require.NoError(t, err)
	require.NotNil(t, rep.Regime)
	var want mat.SymDense
	want.ScaleSym(rep.Regime.Multiplier, plain.Dense)
	require.True(t, mat.EqualApprox(&want, adj.Dense, 1e-18))
}

// TestBuildIdenticalAssets is the degenerate case: 50 identical
// assets over 300 dates. The default build used to keep K = 0 and forecast
// a 17.8 % tracking error between two identical names; the truth is 0.
func TestBuildIdenticalAssets(t *testing.T) {
	const dates, n = 300, 50
	rng := rand.New(rand.NewPCG(2, 2))
	x := mat.NewDense(dates, n, nil)
	for d := 0; d < dates; d++ {
		v := 0.01 * rng.NormFloat64()
		for j := 0; j < n; j++ {
			x.Set(d, j, v)
		}
	}
	ds := make([]riskmodel.Date, dates)
	start, err := riskmodel.ParseDate("2030-01-01")
	require.NoError(t, err)
	for i := range ds {
		ds[i] = start.AddDays(i)
	}
	names := make([]string, n)
	for j := range names {
		names[j] = "A" + string(rune('A'+j/26)) + string(rune('A'+j%26))
	}
	p, err := riskmodel.NewPanel(ds, names, x, 252)
	require.NoError(t, err)
	m, _, err := riskmodel.Build(p, ds[dates-1], nil)
	require.NoError(t, err)
	require.Equal(t, 1, m.Factor.NumFactors())
	a := make([]float64, n)
	a[0], a[1] = 1, -1
	require.Less(t, math.Sqrt(252*m.Factor.QuadForm(a)), 1e-6)
}

// TestAdjustedModelRoundTrip: a model with every correction survives the
// store bit for bit, its corrections' records included.
func TestAdjustedModelRoundTrip(t *testing.T) {
	p := smallDemo(t).Panel
	tt, _ := p.Dims()
	o, err := riskmodel.ParseVariant("factor+holdout+eigen+dispersion+regime+k4")
	require.NoError(t, err)
	o.Window = 300
	m, _, err := riskmodel.Build(p, p.Date(tt-1), &o)
	require.NoError(t, err)
	dir := t.TempDir() + "/model"
	require.NoError(t, riskmodel.SaveModel(dir, m))
	back, err := riskmodel.LoadModel(dir)
	require.NoError(t, err)
	require.True(t, riskmodel.ModelsEqual(m, back))
	require.Equal(t, m.Factor.Info(), back.Factor.Info())
}
