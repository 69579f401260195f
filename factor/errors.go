package factor

import "errors"

// Errors returned for bad data or settings. They are wrapped with context
// (which asset, which date, which field); test with errors.Is.
var (
	// ErrNonFinite: an input value is ±Inf (NaN marks a missing return and is allowed).
	ErrNonFinite = errors.New("factor: non-finite value")
	// ErrNoObservations: an asset has no observation in the window.
	ErrNoObservations = errors.New("factor: asset has no observations")
	// ErrEmptyDate: a date has no observation for any asset.
	ErrEmptyDate = errors.New("factor: date has no observations")
	// ErrTooManyFactors: K ≥ min(N, T), or K above the rank of the data.
	ErrTooManyFactors = errors.New("factor: too many factors")
	// ErrTooFewObs: fewer than two dates or fewer than two assets.
	ErrTooFewObs = errors.New("factor: too few dates or assets")
	// ErrSettings: a setting is missing or out of range.
	ErrSettings = errors.New("factor: invalid settings")
	// ErrNotPSD: a factor covariance is not symmetric positive semidefinite.
	ErrNotPSD = errors.New("factor: factor covariance not positive semidefinite")
	// ErrSpecificVariance: a specific variance is not finite and positive.
	ErrSpecificVariance = errors.New("factor: specific variance not positive")
	// ErrPrevious: the previous model given for alignment does not fit.
	ErrPrevious = errors.New("factor: previous model does not match")
)
