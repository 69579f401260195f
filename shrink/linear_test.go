package shrink

import (
	"math"
	"runtime"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

type sklearnCase struct {
	Name      string      `json:"name"`
	X         [][]float64 `json:"x"`
	LWCov     [][]float64 `json:"lw_cov"`
	LWShrink  float64     `json:"lw_shrinkage"`
	LWBlock1  float64     `json:"lw_shrinkage_block1"`
	LWBlock3  float64     `json:"lw_shrinkage_block3"`
	OASCov    [][]float64 `json:"oas_cov"`
	OASShrink float64     `json:"oas_shrinkage"`
}

// TestLinearMatchesScikitLearn checks against scikit-learn 1.2.1:
// LedoitWolf(assume_centered=False).fit(x).covariance_ and .shrinkage_,
// ledoit_wolf(x, block_size=1 and 3)[1], and OAS().fit(x) (fixture made by
// testdata/shrink/linear_sklearn.py).
func TestLinearMatchesScikitLearn(t *testing.T) {
	var fx struct{ Cases []sklearnCase }
	loadJSON(t, "linear_sklearn.json", &fx)
	require.NotEmpty(t, fx.Cases)
	const tol = 1e-10
	for _, c := range fx.Cases {
		t.Run(c.Name, func(t *testing.T) {
			x := denseOf(c.X)
			cov, res, err := LedoitWolf(nil, x, nil)
			require.NoError(t, err)
			require.InDelta(t, c.LWShrink, res.Intensity, tol*math.Max(1, c.LWShrink))
			// The blocked sklearn runs give the same intensity: our
			// answer must not depend on how the products are blocked.
			require.InDelta(t, c.LWBlock1, res.Intensity, tol)
			require.InDelta(t, c.LWBlock3, res.Intensity, tol)
			requireSymEqual(t, c.LWCov, cov, tol)

			in, err := LedoitWolfIntensity(x, nil)
			require.NoError(t, err)
			require.InDelta(t, c.LWShrink, in.Intensity, tol)
			imp, ires, err := LedoitWolfImplicit(x, nil)
			require.NoError(t, err)
			require.InDelta(t, c.LWShrink, ires.Intensity, tol)
			requireSymEqual(t, c.LWCov, imp.DenseTo(nil), tol)

			ocov, ores, err := OAS(nil, x, nil)
			require.NoError(t, err)
			require.InDelta(t, c.OASShrink, ores.Intensity, tol)
			requireSymEqual(t, c.OASCov, ocov, tol)
			oin, err := OASIntensity(x, nil)
			require.NoError(t, err)
			require.InDelta(t, c.OASShrink, oin.Intensity, tol)
			oimp, oires, err := OASImplicit(x, nil)
			require.NoError(t, err)
			require.InDelta(t, c.OASShrink, oires.Intensity, tol)
			requireSymEqual(t, c.OASCov, oimp.DenseTo(nil), tol)
		})
	}
}

// TestIntensityRoutesAgree checks the two routes of the intensity functions:
// the T×T Gram route (taken when N > T) and the N×N route (N ≤ T) give the
// same intensities on tall and wide data, with and without weights.
func TestIntensityRoutesAgree(t *testing.T) {
	for _, tc := range []struct {
		name string
		t, n int
	}{{"tall", 40, 7}, {"wide", 9, 30}, {"square", 15, 15}} {
		t.Run(tc.name, func(t *testing.T) {
			x := randReturns(3, tc.t, tc.n)
			w := randWeights(4, tc.t)
			for _, wt := range [][]float64{nil, w} {
				s, err := newSample(x, wt, 2)
				require.NoError(t, err)
				cov := s.covTo(nil)
				dense := lwIntensity(s, cov.RawSymmetric(), frob2(cov), s.quadW2(cov))
				gram := lwFromGram(s, s.gram())
				require.InDelta(t, dense.Intensity, gram.Intensity, 1e-12)
				require.InDelta(t, dense.Mu, gram.Mu, 1e-12*dense.Mu)
				g := s.gram()
				var tr float64
				for i := 0; i < tc.n; i++ {
					tr += cov.At(i, i)
				}
				require.InDelta(t, oasIntensity(s, tr, frob2(cov)).Intensity, oasIntensity(s, g.trace, g.frob2).Intensity, 1e-12)
			}
		})
	}
}

// naiveLW follows Ledoit & Wolf (2004), section 3, lemmas 3.2–3.4, term by
// term with N×N matrices: m = tr(S)/p, d² = ‖S − mI‖², b̄² = Σ_t ω_t²‖y_t y_tᵀ
// − S‖² (the paper's (1/n²)Σ with equal weights), b² = min(b̄², d²).
func naiveLW(x *mat.Dense, w []float64) (*mat.SymDense, float64) {
	s, y, om := naiveCov(x, w)
	t, p := y.Dims()
	norm2 := func(a mat.Matrix) float64 { f := mat.Norm(a, 2); return f * f / float64(p) }
	m := mat.Trace(s) / float64(p)
	mi := mat.NewDiagDense(p, nil)
	for i := 0; i < p; i++ {
		mi.SetDiag(i, m)
	}
	var diff mat.Dense
	diff.Sub(s, mi)
	d2 := norm2(&diff)
	var b2 float64
	for k := 0; k < t; k++ {
		var o mat.Dense
		o.Outer(1, y.RowView(k), y.RowView(k))
		o.Sub(&o, s)
		b2 += om[k] * om[k] * norm2(&o)
	}
	b2 = math.Min(b2, d2)
	delta := b2 / d2
	out := mat.NewSymDense(p, nil)
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			v := (1 - delta) * s.At(i, j)
			if i == j {
				v += delta * m
			}
			out.SetSym(i, j, v)
		}
	}
	return out, delta
}

// TestLinearWeighted checks weighted runs against the naive weighted
// reference above (scikit-learn takes no weights), equal weights against the
// unweighted result, and the dense route against the Gram route.
func TestLinearWeighted(t *testing.T) {
	for _, tc := range []struct {
		name string
		t, n int
		tol  float64
	}{
		{"T>N", 40, 6, 1e-12},
		{"T<N", 9, 15, 1e-12},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := randReturns(3, tc.t, tc.n)
			w := randWeights(4, tc.t)
			want, wantDelta := naiveLW(x, w)
			got, res, err := LedoitWolf(nil, x, w)
			require.NoError(t, err)
			require.Greater(t, res.Intensity, 0.0)
			require.InDelta(t, wantDelta, res.Intensity, tc.tol)
			require.True(t, mat.EqualApprox(want, got, tc.tol*mat.Max(want)))
			imp, ires, err := LedoitWolfImplicit(x, w)
			require.NoError(t, err)
			require.InDelta(t, wantDelta, ires.Intensity, tc.tol)
			require.True(t, mat.EqualApprox(want, imp.DenseTo(nil), tc.tol*mat.Max(want)))

			eq := make([]float64, tc.t)
			for i := range eq {
				eq[i] = 2.5
			}
			u, ures, err := LedoitWolf(nil, x, nil)
			require.NoError(t, err)
			e, eres, err := LedoitWolf(nil, x, eq)
			require.NoError(t, err)
			require.InDelta(t, ures.Intensity, eres.Intensity, 1e-13)
			require.True(t, mat.EqualApprox(u, e, 1e-13*mat.Max(u)))
			_, uo, err := OAS(nil, x, nil)
			require.NoError(t, err)
			_, eo, err := OAS(nil, x, eq)
			require.NoError(t, err)
			require.InDelta(t, uo.Intensity, eo.Intensity, 1e-13)

			// OAS with weights: scikit-learn's formula with n = 1/Σω².
			s, _, om := naiveCov(x, w)
			var w2 float64
			for _, v := range om {
				w2 += v * v
			}
			p := float64(tc.n)
			mu := mat.Trace(s) / p
			f := mat.Norm(s, 2)
			alpha := f * f / (p * p)
			rho := math.Min(1, (alpha+mu*mu)/((1/w2+1)*(alpha-mu*mu/p)))
			_, wo, err := OAS(nil, x, w)
			require.NoError(t, err)
			require.InDelta(t, rho, wo.Intensity, tc.tol)
			_, wio, err := OASImplicit(x, w)
			require.NoError(t, err)
			require.InDelta(t, rho, wio.Intensity, tc.tol)
		})
	}
}

// TestLinearDeterministic: the dense kernel splits the product into blocks
// across cores; the output must be bit-identical for any GOMAXPROCS.
func TestLinearDeterministic(t *testing.T) {
	x := randReturns(5, 50, 400)
	prev := runtime.GOMAXPROCS(1)
	a, ra, err := LedoitWolf(nil, x, nil)
	runtime.GOMAXPROCS(prev)
	require.NoError(t, err)
	runtime.GOMAXPROCS(max(2, prev))
	b, rb, err := LedoitWolf(nil, x, nil)
	runtime.GOMAXPROCS(prev)
	require.NoError(t, err)
	require.Equal(t, ra, rb)
	require.True(t, mat.Equal(a, b))
}

func TestImplicitProducts(t *testing.T) {
	x := randReturns(8, 20, 35)
	w := randWeights(9, 20)
	imp, _, err := OASImplicit(x, w)
	require.NoError(t, err)
	d := imp.DenseTo(nil)
	v := make([]float64, 35)
	for i := range v {
		v[i] = math.Sin(float64(i))
	}
	var want mat.VecDense
	want.MulVec(d, mat.NewVecDense(35, v))
	got := imp.MulVecTo(nil, v)
	require.InDeltaSlice(t, want.RawVector().Data, got, 1e-14)
	require.InDelta(t, mat.Dot(&want, mat.NewVecDense(35, v)), imp.QuadForm(v), 1e-14)
	require.InDelta(t, d.At(3, 7), imp.At(3, 7), 1e-16)
	require.InDelta(t, d.At(4, 4), imp.At(4, 4), 1e-16)
	diag := imp.DiagTo(nil)
	for i := range diag {
		require.InDelta(t, d.At(i, i), diag[i], 1e-16)
	}
	r, c := imp.Dims()
	require.Equal(t, 35, r)
	require.Equal(t, 35, c)
	require.Equal(t, imp, imp.T())
	require.PanicsWithValue(t, mat.ErrShape, func() { imp.MulVecTo(nil, v[:3]) })
	require.PanicsWithValue(t, mat.ErrShape, func() { imp.QuadForm(v[:3]) })
	require.PanicsWithValue(t, mat.ErrShape, func() { imp.DenseTo(mat.NewSymDense(3, nil)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { imp.MulVecTo(make([]float64, 3), v) })
	require.PanicsWithValue(t, mat.ErrShape, func() { imp.DiagTo(make([]float64, 3)) })
	require.Equal(t, got, imp.MulVecTo([]float64{}, v), "an empty dst is allocated")
	require.Equal(t, diag, imp.DiagTo([]float64{}))
}
