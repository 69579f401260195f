package te

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

func sum(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s
}

// TestEuler checks Euler's theorem for the homogeneous TE(a): asset, group
// and factor-plus-specific contributions each sum to TE, and each asset's
// factor and specific parts sum to its contribution (REFERENCES.md, tracking
// error decomposition).
func TestEuler(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	const tol = 1e-12
	for trial := 0; trial < 20; trial++ {
		n, k := 1+rng.IntN(200), 1+rng.IntN(8)
		m := randomModel(rng, n, k)
		p := randomWeights(rng, n, 1+rng.IntN(n))
		b := randomWeights(rng, n, n)
		labels := randomLabels(rng, n, 1+rng.IntN(12))
		for _, cov := range []Covariance{m, m.dense()} {
			an, err := NewAnalyzer(cov)
			require.NoError(t, err)
			d, err := an.Decompose(p, b)
			require.NoError(t, err)
			require.InDelta(t, d.TE, sum(d.Contribution), tol)
			require.InDelta(t, 100, sum(d.Percent), 1e-9)
			var gsum, gfac, gspec float64
			members := 0
			for _, g := range d.Groups(labels) {
				gsum += g.Contribution
				gfac += g.Factor
				gspec += g.Specific
				members += g.Members
				require.InDelta(t, g.Contribution, g.Volatility*g.Correlation, tol)
				require.LessOrEqual(t, math.Abs(g.Correlation), 1+1e-12)
			}
			require.Equal(t, n, members)
			require.InDelta(t, d.TE, gsum, tol)
			for i := range d.Active {
				require.InDelta(t, d.Contribution[i], d.Active[i]*d.Volatility[i]*d.Correlation[i], tol)
				require.LessOrEqual(t, math.Abs(d.Correlation[i]), 1+1e-12)
			}
			if !d.Factored {
				continue
			}
			require.InDelta(t, d.TE*d.TE, d.FactorVariance+d.SpecificVariance, tol)
			fs := d.Specific.Contribution
			for _, f := range d.Factors {
				fs += f.Contribution
				require.InDelta(t, f.Contribution, f.Exposure*f.Volatility*f.Correlation, tol)
			}
			require.InDelta(t, d.TE, fs, tol)
			require.InDelta(t, d.Specific.Contribution, d.Specific.Volatility*d.Specific.Correlation, tol)
			require.InDelta(t, d.TE, gfac+gspec, tol)
			for i := range d.Active {
				require.InDelta(t, d.Contribution[i], d.FactorPart[i]+d.SpecificPart[i], tol)
			}
		}
	}
}

// TestFactorEqualsDense checks that the factor form gives the dense results
// on the same model's dense Σ = BFBᵀ + D (built with gonum's Mul), to 1e-10.
func TestFactorEqualsDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	const tol = 1e-10
	for trial := 0; trial < 10; trial++ {
		n, k := 2+rng.IntN(300), 1+rng.IntN(10)
		m := randomModel(rng, n, k)
		p := randomWeights(rng, n, 1+rng.IntN(n))
		b := randomWeights(rng, n, n)
		labels := randomLabels(rng, n, 10)
		af, err := NewAnalyzer(m)
		require.NoError(t, err)
		ad, err := NewAnalyzer(m.dense())
		require.NoError(t, err)
		df, err := af.Decompose(p, b)
		require.NoError(t, err)
		dd, err := ad.Decompose(p, b)
		require.NoError(t, err)
		require.InDelta(t, dd.TE, df.TE, tol)
		require.InDelta(t, dd.PortfolioRisk, df.PortfolioRisk, tol)
		require.InDelta(t, dd.BenchmarkRisk, df.BenchmarkRisk, tol)
		require.InDelta(t, dd.Beta, df.Beta, tol)
		for _, pair := range [][2][]float64{
			{dd.Marginal, df.Marginal}, {dd.Contribution, df.Contribution}, {dd.Percent, df.Percent},
			{dd.Volatility, df.Volatility}, {dd.Correlation, df.Correlation},
			{dd.Hedge, df.Hedge}, {dd.HedgedTE, df.HedgedTE},
		} {
			require.InDeltaSlice(t, pair[0], pair[1], tol)
		}
		gd, gf := dd.Groups(labels), df.Groups(labels)
		require.Len(t, gf, len(gd))
		for i := range gd {
			require.Equal(t, gd[i].Label, gf[i].Label)
			require.InDelta(t, gd[i].Contribution, gf[i].Contribution, tol)
			require.InDelta(t, gd[i].Volatility, gf[i].Volatility, tol)
			require.InDelta(t, gd[i].Correlation, gf[i].Correlation, tol)
		}
		sf := af.MulVecTo(nil, p)
		sd := ad.MulVecTo(nil, p)
		require.InDeltaSlice(t, sd, sf, 1e-14)
		tf, err := af.TrackingError(p, b)
		require.NoError(t, err)
		require.Equal(t, df.TE, tf)
	}
}

// TestHedgeIsOptimal checks Litterman's single-asset hedge against a direct
// evaluation: TE after the trade equals TrackingError of the traded
// portfolio, and moving the trade either way does not lower it.
func TestHedgeIsOptimal(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	n := 40
	m := randomModel(rng, n, 3)
	an, err := NewAnalyzer(m)
	require.NoError(t, err)
	p, b := randomWeights(rng, n, 15), randomWeights(rng, n, n)
	d, err := an.Decompose(p, b)
	require.NoError(t, err)
	q := slices.Clone(p)
	for i := 0; i < n; i++ {
		for _, eps := range []float64{0, -1e-3, 1e-3} {
			q[i] = p[i] + d.Hedge[i] + eps
			te, err := an.TrackingError(q, b)
			require.NoError(t, err)
			if eps == 0 {
				require.InDelta(t, d.HedgedTE[i], te, 1e-12)
			} else {
				require.Greater(t, te, d.HedgedTE[i])
			}
		}
		q[i] = p[i]
		require.LessOrEqual(t, d.HedgedTE[i], d.TE)
	}
	best, after := d.BestHedge()
	require.Equal(t, slices.Min(d.HedgedTE), after)
	require.Equal(t, after, d.HedgedTE[best])
	hot := d.HotSpots(5)
	require.Len(t, hot, 5)
	for j := 1; j < len(hot); j++ {
		require.GreaterOrEqual(t, d.Contribution[hot[j-1]], d.Contribution[hot[j]])
	}
	require.Equal(t, slices.Max(d.Contribution), d.Contribution[hot[0]])
	require.Nil(t, d.HotSpots(0))
	require.Len(t, d.HotSpots(n+10), n)
}

// TestReuse checks that a reused dst gives the same answer, that reuse does
// not allocate, and that inputs are unchanged.
func TestReuse(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	n := 60
	m := randomModel(rng, n, 4)
	for _, cov := range []Covariance{m, m.dense()} {
		an, err := NewAnalyzer(cov)
		require.NoError(t, err)
		p1, p2, b := randomWeights(rng, n, 20), randomWeights(rng, n, 30), randomWeights(rng, n, n)
		c1, c2, cb := slices.Clone(p1), slices.Clone(p2), slices.Clone(b)
		want, err := an.Decompose(p2, b)
		require.NoError(t, err)
		d, err := an.Decompose(p1, b)
		require.NoError(t, err)
		got, err := an.DecomposeTo(d, p2, b)
		require.NoError(t, err)
		require.Same(t, d, got)
		want.buf, got.buf = nil, nil // scratch
		require.Equal(t, want, got)
		allocs := testing.AllocsPerRun(10, func() {
			_, _ = an.DecomposeTo(d, p1, b)
		})
		require.Zero(t, allocs)
		require.Equal(t, c1, p1)
		require.Equal(t, c2, p2)
		require.Equal(t, cb, b)
	}
	// The model's own data are copied, not aliased.
	d0 := slices.Clone(m.d)
	an, _ := NewAnalyzer(m)
	m.d[0] = 1
	require.Equal(t, d0[0], an.d[0])
}

// TestZeroTrackingError: a portfolio equal to its benchmark has TE 0 and
// every contribution 0, with no NaN anywhere.
func TestZeroTrackingError(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	n := 30
	m := randomModel(rng, n, 3)
	p := randomWeights(rng, n, n)
	labels := randomLabels(rng, n, 4)
	for _, cov := range []Covariance{m, m.dense()} {
		an, err := NewAnalyzer(cov)
		require.NoError(t, err)
		d, err := an.Decompose(p, p)
		require.NoError(t, err)
		require.Zero(t, d.TE)
		require.InDelta(t, 1, d.Beta, 1e-14)
		require.InDelta(t, d.BenchmarkRisk, d.PortfolioRisk, 1e-15)
		for _, s := range [][]float64{d.Marginal, d.Contribution, d.Percent, d.Correlation, d.Hedge, d.HedgedTE, d.FactorPart, d.SpecificPart} {
			for _, v := range s {
				require.Zero(t, v)
			}
		}
		for _, f := range append(slices.Clone(d.Factors), d.Specific) {
			require.Zero(t, f.Contribution)
			require.Zero(t, f.Correlation)
			require.False(t, math.IsNaN(f.Percent))
		}
		for _, g := range d.Groups(labels) {
			require.Zero(t, g.Contribution)
			require.Zero(t, g.Percent)
			require.Zero(t, g.Correlation)
			require.Zero(t, g.Volatility)
		}
	}
}

// TestOneAsset: with one asset, TE = |a|·σ and the contribution is all of it.
func TestOneAsset(t *testing.T) {
	an, err := NewAnalyzer(mat.NewSymDense(1, []float64{0.0004}))
	require.NoError(t, err)
	d, err := an.Decompose([]float64{1}, []float64{0.5})
	require.NoError(t, err)
	require.InDelta(t, 0.5*0.02, d.TE, 1e-16)
	require.InDeltaSlice(t, []float64{d.TE}, d.Contribution, 1e-16)
	require.InDelta(t, 1, d.Correlation[0], 1e-15)
	// A perfect hedge: TE² − (Σa)²/Σ_ii cancels, so HedgedTE is only good
	// to about √ε·TE (see Decomposition.HedgedTE).
	require.InDelta(t, 0, d.HedgedTE[0], 1e-9)
	require.InDelta(t, -0.5, d.Hedge[0], 1e-15)
	require.InDelta(t, 2, d.Beta, 1e-15)
}

// TestNoFactors: a factor form with K = 0 is pure specific risk.
func TestNoFactors(t *testing.T) {
	m := &factorModel{b: &mat.Dense{}, f: &mat.SymDense{}, d: []float64{0.01, 0.04}}
	an, err := NewAnalyzer(noFactors{m})
	require.NoError(t, err)
	d, err := an.Decompose([]float64{1, 0}, []float64{0, 1})
	require.NoError(t, err)
	require.InDelta(t, math.Sqrt(0.05), d.TE, 1e-16)
	require.Zero(t, d.FactorVariance)
	require.Empty(t, d.Factors)
}

// noFactors is a factor form with K = 0 (gonum has no 0×0 Dense to return).
type noFactors struct{ *factorModel }

func (m noFactors) NumFactors() int { return 0 }
func (m noFactors) At(i, j int) float64 {
	if i == j {
		return m.d[i]
	}
	return 0
}
func (m noFactors) LoadingsTo(*mat.Dense) *mat.Dense { return &mat.Dense{} }
func (m noFactors) FactorCovarianceTo(*mat.SymDense) *mat.SymDense {
	return &mat.SymDense{}
}
