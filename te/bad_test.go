package te

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

func TestBadWeights(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	n := 10
	m := randomModel(rng, n, 2)
	good := randomWeights(rng, n, n)
	with := func(i int, v float64) []float64 {
		w := append([]float64(nil), good...)
		w[i] = v
		return w
	}
	for _, cov := range []Covariance{m, m.dense()} {
		an, err := NewAnalyzer(cov)
		require.NoError(t, err)
		for _, c := range []struct {
			name  string
			p, b  []float64
			err   error
			field string
			index int
		}{
			{"NaN portfolio", with(3, math.NaN()), good, ErrNonFinite, "portfolio", 3},
			{"Inf benchmark", good, with(7, math.Inf(-1)), ErrNonFinite, "benchmark", 7},
			{"empty portfolio", make([]float64, n), good, ErrEmpty, "", 0},
		} {
			t.Run(c.name, func(t *testing.T) {
				_, err := an.Decompose(c.p, c.b)
				require.ErrorIs(t, err, c.err)
				_, err2 := an.TrackingError(c.p, c.b)
				require.ErrorIs(t, err2, c.err)
				var ie *InputError
				if c.field != "" {
					require.True(t, errors.As(err, &ie))
					require.Equal(t, c.field, ie.Field)
					require.Equal(t, c.index, ie.Index)
					require.Contains(t, err.Error(), c.field)
				}
			})
		}
		short := good[:n-1]
		require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = an.Decompose(short, good) })
		require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = an.Decompose(good, short) })
		require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = an.TrackingError(short, good) })
		require.PanicsWithValue(t, mat.ErrShape, func() { an.MulVecTo(nil, short) })
		require.PanicsWithValue(t, mat.ErrShape, func() { an.MulVecTo(make([]float64, 3), good) })
		d, err := an.Decompose(good, randomWeights(rng, n, n))
		require.NoError(t, err)
		require.PanicsWithValue(t, mat.ErrShape, func() { d.Groups(make([]string, n+1)) })
		require.Equal(t, an.MulVecTo(nil, good), an.MulVecTo([]float64{}, good), "an empty dst is allocated")
		gr := NewGrouping(randomLabels(rng, n, 3))
		require.Equal(t, d.GroupsTo(nil, gr), d.GroupsTo([]Group{}, gr))
		require.PanicsWithValue(t, mat.ErrShape, func() { d.GroupsTo(make([]Group, len(gr.Labels())+1), gr) },
			"a dst whose length is not the number of groups")
	}
}

func TestBadModel(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	base := func() *factorModel { return randomModel(rng, 5, 2) }
	cases := []struct {
		name  string
		cov   Covariance
		err   error
		field string
	}{
		{"NaN loading", func() Covariance { m := base(); m.b.Set(2, 1, math.NaN()); return m }(), ErrNonFinite, "loadings"},
		{"Inf factor covariance", func() Covariance { m := base(); m.f.SetSym(0, 1, math.Inf(1)); return m }(), ErrNonFinite, "factor covariance"},
		{"negative factor variance", func() Covariance { m := base(); m.f.SetSym(1, 1, -1e-4); return m }(), ErrNegative, "factor covariance"},
		{"negative specific variance", func() Covariance { m := base(); m.d[4] = -1e-6; return m }(), ErrNegative, "specific variances"},
		{"NaN specific variance", func() Covariance { m := base(); m.d[0] = math.NaN(); return m }(), ErrNonFinite, "specific variances"},
		{"NaN dense", func() Covariance { s := base().dense(); s.SetSym(1, 3, math.NaN()); return s }(), ErrNonFinite, "covariance"},
		{"negative dense diagonal", func() Covariance { s := base().dense(); s.SetSym(2, 2, -1); return s }(), ErrNegative, "covariance"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := NewAnalyzer(c.cov)
			require.ErrorIs(t, err, c.err)
			var ie *InputError
			require.True(t, errors.As(err, &ie))
			require.Equal(t, c.field, ie.Field)
		})
	}
	_, err := NewAnalyzer(&mat.SymDense{})
	require.ErrorIs(t, err, ErrEmpty)
}

// TestNotPSD: a matrix with a negative eigenvalue can give aᵀΣa < 0, which is
// reported rather than turned into a NaN tracking error.
func TestNotPSD(t *testing.T) {
	// Eigenvalues 1.5 and −0.5; a = (1, −1)/2 gives aᵀΣa = −0.5·0.5.
	s := mat.NewSymDense(2, []float64{0.5, 1, 1, 0.5})
	an, err := NewAnalyzer(s)
	require.NoError(t, err)
	_, err = an.Decompose([]float64{0.5, 0}, []float64{0, 0.5})
	require.ErrorIs(t, err, ErrNotPSD)
	_, err = an.TrackingError([]float64{0.5, 0}, []float64{0, 0.5})
	require.ErrorIs(t, err, ErrNotPSD)
}

func TestBand(t *testing.T) {
	cases := []struct {
		name   string
		band   Band
		te     float64
		status BandStatus
		limit  float64
		breach float64
		err    error
		tol    float64
	}{
		{name: "within", band: Band{0.01, 0.03}, te: 0.02, status: Within, tol: 0},
		{name: "at the floor", band: Band{0.01, 0.03}, te: 0.01, status: Within},
		{name: "at the ceiling", band: Band{0.01, 0.03}, te: 0.03, status: Within},
		{name: "below", band: Band{0.01, 0.03}, te: 0.004, status: Below, limit: 0.01, breach: 0.006, tol: 1e-17},
		{name: "above", band: Band{0.01, 0.03}, te: 0.045, status: Above, limit: 0.03, breach: 0.015, tol: 1e-17},
		{name: "no ceiling", band: Band{Lower: 0.01}, te: 5, status: Within},
		{name: "no floor", band: Band{Upper: 0.02}, te: 0, status: Within},
		{name: "ceiling only, broken", band: Band{Upper: 0.02}, te: 0.025, status: Above, limit: 0.02, breach: 0.005, tol: 1e-17},
		{name: "inverted", band: Band{0.03, 0.01}, te: 0.02, err: ErrBand},
		{name: "negative limit", band: Band{-0.01, 0.01}, te: 0.02, err: ErrBand},
		{name: "NaN limit", band: Band{0, math.NaN()}, te: 0.02, err: ErrBand},
		{name: "NaN te", band: Band{0.01, 0.03}, te: math.NaN(), err: ErrNonFinite},
		{name: "negative te", band: Band{0.01, 0.03}, te: -0.01, err: ErrNegative},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, err := c.band.Check(c.te)
			if c.err != nil {
				require.ErrorIs(t, err, c.err)
				return
			}
			require.NoError(t, err)
			require.Equal(t, c.status, got.Status, got.Status.String())
			require.Equal(t, c.limit, got.Limit)
			require.InDelta(t, c.breach, got.Breach, c.tol)
		})
	}
}

func TestRealizedBad(t *testing.T) {
	_, err := Realized([]float64{0.01}, nil)
	require.ErrorIs(t, err, ErrTooFewObs)
	_, err = Realized(nil, &ExPostOptions{ZeroMean: true})
	require.ErrorIs(t, err, ErrTooFewObs)
	e, err := Realized([]float64{0.01}, &ExPostOptions{ZeroMean: true})
	require.NoError(t, err)
	require.InDelta(t, 0.01, e.TE, 1e-18)
	_, err = Realized([]float64{0.01, math.Inf(1), 0}, nil)
	require.ErrorIs(t, err, ErrNonFinite)
	var ie *InputError
	require.True(t, errors.As(err, &ie))
	require.Equal(t, 1, ie.Index)
	// A constant series has no dispersion about its mean.
	e, err = Realized([]float64{0.002, 0.002, 0.002}, nil)
	require.NoError(t, err)
	require.Zero(t, e.TE)
	require.InDelta(t, 1.0, ExPost{TE: 0.02}.Ratio(0.02), 0)
}

func TestAnnualize(t *testing.T) {
	// 1 % per day over 252 trading days (common practice, no source):
	// 0.01·√252 = 0.158745...
	require.InDelta(t, 0.01*math.Sqrt(252), Annualize(0.01, 252), 1e-17)
	require.InDelta(t, 0.15874507866387544, Annualize(0.01, 252), 1e-15)
	require.Panics(t, func() { Annualize(0.01, 0) })
	require.Panics(t, func() { Annualize(0.01, math.NaN()) })
	require.Panics(t, func() { Annualize(0.01, math.Inf(1)) })
	d := &Decomposition{TE: 0.001, PortfolioRisk: 0.01, BenchmarkRisk: 0.011}
	a := d.Annualized(12)
	require.InDelta(t, 0.001*math.Sqrt(12), a.TE, 1e-17)
	require.InDelta(t, 0.011*math.Sqrt(12), a.BenchmarkRisk, 1e-17)
}
