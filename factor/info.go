package factor

import "slices"

// Estimator names recorded in Info.Method. They are written into saved
// models, so they never change.
const (
	MethodPCAGram       = "pca-gram"       // Fit with SolverGram
	MethodPCARandomized = "pca-randomized" // Fit with SolverRandomized
	MethodExposure      = "exposure"       // FitExposure
	MethodHybrid        = "hybrid"         // FitHybrid
)

// Info is the record of how a model was made: what a store saves beside the
// matrices so that a reader knows the method, its parameters, the number of
// factors and why it was chosen. All fields are plain values so the record
// can be written as JSON or a metadata row.
type Info struct {
	// Method names the estimator: MethodPCAGram or MethodPCARandomized for
	// Fit (the solver it used), MethodExposure for FitExposure, MethodHybrid
	// for FitHybrid; a model made by NewModel carries the caller's name. The
	// names are written into saved models and never change.
	Method string
	// Params are the settings the model was fitted with (zero for models not
	// made by Fit).
	Params Params
	// NumFactors is K.
	NumFactors int
	// Reason says how K was chosen, in words ("fixed by caller",
	// "Bai–Ng IC_p2 minimum over k = 0..20").
	Reason string
	// Selection holds the number-of-factors diagnostics; nil when none were
	// computed.
	Selection *Selection
	// FactorNames labels the factors; nil means "pc1".."pcK".
	FactorNames []string
	// Assets labels the assets in model order; nil when the caller gave none.
	Assets []string
	// Imputation reports the iterative filling of missing returns.
	Imputation Imputation
	// Specific reports the shrinkage and floor of the specific variances.
	Specific Specific
	// Alignment reports the rotation onto the previous model; nil when no
	// previous model was given.
	Alignment *Alignment

	// The corrections of Settings.Adjust, nil when not applied: the
	// dispersion bias of the leading eigenvector, the eigen-adjustment of F
	// and the volatility-regime multipliers of F and D.
	Weighting      *Weighting
	Dispersion     *Dispersion
	Eigen          *EigenAdjustment
	FactorRegime   *Regime
	SpecificRegime *Regime
}

// Params are the fitting parameters recorded in Info, with defaults resolved.
type Params struct {
	Criterion        string
	MaxFactors       int
	Seed             uint64
	Oversample       int
	PowerIters       int
	MaxIter          int
	Tol              float64
	AssumeCentered   bool
	VolHalfLife      float64
	CorrHalfLife     float64
	NeweyWestLags    int
	SpecificHalfLife float64
	SpecificShrink   float64 // the requested intensity; 0 means estimated
	NoSpecificShrink bool
	SpecificFloor    float64 // the requested floor; 0 means the default rule
	HoldoutDates     int     // the requested holdout; 0 means the default share
	HoldoutBest      bool    // the holdout criteria pick their best k, not the one-standard-error rule's
	Adjust           Adjustments
}

// Imputation reports how missing returns were filled (see Fit).
type Imputation struct {
	Missing    int     // number of missing cells in the T×N input
	Iterations int     // impute–refit iterations run (0 for complete data)
	Change     float64 // relative change of the imputed values in the last iteration
	Converged  bool    // Change fell below Params.Tol (true for complete data)
}

// Specific reports how the specific variances were shrunk and floored.
type Specific struct {
	Groups  []string  // distinct group labels in order of first appearance; nil: one group
	Shrink  []float64 // intensity used per group, in the order of Groups (one value when Groups is nil)
	Floor   float64   // the floor applied
	Floored int       // number of assets raised to the floor
}

// Alignment reports the rotation of the new factors onto the previous
// model's and how far the factor space moved.
type Alignment struct {
	Common int // assets in both models used for the alignment
	// Angles are the principal angles, in radians and ascending, between
	// the previous and the new loading spaces over the common assets.
	Angles []float64
	// Rotation is the K×K orthogonal matrix R, row-major, applied as
	// B_new = B_raw·R.
	Rotation []float64
}

func (in Info) clone() Info {
	out := in
	out.FactorNames = slices.Clone(in.FactorNames)
	out.Assets = slices.Clone(in.Assets)
	out.Specific.Groups = slices.Clone(in.Specific.Groups)
	out.Specific.Shrink = slices.Clone(in.Specific.Shrink)
	if in.Selection != nil {
		s := in.Selection.clone()
		out.Selection = &s
	}
	if in.Alignment != nil {
		a := *in.Alignment
		a.Angles = slices.Clone(a.Angles)
		a.Rotation = slices.Clone(a.Rotation)
		out.Alignment = &a
	}
	if in.Dispersion != nil {
		d := *in.Dispersion
		out.Dispersion = &d
	}
	if in.Weighting != nil {
		w := *in.Weighting
		w.Angles = slices.Clone(w.Angles)
		out.Weighting = &w
	}
	out.Eigen = in.Eigen.clone()
	out.FactorRegime = in.FactorRegime.clone()
	out.SpecificRegime = in.SpecificRegime.clone()
	return out
}
