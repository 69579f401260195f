package riskmodel

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
)

func factorTestModel(t *testing.T, assets []string, b [][]float64) *Model {
	t.Helper()
	n, k := len(b), len(b[0])
	bm := mat.NewDense(n, k, nil)
	for i, row := range b {
		bm.SetRow(i, row)
	}
	fc := mat.NewSymDense(k, nil)
	for j := 0; j < k; j++ {
		fc.SetSym(j, j, 1e-4)
	}
	d := make([]float64, n)
	for i := range d {
		d[i] = 1e-4 * float64(i+1)
	}
	f, err := factor.NewModel(bm, fc, d, factor.Info{})
	require.NoError(t, err)
	return &Model{AsOf: DateOf(2031, 1, 2), Assets: assets, PeriodsPerYear: 252, Method: MethodFactor, Factor: f}
}

func TestCompareAnglesAgainstScipy(t *testing.T) {
	raw, err := os.ReadFile("testdata/compare/angles.json")
	require.NoError(t, err)
	var fx struct {
		Source string
		Cases  []struct {
			Name   string
			A, B   [][]float64
			Angles []float64
		}
	}
	require.NoError(t, json.Unmarshal(raw, &fx))
	require.Len(t, fx.Cases, 3)
	for _, tc := range fx.Cases {
		t.Run(tc.Name, func(t *testing.T) {
			n := len(tc.A)
			assets := labels(n)
			// The previous model lists its assets in reverse order: Compare
			// must pair rows by identifier, not by position.
			rev := make([]string, n)
			revB := make([][]float64, n)
			for i := range assets {
				rev[n-1-i] = assets[i]
				revB[n-1-i] = tc.A[i]
			}
			prev := factorTestModel(t, rev, revB)
			next := factorTestModel(t, assets, tc.B)
			c, err := Compare(prev, next, nil)
			require.NoError(t, err)
			// Expected: scipy 1.10.1 scipy.linalg.subspace_angles(A, B)
			// (testdata/compare/make_angles.py), sorted ascending.
			require.InDeltaSlice(t, tc.Angles, c.Angles, 1e-10)
			require.Equal(t, "specific", c.RiskKind)
			require.Equal(t, n, c.Common)
			require.InDelta(t, tc.Angles[len(tc.Angles)-1], c.MaxAngle(), 1e-10)
		})
	}
}

func TestCompareRiskChangesAndTE(t *testing.T) {
	// Dense diagonal models: the changes are in total volatility √Σ_ii·√252.
	prev := &Model{AsOf: DateOf(2031, 1, 2), Assets: []string{"A", "B", "C", "D"}, PeriodsPerYear: 252, Method: MethodSample,
		Dense: mat.NewSymDense(4, []float64{1e-4, 0, 0, 0, 0, 4e-4, 0, 0, 0, 0, 9e-4, 0, 0, 0, 0, 1e-4})}
	next := &Model{AsOf: DateOf(2031, 1, 3), Assets: []string{"E", "C", "B", "A"}, PeriodsPerYear: 252, Method: MethodSample,
		Dense: mat.NewSymDense(4, []float64{1e-4, 0, 0, 0, 0, 4e-4, 0, 0, 0, 0, 4e-4, 0, 0, 0, 0, 2.25e-4})}
	c, err := Compare(prev, next, &CompareOptions{
		Top:       2,
		Portfolio: map[string]float64{"A": 0.5, "B": 0.5},
		Benchmark: map[string]float64{"B": 0.5, "D": 0.5},
	})
	require.NoError(t, err)
	require.Equal(t, 3, c.Common)
	require.Equal(t, 1, c.Added)
	require.Equal(t, 1, c.Removed)
	require.Nil(t, c.Angles)
	require.Equal(t, "total", c.RiskKind)
	s := math.Sqrt(252)
	// C: 3 % → 2 % a period, A: 1 % → 1.5 %, B unchanged.
	require.Len(t, c.Changes, 2)
	require.Equal(t, "C", c.Changes[0].Asset)
	require.InDelta(t, 0.03*s, c.Changes[0].Previous, 1e-12)
	require.InDelta(t, 0.02*s, c.Changes[0].Current, 1e-12)
	require.Equal(t, "A", c.Changes[1].Asset)
	require.InDelta(t, 0.005*s, c.Changes[1].Change(), 1e-12)
	// TE = √(aᵀΣa)·√252 with a = (A +0.5, D −0.5) (common practice, no
	// source). The previous model covers D: aᵀΣa = 0.25e-4 + 0.25e-4. The
	// new one lacks D, which counts as cash: aᵀΣa = 0.25·2.25e-4.
	require.True(t, c.HasTE)
	require.InDelta(t, math.Sqrt(0.5e-4)*s, c.TEPrevious, 1e-12)
	require.InDelta(t, math.Sqrt(0.25*2.25e-4)*s, c.TECurrent, 1e-12)
	require.Zero(t, c.CashPrevious)
	require.InDelta(t, 0.5, c.CashCurrent, 1e-15)
}

func TestHoldingsHelpers(t *testing.T) {
	p := []Holding{{"A", 0.6}, {"B", 0.4}}
	b := []Holding{{"B", 0.4}, {"C", 0.6}}
	require.Equal(t, map[string]float64{"A": 0.6, "B": 0.4}, HoldingsMap(p))
	require.Equal(t, map[string]float64{"A": 0.6, "C": -0.6}, ActiveWeights(p, b))
	assets := []AssetInfo{
		{Asset: "A", Sector: "Looms", Attributes: map[string]string{"sector": "Looms", "size_bucket": "large"}},
		{Asset: "B", Sector: "Kilns", Attributes: map[string]string{"sector": "Kilns"}},
	}
	g, err := GroupLabels(assets, "size_bucket")
	require.NoError(t, err)
	require.Equal(t, map[string]string{"A": "large", "B": NoGroup}, g)
	g, err = GroupLabels(assets, "sector")
	require.NoError(t, err)
	require.Equal(t, map[string]string{"A": "Looms", "B": "Kilns"}, g)
	_, err = GroupLabels(assets, "country")
	require.ErrorIs(t, err, ErrNoGroupColumn)
	require.Contains(t, err.Error(), "[sector size_bucket]")
}
