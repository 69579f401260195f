package evaluate

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/internal/dense"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// The intervals against scipy 1.10.1 and statsmodels 0.13.5: the fixture
// testdata/evaluate/intervals.json was written by intervals.py beside it with
// scipy.stats.chi2.ppf and
// statsmodels.stats.proportion.proportion_confint(k, n, alpha=0.05, method="wilson").
func TestEvaluateIntervalsReference(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "evaluate", "intervals.json"))
	require.NoError(t, err)
	var fx struct {
		Volatility []struct {
			X                 []float64
			Std, Lower, Upper float64
		}
		Share []struct {
			K, N         int
			Lower, Upper float64
		}
	}
	require.NoError(t, json.Unmarshal(raw, &fx))
	require.NotEmpty(t, fx.Volatility)
	require.NotEmpty(t, fx.Share)
	const tol = 1e-9
	for _, c := range fx.Volatility {
		iv := volInterval(c.X)
		require.InDelta(t, c.Std, iv.Value, tol*c.Std, "std of %d values", len(c.X))
		require.InDelta(t, c.Lower, iv.Lower, tol*c.Std, "lower, %d values", len(c.X))
		require.InDelta(t, c.Upper, iv.Upper, tol*c.Std, "upper, %d values", len(c.X))
	}
	for _, c := range fx.Share {
		iv := shareInterval(c.K, c.N)
		require.InDelta(t, float64(c.K)/float64(c.N), iv.Value, 1e-15)
		require.InDelta(t, c.Lower, iv.Lower, 1e-12, "%d of %d", c.K, c.N)
		require.InDelta(t, c.Upper, iv.Upper, 1e-12, "%d of %d", c.K, c.N)
	}
	require.True(t, math.IsNaN(shareInterval(0, 0).Value))
	require.True(t, math.IsNaN(volInterval([]float64{1}).Value))
}

// The band of the bias statistic is 1 ± √(2/T) (common practice, no source):
// for T = 200, 1 ± 0.1.
func TestEvaluateBiasOfBand(t *testing.T) {
	z := make([]float64, 200)
	for i := range z {
		z[i] = 1.1 * math.Sin(float64(i)) // any series; the band depends on T only
	}
	b := biasOf(z)
	require.Equal(t, 200, b.Observations)
	require.InDelta(t, 0.9, b.Lower, 1e-15)
	require.InDelta(t, 1.1, b.Upper, 1e-15)
	require.InDelta(t, evalStd(z), b.Value, 0)
	require.Equal(t, b.Value >= 0.9 && b.Value <= 1.1, b.Inside)
}

// Properties of the losses, from their definitions (Ledoit & Wolf 2004,
// J. Multivariate Analysis 88(2), Section 2; Ledoit & Wolf 2017, RFS
// 30(12), Section 3): the Frobenius loss is ‖Σ̂ − Σ‖²_F/N, zero at Σ̂ = Σ;
// the minimum-variance loss is zero for any multiple of Σ (it is scale free)
// and positive otherwise; the PRIAL of the sample against itself is 0 and of
// a perfect forecast 100.
func TestEvaluateLosses(t *testing.T) {
	truth := mat.NewSymDense(3, []float64{4, 1, 0.5, 1, 3, 0.2, 0.5, 0.2, 2})
	est := mat.NewSymDense(3, []float64{3, 0.5, 0, 0.5, 3, 0, 0, 0, 3})
	var d mat.Dense
	d.Sub(est, truth)
	want := mat.Norm(&d, 2) * mat.Norm(&d, 2) / 3
	require.InDelta(t, want, frobeniusLoss(est, truth), 1e-12)
	require.Zero(t, frobeniusLoss(truth, truth))

	_, tinv := denseAndInverse(&riskmodel.Model{Dense: truth})
	require.NotNil(t, tinv)
	tr := mat.Trace(tinv)
	require.InDelta(t, 0, mvLoss(tinv, truth, tr), 1e-12)
	var scaled mat.SymDense
	scaled.ScaleSym(2.5, truth)
	_, sinv := denseAndInverse(&riskmodel.Model{Dense: &scaled})
	require.InDelta(t, 0, mvLoss(sinv, truth, tr), 1e-12)
	_, einv := denseAndInverse(&riskmodel.Model{Dense: est})
	require.Greater(t, mvLoss(einv, truth, tr), 1e-3)

	require.Zero(t, prial(2, 2))
	require.Equal(t, 100.0, prial(2, 0))
	require.Negative(t, prial(2, 3))

	singular := mat.NewSymDense(2, []float64{1, 1, 1, 1})
	_, inv := denseAndInverse(&riskmodel.Model{Dense: singular})
	require.Nil(t, inv)
}

// The reference computations of the minimum-variance loss: the explicit
// inverse (gonum) and the formula term by term.

// mvLoss returns the minimum-variance loss of Ledoit & Wolf (2017),
//
//	L_MV(Σ̂, Σ) = [tr(Σ̂⁻¹ Σ Σ̂⁻¹)/N] / [tr(Σ̂⁻¹)/N]²  −  1 / [tr(Σ⁻¹)/N],
//
// the excess true variance of a minimum-variance portfolio built from Σ̂
// over the one built from Σ, averaged over the linear constraint, so it is
// zero when Σ̂ is proportional to Σ and positive otherwise. inv is Σ̂⁻¹ and
// trueInvTrace is tr(Σ⁻¹). Cost O(N³) (one N×N product).
//
// References: Ledoit, O. & Wolf, M. (2017), "Nonlinear shrinkage of the
// covariance matrix for portfolio selection: Markowitz meets Goldilocks",
// Review of Financial Studies 30(12):4349–4388, Section 3 (the loss; the
// equation number is from memory, not verified: their Definition 1).
func mvLoss(inv, truth *mat.SymDense, trueInvTrace float64) float64 {
	n := truth.SymmetricDim()
	// Full dense copies (gonum's), which the kernel reads in place.
	iv, tv := mat.DenseCopyOf(inv), mat.DenseCopyOf(truth)
	m := dense.Mul(nil, tv, iv) // ΣΣ̂⁻¹
	var num, tr float64
	for i := 0; i < n; i++ {
		ir := iv.RawRowView(i)
		tr += ir[i]
		// Σ_j (Σ̂⁻¹)_ij (ΣΣ̂⁻¹)_ji summed over i is tr(Σ̂⁻¹ΣΣ̂⁻¹); Σ̂⁻¹ is
		// symmetric, so (Σ̂⁻¹)_ij = (Σ̂⁻¹)_ji and row i of m pairs with row
		// i of Σ̂⁻¹ after transposing m: use column i of m.
		for j, v := range ir {
			num += v * m.At(j, i)
		}
	}
	nf := float64(n)
	return (num/nf)/((tr/nf)*(tr/nf)) - 1/(trueInvTrace/nf)
}

// denseAndInverse returns the model's covariance as a dense matrix and its
// inverse (nil when it is not positive definite). Cost O(N³).
func denseAndInverse(m *riskmodel.Model) (*mat.SymDense, *mat.SymDense) {
	if f := m.Factor; f != nil {
		return f.CovarianceTo(nil), f.InverseTo(nil)
	}
	var chol mat.Cholesky
	if !chol.Factorize(m.Dense) {
		return m.Dense, nil
	}
	inv := mat.NewSymDense(m.Dense.SymmetricDim(), nil)
	if err := chol.InverseTo(inv); err != nil {
		return m.Dense, nil
	}
	return m.Dense, inv
}

// The minimum-variance loss from the scoring's Cholesky factor (dense, by
// its inverse) and in factor form (Woodbury) equals the reference
// computation from gonum's explicit inverses to rounding: on a random
// positive definite matrix, a factor model and its dense form, against a
// truth in factor form with three factors and with none; and it is zero
// for the truth itself, dense or in factor form.
func TestMVLossOfMatchesReference(t *testing.T) {
	rs := rand.New(rand.NewPCG(11, 4))
	n, k := 40, 3
	fm := randomFactorModel(t, rs, n, k)
	diag := make([]float64, n)
	for i := range diag {
		diag[i] = 0.5 + rs.Float64()
	}
	specificOnly, err := factor.NewModel(nil, nil, diag, factor.Info{})
	require.NoError(t, err)
	for truthName, truthFM := range map[string]*factor.Model{"3 factors": randomFactorModel(t, rs, n, k), "no factor": specificOnly} {
		truth := truthFM.CovarianceTo(nil)
		_, tinv := denseAndInverse(&riskmodel.Model{Dense: truth})
		tr := mat.Trace(tinv)
		tf := newTruthFactor(truthFM)
		require.InDelta(t, tr, tf.invTrace, 1e-12*tr, truthName)
		for name, m := range map[string]*riskmodel.Model{
			"dense":           {Dense: randomSPD(rs, n, 0.05)},
			"factor":          {Factor: fm},
			"factor as dense": {Dense: fm.CovarianceTo(nil)},
		} {
			_, inv := denseAndInverse(m)
			want := mvLoss(inv, truth, tr)
			got := mvLossOf(newCovOp(m.Covariance()), tf)
			require.InDelta(t, want, got, 1e-12*math.Abs(want), "%s, %s", truthName, name)
			require.Positive(t, got, "%s, %s", truthName, name)
		}
		require.InDelta(t, 0, mvLossOf(newCovOp(truth), tf), 1e-12, truthName)
		require.InDelta(t, 0, mvLossOf(newCovOp(truthFM), tf), 1e-12, truthName)
	}
	// A forecast that is not positive definite: NaN.
	singular := mat.NewSymDense(2, []float64{1, 1, 1, 1})
	unit, err := factor.NewModel(nil, nil, []float64{1, 1}, factor.Info{})
	require.NoError(t, err)
	require.True(t, math.IsNaN(mvLossOf(newCovOp(singular), newTruthFactor(unit))))
}

// evalFullTo fills both triangles as gonum v0.17.0's mat.DenseCopyOf of a
// SymDense does, bit for bit, at sizes on and off its 64-wide blocks, and
// from a SymDense whose stride is wider than n.
func TestEvalFullTo(t *testing.T) {
	rs := rand.New(rand.NewPCG(8, 9))
	for _, n := range []int{1, 2, 63, 64, 65, 130} {
		s := randomSPD(rs, n, 0.1)
		want := mat.DenseCopyOf(s).RawMatrix().Data
		got := make([]float64, n*n)
		evalFullTo(got, s)
		require.Equal(t, want, got, "n=%d", n)
		wide := mat.NewSymDense(n+3, nil)
		wide.CopySym(s)
		view := wide.SliceSym(0, n).(*mat.SymDense)
		clear(got)
		evalFullTo(got, view)
		require.Equal(t, want, got, "n=%d, stride %d", n, n+3)
	}
}
