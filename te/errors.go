package te

import (
	"errors"
	"fmt"
	"strings"
)

// Errors returned for bad data. They come wrapped in an *InputError or an
// *UncoveredError; test with errors.Is.
var (
	ErrNonFinite = errors.New("te: value is not finite")
	ErrNegative  = errors.New("te: negative variance")
	ErrNotPSD    = errors.New("te: covariance is not positive semidefinite for these weights")
	ErrEmpty     = errors.New("te: empty portfolio")
	ErrDuplicate = errors.New("te: duplicate asset identifier")
	ErrUncovered = errors.New("te: asset not covered by the model")
	ErrTooFewObs = errors.New("te: too few observations")
	ErrBand      = errors.New("te: invalid tracking-error band")
)

// InputError reports a bad input value and where it is. Index is the
// position in a vector (or the row for a matrix), -1 when it does not apply;
// Column is the column of a matrix, -1 otherwise; Label is an asset
// identifier when the input was keyed by one.
type InputError struct {
	Field  string // "portfolio", "benchmark", "loadings", "specific variances", ...
	Index  int
	Column int
	Label  string
	Value  float64
	Err    error
}

func (e *InputError) Error() string {
	var b strings.Builder
	b.WriteString(e.Err.Error())
	b.WriteString(": ")
	b.WriteString(e.Field)
	if e.Label != "" {
		fmt.Fprintf(&b, " of %q", e.Label)
	}
	if e.Index >= 0 {
		fmt.Fprintf(&b, " at %d", e.Index)
		if e.Column >= 0 {
			fmt.Fprintf(&b, ",%d", e.Column)
		}
	}
	fmt.Fprintf(&b, " is %g", e.Value)
	return b.String()
}

func (e *InputError) Unwrap() error { return e.Err }

// UncoveredError lists every held asset that the model does not cover, in
// increasing order of identifier. It wraps ErrUncovered.
type UncoveredError struct {
	Assets []string
}

func (e *UncoveredError) Error() string {
	return fmt.Sprintf("%v: %d asset(s): %s", ErrUncovered, len(e.Assets), strings.Join(e.Assets, ", "))
}

func (e *UncoveredError) Unwrap() error { return ErrUncovered }
