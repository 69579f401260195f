package riskmodel

import (
	"fmt"
	"maps"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
)

// Version is the library version recorded in every saved model.
const Version = "0.1.0"

// Model is a covariance forecast for a list of assets as of a date, with the
// record of how it was made. Exactly one of Factor and Dense is set: a factor
// model Σ = B·F·Bᵀ + D, or a dense N×N covariance. Covariances are per
// period; PeriodsPerYear annualises them.
//
// A Model is not modified by the library once built, so it is safe for
// concurrent reads.
type Model struct {
	AsOf           Date
	Assets         []string // in the covariance's order
	PeriodsPerYear float64
	Method         string            // the estimator's name, e.g. "factor" or "ledoit-wolf"
	Settings       map[string]string // the estimator's settings, in words, for the record
	Notes          []string          // repairs and other facts a reader must know
	// Validation records, in words, the checks the model passed before it
	// was published (for example ValidationRecord's result); nil: none.
	Validation map[string]string

	Factor *factor.Model // set for a factor-form model
	Dense  *mat.SymDense // set for a dense model
}

// Covariance is what a model gives to an optimizer or to package te: a
// symmetric matrix that is either a *factor.Model or a *mat.SymDense.
type Covariance interface {
	mat.Symmetric
}

// Covariance returns the model's covariance: the factor model when there is
// one, otherwise the dense matrix.
func (m *Model) Covariance() Covariance {
	if m.Factor != nil {
		return m.Factor
	}
	return m.Dense
}

// check verifies the model's shape and the basic facts a store relies on.
func (m *Model) check() error {
	n := len(m.Assets)
	if n == 0 {
		return fmt.Errorf("riskmodel: %w: no assets", ErrInvalidModel)
	}
	if (m.Factor == nil) == (m.Dense == nil) {
		return fmt.Errorf("riskmodel: %w: exactly one of Factor and Dense must be set", ErrInvalidModel)
	}
	if d := m.Covariance().SymmetricDim(); d != n {
		return fmt.Errorf("riskmodel: %w: covariance is %d×%d for %d assets", ErrInvalidModel, d, d, n)
	}
	if !(m.PeriodsPerYear > 0) || math.IsInf(m.PeriodsPerYear, 0) {
		return fmt.Errorf("riskmodel: %w: %w: %v", ErrInvalidModel, ErrPeriodsPerYear, m.PeriodsPerYear)
	}
	seen := make(map[string]bool, n)
	for _, a := range m.Assets {
		if a == "" || seen[a] {
			return fmt.Errorf("riskmodel: %w: asset %q is empty or repeated", ErrInvalidModel, a)
		}
		seen[a] = true
	}
	return nil
}

// equal reports whether two models hold bit-identical numbers and records.
func (m *Model) equal(o *Model) bool {
	if m.AsOf != o.AsOf || m.Method != o.Method || m.PeriodsPerYear != o.PeriodsPerYear ||
		!slices.Equal(m.Assets, o.Assets) || !slices.Equal(m.Notes, o.Notes) ||
		(m.Factor == nil) != (o.Factor == nil) {
		return false
	}
	if !maps.Equal(m.Settings, o.Settings) || !maps.Equal(m.Validation, o.Validation) {
		return false
	}
	if m.Factor != nil {
		a, b := m.Factor, o.Factor
		return a.NumFactors() == b.NumFactors() &&
			bitsEqual(a.LoadingsTo(nil).RawMatrix().Data, b.LoadingsTo(nil).RawMatrix().Data) &&
			bitsEqual(symData(a.FactorCovarianceTo(nil)), symData(b.FactorCovarianceTo(nil))) &&
			bitsEqual(a.SpecificVariancesTo(nil), b.SpecificVariancesTo(nil)) &&
			slices.Equal(a.FactorNames(), b.FactorNames())
	}
	return symBitsEqual(m.Dense, o.Dense)
}

// symBitsEqual reports whether the upper triangles of a and b hold the same
// bits, without copying them (the store compares two N×N matrices with it).
func symBitsEqual(a, b *mat.SymDense) bool {
	n := a.SymmetricDim()
	if b.SymmetricDim() != n {
		return false
	}
	ra, rb := a.RawSymmetric(), b.RawSymmetric()
	for i := 0; i < n; i++ {
		if !bitsEqual(ra.Data[i*ra.Stride+i:i*ra.Stride+n], rb.Data[i*rb.Stride+i:i*rb.Stride+n]) {
			return false
		}
	}
	return true
}

// symData returns the upper triangle of s, row by row.
func symData(s *mat.SymDense) []float64 {
	n := s.SymmetricDim()
	out := make([]float64, 0, n*(n+1)/2)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			out = append(out, s.At(i, j))
		}
	}
	return out
}

func bitsEqual(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}
