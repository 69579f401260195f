package dense

import (
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

func TestSize(t *testing.T) {
	require.Equal(t, 3, SizeSym(nil, 3).SymmetricDim())
	require.Equal(t, 4, SizeSym(&mat.SymDense{}, 4).SymmetricDim())
	require.True(t, SizeSym(nil, 0).IsEmpty())
	s := mat.NewSymDense(2, nil)
	require.Same(t, s, SizeSym(s, 2))
	require.PanicsWithValue(t, mat.ErrShape, func() { SizeSym(s, 3) })

	r, c := SizeDense(nil, 2, 5).Dims()
	require.Equal(t, [2]int{2, 5}, [2]int{r, c})
	r, c = SizeDense(&mat.Dense{}, 3, 1).Dims()
	require.Equal(t, [2]int{3, 1}, [2]int{r, c})
	require.True(t, SizeDense(nil, 0, 4).IsEmpty())
	d := mat.NewDense(2, 2, nil)
	require.Same(t, d, SizeDense(d, 2, 2))
	require.PanicsWithValue(t, mat.ErrShape, func() { SizeDense(d, 2, 3) })
}

func TestSizeVec(t *testing.T) {
	require.Len(t, SizeVec[float64](nil, 3), 3)
	require.Len(t, SizeVec([]float64{}, 2), 2)
	buf := []float64{1, 2, 3}
	got := SizeVec(buf[:0], 3)
	require.Equal(t, []float64{0, 0, 0}, got)
	require.Equal(t, []float64{1, 2, 3}, buf, "an empty dst's backing array is left alone")
	v := []float64{1, 2}
	require.Same(t, &v[0], &SizeVec(v, 2)[0])
	require.Equal(t, []float64{1, 2}, v, "a dst of the right length is not cleared")
	require.PanicsWithValue(t, mat.ErrShape, func() { SizeVec(v, 3) })
	require.PanicsWithValue(t, mat.ErrShape, func() { SizeVec(v, 0) })
	require.Len(t, SizeVec([]string(nil), 4), 4)
}

func TestParallel(t *testing.T) {
	for _, n := range []int{0, 1, 7, 100} {
		seen := make([]int, n)
		Parallel(n, func(i int) { seen[i]++ })
		for i, c := range seen {
			require.Equal(t, 1, c, "f(%d) runs exactly once", i)
		}
	}
}
