package shrink

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// naiveConstCorr follows Ledoit & Wolf (2004, "Honey"), appendix, equation by
// equation with loops over i, j, t. With weights ω every (1/T)·(1/T)Σ_t
// becomes Σ_t ω_t², which is the paper's expression for equal weights.
func naiveConstCorr(x *mat.Dense, w []float64) (*mat.SymDense, TargetResult) {
	s, y, om := naiveCov(x, w)
	t, n := y.Dims()
	var rbar float64
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if i != j {
				rbar += s.At(i, j) / math.Sqrt(s.At(i, i)*s.At(j, j))
			}
		}
	}
	rbar /= float64(n * (n - 1))
	f := func(i, j int) float64 {
		if i == j {
			return s.At(i, i)
		}
		return rbar * math.Sqrt(s.At(i, i)*s.At(j, j))
	}
	pi := func(i, j int) float64 {
		var v float64
		for k := 0; k < t; k++ {
			d := y.At(k, i)*y.At(k, j) - s.At(i, j)
			v += om[k] * om[k] * d * d
		}
		return v
	}
	theta := func(i, j int) float64 { // θ_ii,ij
		var v float64
		for k := 0; k < t; k++ {
			v += om[k] * om[k] * (y.At(k, i)*y.At(k, i) - s.At(i, i)) * (y.At(k, i)*y.At(k, j) - s.At(i, j))
		}
		return v
	}
	var r TargetResult
	r.MeanCorr = rbar
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			r.Pi += pi(i, j)
			d := f(i, j) - s.At(i, j)
			r.Gamma += d * d
			if i == j {
				r.Rho += pi(i, i)
				continue
			}
			r.Rho += rbar / 2 * (math.Sqrt(s.At(j, j)/s.At(i, i))*theta(i, j) + math.Sqrt(s.At(i, i)/s.At(j, j))*theta(j, i))
		}
	}
	r.Intensity = math.Max(0, math.Min(1, (r.Pi-r.Rho)/r.Gamma))
	return blendTarget(s, f, r.Intensity), r
}

func blendTarget(s *mat.SymDense, f func(i, j int) float64, d float64) *mat.SymDense {
	n := s.SymmetricDim()
	out := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			out.SetSym(i, j, d*f(i, j)+(1-d)*s.At(i, j))
		}
	}
	return out
}

// naiveSingleIndex follows Ledoit & Wolf (2003), appendix B: π̂_ij, and
// ρ̂_ij = (1/T)Σ_t r_ijt with r_ijt = (s_j0 s_00 y_it + s_i0 s_00 y_jt − s_i0
// s_j0 y_0t) y_0t y_it y_jt / s_00² − f_ij s_ij, loop by loop; equal weights.
func naiveSingleIndex(x *mat.Dense) (*mat.SymDense, TargetResult) {
	s, y, _ := naiveCov(x, nil)
	t, n := y.Dims()
	tf := float64(t)
	m := make([]float64, t)
	for k := range m {
		m[k] = mat.Sum(y.RowView(k)) / float64(n)
	}
	c := make([]float64, n)
	var s00 float64
	for k := 0; k < t; k++ {
		s00 += m[k] * m[k] / tf
		for i := 0; i < n; i++ {
			c[i] += y.At(k, i) * m[k] / tf
		}
	}
	f := func(i, j int) float64 {
		if i == j {
			return s.At(i, i)
		}
		return c[i] * c[j] / s00
	}
	var r TargetResult
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			var pij, rij float64
			for k := 0; k < t; k++ {
				yi, yj := y.At(k, i), y.At(k, j)
				d := yi*yj - s.At(i, j)
				pij += d * d / tf
				rij += ((c[j]*s00*yi+c[i]*s00*yj-c[i]*c[j]*m[k])*m[k]*yi*yj/(s00*s00) - f(i, j)*s.At(i, j)) / tf
			}
			r.Pi += pij / tf
			if i == j {
				r.Rho += pij / tf
			} else {
				r.Rho += rij / tf
			}
			d := f(i, j) - s.At(i, j)
			r.Gamma += d * d
		}
	}
	r.Intensity = math.Max(0, math.Min(1, (r.Pi-r.Rho)/r.Gamma))
	r.MarketVar = s00
	return blendTarget(s, f, r.Intensity), r
}

// naiveSingleIndexWeighted is the weighted definition of SingleIndex, by
// loops: ρ_ij = Σ_t ω_t² g_ijt (y_ti y_tj − s_ij), g the first-order change
// of c_i c_j / s_m.
func naiveSingleIndexWeighted(x *mat.Dense, w []float64) float64 {
	s, y, om := naiveCov(x, w)
	t, n := y.Dims()
	m := make([]float64, t)
	c := make([]float64, n)
	var sm float64
	for k := range m {
		m[k] = mat.Sum(y.RowView(k)) / float64(n)
		sm += om[k] * m[k] * m[k]
		for i := 0; i < n; i++ {
			c[i] += om[k] * y.At(k, i) * m[k]
		}
	}
	var pi, rho, gamma float64
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			fij := c[i] * c[j] / sm
			if i == j {
				fij = s.At(i, i)
			} else {
				gamma += (fij - s.At(i, j)) * (fij - s.At(i, j))
			}
			for k := 0; k < t; k++ {
				h := y.At(k, i)*y.At(k, j) - s.At(i, j)
				w2 := om[k] * om[k]
				pi += w2 * h * h
				if i == j {
					rho += w2 * h * h
					continue
				}
				g := (c[j]*y.At(k, i)*m[k]+c[i]*y.At(k, j)*m[k])/sm - c[i]*c[j]*m[k]*m[k]/(sm*sm) - c[i]*c[j]/sm
				rho += w2 * g * h
			}
		}
	}
	return math.Max(0, math.Min(1, (pi-rho)/gamma))
}

type targetCase struct {
	Name    string      `json:"name"`
	X       [][]float64 `json:"x"`
	CCCov   [][]float64 `json:"cc_cov"`
	CCDelta float64     `json:"cc_shrinkage"`
	CCPi    float64     `json:"cc_pi"`
	CCRho   float64     `json:"cc_rho"`
	CCGamma float64     `json:"cc_gamma"`
	SICov   [][]float64 `json:"si_cov"`
	SIDelta float64     `json:"si_shrinkage"`
	SIPi    float64     `json:"si_pi"`
	SIRho   float64     `json:"si_rho"`
	SIGamma float64     `json:"si_gamma"`
}

// TestTargetsMatchReferences checks ConstantCorrelation and SingleIndex
// against the numpy 1.24.2 script testdata/shrink/target_numpy.py (the
// papers' estimators by matrix products; π̂ and ρ̂ there are T times ours)
// and against the loop-by-loop references above.
func TestTargetsMatchReferences(t *testing.T) {
	var fx struct{ Cases []targetCase }
	loadJSON(t, "target_numpy.json", &fx)
	require.NotEmpty(t, fx.Cases)
	const tol = 1e-10
	for _, c := range fx.Cases {
		t.Run(c.Name, func(t *testing.T) {
			x := denseOf(c.X)
			tf := float64(len(c.X))
			cov, res, err := ConstantCorrelation(nil, x, nil)
			require.NoError(t, err)
			requireSymEqual(t, c.CCCov, cov, tol)
			if len(c.X[0]) == 2 {
				// Two assets: F = S, γ̂ is rounding noise and δ arbitrary.
				require.Less(t, res.Gamma, 1e-30)
			} else {
				require.InDelta(t, c.CCDelta, res.Intensity, tol)
				require.InDelta(t, c.CCPi, res.Pi*tf, tol*c.CCPi)
				require.InDelta(t, c.CCRho, res.Rho*tf, tol*c.CCPi)
				require.InDelta(t, c.CCGamma, res.Gamma, tol*c.CCGamma)
				ncov, nres := naiveConstCorr(x, nil)
				require.InDelta(t, nres.Intensity, res.Intensity, tol)
				require.True(t, mat.EqualApprox(ncov, cov, tol*mat.Max(ncov)))
			}

			scov, sres, err := SingleIndex(nil, x, nil)
			require.NoError(t, err)
			requireSymEqual(t, c.SICov, scov, tol)
			require.InDelta(t, c.SIDelta, sres.Intensity, tol)
			require.InDelta(t, c.SIPi, sres.Pi*tf, tol*c.SIPi)
			require.InDelta(t, c.SIRho, sres.Rho*tf, tol*c.SIPi)
			require.InDelta(t, c.SIGamma, sres.Gamma, tol*c.SIGamma)
			ncov, nres := naiveSingleIndex(x)
			require.InDelta(t, nres.Intensity, sres.Intensity, tol)
			require.InDelta(t, nres.MarketVar, sres.MarketVar, tol*nres.MarketVar)
			require.True(t, mat.EqualApprox(ncov, scov, tol*mat.Max(ncov)))
		})
	}
}

// TestTargetsWeighted checks weighted runs against the naive weighted
// definitions and equal weights against no weights.
func TestTargetsWeighted(t *testing.T) {
	x := randReturns(21, 30, 9)
	w := randWeights(22, 30)
	ncov, nres := naiveConstCorr(x, w)
	cov, res, err := ConstantCorrelation(nil, x, w)
	require.NoError(t, err)
	require.InDelta(t, nres.Intensity, res.Intensity, 1e-11)
	require.True(t, mat.EqualApprox(ncov, cov, 1e-11*mat.Max(ncov)))

	_, sres, err := SingleIndex(nil, x, w)
	require.NoError(t, err)
	require.InDelta(t, naiveSingleIndexWeighted(x, w), sres.Intensity, 1e-11)

	eq := make([]float64, 30)
	for i := range eq {
		eq[i] = 0.3
	}
	for _, f := range []func(*mat.SymDense, mat.Matrix, []float64) (*mat.SymDense, TargetResult, error){ConstantCorrelation, SingleIndex} {
		a, ra, err := f(nil, x, nil)
		require.NoError(t, err)
		b, rb, err := f(nil, x, eq)
		require.NoError(t, err)
		require.InDelta(t, ra.Intensity, rb.Intensity, 1e-12)
		require.True(t, mat.EqualApprox(a, b, 1e-13*mat.Max(a)))
	}
}
