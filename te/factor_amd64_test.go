//go:build amd64 && !purego

package te

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestFactorKernelsBitwise: the AVX2 kernels of the factor form
// (factor_amd64.s) and the Go loops of factor.go give the same
// decomposition, groups and tracking error bit for bit, for sizes around
// the kernels' steps (four assets, four and twenty columns) and K = 0.
func TestFactorKernelsBitwise(t *testing.T) {
	if !factorAVX2 {
		t.Skip("no AVX2 on this CPU: only the Go loops run")
	}
	defer func() { factorAVX2 = true }()
	rng := rand.New(rand.NewPCG(51, 52))
	for _, n := range []int{1, 3, 4, 5, 8, 61, 103} {
		for _, k := range []int{0, 1, 3, 4, 5, 17, 20, 23, 41} {
			t.Run(fmt.Sprintf("N=%d/K=%d", n, k), func(t *testing.T) {
				var cov Covariance
				if k == 0 {
					d := make([]float64, n)
					for i := range d {
						d[i] = 1e-4 + 4e-4*rng.Float64()
					}
					cov = noFactors{&factorModel{b: &mat.Dense{}, f: &mat.SymDense{}, d: d}}
				} else {
					cov = randomModel(rng, n, k)
				}
				an, err := NewAnalyzer(cov)
				require.NoError(t, err)
				p, b := randomWeights(rng, n, max(1, n/3)), randomWeights(rng, n, n)
				gr := NewGrouping(randomLabels(rng, n, 4))
				var ds [2]*Decomposition
				var gs [2][]Group
				var tes [2]float64
				for j, on := range []bool{true, false} {
					factorAVX2 = on
					ds[j], err = an.Decompose(p, b)
					require.NoError(t, err)
					gs[j] = ds[j].GroupsTo(nil, gr)
					tes[j], err = an.TrackingError(p, b)
					require.NoError(t, err)
				}
				require.Equal(t, ds[0], ds[1])
				require.Equal(t, gs[0], gs[1])
				require.Equal(t, tes[0], tes[1])
				require.Equal(t, ds[0].TE, tes[0])
			})
		}
	}
}
