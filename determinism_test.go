package riskmodel_test

import (
	"math"
	"path/filepath"
	"runtime"
	"testing"

	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/riskmodel/riskmodel"

	"github.com/stretchr/testify/require"
)

// covBits returns the bits of every element of the model's covariance.
func covBits(m *riskmodel.Model) []uint64 {
	c := m.Covariance()
	n := c.SymmetricDim()
	out := make([]uint64, 0, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			out = append(out, math.Float64bits(c.At(i, j)))
		}
	}
	return out
}

// The same input gives bit-identical models whatever GOMAXPROCS is (DESIGN.md,
// "Deterministic"), and a model saved and loaded back is bit-identical too.
// The dense kernel and the factor fit split work across goroutines; this
// checks that the split never changes an order of summation.
func TestBuildDeterministicAcrossProcs(t *testing.T) {
	market := smallDemo(t)
	p := market.Panel
	tt, _ := p.Dims()
	asof := p.Date(tt - 1)
	sectors, caps := map[string]string{}, map[string]float64{}
	for _, a := range market.Assets {
		sectors[a.Asset], caps[a.Asset] = a.Sector, a.MarketCap
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, method := range []string{riskmodel.MethodFactor, riskmodel.MethodLedoitWolf, riskmodel.MethodEWMA, riskmodel.MethodExposure} {
		t.Run(method, func(t *testing.T) {
			opts := &riskmodel.BuildOptions{Method: method, Window: 300, Sectors: sectors, MarketCaps: caps, Factor: riskmodel.FactorOptions{K: 4}}
			requireSameAcrossProcs(t, p, asof, opts)
		})
	}
	if testing.Short() {
		return
	}
	// 300 assets: large enough that the dense products are split across
	// goroutines.
	big, err := demo.Generate(&demo.Config{Seed: 12, Assets: 300, Sectors: 5, Dates: 130})
	require.NoError(t, err)
	bt, _ := big.Panel.Dims()
	for _, method := range []string{riskmodel.MethodFactor, riskmodel.MethodLedoitWolf, riskmodel.MethodEWMA} {
		t.Run(method+" 300 assets", func(t *testing.T) {
			requireSameAcrossProcs(t, big.Panel, big.Panel.Date(bt-1), &riskmodel.BuildOptions{Method: method, Window: 120, Factor: riskmodel.FactorOptions{K: 5}})
		})
	}
}

// requireSameAcrossProcs builds with GOMAXPROCS 1, 2 and 8 and requires
// bit-identical covariances, and the same after riskmodel.SaveModel and riskmodel.LoadModel.
func requireSameAcrossProcs(t *testing.T, p *riskmodel.Panel, asof riskmodel.Date, opts *riskmodel.BuildOptions) {
	t.Helper()
	var want []uint64
	for _, procs := range []int{1, 2, 8} {
		runtime.GOMAXPROCS(procs)
		m, _, err := riskmodel.Build(p, asof, opts)
		require.NoError(t, err)
		got := covBits(m)
		if want == nil {
			want = got
			dir := filepath.Join(t.TempDir(), "model")
			require.NoError(t, riskmodel.SaveModel(dir, m))
			back, err := riskmodel.LoadModel(dir)
			require.NoError(t, err)
			require.Equal(t, want, covBits(back), "save/load round trip changed bits")
			require.Equal(t, m.Assets, back.Assets)
			continue
		}
		require.Equal(t, want, got, "GOMAXPROCS=%d changed bits", procs)
	}
}
