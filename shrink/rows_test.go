package shrink

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestFirstBadValueAcrossChunks: with bad values in two column chunks, the
// error names the first in row-major order, as a serial scan would, also
// when a later chunk holds the earlier row.
func TestFirstBadValueAcrossChunks(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	const tt, n = 40, 3*colChunk + 7
	x := mat.NewDense(tt, n, nil)
	for i := 0; i < tt; i++ {
		for j := 0; j < n; j++ {
			x.Set(i, j, 0.01*rng.NormFloat64())
		}
	}
	x.Set(20, 5, math.NaN())
	x.Set(7, 2*colChunk+3, math.Inf(1))
	x.Set(7, colChunk+1, 2*MaxValue)
	_, _, err := OAS(nil, x, nil)
	var de *DataError
	require.ErrorAs(t, err, &de)
	require.Equal(t, 7, de.Row)
	require.Equal(t, colChunk+1, de.Col)
	require.ErrorIs(t, err, ErrOverflow)
}

// TestTriangleBlocksDeterministic: the estimates whose passes over the
// triangle are shared among cores are bit-identical for GOMAXPROCS 1 and
// 2, and ‖S‖²_F in blocks matches the element-by-element sum to rounding.
func TestTriangleBlocksDeterministic(t *testing.T) {
	rng := rand.New(rand.NewPCG(33, 34))
	const tt, n = 300, 700
	x := mat.NewDense(tt, n, nil)
	for i := 0; i < tt; i++ {
		for j := 0; j < n; j++ {
			x.Set(i, j, 0.01*rng.NormFloat64())
		}
	}
	saved := runtime.GOMAXPROCS(1)
	o1, r1, err := OAS(nil, x, nil)
	require.NoError(t, err)
	l1, _, err := LedoitWolf(nil, x, nil)
	require.NoError(t, err)
	runtime.GOMAXPROCS(max(2, saved))
	o2, r2, err := OAS(nil, x, nil)
	require.NoError(t, err)
	l2, _, err := LedoitWolf(nil, x, nil)
	require.NoError(t, err)
	runtime.GOMAXPROCS(saved)
	require.Equal(t, r1, r2)
	require.Equal(t, o1.RawSymmetric().Data, o2.RawSymmetric().Data)
	require.Equal(t, l1.RawSymmetric().Data, l2.RawSymmetric().Data)

	var naive float64
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			naive += o1.At(i, j) * o1.At(i, j)
		}
	}
	require.InDelta(t, naive, frob2(o1), 1e-13*naive)
}
