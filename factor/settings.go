package factor

import (
	"fmt"
	"math"

	"github.com/riskmodel/riskmodel/ewma"
)

// Solver selects how Fit computes the principal components (the route to the
// truncated SVD, as gonum's SVDKind selects one); it does not change the
// estimator, only how its leading components are found.
type Solver int

const (
	// SolverAuto uses SolverGram when min(N, T) ≤ 300 or T·N ≤ 2²⁴ and
	// SolverRandomized otherwise (default): forming the Gram matrix takes two
	// transient T×N copies, too much memory for the largest panels.
	SolverAuto Solver = iota
	// SolverRandomized is the randomized truncated SVD of Halko, Martinsson &
	// Tropp (2011).
	SolverRandomized
	// SolverGram works on the smaller Gram matrix: the T×T one when N > T
	// (Connor & Korajczyk 1986). It is eigen-decomposed exactly when
	// min(N, T) ≤ 300, otherwise by seeded subspace iteration (PowerIters
	// rounds).
	SolverGram
)

// gramLimit is the largest min(N, T) for which SolverAuto picks the exact Gram
// route: its eigendecomposition costs about 0.1 s at 300 on this kind of machine.
const gramLimit = 300

// gramCells is the largest T·N for which SolverAuto forms the Gram matrix.
const gramCells = 1 << 24

// String returns the name Fit records in Info.Method for a model computed
// with the solver: MethodPCARandomized or MethodPCAGram ("auto" for
// SolverAuto, which Fit resolves to one of the two before it records it).
func (m Solver) String() string {
	switch m {
	case SolverAuto:
		return "auto"
	case SolverRandomized:
		return MethodPCARandomized
	case SolverGram:
		return MethodPCAGram
	}
	return fmt.Sprintf("Solver(%d)", int(m))
}

// Settings configure Fit. Fields marked required have no sensible zero value
// and are validated; every other zero value means the documented default.
type Settings struct {
	// K is the number of factors; 0 chooses it by Criterion.
	K int
	// Criterion chooses K when K is 0; the zero value is BaiNgICp2.
	Criterion Criterion
	// HoldoutDates is the number of last dates held out by the criteria
	// HoldoutLikelihood and HoldoutMinVariance; 0 means DefaultHoldoutShare
	// of the dates.
	HoldoutDates int
	// HoldoutBest makes the holdout criteria pick the k with the best
	// held-out score (Holdout.BestLikelihood, Holdout.BestMinVariance)
	// instead of the one-standard-error rule's smallest k within one
	// standard error of it. The rule buys parsimony; an optimizer pays more
	// for a missing factor (risk it cannot see and so does not hedge) than
	// for a superfluous one (a small-variance direction), so risk forecasts
	// for optimized portfolios may prefer the plain minimizer.
	HoldoutBest bool
	// MaxFactors is the largest k the criteria consider; 0 means K when K is
	// given, otherwise min(20, min(N, T) − 1).
	MaxFactors int
	// Solver: SolverAuto (default), SolverRandomized or SolverGram.
	Solver Solver
	// Seed seeds the Gaussian test matrix of the randomized SVD.
	Seed uint64
	// Oversample is the number of extra sketch columns; 0 means 10.
	Oversample int
	// PowerIters is the number of power iterations of the first randomized
	// SVD; 0 means 4. Each impute–refit step uses one more, warm-started.
	PowerIters int
	// MaxIter caps the impute–refit iterations for missing data; 0 means 25.
	MaxIter int
	// Tol is the convergence threshold of the impute–refit iterations (see
	// Fit); 0 means 1e-4.
	Tol float64
	// AssumeCentered skips subtracting each asset's mean return before the
	// principal components.
	AssumeCentered bool

	// Covariance configures the factor covariance F = ewma.Estimate of the
	// factor returns. Its VolHalfLife and CorrHalfLife are required.
	Covariance ewma.Settings
	// SpecificHalfLife is the half-life, in periods, of the exponentially
	// weighted residual variances. Required.
	SpecificHalfLife float64
	// Groups gives each asset's group (sector, size bucket) for the
	// shrinkage of specific variances; nil puts all assets in one group.
	Groups []string
	// SpecificShrink fixes the shrinkage intensity in (0, 1] for every
	// group; 0 estimates it per group (see Fit).
	SpecificShrink float64
	// NoSpecificShrink turns the shrinkage of specific variances off.
	NoSpecificShrink bool
	// SpecificFloor is the smallest specific variance; 0 means 1 % of the
	// median shrunk specific variance.
	SpecificFloor float64

	// Assets optionally labels the assets; copied into Info.Assets.
	Assets []string
	// Previous is the previous model to align the factors to; nil: none.
	Previous *Model
	// PreviousIndex gives, for each asset, its position in Previous or −1
	// if it is new; nil means the same assets in the same order.
	PreviousIndex []int

	// Adjust switches on the corrections of the estimate for optimized
	// portfolios and volatility regimes; the zero value applies none.
	Adjust Adjustments
}

// resolved holds the settings with defaults filled in.
type resolved struct {
	Settings
	kmax int
}

func (s Settings) resolve(t, n int) (resolved, error) {
	r := resolved{Settings: s}
	bad := func(format string, a ...any) (resolved, error) {
		return r, fmt.Errorf("%w: "+format, append([]any{ErrSettings}, a...)...)
	}
	m := min(t, n)
	switch {
	case s.K < 0:
		return bad("K = %d is negative", s.K)
	case s.K >= m:
		return r, fmt.Errorf("%w: K = %d ≥ min(N, T) = %d", ErrTooManyFactors, s.K, m)
	case s.Criterion < BaiNgICp2 || s.Criterion > HoldoutMinVariance:
		return bad("unknown criterion %d", int(s.Criterion))
	case s.Solver < SolverAuto || s.Solver > SolverGram:
		return bad("unknown solver %d", int(s.Solver))
	case s.MaxFactors < 0 || s.Oversample < 0 || s.PowerIters < 0 || s.MaxIter < 0 || s.HoldoutDates < 0:
		return bad("MaxFactors, Oversample, PowerIters, MaxIter and HoldoutDates must be ≥ 0")
	case !(s.Tol >= 0) || math.IsInf(s.Tol, 0):
		return bad("Tol = %v", s.Tol)
	case !(s.SpecificHalfLife > 0) || math.IsInf(s.SpecificHalfLife, 0):
		return bad("SpecificHalfLife = %v must be positive and finite", s.SpecificHalfLife)
	case !(s.Covariance.VolHalfLife > 0) || !(s.Covariance.CorrHalfLife > 0) ||
		math.IsInf(s.Covariance.VolHalfLife, 0) || math.IsInf(s.Covariance.CorrHalfLife, 0):
		return bad("Covariance half-lives %v, %v must be positive and finite", s.Covariance.VolHalfLife, s.Covariance.CorrHalfLife)
	case !(s.SpecificShrink >= 0 && s.SpecificShrink <= 1):
		return bad("SpecificShrink = %v outside [0, 1]", s.SpecificShrink)
	case !(s.SpecificFloor >= 0) || math.IsInf(s.SpecificFloor, 0):
		return bad("SpecificFloor = %v", s.SpecificFloor)
	}
	if err := s.Adjust.validate(); err != nil {
		return r, err
	}
	if s.Solver == SolverAuto {
		r.Solver = SolverRandomized
		if m <= gramLimit || t*n <= gramCells {
			r.Solver = SolverGram
		}
	}
	if r.Oversample == 0 {
		r.Oversample = 10
	}
	if r.PowerIters == 0 {
		r.PowerIters = 4
	}
	if r.MaxIter == 0 {
		r.MaxIter = 25
	}
	if r.Tol == 0 {
		r.Tol = 1e-4
	}
	r.kmax = s.MaxFactors
	if r.kmax == 0 {
		r.kmax = s.K
		if s.K == 0 {
			r.kmax = 20
		}
	}
	r.kmax = min(max(r.kmax, s.K), m-1)
	return r, nil
}

func (r resolved) params() Params {
	return Params{
		Criterion: r.Criterion.String(), MaxFactors: r.kmax, Seed: r.Seed,
		Oversample: r.Oversample, PowerIters: r.PowerIters, MaxIter: r.MaxIter, Tol: r.Tol,
		AssumeCentered: r.AssumeCentered, VolHalfLife: r.Covariance.VolHalfLife,
		CorrHalfLife: r.Covariance.CorrHalfLife, NeweyWestLags: r.Covariance.NeweyWestLags,
		SpecificHalfLife: r.SpecificHalfLife, SpecificShrink: r.SpecificShrink,
		NoSpecificShrink: r.NoSpecificShrink, SpecificFloor: r.SpecificFloor,
		HoldoutDates: r.HoldoutDates, HoldoutBest: r.HoldoutBest, Adjust: r.Adjust.resolved(),
	}
}
