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
