package ewma

import (
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestPandasReference checks the batch estimators against pandas 1.5.3
// DataFrame.ewm(halflife=10, adjust=True|False) on the simulated data of
// testdata/ewma/make_fixture.py (80 dates, 4 assets; "gappy" has 10 NaN).
//
// Conventions: pandas always demeans (Options.Demean); its cov()/var()
// default bias=False is Options.Unbiased, bias=True is the package default;
// pandas' corr() uses biased moments, the pair's dates for the covariance
// and each asset's own dates for the variances, as Correlation does. The
// zero-mean moments are checked against the pandas ewm mean of x_i·x_j.
// adjust=False is reproduced with RecursionWeights on complete data only:
// with gaps pandas' adjust=False renormalises step by step, which is not a
// fixed weight vector, so no match is claimed there.
func TestPandasReference(t *testing.T) {
	f := loadFixture(t)
	full, gappy := matrixOf(f.Full), matrixOf(f.Gappy)
	rows, _ := full.Dims()
	wAdj, err := Weights(nil, rows, f.HalfLife)
	require.NoError(t, err)
	wRec, err := RecursionWeights(nil, rows, Decay(f.HalfLife))
	require.NoError(t, err)

	for _, tc := range []struct {
		name string
		x    *mat.Dense
		w    []float64
		ref  refSet
		tol  float64
	}{
		{name: "adjust=True complete", x: full, w: wAdj, ref: f.TrueFull, tol: 1e-10},
		{name: "adjust=True with NaN", x: gappy, w: wAdj, ref: f.TrueGappy, tol: 1e-10},
		{name: "adjust=False complete", x: full, w: wRec, ref: f.FalseFull, tol: 1e-10},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var got mat.SymDense
			_, _, err := Covariance(&got, tc.x, tc.w, &Options{Demean: true, Unbiased: true})
			require.NoError(t, err)
			// pandas 1.5.3: df.ewm(halflife=10, adjust=A).cov() (bias=False)
			requireSymClose(t, symOf(tc.ref.CovUnbiased), &got, tc.tol, "cov bias=False")

			_, _, err = Covariance(&got, tc.x, tc.w, &Options{Demean: true})
			require.NoError(t, err)
			// pandas 1.5.3: df.ewm(halflife=10, adjust=A).cov(bias=True)
			requireSymClose(t, symOf(tc.ref.CovBiased), &got, tc.tol, "cov bias=True")

			_, rep, err := Correlation(&got, tc.x, tc.w, &Options{Demean: true})
			require.NoError(t, err)
			require.Nil(t, rep.Repair, "the pandas correlation here is PSD, nothing to repair")
			// pandas 1.5.3: df.ewm(halflife=10, adjust=A).corr()
			requireSymClose(t, symOf(tc.ref.Corr), &got, tc.tol, "corr")

			_, _, err = Covariance(&got, tc.x, tc.w, nil)
			require.NoError(t, err)
			// pandas 1.5.3: (df[i]*df[j]).ewm(halflife=10, adjust=A).mean()
			requireSymClose(t, symOf(tc.ref.ZeroMean), &got, tc.tol, "zero mean")

			v, err := Variances(nil, tc.x, tc.w, &Options{Demean: true, Unbiased: true})
			require.NoError(t, err)
			// pandas 1.5.3: df.ewm(halflife=10, adjust=A).var()
			require.InDeltaSlice(t, tc.ref.VarUnbiased, v, tc.tol*maxAbs(tc.ref.VarUnbiased))

			v, err = Variances(v, tc.x, tc.w, &Options{Demean: true})
			require.NoError(t, err)
			// pandas 1.5.3: df.ewm(halflife=10, adjust=A).var(bias=True)
			require.InDeltaSlice(t, tc.ref.VarBiased, v, tc.tol*maxAbs(tc.ref.VarBiased))

			mu, err := Means(nil, tc.x, tc.w, nil)
			require.NoError(t, err)
			// pandas 1.5.3: df.ewm(halflife=10, adjust=A).mean()
			require.InDeltaSlice(t, tc.ref.Mean, mu, tc.tol*maxAbs(tc.ref.Mean))
		})
	}
}

func maxAbs(a []float64) float64 {
	m := 0.0
	for _, v := range a {
		if v < 0 {
			v = -v
		}
		if v > m {
			m = v
		}
	}
	return m
}

// TestStatsmodelsHAC checks NeweyWest with equal weights, zero mean and
// complete data against statsmodels 0.13.5
// sandwich_covariance.S_hac_simple(x, nlags=L), which is Γ_0 + Σ b_j(Γ_j+Γ_jᵀ)
// with unnormalised sums: it equals T times NeweyWest.
func TestStatsmodelsHAC(t *testing.T) {
	f := loadFixture(t)
	x := matrixOf(f.Full)
	rows, _ := x.Dims()
	for _, tc := range []struct {
		name string
		lags int
		want [][]float64
		tol  float64
	}{
		{name: "L=1", lags: 1, want: f.HAC["1"], tol: 1e-10},
		{name: "L=3", lags: 3, want: f.HAC["3"], tol: 1e-10},
		{name: "L=5", lags: 5, want: f.HAC["5"], tol: 1e-10},
		{name: "auto", lags: AutoLags, want: f.HACAuto, tol: 1e-10},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var got mat.SymDense
			_, rep, err := NeweyWest(&got, x, nil, tc.lags, nil)
			require.NoError(t, err)
			got.ScaleSym(float64(rows), &got)
			requireSymClose(t, symOf(tc.want), &got, tc.tol, tc.name)
			if tc.lags == AutoLags {
				// statsmodels' own rule, recorded in the fixture.
				require.Equal(t, f.HACAutoLags, rep.NeweyWestLags)
			}
		})
	}
}
