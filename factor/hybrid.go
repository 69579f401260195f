package factor

import (
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/gonum/mat"
)

// HybridSettings configure the statistical factors of FitHybrid.
type HybridSettings struct {
	// K is the number of statistical factors. Required, at least 1.
	K int
	// Solver and Seed choose how the principal components are computed, as
	// in Settings.
	Solver Solver
	Seed   uint64
}

// FitHybrid builds the exposure model of FitExposure and adds K statistical
// factors, "stat1" … "statK", that explain what the market, sectors and
// styles leave in the specific returns U (rows First … T − 1):
//
//	U ≈ G·Vᵀ,   V = the loadings of Fit(U, K fixed, AssumeCentered)   (N×K, VᵀV = I),
//	g_t = argmin_g Σ_{i observed} (u_ti − v_iᵀg)²,   e_t = u_t − V·g_t,
//	B = [B_exposure, V],   F = ewma.Estimate([f_t, g_t]),   D from e as in FitExposure.
//
// The principal components come from Fit, with its missing-data imputation;
// the statistical factor returns g_t are then the least-squares fit of each
// date's observed specific returns on V (g_t = Vᵀu_t when no return is
// missing), so F covers the joint factor returns and the exposure factors'
// correlations with the statistical ones. The exposure factors' returns and
// Regression.Dates are those of FitExposure; Regression.FactorReturns gains
// the K columns g and Regression.SpecificReturns holds e. Info.Method is
// MethodHybrid.
//
// FitHybrid panics and fails as FitExposure does, and returns an error
// wrapping ErrSettings for K < 1, ErrTooManyFactors for K ≥ min(N, T − First)
// and the errors of Fit on the specific returns.
//
// Cost: FitExposure's plus Fit's on a (T − First)×N matrix with fixed K,
// plus O(T·N·K²) for g and e.
//
// References:
// Connor, G. and Korajczyk, R.A. (1986), "Performance measurement with the
// arbitrage pricing theory", J. Financial Economics 15(3):373–394.
func FitHybrid(x mat.Matrix, s ExposureSettings, h HybridSettings) (*Model, *Regression, error) {
	if h.K < 1 {
		return nil, nil, badSetting("hybrid K = %d must be at least 1", h.K)
	}
	p, err := newExposureSpec(x, s)
	if err != nil {
		return nil, nil, err
	}
	reg, b, err := p.regress(x)
	if err != nil {
		return nil, nil, err
	}
	u := mat.DenseCopyOf(reg.SpecificReturns.Slice(p.first, p.t, 0, p.n))
	stat, err := Fit(u, Settings{
		K: h.K, Solver: h.Solver, Seed: h.Seed, AssumeCentered: true,
		Covariance: s.Covariance, SpecificHalfLife: s.SpecificHalfLife, NoSpecificShrink: true,
	})
	if err != nil {
		return nil, nil, fmt.Errorf("factor: hybrid statistical factors: %w", err)
	}
	v := stat.LoadingsTo(nil)
	g, err := statReturns(u, v)
	if err != nil {
		return nil, nil, err
	}

	ke := p.k()
	k := ke + h.K
	joint := mat.NewDense(p.t, k, nil)
	joint.Slice(0, p.t, 0, ke).(*mat.Dense).Copy(reg.FactorReturns)
	for i := 0; i < p.first; i++ {
		for c := ke; c < k; c++ {
			joint.Set(i, c, math.NaN())
		}
	}
	joint.Slice(p.first, p.t, ke, k).(*mat.Dense).Copy(g)
	for c := 1; c <= h.K; c++ {
		reg.FactorNames = append(reg.FactorNames, "stat"+strconv.Itoa(c))
	}
	reg.FactorReturns = joint
	// e = U − G·Vᵀ on the observed cells; the NaN cells stay NaN.
	var fit mat.Dense
	fit.Mul(g, v.T())
	for i := p.first; i < p.t; i++ {
		row := reg.SpecificReturns.RawRowView(i)
		fr := fit.RawRowView(i - p.first)
		for j, e := range row {
			row[j] = e - fr[j]
		}
	}

	bh := mat.NewDense(p.n, k, nil)
	bh.Slice(0, p.n, 0, ke).(*mat.Dense).Copy(b)
	bh.Slice(0, p.n, ke, k).(*mat.Dense).Copy(v)
	reason := fmt.Sprintf("market, sectors and styles given by the caller, plus %d statistical factors (fixed by caller) of the specific returns", h.K)
	m, err := p.model(bh, reg, MethodHybrid, reason)
	if err != nil {
		return nil, nil, err
	}
	return m, reg, nil
}

// statReturns returns the T×K least-squares coefficients of each row of u
// (NaN missing) on the N×K loadings v, over the row's observed cells.
func statReturns(u, v *mat.Dense) (*mat.Dense, error) {
	t, _ := u.Dims()
	_, k := v.Dims()
	g := mat.NewDense(t, k, nil)
	gram := mat.NewSymDense(k, nil)
	rhs := mat.NewVecDense(k, nil)
	var ch mat.Cholesky
	var sol mat.VecDense
	for i := 0; i < t; i++ {
		gr := gram.RawSymmetric()
		rv := rhs.RawVector().Data
		clear(gr.Data)
		clear(rv)
		row := u.RawRowView(i)
		for j, e := range row {
			if math.IsNaN(e) {
				continue
			}
			vj := v.RawRowView(j)
			for a, va := range vj {
				rv[a] += va * e
				up := gr.Data[a*gr.Stride : a*gr.Stride+k]
				for b := a; b < k; b++ {
					up[b] += va * vj[b]
				}
			}
		}
		if !ch.Factorize(gram) {
			return nil, fmt.Errorf("%w: date %d of the specific returns: the statistical loadings of its observed assets are rank deficient", ErrSingular, i)
		}
		if err := ch.SolveVecTo(&sol, rhs); err != nil {
			return nil, fmt.Errorf("%w: date %d of the specific returns: %v", ErrSingular, i, err)
		}
		for a := 0; a < k; a++ {
			g.Set(i, a, sol.AtVec(a))
		}
	}
	return g, nil
}
