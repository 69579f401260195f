package riskmodel

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestDropUnpaired checks the pair rule by hand on ten dates: A is observed
// on dates 0–4 and B on 5–9 (nothing in common), D on 4–9 (one date with
// A), C and E on every date. A is in two short pairs and goes; then every
// pair shares at least 2 dates and B, C, D, E stay.
func TestDropUnpaired(t *testing.T) {
	const n = 10
	obs := map[string][2]int{"A": {0, 4}, "B": {5, 9}, "C": {0, 9}, "D": {4, 9}, "E": {0, 9}}
	assets := []string{"A", "B", "C", "D", "E"}
	x := mat.NewDense(n, len(assets), nil)
	dates := make([]Date, n)
	for i := range dates {
		dates[i] = DateOf(2030, 1, 7).AddDays(i)
		for j, a := range assets {
			v := math.NaN()
			if r := obs[a]; i >= r[0] && i <= r[1] {
				v = 0.001 * float64(i+j+1)
			}
			x.Set(i, j, v)
		}
	}
	p, err := NewPanel(dates, assets, x, 0)
	require.NoError(t, err)
	kept, dropped := p.dropUnpaired(2)
	require.Equal(t, []string{"B", "C", "D", "E"}, kept.Assets())
	require.Len(t, dropped, 1)
	require.Equal(t, Coverage{Asset: "A", Count: 5, First: dates[0], Last: dates[4]}, dropped[0])

	// With one shared date enough, only A and B (none) fall short: the tie
	// of degree and count goes to the later column, B.
	kept, dropped = p.dropUnpaired(1)
	require.Equal(t, []string{"A", "C", "D", "E"}, kept.Assets())
	require.Equal(t, "B", dropped[0].Asset)

	// A panel without a missing value is returned as it is.
	full, err := NewPanel(dates, []string{"C"}, x.Slice(0, n, 2, 3), 0)
	require.NoError(t, err)
	same, none := full.dropUnpaired(2)
	require.Same(t, full, same)
	require.Empty(t, none)
}
