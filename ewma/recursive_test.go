package ewma

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// randomPanel returns T×N returns with a share of NaN; column 0 is never
// missing so that every pair keeps at least a few shared dates.
func randomPanel(rng *rand.Rand, t, n int, gap float64) *mat.Dense {
	x := mat.NewDense(t, n, nil)
	for i := 0; i < t; i++ {
		common := rng.NormFloat64()
		for j := 0; j < n; j++ {
			v := 0.01*(0.6*common+rng.NormFloat64()) + 0.001
			if j > 0 && rng.Float64() < gap {
				v = math.NaN()
			}
			x.Set(i, j, v)
		}
	}
	return x
}

// relClose checks |a−b| ≤ tol·max|want|, entry by entry.
func relClose(t *testing.T, want, got mat.Symmetric, tol float64, msg string) {
	t.Helper()
	requireSymClose(t, want, got, tol, msg)
}

// TestRecursiveEqualsBatch is the property of the issue: after each day the
// recursive state equals the batch estimate over the same window (the last
// min(days, Window) rows, Weights over that many rows) to 1e-12 relative,
// with random missing patterns and windows that drop their oldest day.
func TestRecursiveEqualsBatch(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, tc := range []struct {
		name   string
		window int
		days   int
		gap    float64
		opts   Options
		tol    float64
	}{
		{name: "unbounded, complete", window: 0, days: 60, opts: Options{}, tol: 1e-12},
		{name: "window 20, complete", window: 20, days: 70, opts: Options{}, tol: 1e-12},
		{name: "window 25, gaps", window: 25, days: 80, gap: 0.15, opts: Options{}, tol: 1e-12},
		{name: "window 25, gaps, demean, unbiased", window: 25, days: 80, gap: 0.15, opts: Options{Demean: true, Unbiased: true}, tol: 1e-12},
		{name: "window 30, gaps, complete case", window: 30, days: 90, gap: 0.05, opts: Options{CompleteCase: true, Demean: true}, tol: 1e-12},
		{name: "unbounded, gaps, demean", window: 0, days: 60, gap: 0.2, opts: Options{Demean: true}, tol: 1e-12},
	} {
		t.Run(tc.name, func(t *testing.T) {
			const n, h = 5, 8.0
			x := randomPanel(rng, tc.days, n, tc.gap)
			r, err := NewRecursive(n, RecursiveSettings{HalfLife: h, Window: tc.window, Options: tc.opts})
			require.NoError(t, err)
			v, err := NewRecursive(n, RecursiveSettings{HalfLife: h, Window: tc.window, VariancesOnly: true, Options: tc.opts})
			require.NoError(t, err)
			var got, want, gotC, wantC mat.SymDense
			checked := 0
			for day := 0; day < tc.days; day++ {
				require.NoError(t, r.Update(x.RawRowView(day)))
				require.NoError(t, v.Update(x.RawRowView(day)))
				lo := 0
				if tc.window > 0 {
					lo = max(0, day+1-tc.window)
				}
				win := x.Slice(lo, day+1, 0, n)
				w, err := Weights(nil, day+1-lo, h)
				require.NoError(t, err)
				_, _, berr := Covariance(&want, win, w, &tc.opts)
				_, _, rerr := r.CovarianceTo(&got)
				if berr != nil {
					// Too few observations early on: both must say so.
					require.Error(t, rerr, "day %d", day)
					continue
				}
				require.NoError(t, rerr, "day %d", day)
				relClose(t, &want, &got, tc.tol, "covariance")

				_, _, berr = Correlation(&wantC, win, w, &tc.opts)
				_, _, rerr = r.CorrelationTo(&gotC)
				require.Equal(t, berr == nil, rerr == nil)
				if berr == nil {
					relClose(t, &wantC, &gotC, tc.tol, "correlation")
				}

				wv, err := Variances(nil, win, w, &tc.opts)
				require.NoError(t, err)
				gv, err := v.VariancesTo(nil)
				require.NoError(t, err)
				require.InDeltaSlice(t, wv, gv, tc.tol*maxAbs(wv))
				gv2, err := r.VariancesTo(gv)
				require.NoError(t, err)
				require.InDeltaSlice(t, wv, gv2, tc.tol*maxAbs(wv))
				checked++
			}
			require.Greater(t, checked, tc.days/2)
			require.Equal(t, tc.days, r.Days())
		})
	}
}

// TestRecursiveCodec saves a state half-way, loads it into a new value and
// checks that both continue bit for bit.
func TestRecursiveCodec(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	for _, s := range []RecursiveSettings{
		{HalfLife: 10, Window: 15, Options: Options{Demean: true}},
		{HalfLife: 10, Window: 0},
		{HalfLife: 5, Window: 12, VariancesOnly: true, Options: Options{Unbiased: true, MinEffectiveObs: 2}},
	} {
		x := randomPanel(rng, 40, 4, 0.1)
		a, err := NewRecursive(4, s)
		require.NoError(t, err)
		for d := 0; d < 20; d++ {
			require.NoError(t, a.Update(x.RawRowView(d)))
		}
		blob, err := a.MarshalBinary()
		require.NoError(t, err)
		var b Recursive
		require.NoError(t, b.UnmarshalBinary(blob))
		for d := 20; d < 40; d++ {
			require.NoError(t, a.Update(x.RawRowView(d)))
			require.NoError(t, b.Update(x.RawRowView(d)))
		}
		va, err := a.VariancesTo(nil)
		require.NoError(t, err)
		vb, err := b.VariancesTo(nil)
		require.NoError(t, err)
		require.Equal(t, va, vb)
		if !s.VariancesOnly {
			var ca, cb mat.SymDense
			_, _, err = a.CovarianceTo(&ca)
			require.NoError(t, err)
			_, _, err = b.CovarianceTo(&cb)
			require.NoError(t, err)
			require.True(t, mat.Equal(&ca, &cb))
		}
		require.ErrorIs(t, b.UnmarshalBinary(blob[:len(blob)-8]), ErrState)
		require.ErrorIs(t, b.UnmarshalBinary([]byte("nonsense")), ErrState)
	}
}

func TestRecursiveMisuse(t *testing.T) {
	_, err := NewRecursive(3, RecursiveSettings{})
	require.ErrorIs(t, err, ErrHalfLife)
	r, err := NewRecursive(3, RecursiveSettings{HalfLife: 5, Window: 4})
	require.NoError(t, err)
	require.PanicsWithValue(t, mat.ErrShape, func() { _ = r.Update([]float64{1, 2}) })
	require.ErrorIs(t, r.Update([]float64{0, math.Inf(1), 0}), ErrNonFinite)
	require.Equal(t, 0, r.Days(), "a rejected day leaves the state unchanged")
	var c mat.SymDense
	_, _, err = r.CovarianceTo(&c)
	require.ErrorIs(t, err, ErrAllMissing)
	require.NoError(t, r.Update([]float64{0.01, 0.02, 0.03}))
	_, _, err = r.CovarianceTo(&c)
	require.ErrorIs(t, err, ErrTooFewObs)
	v, err := NewRecursive(3, RecursiveSettings{HalfLife: 5, VariancesOnly: true})
	require.NoError(t, err)
	require.PanicsWithValue(t, errVariancesOnly, func() { _, _, _ = v.CovarianceTo(&c) })
}

// TestRecursiveUpdateAllocs: the daily update must not allocate.
func TestRecursiveUpdateAllocs(t *testing.T) {
	r, err := NewRecursive(50, RecursiveSettings{HalfLife: 20, Window: 10, Options: Options{Demean: true}})
	require.NoError(t, err)
	x := make([]float64, 50)
	for i := range x {
		x[i] = 0.001 * float64(i%7)
	}
	x[3] = math.NaN()
	allocs := testing.AllocsPerRun(30, func() { _ = r.Update(x) })
	require.Zero(t, allocs)
}
