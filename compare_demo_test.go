package riskmodel_test

import (
	"math"
	"testing"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/demo"
	"github.com/stretchr/testify/require"
)

func TestCompareAgreesWithBuildAlignment(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 3, Assets: 120, Dates: 320})
	require.NoError(t, err)
	opts := &riskmodel.BuildOptions{Window: 250, Factor: riskmodel.FactorOptions{K: 4}}
	prev, _, err := riskmodel.Build(d.Panel, d.Panel.Date(300), opts)
	require.NoError(t, err)
	opts.Previous = prev
	next, _, err := riskmodel.Build(d.Panel, d.Panel.Date(319), opts)
	require.NoError(t, err)
	al := next.Factor.Info().Alignment
	require.NotNil(t, al)
	c, err := riskmodel.Compare(prev, next, nil)
	require.NoError(t, err)
	require.Equal(t, al.Common, c.Common)
	// Two routes to the same angles: factor.Fit's alignment and riskmodel.Compare's
	// QR + SVD. Rotation does not change a column space.
	require.InDeltaSlice(t, al.Angles, c.Angles, 1e-8)
	// 19 more dates of 250 should barely move the leading (market)
	// direction; the weakest of 4 directions may turn (printed: 1.50).
	require.Less(t, c.Angles[0], 0.2, "angles %v", c.Angles)
	require.Len(t, c.Changes, riskmodel.DefaultCompareTop)
	for i := 1; i < len(c.Changes); i++ {
		require.GreaterOrEqual(t, math.Abs(c.Changes[i-1].Change()), math.Abs(c.Changes[i].Change()))
	}
}
