package te

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// TestGroupingReuse: a Grouping built once gives the same groups as Groups
// for several portfolios, GroupsTo reuses its dst, and the labels are sorted.
func TestGroupingReuse(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	n := 80
	m := randomModel(rng, n, 3)
	labels := randomLabels(rng, n, 6)
	gr := NewGrouping(labels)
	require.Equal(t, n, gr.Len())
	names := gr.Labels()
	require.IsIncreasing(t, names)
	an, err := NewAnalyzer(m)
	require.NoError(t, err)
	b := randomWeights(rng, n, n)
	var dst []Group
	for trial := 0; trial < 3; trial++ {
		d, err := an.Decompose(randomWeights(rng, n, 10+trial*20), b)
		require.NoError(t, err)
		want := d.Groups(labels)
		got := d.GroupsTo(dst, gr)
		require.Equal(t, want, got)
		if trial > 0 {
			require.Same(t, &dst[0], &got[0])
		}
		dst = got
		for g, s := range names {
			require.Equal(t, s, got[g].Label)
		}
	}
	require.PanicsWithValue(t, mat.ErrShape, func() {
		d, _ := an.Decompose(b, b)
		d.GroupsTo(nil, NewGrouping(labels[:n-1]))
	})
}

// TestSingleGroup: one group holding every asset carries the whole TE, with
// volatility TE and correlation 1.
func TestSingleGroup(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 20))
	n := 25
	m := randomModel(rng, n, 2)
	for _, cov := range []Covariance{m, m.dense()} {
		an, err := NewAnalyzer(cov)
		require.NoError(t, err)
		d, err := an.Decompose(randomWeights(rng, n, 5), randomWeights(rng, n, n))
		require.NoError(t, err)
		gs := d.Groups(make([]string, n))
		require.Len(t, gs, 1)
		require.InDelta(t, d.TE, gs[0].Contribution, 1e-15)
		require.InDelta(t, d.TE, gs[0].Volatility, 1e-15)
		require.InDelta(t, 1, gs[0].Correlation, 1e-12)
		require.InDelta(t, 100, gs[0].Percent, 1e-10)
		require.InDelta(t, 0, gs[0].ActiveWeight, 1e-15)
	}
}

// lowerCov stores Σ in its lower triangle, to exercise that branch.
type lowerCov struct{ s blas64.Symmetric }

func (c lowerCov) Dims() (int, int) { return c.s.N, c.s.N }
func (c lowerCov) At(i, j int) float64 {
	if i < j {
		i, j = j, i
	}
	return c.s.Data[i*c.s.Stride+j]
}
func (c lowerCov) T() mat.Matrix                  { return c }
func (c lowerCov) SymmetricDim() int              { return c.s.N }
func (c lowerCov) RawSymmetric() blas64.Symmetric { return c.s }

func TestLowerTriangle(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	n := 30
	up := randomModel(rng, n, 3).dense()
	lo := blas64.Symmetric{N: n, Stride: n, Uplo: blas.Lower, Data: make([]float64, n*n)}
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			lo.Data[i*n+j] = up.At(i, j)
		}
		for j := i + 1; j < n; j++ {
			lo.Data[i*n+j] = 1e9 // never read
		}
	}
	p, b, labels := randomWeights(rng, n, 8), randomWeights(rng, n, n), randomLabels(rng, n, 4)
	au, err := NewAnalyzer(up)
	require.NoError(t, err)
	al, err := NewAnalyzer(lowerCov{lo})
	require.NoError(t, err)
	du, err := au.Decompose(p, b)
	require.NoError(t, err)
	dl, err := al.Decompose(p, b)
	require.NoError(t, err)
	require.InDelta(t, du.TE, dl.TE, 1e-15)
	require.InDeltaSlice(t, du.Contribution, dl.Contribution, 1e-15)
	gu, gl := du.Groups(labels), dl.Groups(labels)
	for g := range gu {
		require.InDelta(t, gu[g].Volatility, gl[g].Volatility, 1e-15)
	}
}

func TestHotSpotTies(t *testing.T) {
	d := &Decomposition{Contribution: []float64{0.1, 0.3, 0.1, -0.2, 0.3}}
	require.Equal(t, []int{1, 4, 0, 2, 3}, d.HotSpots(10))
	require.Equal(t, []int{1, 4}, d.HotSpots(2))
}
