package factor

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// shrunkSpecific returns the specific variances of the T×N specific returns
// resid (NaN missing) by the rule of Fit (specificRule), after checking that
// every asset was in at least two of the regressions.
func shrunkSpecific(resid *mat.Dense, groups []string, s ExposureSettings) ([]float64, Specific, error) {
	t, n := resid.Dims()
	for j := 0; j < n; j++ {
		var m int
		for i := 0; i < t; i++ {
			if !math.IsNaN(resid.At(i, j)) {
				m++
			}
		}
		if m < 2 {
			return nil, Specific{}, fmt.Errorf("%w: asset %d has %d specific returns, need 2", ErrNoObservations, j, m)
		}
	}
	return specificRule{
		HalfLife: s.SpecificHalfLife, Groups: groups, Shrink: s.SpecificShrink,
		NoShrink: s.NoSpecificShrink, Floor: s.SpecificFloor,
	}.apply(resid)
}
