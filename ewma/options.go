package ewma

// Options control missing data, the mean and the bias correction. A nil
// *Options or the zero value means: zero mean, pairwise missing-data
// handling, the biased divisor Σw, no minimum number of observations.
type Options struct {
	// Demean subtracts the weighted mean of each column (taken over the
	// observations used). The default assumes a zero mean, common practice
	// for daily returns.
	Demean bool
	// CompleteCase uses only the dates on which every column is present.
	// The default is pairwise: each entry uses the dates on which its two
	// columns are present.
	CompleteCase bool
	// MinEffectiveObs, if positive, makes an estimator return an error
	// wrapping ErrEffectiveObs when the effective number of observations
	// (Σw)²/Σw² of a column or pair is below it.
	MinEffectiveObs float64
	// Unbiased multiplies each entry by (Σw)²/((Σw)² − Σw²) over the
	// observations it used: pandas' ewm(...).cov(bias=False) and
	// .var(bias=False). It does not apply to correlations, which pandas also
	// computes from biased moments.
	Unbiased bool
}

func (o *Options) orZero() Options {
	if o == nil {
		return Options{}
	}
	return *o
}

// Report holds the diagnostics of an estimate.
type Report struct {
	Rows int // T, the number of rows of the input
	// Used is the number of rows that entered the estimate: rows with a
	// positive weight and, with CompleteCase, no missing value.
	Used int
	// EffectiveObs is (Σw)²/Σw² over the used rows.
	EffectiveObs float64
	// VolEffectiveObs is the effective number of observations of the
	// volatility weights (Estimate only).
	VolEffectiveObs float64
	// MinPairEffectiveObs is the smallest effective number of observations
	// of any pair (i, j), i ≤ j, and MinPair that pair. Without missing data
	// it equals EffectiveObs.
	MinPairEffectiveObs float64
	MinPair             [2]int
	// Missing is the number of missing values in the used rows. When it is
	// positive (and CompleteCase is off) the result was estimated pairwise
	// and checked for positive semidefiniteness.
	Missing int
	// Checked tells whether the positive semidefiniteness check ran.
	Checked bool
	// Repair is nil if the result needed no repair.
	Repair *Repair
	// NeweyWestLags is the number of lags of the Newey–West adjustment, 0
	// for none.
	NeweyWestLags int
}

// Repair describes how a pairwise matrix was made positive semidefinite:
// its eigenvalues below zero were set to zero and the result was rescaled to
// the original diagonal.
type Repair struct {
	MinEigenvalue float64 // the smallest eigenvalue before the repair
	// Clipped is the number of eigenvalues below −N·ε·max|λ|, negative
	// beyond rounding, that were set to zero. Those within rounding of zero
	// are set to zero too but not counted: they are an artefact of the
	// arithmetic (an N×N matrix of rank k < N has N − k of them, about half
	// computed negative).
	Clipped   int
	MaxChange float64 // the largest absolute change of an entry
}
