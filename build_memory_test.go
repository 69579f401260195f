package riskmodel

import (
	"testing"

	"github.com/stretchr/testify/require"
)

func TestBuildMemory(t *testing.T) {
	// N = 6000, T = 504: a dense model is 288 MB; three of them and the
	// window's copies.
	dense := BuildMemory(MethodLedoitWolf, 504, 6000)
	require.Equal(t, int64(64<<20+3*8*6000*6000+3*8*504*6000), dense)
	require.Less(t, BuildMemory(MethodFactor, 504, 6000), dense/4, "a factor model needs no N×N matrix")
	// N = 20000: about 9.7 GB, which fits a 24 GB machine.
	require.InDelta(t, 9.9e9, float64(BuildMemory(MethodNonlinear, 504, 20000)), 0.2e9)
	for _, m := range Methods {
		require.Equal(t, m == MethodFactor || m == MethodExposure || m == MethodHybrid, FactorForm(m), m)
	}
	require.Zero(t, LoadedMemory(nil))
}
