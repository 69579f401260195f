package factor

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
)

// Errors of the exposure-based model, wrapped with the date (row) and the
// sector, characteristic or asset concerned; test with errors.Is.
var (
	// ErrEmptySector: a sector has no asset in a date's regression.
	ErrEmptySector = errors.New("factor: sector has no member on a date")
	// ErrSingular: a date's weighted exposure matrix is (numerically) rank
	// deficient, or a style has no cross-sectional dispersion.
	ErrSingular = errors.New("factor: cross-sectional regression is singular")
	// ErrCap: a market cap is zero, negative or infinite.
	ErrCap = errors.New("factor: market cap not positive and finite")
)

// Characteristic is a caller-given style characteristic (book-to-price,
// leverage, a quality score): its raw values are standardised each date like
// the built-in styles (see FitExposure).
type Characteristic struct {
	// Name labels the style factor; it must be unique among the factors.
	Name string
	// Values is T×N: row t holds the values known before date t's return
	// (the caller lags them; the model cannot check it). NaN is missing.
	Values mat.Matrix
	// Static gives one value per asset for every date; used when Values is nil.
	Static []float64
}

// ExposureSettings configure FitExposure and FitHybrid. Fields marked
// required have no sensible zero value and are validated; every other zero
// value means the documented default. A negative window switches that style
// off.
type ExposureSettings struct {
	// Sectors gives each asset's sector label (index-aligned with the
	// columns of the returns). Required; an empty label is an error.
	Sectors []string
	// Caps is the T×N market cap: row t holds the caps known before date
	// t's return (the previous close). NaN leaves the asset out of that
	// date. Either Caps or StaticCaps is required.
	Caps mat.Matrix
	// StaticCaps gives one cap per asset for every date; used when Caps is nil.
	StaticCaps []float64

	// NoSize drops the "size" style, the standardised log market cap.
	NoSize bool
	// VolatilityWindow is the look-back, in dates, of the "volatility" style:
	// the standard deviation of the asset's returns on the VolatilityWindow
	// dates before t. 0 means 63 (a quarter of daily data, common practice,
	// no source); negative switches the style off.
	VolatilityWindow int
	// MomentumWindow is the look-back of the "momentum" style: the sum of
	// log(1 + r) over dates t − MomentumWindow … t − 1 − MomentumSkip.
	// 0 means 252 (a year); negative switches the style off.
	MomentumWindow int
	// MomentumSkip leaves out the most recent dates of the momentum window
	// (short-term reversal). 0 means 21 (a month); negative means none.
	MomentumSkip int
	// Characteristics are further caller-given styles, after the built-in ones.
	Characteristics []Characteristic
	// Winsor is the limit, in cross-sectional standard deviations, at which
	// standardised exposures are clipped before they are standardised again.
	// 0 means 3 (common practice, no source).
	Winsor float64

	// Covariance configures F = ewma.Estimate of the factor returns.
	// Its VolHalfLife and CorrHalfLife are required.
	Covariance ewma.Settings
	// SpecificHalfLife weights the specific variances. Required.
	SpecificHalfLife float64
	// Groups are the shrinkage groups of the specific variances; nil means
	// the sectors.
	Groups []string
	// SpecificShrink, NoSpecificShrink and SpecificFloor are as in Settings.
	SpecificShrink   float64
	NoSpecificShrink bool
	SpecificFloor    float64

	// Assets optionally labels the assets; copied into Info.Assets.
	Assets []string
}

// style is one standardised style: a name and where its raw values come from.
type style struct {
	name   string
	values func(asOf, row, j int) float64 // raw value as of row asOf (caps and characteristics of row) for asset j; NaN missing
}

// exposureSpec is the validated problem: settings with defaults, the sector
// index of every asset and the style sources.
type exposureSpec struct {
	s             ExposureSettings
	t, n          int
	sectorNames   []string // sorted distinct labels
	sector        []int    // sector index of each asset
	styles        []style
	first         int // first row regressed
	volW          int
	momW, momSkip int
	winsor        float64
	caps          func(t, j int) float64
}

// names returns the factor names: market, sectors, styles.
func (p *exposureSpec) names() []string {
	out := []string{"market"}
	if p.ns() > 0 {
		out = append(out, p.sectorNames...)
	}
	for _, st := range p.styles {
		out = append(out, st.name)
	}
	return out
}

// k returns the number of exposure factors.
func (p *exposureSpec) k() int { return 1 + p.ns() + len(p.styles) }

// ns returns the number of sector factors: none for a single sector, whose
// factor would be the market again.
func (p *exposureSpec) ns() int {
	if len(p.sectorNames) < 2 {
		return 0
	}
	return len(p.sectorNames)
}

func badSetting(format string, a ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrSettings}, a...)...)
}

// newExposureSpec validates s against the T×N returns x.
func newExposureSpec(x mat.Matrix, s ExposureSettings) (*exposureSpec, error) {
	t, n := x.Dims()
	if len(s.Sectors) != n || (s.Caps == nil && len(s.StaticCaps) != n) ||
		(s.Groups != nil && len(s.Groups) != n) || (s.Assets != nil && len(s.Assets) != n) {
		panic(mat.ErrShape)
	}
	if s.Caps != nil {
		if r, c := s.Caps.Dims(); r != t || c != n {
			panic(mat.ErrShape)
		}
	}
	for _, c := range s.Characteristics {
		if c.Values != nil {
			if r, cc := c.Values.Dims(); r != t || cc != n {
				panic(mat.ErrShape)
			}
		} else if len(c.Static) != n {
			panic(mat.ErrShape)
		}
	}
	switch {
	case !(s.SpecificHalfLife > 0) || math.IsInf(s.SpecificHalfLife, 0):
		return nil, badSetting("SpecificHalfLife = %v must be positive and finite", s.SpecificHalfLife)
	case !(s.Covariance.VolHalfLife > 0) || !(s.Covariance.CorrHalfLife > 0) ||
		math.IsInf(s.Covariance.VolHalfLife, 0) || math.IsInf(s.Covariance.CorrHalfLife, 0):
		return nil, badSetting("Covariance half-lives %v, %v must be positive and finite", s.Covariance.VolHalfLife, s.Covariance.CorrHalfLife)
	case !(s.SpecificShrink >= 0 && s.SpecificShrink <= 1):
		return nil, badSetting("SpecificShrink = %v outside [0, 1]", s.SpecificShrink)
	case !(s.SpecificFloor >= 0) || math.IsInf(s.SpecificFloor, 0):
		return nil, badSetting("SpecificFloor = %v", s.SpecificFloor)
	case !(s.Winsor >= 0) || math.IsInf(s.Winsor, 0) || (s.Winsor > 0 && s.Winsor < 1):
		return nil, badSetting("Winsor = %v must be 0 (default) or at least 1", s.Winsor)
	}
	p := &exposureSpec{s: s, t: t, n: n, winsor: s.Winsor}
	if p.winsor == 0 {
		p.winsor = 3
	}
	p.volW = defaultWindow(s.VolatilityWindow, 63)
	p.momW = defaultWindow(s.MomentumWindow, 252)
	p.momSkip = defaultWindow(s.MomentumSkip, 21)
	if p.momW > 0 && p.momSkip >= p.momW {
		return nil, badSetting("MomentumSkip = %d must be below MomentumWindow = %d", p.momSkip, p.momW)
	}
	p.first = s.Lookback()
	if t-p.first < 2 || n < 2 {
		return nil, fmt.Errorf("%w: T = %d, N = %d; the styles' look-back takes %d dates and at least 2 must remain",
			ErrTooFewObs, t, n, p.first)
	}

	set := map[string]bool{}
	for j, g := range s.Sectors {
		if g == "" {
			return nil, badSetting("asset %d has an empty sector label", j)
		}
		set[g] = true
	}
	for g := range set {
		p.sectorNames = append(p.sectorNames, g)
	}
	slices.Sort(p.sectorNames)
	at := map[string]int{}
	for i, g := range p.sectorNames {
		at[g] = i
	}
	p.sector = make([]int, n)
	for j, g := range s.Sectors {
		p.sector[j] = at[g]
	}

	if s.Caps != nil {
		p.caps = s.Caps.At
	} else {
		p.caps = func(_, j int) float64 { return s.StaticCaps[j] }
	}
	if err := p.checkCaps(); err != nil {
		return nil, err
	}
	if err := p.addStyles(x); err != nil {
		return nil, err
	}
	used := map[string]bool{"market": true}
	for _, name := range p.names()[1:] {
		if used[name] {
			return nil, badSetting("factor name %q used twice (sector and style names must differ)", name)
		}
		used[name] = true
	}
	return p, nil
}

func defaultWindow(v, def int) int {
	switch {
	case v == 0:
		return def
	case v < 0:
		return 0
	}
	return v
}

// checkCaps rejects caps that are zero, negative or infinite (NaN is missing).
func (p *exposureSpec) checkCaps() error {
	rows := p.t
	if p.s.Caps == nil {
		rows = 1
	}
	for i := 0; i < rows; i++ {
		for j := 0; j < p.n; j++ {
			if v := p.caps(i, j); !math.IsNaN(v) && (!(v > 0) || math.IsInf(v, 0)) {
				return fmt.Errorf("%w: %v at date %d, asset %d", ErrCap, v, i, j)
			}
		}
	}
	return nil
}

// Regression is what the cross-sectional regressions of FitExposure (and
// FitHybrid) found, besides the model.
type Regression struct {
	// FactorNames label the columns of FactorReturns (the model's factors).
	FactorNames []string
	// First is the first row regressed: the styles from returns need that
	// many dates of history. Rows before it are NaN in FactorReturns and
	// SpecificReturns and have no entry in Dates.
	First int
	// FactorReturns is T×K; for FitHybrid the statistical factors' returns
	// follow the exposure factors'.
	FactorReturns *mat.Dense
	// SpecificReturns is T×N, NaN where an asset was not in a date's
	// regression; for FitHybrid these are the residuals after the
	// statistical factors too.
	SpecificReturns *mat.Dense
	// Dates holds the diagnostics of each regression, for rows First … T − 1.
	Dates []CrossSection
}

// CrossSection is the diagnostics of one date's regression.
type CrossSection struct {
	Row    int // the row of the returns
	Assets int // assets in the regression
	// R2 is the weighted coefficient of determination around the weighted
	// mean, 1 − Σw·u² / Σw·(r − r̄_w)², as statsmodels' WLS rsquared.
	R2 float64
	// T holds the t-statistics of the exposure factors' returns, in the
	// order of FactorNames (see FitExposure for their standard errors).
	T []float64
	// Cond is the 2-norm condition number of the weighted reduced exposure
	// matrix W^½·X·C (the one the constraint leaves; X itself is singular).
	Cond float64
}

// FitExposure builds a factor model whose factors are a market, one factor
// per sector and a few styles, with exposures known before each date and
// factor returns estimated by a cross-sectional regression each date. For
// date t and the assets present (return and cap observed):
//
//	r_t = 1·f_market + S·f_sector + X_t·f_style + u_t,   weights w_i = √cap_i,
//	subject to Σ_s c_s f_s = 0,   c_s = Σ_{i∈s} cap_i (cap-weighted sector returns sum to zero).
//
// The constraint resolves the collinearity of the market with the full set
// of sector dummies. It is substituted out: with the last sector L (labels in
// increasing order), f_L = −Σ_{s≠L} (c_s / c_L) f_s, so the sector columns
// become S_s − (c_s/c_L)·S_L, f = C·g maps the reduced coefficients g back,
// and g is the weighted least-squares fit (QR of W^½·X·C). Standard errors:
// Cov(g) = σ̂²·(CᵀXᵀWXC)⁻¹ with σ̂² = Σw·u² / (n − p) (divisor n − p, p = K − 1,
// as statsmodels' WLS), Cov(f) = C·Cov(g)·Cᵀ, t_k = f_k / √Cov(f)_kk.
//
// Exposures at date t use only information before t. Sector exposures are
// 0/1 and the market's is 1; with a single sector there is no sector factor
// (it would be the market again) and no constraint. Styles, in this order: "size", log cap from
// row t of Caps; "volatility", the sample standard deviation (divisor m − 1)
// of the m observed returns of rows t − VolatilityWindow … t − 1; "momentum",
// Σ log(1 + r) over the observed returns of rows t − MomentumWindow …
// t − 1 − MomentumSkip; then the Characteristics (row t). A style from
// returns needs at least half its window observed. Each date a style's raw
// values are standardised over the assets with a cap and a value,
//
//	z_i = (x_i − Σ cap_j x_j / Σ cap_j) / σ,   σ² = Σ (x_j − x̄_cap)² / m   (divisor m),
//
// then clipped to ±Winsor and standardised again the same way (so a final
// value may pass the limit slightly). An asset without a value gets 0, the
// cap-weighted mean. The first row regressed is First = max(VolatilityWindow,
// MomentumWindow), so every style has its full look-back.
//
// The model: B is the exposures as of the last date's close (styles from
// returns through row T − 1, caps and characteristics of row T − 1), the
// ones valid for the next date; F = ewma.Estimate of the factor returns of
// rows First … T − 1; D from the specific returns of those rows as in Fit
// (exponentially weighted around zero with SpecificHalfLife, shrunk toward
// the group mean with the Schäfer–Strimmer intensity, floored). Info.Method
// is MethodExposure and Info.FactorNames the factor names.
//
// FitExposure panics with mat.ErrShape if Sectors, Caps (or StaticCaps),
// a characteristic, Groups or Assets does not match the returns' shape.
// It returns an error wrapping ErrSettings for bad settings, ErrTooFewObs
// when fewer than 2 dates remain after the look-back or a date has no more
// assets than parameters, ErrNonFinite for an Inf return or characteristic,
// ErrCap for a bad cap, ErrEmptySector for a sector with no member present
// on a date, ErrSingular for a rank-deficient date, ErrNoObservations for an
// asset with fewer than 2 specific returns, and errors of package ewma; each
// names the date (row) and the sector, characteristic or asset.
//
// Cost O(T·N·K²) for the regressions, split across cores by date, plus
// O(T·N) for the styles and O(T·K²) for F. Memory O(T·N).
//
// References:
// Rosenberg, B. (1974), "Extra-market components of covariance in security
// returns", J. Financial and Quantitative Analysis 9(2):263–274.
// Heston, S.L. and Rouwenhorst, K.G. (1994), "Does industrial structure
// explain the benefits of international diversification?", J. Financial
// Economics 36(1):3–27 (the sum-to-zero constraint on industry effects).
// Schäfer, J. and Strimmer, K. (2005), "A shrinkage approach to large-scale
// covariance matrix estimation", Stat. Appl. Genet. Mol. Biol. 4(1):32.
func FitExposure(x mat.Matrix, s ExposureSettings) (*Model, *Regression, error) {
	p, err := newExposureSpec(x, s)
	if err != nil {
		return nil, nil, err
	}
	reg, b, err := p.regress(x)
	if err != nil {
		return nil, nil, err
	}
	m, err := p.model(b, reg, MethodExposure, "market, sectors and styles given by the caller")
	if err != nil {
		return nil, nil, err
	}
	return m, reg, nil
}

// model estimates F and D from the regression's returns and assembles the
// model with loadings b.
func (p *exposureSpec) model(b *mat.Dense, reg *Regression, method, reason string) (*Model, error) {
	_, k := reg.FactorReturns.Dims()
	ret := reg.FactorReturns.Slice(p.first, p.t, 0, k)
	f := &mat.SymDense{}
	if _, _, err := ewma.Estimate(f, ret, p.s.Covariance); err != nil {
		return nil, fmt.Errorf("factor: factor covariance: %w", err)
	}
	resid := reg.SpecificReturns.Slice(p.first, p.t, 0, p.n).(*mat.Dense)
	groups := p.s.Groups
	if groups == nil {
		groups = p.s.Sectors
	}
	spec, sp, err := shrunkSpecific(resid, groups, p.s)
	if err != nil {
		return nil, err
	}
	info := Info{
		Method: method,
		Params: Params{
			VolHalfLife: p.s.Covariance.VolHalfLife, CorrHalfLife: p.s.Covariance.CorrHalfLife,
			NeweyWestLags: p.s.Covariance.NeweyWestLags, SpecificHalfLife: p.s.SpecificHalfLife,
			SpecificShrink: p.s.SpecificShrink, NoSpecificShrink: p.s.NoSpecificShrink,
			SpecificFloor: p.s.SpecificFloor,
		},
		Reason:      reason,
		FactorNames: slices.Clone(reg.FactorNames),
		Assets:      p.s.Assets,
		Specific:    sp,
	}
	return NewModel(b, f, spec, info)
}

// Lookback returns the number of dates the styles from returns need before
// the first regression: max(VolatilityWindow, MomentumWindow) with their
// defaults. Rows before it are not regressed, so an asset needs observations
// after it to have a specific variance.
func (s ExposureSettings) Lookback() int {
	return max(defaultWindow(s.VolatilityWindow, 63), defaultWindow(s.MomentumWindow, 252))
}
