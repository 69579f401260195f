package te

import (
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// groupVarianceByDefinition is a_gᵀΣa_g from the dense Σ element by
// element (Menchero & Davis 2011: a group's stand-alone tracking error).
func groupVarianceByDefinition(sigma *mat.SymDense, active []float64, labels []string, label string) float64 {
	var v float64
	for i := range active {
		for j := range active {
			if labels[i] == label && labels[j] == label {
				v += active[i] * sigma.At(i, j) * active[j]
			}
		}
	}
	return v
}

// TestGroupingShared: one Grouping shared by two Analyzers in turn, and by
// goroutines at once, gives each decomposition the group volatilities
// √(a_gᵀΣa_g) of the definition (Grouping holds nothing of an Analyzer).
func TestGroupingShared(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	const n = 60
	m1, m2 := randomModel(rng, n, 5), randomModel(rng, n, 7)
	a1, err := NewAnalyzer(m1)
	require.NoError(t, err)
	a2, err := NewAnalyzer(m2)
	require.NoError(t, err)
	p, b := randomWeights(rng, n, 12), randomWeights(rng, n, n)
	labels := randomLabels(rng, n, 6)
	gr := NewGrouping(labels)
	check := func(an *Analyzer, m *factorModel) {
		d, err := an.Decompose(p, b)
		require.NoError(t, err)
		sigma := m.dense()
		for _, g := range d.GroupsTo(nil, gr) {
			want := math.Sqrt(groupVarianceByDefinition(sigma, d.Active, labels, g.Label))
			require.InDelta(t, want, g.Volatility, 1e-12*max(1, want), g.Label)
		}
	}
	for range 2 {
		check(a1, m1)
		check(a2, m2)
	}
	var wg sync.WaitGroup
	for w := range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			if w%2 == 0 {
				check(a1, m1)
			} else {
				check(a2, m2)
			}
		}()
	}
	wg.Wait()
}
