package factor_test

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
)

// wlsFixture is testdata/exposure/wls.json, written by make_wls_fixture.py
// (numpy 1.24.2, pandas 1.5.3, statsmodels 0.13.5).
type wlsFixture struct {
	Provenance       string
	Sectors          []string
	SectorNames      []string `json:"sector_names"`
	Returns, Caps    [][]*float64
	Quality          []float64
	VolatilityWindow int `json:"volatility_window"`
	MomentumWindow   int `json:"momentum_window"`
	MomentumSkip     int `json:"momentum_skip"`
	Winsor           float64
	First            int
	FactorNames      []string `json:"factor_names"`
	Loadings         [][]float64
	Dates            []struct {
		Row, Assets   int
		FactorReturns []float64 `json:"factor_returns"`
		T             []float64
		R2            float64
		Cond          float64
		Specific      []*float64
	}
}

func readWLSFixture(t *testing.T) wlsFixture {
	t.Helper()
	raw, err := os.ReadFile("../testdata/exposure/wls.json")
	require.NoError(t, err)
	var fx wlsFixture
	require.NoError(t, json.Unmarshal(raw, &fx))
	return fx
}

func nullMatrix(rows [][]*float64) *mat.Dense {
	m := mat.NewDense(len(rows), len(rows[0]), nil)
	for i, row := range rows {
		for j, v := range row {
			if v == nil {
				m.Set(i, j, math.NaN())
			} else {
				m.Set(i, j, *v)
			}
		}
	}
	return m
}

func (fx wlsFixture) settings() factor.ExposureSettings {
	return factor.ExposureSettings{
		Sectors:          fx.Sectors,
		Caps:             nullMatrix(fx.Caps),
		VolatilityWindow: fx.VolatilityWindow,
		MomentumWindow:   fx.MomentumWindow,
		MomentumSkip:     fx.MomentumSkip,
		Winsor:           fx.Winsor,
		Characteristics:  []factor.Characteristic{{Name: "quality", Static: fx.Quality}},
		Covariance:       ewma.Settings{VolHalfLife: 3, CorrHalfLife: 3},
		SpecificHalfLife: 3,
	}
}

// TestExposureMatchesStatsmodels checks every date's constrained regression
// against statsmodels 0.13.5 sm.WLS(y, X_reduced, weights=sqrt(cap)).fit()
// of the same problem with the constraint substituted out (factor returns
// mapped back from .params, t-statistics from .cov_params(), R² from
// .rsquared), numpy 1.24.2 np.linalg.cond of the weighted reduced design,
// and the styles from pandas 1.5.3 rolling(...).std() / .sum() shifted so
// only past returns enter (testdata/exposure/make_wls_fixture.py).
func TestExposureMatchesStatsmodels(t *testing.T) {
	fx := readWLSFixture(t)
	x := nullMatrix(fx.Returns)
	m, reg, err := factor.FitExposure(x, fx.settings())
	require.NoError(t, err)
	require.Equal(t, fx.FactorNames, reg.FactorNames)
	require.Equal(t, fx.FactorNames, m.FactorNames())
	require.Equal(t, factor.MethodExposure, m.Info().Method)
	require.Equal(t, fx.First, reg.First)
	require.Len(t, reg.Dates, len(fx.Dates))
	const tol = 1e-10
	for d, want := range fx.Dates {
		got := reg.Dates[d]
		require.Equal(t, want.Row, got.Row)
		require.Equal(t, want.Assets, got.Assets)
		require.InDeltaSlice(t, want.FactorReturns, mat.Row(nil, want.Row, reg.FactorReturns), tol, "factor returns, row %d", want.Row)
		require.InDelta(t, want.R2, got.R2, tol, "R², row %d", want.Row)
		for k, v := range want.T {
			require.InDelta(t, 1, got.T[k]/v, tol, "t-statistic %s, row %d", fx.FactorNames[k], want.Row)
		}
		require.InDelta(t, 1, got.Cond/want.Cond, 1e-9, "condition number, row %d", want.Row)
		spec := mat.Row(nil, want.Row, reg.SpecificReturns)
		for j, v := range want.Specific {
			if v == nil {
				require.True(t, math.IsNaN(spec[j]), "row %d asset %d must be missing", want.Row, j)
				continue
			}
			require.InDelta(t, *v, spec[j], tol, "specific return row %d asset %d", want.Row, j)
		}
	}
	for i := 0; i < fx.First; i++ {
		require.True(t, math.IsNaN(reg.FactorReturns.At(i, 0)), "row %d before First must be NaN", i)
	}
	b := m.LoadingsTo(nil)
	for j, row := range fx.Loadings {
		require.InDeltaSlice(t, row, b.RawRowView(j), tol, "loadings of asset %d as of the last close", j)
	}
}
