package shrink

import (
	"errors"
	"fmt"
)

// Sentinel errors wrapped by *DataError; test with errors.Is.
var (
	ErrNonFinite    = errors.New("shrink: non-finite value")
	ErrTooFewObs    = errors.New("shrink: too few observations")
	ErrZeroVariance = errors.New("shrink: asset with zero variance")
	ErrWeights      = errors.New("shrink: invalid observation weights")
	ErrNotSymmetric = errors.New("shrink: matrix is not symmetric")
	ErrNotConverged = errors.New("shrink: iteration did not converge")
	ErrBadParameter = errors.New("shrink: invalid parameter")
	ErrNoEigen      = errors.New("shrink: eigendecomposition failed")
	ErrOverflow     = errors.New("shrink: value above MaxValue, its fourth power would overflow")
)

// DataError reports bad data and where it is. Row is a row (date) index of the
// returns matrix or of a symmetric matrix, Col a column (asset) index; either
// is −1 when it does not apply.
type DataError struct {
	Row, Col int
	Value    float64
	Err      error
}

func (e *DataError) Error() string {
	switch {
	case e.Row >= 0 && e.Col >= 0:
		return fmt.Sprintf("%v at row %d, column %d (value %v)", e.Err, e.Row, e.Col, e.Value)
	case e.Row >= 0:
		return fmt.Sprintf("%v at row %d (value %v)", e.Err, e.Row, e.Value)
	case e.Col >= 0:
		return fmt.Sprintf("%v in column %d (value %v)", e.Err, e.Col, e.Value)
	}
	return fmt.Sprintf("%v (value %v)", e.Err, e.Value)
}

func (e *DataError) Unwrap() error { return e.Err }

// ErrRankDeficient reports a sample covariance with fewer positive
// eigenvalues than min(N, T−1) (duplicated or constant assets), which
// nonlinear shrinkage cannot handle.
var ErrRankDeficient = errors.New("shrink: sample covariance is rank deficient")
