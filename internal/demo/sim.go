package demo

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/riskmodel/riskmodel"

	"gonum.org/v1/gonum/mat"
)

// Streams of the PCG generator, one per part of the simulation, so that
// switching a feature off (halts, say) leaves every other draw unchanged.
const (
	streamStructure = iota + 1
	streamReturns
	streamEvents
	streamFund
)

// Volatility clustering: GARCH(1,1) recursions on variance multipliers whose
// unconditional mean is 1,
//
//	h_{i+1} = (1 − α − β) + α·h_i·z_i² + β·h_i
//
// with z_i the unit-variance shock of row i. The persistences are typical of
// daily equity data (common practice, no source). The update clips z_i² at
// maxShock2 (a 5-standard-deviation day) so that one Student-t extreme cannot
// multiply a variance twentyfold; the conditional variance of every row is
// still exactly the one recorded, only its unconditional mean falls a little
// below 1.
const (
	factorAlpha, factorBeta     = 0.07, 0.91
	specificAlpha, specificBeta = 0.05, 0.90
	maxShock2                   = 25
)

// Stress multipliers of the variances (see Config.StressLength).
const (
	stressMarket   = 6.25
	stressSector   = 2.25
	stressStyle    = 1.0
	stressSpecific = 1.5
)

// Generate simulates the invented market described by cfg; a nil cfg is
// the bundled demo (seed Seed, every other field at its default). The
// result depends only on cfg: the same cfg gives bit-identical output on
// every machine.
//
// The structure, drawn once: each asset gets a sector (every sector at least
// one asset), a log-normal market cap at listing (median 3000, log standard
// deviation 1.3, in an invented currency's millions), a market beta
// 1 + 0.2·N(0,1) clipped to [0.4, 1.8], exposure 1 to its sector, style
// scores (scale = standardised log cap, the others standard normal) and a
// specific volatility of 28 % a year times exp(−0.12·scale + 0.25·N(0,1)),
// clipped to [10 %, 80 %]. Factor volatilities are 15 % a year for the market,
// 12–18 % for sectors and 5–8 % for styles, with a random factor correlation.
//
// Each date, factor returns are multivariate normal with covariance F_i and
// specific returns are Student-t with SpecificDoF degrees of freedom scaled
// to variance d_in, both with GARCH(1,1) variance clustering and the stress
// multipliers; see Demo for the model.
//
// MarketCap in Assets is the cap at listing compounded by the asset's true
// returns over its listed life; size buckets rank those caps (largest 20 %
// "large", next 30 % "mid", the rest "small").
//
// Generate returns an error wrapping ErrConfig for a configuration it
// cannot simulate or a fund tracking error out of reach, and an error wrapping
// ErrImpossible in the rare case that a draw gives a simple return ≤ −1 (an
// extreme Student-t draw on a volatile asset; another seed or more degrees of
// freedom avoid it). Cost O(T·N·K) time and O(T·N) memory.
//
// References:
//
// Bollerslev, T. (1986), "Generalized autoregressive conditional
// heteroskedasticity", J. Econometrics 31(3):307–327 (the variance recursion;
// citation from memory).
//
// Marsaglia, G. and Tsang, W. W. (2000), "A simple method for generating gamma
// variables", ACM Trans. Math. Software 26(3):363–372 (the chi-squared draws
// of the Student-t variates).
func Generate(cfg *Config) (*Market, error) {
	c, err := cfg.resolve()
	if err != nil {
		return nil, err
	}
	n, t, s := c.Assets, c.Dates, c.Sectors
	d := &Market{
		Config:      c.explicit(),
		SectorNames: sectorNamesFor(s),
		StyleNames:  append([]string(nil), styleNames...),
		StressStart: c.StressStart,
		StressEnd:   c.StressStart + c.StressLength,
		HoldingsRow: t - 1,
	}
	d.FactorNames = append(append([]string{"market"}, d.SectorNames...), d.StyleNames...)
	st := drawStructure(c, rand.New(rand.NewPCG(c.Seed, streamStructure)))
	d.b, d.corr, d.chol = st.b, st.corr, st.chol
	d.simulate(c, st, rand.New(rand.NewPCG(c.Seed, streamReturns)))

	d.Spans, d.Events, err = drawEvents(c, rand.New(rand.NewPCG(c.Seed, streamEvents)))
	if err != nil {
		return nil, err
	}
	dates := make([]riskmodel.Date, t)
	for i, day := 0, c.Start; i < t; i++ {
		dates[i] = day
		day = nextWeekday(day)
	}
	ids := make([]string, n)
	for j := range ids {
		ids[j] = assetID(j, n)
	}
	truth := d.TrueReturnsTo(nil)
	caps := d.finalCaps(st, truth)
	d.Panel, err = riskmodel.NewPanel(dates, ids, d.observe(truth), riskmodel.DailyPeriods)
	if err != nil {
		// A simple return ≤ −1: the tails drawn were too heavy for
		// simple returns. It takes an extreme draw on a volatile asset.
		return nil, fmt.Errorf("riskmodel: demo with seed %d: %w; use another seed or a larger SpecificDoF", c.Seed, err)
	}
	d.Assets = d.assetInfo(st, caps)
	d.Benchmark = d.benchmark()
	d.Fund, err = d.fund(rand.New(rand.NewPCG(c.Seed, streamFund)))
	if err != nil {
		return nil, err
	}
	return d, nil
}

func nextWeekday(d riskmodel.Date) riskmodel.Date {
	d++
	for d.Weekday() == 6 || d.Weekday() == 0 {
		d++
	}
	return d
}

// structure is what Generate draws before the first date.
type structure struct {
	sector  []int
	cap0    []float64     // market cap at listing
	b       *mat.Dense    // N×K exposures
	fvol    []float64     // daily factor volatilities before clustering and stress
	corr    *mat.SymDense // factor correlation
	chol    *mat.TriDense // its lower Cholesky factor
	svol    []float64     // daily specific volatilities before clustering and stress
	fstress []float64     // stress multiplier of each factor's variance
}

func drawStructure(c Config, rs *rand.Rand) structure {
	n, s := c.Assets, c.Sectors
	k := 1 + s + len(styleNames)
	daily := 1 / math.Sqrt(riskmodel.DailyPeriods)
	st := structure{
		sector: make([]int, n),
		cap0:   make([]float64, n),
		b:      mat.NewDense(n, k, nil),
		fvol:   make([]float64, k),
		svol:   make([]float64, n),
	}
	// Uneven sector sizes, every sector non-empty.
	sw := make([]float64, s)
	for q := range sw {
		sw[q] = 0.5 + rs.Float64()
	}
	for j, q := range rs.Perm(n) {
		if j < s {
			st.sector[q] = j
			continue
		}
		st.sector[q] = pickWeighted(rs, sw)
	}
	logCap := make([]float64, n)
	for j := range logCap {
		logCap[j] = math.Log(3000) + 1.3*rs.NormFloat64()
		st.cap0[j] = math.Exp(logCap[j])
	}
	scale := standardise(logCap)
	for j := 0; j < n; j++ {
		st.b.Set(j, 0, clip(1+0.2*rs.NormFloat64(), 0.4, 1.8))
		st.b.Set(j, 1+st.sector[j], 1)
		st.b.Set(j, 1+s, scale[j])
		for q := 1; q < len(styleNames); q++ {
			st.b.Set(j, 1+s+q, rs.NormFloat64())
		}
		vol := 0.28 * math.Exp(-0.12*scale[j]+0.25*rs.NormFloat64())
		st.svol[j] = clip(vol, 0.10, 0.80) * daily
	}
	st.fvol[0] = 0.15 * daily
	st.fstress = make([]float64, k)
	st.fstress[0] = stressMarket
	for q := 0; q < s; q++ {
		st.fvol[1+q] = (0.12 + 0.06*rs.Float64()) * daily
		st.fstress[1+q] = stressSector
	}
	for q := range styleNames {
		st.fvol[1+s+q] = (0.05 + 0.03*rs.Float64()) * daily
		st.fstress[1+s+q] = stressStyle
	}
	// A random correlation: G·Gᵀ with G = I + 0.15·N(0,1), scaled to a unit
	// diagonal. G is almost surely invertible, so the correlation is
	// positive definite.
	g := mat.NewDense(k, k, nil)
	for a := 0; a < k; a++ {
		for b := 0; b < k; b++ {
			v := 0.15 * rs.NormFloat64()
			if a == b {
				v++
			}
			g.Set(a, b, v)
		}
	}
	cov := mat.NewSymDense(k, nil)
	cov.SymOuterK(1, g)
	st.corr = mat.NewSymDense(k, nil)
	for a := 0; a < k; a++ {
		for b := a; b < k; b++ {
			st.corr.SetSym(a, b, cov.At(a, b)/math.Sqrt(cov.At(a, a)*cov.At(b, b)))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(st.corr) {
		panic("riskmodel: demo factor correlation is not positive definite")
	}
	st.chol = mat.NewTriDense(k, mat.Lower, nil)
	ch.LTo(st.chol)
	return st
}

// simulate draws the factor and specific returns of every row, storing the
// conditional standard deviations and variances used for each.
func (d *Market) simulate(c Config, st structure, rs *rand.Rand) {
	n, t := c.Assets, c.Dates
	k := len(st.fvol)
	d.fsd = mat.NewDense(t, k, nil)
	d.f = mat.NewDense(t, k, nil)
	d.svar = mat.NewDense(t, n, nil)
	d.e = mat.NewDense(t, n, nil)
	h := make([]float64, k) // factor variance multipliers
	g := make([]float64, n) // specific variance multipliers
	for q := range h {
		h[q] = 1
	}
	for j := range g {
		g[j] = 1
	}
	z := make([]float64, k)
	u := make([]float64, k)
	for i := 0; i < t; i++ {
		stress := i >= d.StressStart && i < d.StressEnd
		fsd, f := d.fsd.RawRowView(i), d.f.RawRowView(i)
		for q := range z {
			z[q] = rs.NormFloat64()
		}
		// u = L·z has the factor correlation; scale it by the
		// conditional standard deviations.
		for a := 0; a < k; a++ {
			var v float64
			for b := 0; b <= a; b++ {
				v += st.chol.At(a, b) * z[b]
			}
			u[a] = v
			m := h[a]
			if stress {
				m *= st.fstress[a]
			}
			fsd[a] = st.fvol[a] * math.Sqrt(m)
			f[a] = fsd[a] * v
		}
		sv, e := d.svar.RawRowView(i), d.e.RawRowView(i)
		m := 1.0
		if stress {
			m = stressSpecific
		}
		for j := 0; j < n; j++ {
			sv[j] = st.svol[j] * st.svol[j] * g[j] * m
			x := unitT(rs, c.SpecificDoF)
			e[j] = math.Sqrt(sv[j]) * x
			if !c.Stationary {
				g[j] = (1 - specificAlpha - specificBeta) + specificAlpha*g[j]*min(x*x, maxShock2) + specificBeta*g[j]
			}
		}
		if !c.Stationary {
			for a := range h {
				h[a] = (1 - factorAlpha - factorBeta) + factorAlpha*h[a]*min(u[a]*u[a], maxShock2) + factorBeta*h[a]
			}
		}
	}
}

// observe turns the true returns r, in place, into the panel's cells: rounded
// to 1e-7, NaN outside listed lives and in halts, and the faults written
// over them. It returns r.
func (d *Market) observe(r *mat.Dense) *mat.Dense {
	t, _ := r.Dims()
	for i := 0; i < t; i++ {
		row := r.RawRowView(i)
		for j := range row {
			if sp := d.Spans[j]; i < sp.First || i > sp.Last {
				row[j] = math.NaN()
				continue
			}
			row[j] = math.Round(row[j]*1e7) / 1e7
		}
	}
	for _, ev := range d.Events {
		for i := ev.Start; i < ev.Start+ev.Len; i++ {
			r.Set(i, ev.Column, ev.Value)
		}
	}
	return r
}

// unitT draws a Student-t variate with nu degrees of freedom scaled to unit
// variance: z·√((ν−2)/W) with z standard normal and W chi-squared with ν
// degrees of freedom. An infinite nu gives z.
func unitT(rs *rand.Rand, nu float64) float64 {
	z := rs.NormFloat64()
	if math.IsInf(nu, 1) {
		return z
	}
	w := 2 * gammaVariate(rs, nu/2)
	return z * math.Sqrt((nu-2)/w)
}

// gammaVariate draws from the Gamma distribution with shape a and scale 1.
//
// References: Marsaglia, G. and Tsang, W. W. (2000), "A simple method for
// generating gamma variables", ACM Trans. Math. Software 26(3):363–372.
func gammaVariate(rs *rand.Rand, a float64) float64 {
	if a < 1 {
		// Boost: Gamma(a) = Gamma(a+1)·U^(1/a), section 6 of the paper.
		return gammaVariate(rs, a+1) * math.Pow(rs.Float64(), 1/a)
	}
	dd := a - 1.0/3
	cc := 1 / math.Sqrt(9*dd)
	for {
		x := rs.NormFloat64()
		v := 1 + cc*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := rs.Float64()
		if math.Log(u) < 0.5*x*x+dd-dd*v+dd*math.Log(v) {
			return dd * v
		}
	}
}

func pickWeighted(rs *rand.Rand, w []float64) int {
	var sum float64
	for _, v := range w {
		sum += v
	}
	x := rs.Float64() * sum
	for q, v := range w {
		x -= v
		if x < 0 {
			return q
		}
	}
	return len(w) - 1
}

// standardise returns (x − mean)/sd with the 1/n divisor; a constant x gives
// zeros.
func standardise(x []float64) []float64 {
	var mean, ss float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	for _, v := range x {
		ss += (v - mean) * (v - mean)
	}
	sd := math.Sqrt(ss / float64(len(x)))
	out := make([]float64, len(x))
	if sd == 0 {
		return out
	}
	for j, v := range x {
		out[j] = (v - mean) / sd
	}
	return out
}

func clip(x, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, x)) }
