package ewma

import (
	"errors"
	"fmt"
)

// Sentinel errors. Every error returned by this package wraps one of them;
// test with errors.Is.
var (
	ErrHalfLife     = errors.New("ewma: half-life must be positive and finite")
	ErrDecay        = errors.New("ewma: decay must be in (0, 1]")
	ErrLength       = errors.New("ewma: number of weights must be at least 1")
	ErrWeight       = errors.New("ewma: weight is negative or not finite")
	ErrNonFinite    = errors.New("ewma: value is infinite")
	ErrAllMissing   = errors.New("ewma: column has no observation")
	ErrTooFewObs    = errors.New("ewma: fewer than 2 usable observations")
	ErrEffectiveObs = errors.New("ewma: effective number of observations below the minimum")
	ErrZeroVariance = errors.New("ewma: zero variance, correlation undefined")
	ErrLags         = errors.New("ewma: Newey–West lags must be ≥ 0 or AutoLags")
	ErrState        = errors.New("ewma: invalid recursive state")
)

// Error gives the place of a data error: the row (date index), column or pair
// of columns where it was found. A field that does not apply is −1.
type Error struct {
	Row, Col, Col2 int
	Value          float64 // the offending value, where there is one
	Err            error   // the sentinel
}

func (e *Error) Error() string {
	switch {
	case e.Row >= 0 && e.Col >= 0:
		return fmt.Sprintf("%v: row %d, column %d, value %g", e.Err, e.Row, e.Col, e.Value)
	case e.Row >= 0:
		return fmt.Sprintf("%v: row %d, value %g", e.Err, e.Row, e.Value)
	case e.Col >= 0 && e.Col2 >= 0 && e.Col2 != e.Col:
		return fmt.Sprintf("%v: columns %d and %d (%g)", e.Err, e.Col, e.Col2, e.Value)
	case e.Col >= 0:
		return fmt.Sprintf("%v: column %d (%g)", e.Err, e.Col, e.Value)
	}
	return e.Err.Error()
}

func (e *Error) Unwrap() error { return e.Err }

func errAt(err error, row, col, col2 int, v float64) error {
	return &Error{Row: row, Col: col, Col2: col2, Value: v, Err: err}
}
