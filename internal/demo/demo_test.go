package demo

import (
	"fmt"
	"math"
	"math/rand/v2"
	"regexp"
	"slices"
	"sort"
	"sync"
	"testing"
	"time"

	"github.com/riskmodel/riskmodel"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// bundledDemo returns Generate(nil), drawn once for all tests: a Demo is
// never modified after it is made.
var bundledDemo = sync.OnceValues(func() (*Market, error) { return Generate(nil) })

// The demo is checked against its own truth: these are simulation tests with a
// known true covariance, the one place where invented data is the reference.

func TestGenerateDefaults(t *testing.T) {
	d, err := bundledDemo()
	require.NoError(t, err)
	nt, n := d.Panel.Dims()
	require.Equal(t, 1008, nt)
	require.Equal(t, 500, n)
	require.Equal(t, uint64(Seed), d.Config.Seed)
	require.Len(t, d.SectorNames, 10)
	require.Equal(t, []string{"scale", "trend", "calm", "gearing"}, d.StyleNames)
	require.Len(t, d.FactorNames, 1+10+4)
	require.Equal(t, riskmodel.DateOf(2030, time.January, 7), d.Panel.Date(0))

	id := regexp.MustCompile(`^QV[0-9]{4}$`)
	for j, a := range d.Assets {
		require.Equal(t, d.Panel.Asset(j), a.Asset)
		require.Regexp(t, id, a.Asset)
		require.Contains(t, d.SectorNames, a.Sector)
	}
	require.True(t, sort.StringsAreSorted(d.Panel.Assets()))
	for i := 0; i < nt; i++ {
		wd := d.Panel.Date(i).Weekday()
		require.NotEqual(t, time.Saturday, wd)
		require.NotEqual(t, time.Sunday, wd)
		if i > 0 {
			gap := int(d.Panel.Date(i) - d.Panel.Date(i-1))
			require.True(t, gap == 1 || (gap == 3 && wd == time.Monday), "row %d gap %d", i, gap)
		}
	}
	// Every sector has members.
	members := map[string]int{}
	for _, a := range d.Assets {
		members[a.Sector]++
	}
	require.Len(t, members, 10)
}

func TestGenerateDeterministic(t *testing.T) {
	cfg := &Config{Seed: 7, Assets: 60, Sectors: 4, Dates: 300}
	a, err := Generate(cfg)
	require.NoError(t, err)
	b, err := Generate(cfg)
	require.NoError(t, err)
	requireDemoPanel(t, a.Panel, b.Panel)
	require.Equal(t, fmt.Sprint(a.Events), fmt.Sprint(b.Events)) // NaN values of halts defeat ==
	require.Equal(t, a.Fund, b.Fund)

	c, err := Generate(&Config{Seed: 8, Assets: 60, Sectors: 4, Dates: 300})
	require.NoError(t, err)
	require.NotEqual(t, a.Panel.At(5, 5), c.Panel.At(5, 5))

	// Switching halts off leaves the returns unchanged: each part of the
	// simulation has its own random stream.
	noHalts := *cfg
	noHalts.Halts = -1
	e, err := Generate(&noHalts)
	require.NoError(t, err)
	require.True(t, mat.Equal(a.TrueReturnsTo(nil), e.TrueReturnsTo(nil)))
	for _, ev := range e.Events {
		require.NotEqual(t, Halt, ev.Kind)
	}

	// The recorded configuration reproduces the demo.
	again, err := Generate(&e.Config)
	require.NoError(t, err)
	requireDemoPanel(t, e.Panel, again.Panel)
	require.Equal(t, e.Config, again.Config)
	require.Equal(t, -1, e.Config.Halts)
}

// requireDemoPanel checks two panels cell by cell, NaN matching NaN, and
// bit for bit otherwise.
func requireDemoPanel(t *testing.T, want, got *riskmodel.Panel) {
	t.Helper()
	require.Equal(t, want.Dates(), got.Dates())
	require.Equal(t, want.Assets(), got.Assets())
	require.Equal(t, want.PeriodsPerYear(), got.PeriodsPerYear())
	nt, n := want.Dims()
	for i := 0; i < nt; i++ {
		for j := 0; j < n; j++ {
			w, g := want.At(i, j), got.At(i, j)
			if math.IsNaN(w) {
				require.True(t, math.IsNaN(g), "%s on %s: want missing, got %v", want.Asset(j), want.Date(i), g)
				continue
			}
			require.Equal(t, math.Float64bits(w), math.Float64bits(g), "%s on %s: want %v, got %v", want.Asset(j), want.Date(i), w, g)
		}
	}
}

func TestConfigErrors(t *testing.T) {
	for _, tc := range []struct {
		name string
		cfg  Config
	}{
		{name: "negative assets", cfg: Config{Assets: -1}},
		{name: "more sectors than assets", cfg: Config{Assets: 5, Sectors: 6}},
		{name: "too few dates", cfg: Config{Dates: 19}},
		{name: "dof 2 has no variance", cfg: Config{SpecificDoF: 2}},
		{name: "dof NaN", cfg: Config{SpecificDoF: math.NaN()}},
		{name: "negative tracking error", cfg: Config{FundTrackingError: -0.01}},
		{name: "infinite tracking error", cfg: Config{FundTrackingError: math.Inf(1)}},
		{name: "listing share above half", cfg: Config{LateListings: 0.7}},
		{name: "delisting share NaN", cfg: Config{EarlyDelistings: math.NaN()}},
		{name: "stress past the end", cfg: Config{Dates: 100, StressStart: 90, StressLength: 20}},
		{name: "no room for halts", cfg: Config{Assets: 2, Sectors: 1, Dates: 20, Halts: 50}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Generate(&tc.cfg)
			require.ErrorIs(t, err, ErrConfig)
		})
	}
}

// demoNaiveCov computes B F Bᵀ + D element by element, a route
// independent of the Cholesky and Gram-matrix route of TrueCovarianceTo.
func demoNaiveCov(d *Market, i int) *mat.SymDense {
	b := d.ExposuresTo(nil)
	f := d.FactorCovarianceTo(nil, i)
	sv := d.SpecificVariancesTo(nil, i)
	n, k := b.Dims()
	s := mat.NewSymDense(n, nil)
	for x := 0; x < n; x++ {
		for y := x; y < n; y++ {
			var v float64
			for p := 0; p < k; p++ {
				for q := 0; q < k; q++ {
					v += b.At(x, p) * f.At(p, q) * b.At(y, q)
				}
			}
			if x == y {
				v += sv[x]
			}
			s.SetSym(x, y, v)
		}
	}
	return s
}

func TestTrueCovariance(t *testing.T) {
	d, err := Generate(&Config{Seed: 3, Assets: 40, Sectors: 5, Dates: 200})
	require.NoError(t, err)
	var dst mat.SymDense
	for _, i := range []int{0, 57, d.StressStart + 3, 199} {
		got := d.TrueCovarianceTo(&dst, i)
		want := demoNaiveCov(d, i)
		require.True(t, mat.EqualApprox(want, got, 1e-12), "row %d", i)
		var ch mat.Cholesky
		require.True(t, ch.Factorize(got), "row %d is not positive definite", i)
	}
	// A reused destination gives the same answer as a fresh one.
	require.True(t, mat.Equal(d.TrueCovarianceTo(nil, 57), d.TrueCovarianceTo(&dst, 57)))
	// Outputs are copies: changing them leaves the truth alone.
	b := d.ExposuresTo(nil)
	b.Set(0, 0, 99)
	require.NotEqual(t, 99.0, d.ExposuresTo(nil).At(0, 0))

	require.PanicsWithValue(t, mat.ErrShape, func() { d.TrueCovarianceTo(mat.NewSymDense(3, nil), 0) })
	require.PanicsWithValue(t, mat.ErrShape, func() { d.FactorCovarianceTo(mat.NewSymDense(3, nil), 0) })
	require.PanicsWithValue(t, mat.ErrShape, func() { d.SpecificVariancesTo(make([]float64, 3), 0) })
	require.PanicsWithValue(t, mat.ErrShape, func() { d.ExposuresTo(mat.NewDense(3, 3, nil)) })
	require.PanicsWithValue(t, mat.ErrRowAccess, func() { d.TrueCovarianceTo(nil, 200) })
	require.PanicsWithValue(t, mat.ErrRowAccess, func() { d.FactorCovarianceTo(nil, -1) })
	require.PanicsWithValue(t, mat.ErrRowAccess, func() { d.SpecificVariancesTo(nil, 200) })
}

// TestDemoPanelFromTruth rebuilds the panel from the truth: B·f + e rounded to
// 1e-7 on listed cells, NaN elsewhere, and the events written over it.
func TestPanelFromTruth(t *testing.T) {
	d, err := Generate(&Config{Seed: 11, Assets: 80, Sectors: 6, Dates: 400, Halts: 12, StaleRuns: 3, Outliers: 4})
	require.NoError(t, err)
	b, f, e := d.ExposuresTo(nil), d.FactorReturnsTo(nil), d.SpecificReturnsTo(nil)
	nt, n := d.Panel.Dims()
	_, k := b.Dims()
	event := map[[2]int]Event{}
	for _, ev := range d.Events {
		for i := ev.Start; i < ev.Start+ev.Len; i++ {
			event[[2]int{i, ev.Column}] = ev
		}
	}
	truth := d.TrueReturnsTo(nil)
	for i := 0; i < nt; i++ {
		for j := 0; j < n; j++ {
			r := e.At(i, j)
			for q := 0; q < k; q++ {
				r += b.At(j, q) * f.At(i, q)
			}
			require.InDelta(t, r, truth.At(i, j), 1e-15)
			got := d.Panel.At(i, j)
			sp := d.Spans[j]
			ev, hit := event[[2]int{i, j}]
			switch {
			case i < sp.First || i > sp.Last:
				require.True(t, math.IsNaN(got))
			case hit && ev.Kind == Halt:
				require.True(t, math.IsNaN(got))
			case hit:
				require.Equal(t, ev.Value, got)
			default:
				require.Equal(t, math.Round(truth.At(i, j)*1e7)/1e7, got)
			}
		}
	}
}

func TestSpansAndEvents(t *testing.T) {
	d, err := bundledDemo()
	require.NoError(t, err)
	nt, n := d.Panel.Dims()
	late, early := 0, 0
	for _, sp := range d.Spans {
		if sp.First > 0 {
			late++
			require.GreaterOrEqual(t, sp.First, nt/20)
			require.LessOrEqual(t, sp.First, 3*nt/4)
		}
		if sp.Last < nt-1 {
			early++
			require.GreaterOrEqual(t, sp.Last, nt/4)
			require.LessOrEqual(t, sp.Last, 19*nt/20)
		}
		require.False(t, sp.First > 0 && sp.Last < nt-1, "listing and delisting sets are disjoint")
	}
	require.Equal(t, 40, late)  // round(0.08 · 500)
	require.Equal(t, 30, early) // round(0.06 · 500)

	count := map[EventKind]int{}
	byColumn := map[int][]Event{}
	for _, ev := range d.Events {
		count[ev.Kind]++
		byColumn[ev.Column] = append(byColumn[ev.Column], ev)
		sp := d.Spans[ev.Column]
		require.Greater(t, ev.Start, sp.First, "%+v", ev)
		require.Less(t, ev.Start+ev.Len-1, sp.Last, "%+v", ev)
		switch ev.Kind {
		case Halt:
			require.True(t, ev.Len >= 1 && ev.Len <= 8)
		case Stale:
			require.True(t, ev.Len >= 5 && ev.Len <= 15)
			require.Equal(t, 0.0, ev.Value)
		case Outlier:
			require.Equal(t, 1, ev.Len)
			require.Greater(t, math.Abs(ev.Value), 0.25-1e-12)
			require.Greater(t, ev.Value, -1.0)
		}
	}
	require.Equal(t, map[EventKind]int{Halt: 30, Stale: 4, Outlier: 6}, count)
	require.Equal(t, 1.25, d.Events[slices.IndexFunc(d.Events, func(e Event) bool { return e.Value > 1 })].Value)
	for _, evs := range byColumn {
		for a := 1; a < len(evs); a++ {
			require.Greater(t, evs[a].Start, evs[a-1].Start+evs[a-1].Len, "events touch: %+v", evs)
		}
	}

	// The panel's own coverage agrees with the spans and the halts.
	cov := d.Panel.Coverage()
	for j, c := range cov {
		sp := d.Spans[j]
		require.Equal(t, d.Panel.Date(sp.First), c.First)
		require.Equal(t, d.Panel.Date(sp.Last), c.Last)
		halted, longest := 0, 0
		for _, ev := range byColumn[j] {
			if ev.Kind == Halt {
				halted += ev.Len
				longest = max(longest, ev.Len)
			}
		}
		require.Equal(t, sp.Last-sp.First+1-halted, c.Count, d.Panel.Asset(j))
		require.Equal(t, longest, c.LongestGap, d.Panel.Asset(j))
	}
	_ = n
}

func TestStationaryIsComplete(t *testing.T) {
	d, err := Generate(&Config{Seed: 1, Assets: 30, Sectors: 3, Dates: 100, Stationary: true})
	require.NoError(t, err)
	require.Empty(t, d.Events)
	require.Equal(t, d.StressStart, d.StressEnd)
	nt, n := d.Panel.Dims()
	for i := 0; i < nt; i++ {
		for j := 0; j < n; j++ {
			require.False(t, math.IsNaN(d.Panel.At(i, j)))
		}
	}
	require.True(t, mat.Equal(d.TrueCovarianceTo(nil, 0), d.TrueCovarianceTo(nil, nt-1)))
}

// demoSampleCov returns the sample covariance of x with the 1/T divisor.
func demoSampleCov(x *mat.Dense) *mat.SymDense {
	nt, n := x.Dims()
	c := mat.NewDense(nt, n, nil)
	c.Copy(x)
	for j := 0; j < n; j++ {
		var m float64
		for i := 0; i < nt; i++ {
			m += x.At(i, j)
		}
		m /= float64(nt)
		for i := 0; i < nt; i++ {
			c.Set(i, j, x.At(i, j)-m)
		}
	}
	s := mat.NewSymDense(n, nil)
	s.SymOuterK(1/float64(nt), c.T())
	return s
}

func demoRelFrobenius(a, b mat.Symmetric) float64 {
	var diff mat.Dense
	diff.Sub(a, b)
	return mat.Norm(&diff, 2) / mat.Norm(b, 2)
}

// TestDemoSampleCovarianceConverges checks that the sample covariance of a
// long stationary simulation converges to the true covariance at the rate
// 1/√T of the central limit theorem (the Student-t specific returns with 5
// degrees of freedom have finite fourth moments): sixteen times the dates
// should divide the Frobenius error by about four.
func TestSampleCovarianceConverges(t *testing.T) {
	lengths := []int{1000, 16000}
	if testing.Short() {
		lengths = []int{500, 8000}
	}
	errs := make([]float64, len(lengths))
	const seeds = 6
	for k, nt := range lengths {
		for s := range seeds {
			d, err := Generate(&Config{Seed: uint64(100 + s), Assets: 25, Sectors: 3, Dates: nt, Stationary: true})
			require.NoError(t, err)
			sample := demoSampleCov(d.TrueReturnsTo(nil))
			errs[k] += demoRelFrobenius(sample, d.TrueCovarianceTo(nil, 0)) / seeds
		}
	}
	ratio := errs[1] / errs[0]
	t.Logf("relative Frobenius errors %v, ratio %.3f (1/√16 = 0.25)", errs, ratio)
	require.InDelta(t, 0.25, ratio, 0.08)
	require.Less(t, errs[1], 0.1)
}

// TestDemoConditionalCovariance checks that TrueCovarianceTo is the
// covariance each row was drawn from, not just the average one: returns
// standardised by the true conditional volatility have unit variance both on
// calm and on turbulent rows (the bias statistic of common practice, no
// source), while the same returns standardised by the average variance do not.
func TestConditionalCovariance(t *testing.T) {
	nt := 20000
	if testing.Short() {
		nt = 8000
	}
	d, err := Generate(&Config{Seed: 5, Assets: 12, Sectors: 2, Dates: nt, StressLength: -1,
		LateListings: -1, EarlyDelistings: -1, Halts: -1, StaleRuns: -1, Outliers: -1})
	require.NoError(t, err)
	r := d.TrueReturnsTo(nil)
	_, n := r.Dims()
	w := make([]float64, n)
	for j := range w {
		w[j] = 1 / float64(n)
	}
	pv := make([]float64, nt) // true conditional variance of the equal-weight portfolio
	pr := make([]float64, nt)
	var cov mat.SymDense
	for i := 0; i < nt; i++ {
		d.TrueCovarianceTo(&cov, i)
		pv[i] = mat.Inner(mat.NewVecDense(n, w), &cov, mat.NewVecDense(n, w))
		pr[i] = mat.Dot(mat.NewVecDense(n, w), mat.NewVecDense(n, r.RawRowView(i)))
	}
	order := make([]int, nt)
	for i := range order {
		order[i] = i
	}
	sort.Slice(order, func(a, b int) bool { return pv[order[a]] < pv[order[b]] })
	var avg float64
	for _, v := range pv {
		avg += v / float64(nt)
	}
	half := func(rows []int, v func(i int) float64) float64 {
		var s float64
		for _, i := range rows {
			s += pr[i] * pr[i] / v(i)
		}
		return s / float64(len(rows))
	}
	calm, turbulent := order[:nt/2], order[nt/2:]
	cond := func(i int) float64 { return pv[i] }
	flat := func(int) float64 { return avg }
	band := 4 * math.Sqrt(2/float64(nt/2)) // about four standard errors of a normal variance ratio
	require.InDelta(t, 1, half(calm, cond), 2*band)
	require.InDelta(t, 1, half(turbulent, cond), 2*band)
	// Volatility clustering is there to be found: the average variance
	// understates turbulent rows and overstates calm ones.
	require.Greater(t, half(turbulent, flat), 1.15)
	require.Less(t, half(calm, flat), 0.85)
	require.Greater(t, pv[order[nt-1]]/pv[order[0]], 3.0)
}

// TestDemoFactorVariance checks that the recorded factor variances are those
// of the simulated factor returns: f_ik² / F_i,kk averages 1 for every factor.
func TestFactorVariance(t *testing.T) {
	nt := 8000
	if testing.Short() {
		nt = 4000
	}
	d, err := Generate(&Config{Seed: 9, Assets: 20, Sectors: 3, Dates: nt})
	require.NoError(t, err)
	f := d.FactorReturnsTo(nil)
	_, k := f.Dims()
	ratio := make([]float64, k)
	cross := 0.0
	var fc mat.SymDense
	for i := 0; i < nt; i++ {
		d.FactorCovarianceTo(&fc, i)
		for q := 0; q < k; q++ {
			ratio[q] += f.At(i, q) * f.At(i, q) / fc.At(q, q) / float64(nt)
		}
		cross += f.At(i, 0) * f.At(i, 1) / math.Sqrt(fc.At(0, 0)*fc.At(1, 1)) / float64(nt)
	}
	// Normal factor shocks: the ratio's standard error is √(2/T).
	for q, v := range ratio {
		require.InDelta(t, 1, v, 5*math.Sqrt(2/float64(nt)), d.FactorNames[q])
	}
	require.InDelta(t, d.corr.At(0, 1), cross, 5/math.Sqrt(float64(nt)))
}

// TestDemoStress checks that the stress episode raises both volatility and
// the average correlation between assets.
func TestStress(t *testing.T) {
	d, err := Generate(&Config{Seed: 2, Assets: 60, Sectors: 5, Dates: 300})
	require.NoError(t, err)
	require.Equal(t, 180, d.StressStart) // 0.6 · 300
	require.Equal(t, 200, d.StressEnd)
	vol, corr := func(rows []int) (float64, float64) {
		var v, c float64
		var s mat.SymDense
		for _, i := range rows {
			d.TrueCovarianceTo(&s, i)
			n := s.SymmetricDim()
			for a := 0; a < n; a++ {
				v += math.Sqrt(s.At(a, a)) / float64(n*len(rows))
				for b := a + 1; b < n; b++ {
					c += s.At(a, b) / math.Sqrt(s.At(a, a)*s.At(b, b)) / float64(n*(n-1)/2*len(rows))
				}
			}
		}
		return v, c
	}, 0
	_ = corr
	var before, during []int
	for i := 150; i < 180; i++ {
		before = append(before, i)
	}
	for i := 180; i < 200; i++ {
		during = append(during, i)
	}
	vb, cb := vol(before)
	vs, cs := vol(during)
	t.Logf("before: vol %.4f corr %.3f; stress: vol %.4f corr %.3f", vb, cb, vs, cs)
	require.Greater(t, vs, 1.3*vb)
	require.Greater(t, cs, cb+0.1)
}

func TestBenchmark(t *testing.T) {
	d, err := bundledDemo()
	require.NoError(t, err)
	nt, _ := d.Panel.Dims()
	require.Equal(t, nt-1, d.HoldingsRow)
	var sum float64
	listed := 0
	for _, sp := range d.Spans {
		if sp.Last == nt-1 {
			listed++
		}
	}
	require.Len(t, d.Benchmark, listed)
	info := map[string]riskmodel.AssetInfo{}
	for _, a := range d.Assets {
		info[a.Asset] = a
	}
	var capSum float64
	for _, h := range d.Benchmark {
		capSum += info[h.Asset].MarketCap
	}
	for k, h := range d.Benchmark {
		sum += h.Weight
		j, ok := d.Panel.Column(h.Asset)
		require.True(t, ok)
		require.Equal(t, nt-1, d.Spans[j].Last, "benchmark holds only assets listed on the holdings date")
		require.InDelta(t, info[h.Asset].MarketCap/capSum, h.Weight, 1e-15)
		if k > 0 {
			require.Less(t, d.Benchmark[k-1].Asset, h.Asset)
		}
	}
	require.InDelta(t, 1, sum, 1e-12)
}

func TestSizeBuckets(t *testing.T) {
	d, err := bundledDemo()
	require.NoError(t, err)
	count := map[string]int{}
	lowest := map[string]float64{"large": math.Inf(1), "mid": math.Inf(1), "small": math.Inf(1)}
	highest := map[string]float64{}
	for _, a := range d.Assets {
		count[a.SizeBucket]++
		lowest[a.SizeBucket] = math.Min(lowest[a.SizeBucket], a.MarketCap)
		highest[a.SizeBucket] = math.Max(highest[a.SizeBucket], a.MarketCap)
		require.Greater(t, a.MarketCap, 0.0)
	}
	require.Equal(t, map[string]int{"large": 100, "mid": 150, "small": 250}, count)
	require.GreaterOrEqual(t, lowest["large"], highest["mid"])
	require.GreaterOrEqual(t, lowest["mid"], highest["small"])
}

// TestDemoFund checks the fund's tracking error with the dense true
// covariance, TE = √(P·aᵀΣa) with a = fund − benchmark and P = 252 periods a
// year (common practice, no source), a route independent of the factor-form
// calibration inside the generator.
func TestFund(t *testing.T) {
	for _, tc := range []struct {
		name string
		cfg  *Config
		want float64
		tol  float64
	}{
		{name: "demo", cfg: nil, want: 0.03, tol: 1e-9},
		{name: "five percent", cfg: &Config{Seed: 4, Assets: 200, Sectors: 8, Dates: 60, FundTrackingError: 0.05}, want: 0.05, tol: 1e-9},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Generate(tc.cfg)
			require.NoError(t, err)
			var sum float64
			for _, h := range d.Fund {
				require.Greater(t, h.Weight, 0.0)
				sum += h.Weight
			}
			require.InDelta(t, 1, sum, 1e-12)
			fw, err := d.Weights(d.Fund)
			require.NoError(t, err)
			bw, err := d.Weights(d.Benchmark)
			require.NoError(t, err)
			a := make([]float64, len(fw))
			for j := range a {
				a[j] = fw[j] - bw[j]
				if bw[j] == 0 {
					require.Zero(t, fw[j], "the fund holds only benchmark names")
				}
			}
			s := d.TrueCovarianceTo(nil, d.HoldingsRow)
			av := mat.NewVecDense(len(a), a)
			te := math.Sqrt(252 * mat.Inner(av, s, av))
			require.InDelta(t, tc.want, te, tc.tol)
			require.Len(t, d.Fund, len(d.Benchmark), "the enhanced index keeps every benchmark name")
			var moved float64
			for _, v := range a {
				moved += math.Abs(v) / 2
			}
			require.Greater(t, moved, 0.05, "the fund tilts away from the benchmark")
		})
	}
}

func TestWeightsErrors(t *testing.T) {
	d, err := Generate(&Config{Seed: 1, Assets: 10, Sectors: 2, Dates: 30})
	require.NoError(t, err)
	_, err = d.Weights([]riskmodel.Holding{{Asset: "ZZ9999", Weight: 1}})
	require.ErrorIs(t, err, riskmodel.ErrUnknownAsset)
	_, err = d.Weights([]riskmodel.Holding{{Asset: "QV0001", Weight: 0.5}, {Asset: "QV0001", Weight: 0.5}})
	require.ErrorIs(t, err, riskmodel.ErrDuplicate)
}

// TestUnitT checks the scaled Student-t draws against scipy 1.10:
// scipy.stats.t.cdf(x*sqrt(nu/(nu-2)), nu) at x = −3, −1, 0.5, 2, and the
// unit variance.
func TestUnitT(t *testing.T) {
	for _, tc := range []struct {
		name string
		nu   float64
		cdf  []float64
		tol  float64
	}{
		{name: "nu 5", nu: 5, cdf: []float64{0.00586241, 0.126585, 0.72647284, 0.97534346}, tol: 0.004},
		{name: "nu 8", nu: 8, cdf: []float64{0.00425813, 0.14076846, 0.710208, 0.97513222}, tol: 0.004},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rs := rand.New(rand.NewPCG(1, 2))
			const draws = 200000
			xs := []float64{-3, -1, 0.5, 2}
			got := make([]float64, len(xs))
			var ss float64
			for range draws {
				v := unitT(rs, tc.nu)
				ss += v * v
				for q, x := range xs {
					if v <= x {
						got[q] += 1.0 / draws
					}
				}
			}
			require.InDeltaSlice(t, tc.cdf, got, tc.tol)
			require.InDelta(t, 1, ss/draws, 0.03)
		})
	}
}
