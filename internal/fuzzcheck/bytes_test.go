package fuzzcheck

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestBytes pins the decoding, which the committed seed corpora of every
// package's fuzz targets depend on.
func TestBytes(t *testing.T) {
	b := Bytes{0xff, 0xfe, 0xfd, 0xfc, 0xfb, 0x81, 100, 0}
	require.True(t, math.IsNaN(b.Value(5)))
	require.Equal(t, math.Inf(1), b.Value(5))
	require.Equal(t, math.Inf(-1), b.Value(5))
	require.Equal(t, 1e150, b.Value(5))
	require.Equal(t, 1e-150, b.Value(5))
	require.Equal(t, -1.27, b.Value(5)) // int8(0x81) = −127
	require.Equal(t, 1.0, b.Value(5))
	require.Equal(t, 0.0, b.Value(5))
	require.Equal(t, 0.0, b.Value(5), "an exhausted input reads as zeros")
	require.Zero(t, b.Next())

	// With fewer specials the remaining top codes are ordinary numbers.
	c := Bytes{0xff, 0xfe, 0xfd, 0xfc}
	require.True(t, math.IsNaN(c.Value(2)))
	require.Equal(t, math.Inf(1), c.Value(2))
	require.Equal(t, -0.03, c.Value(2))
	require.Equal(t, -0.04, c.Value(0))

	d := Bytes{3, 1, 2, 3, 4, 5, 6}
	s := d.Scale(-2, 8) // 10^(3 mod 8 − 2)
	require.Equal(t, 10.0, s)
	x := d.Dense(2, 3, s, 5)
	require.Equal(t, []float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6}, x.RawMatrix().Data)
}
