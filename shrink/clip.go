package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// ClipResult holds the diagnostics of ClipMarchenkoPastur.
type ClipResult struct {
	// Edge is the Marchenko–Pastur upper edge λ₊ = (1 + √(N/T))² of a
	// correlation matrix of pure noise (T is Kish's effective size with
	// weights).
	Edge float64
	// Signal is the number of eigenvalues of the sample correlation above
	// Edge, kept as they are; the others are replaced by their mean
	// NoiseMean, which keeps the trace.
	Signal    int
	NoiseMean float64
	// Condition is the condition number of the cleaned correlation matrix
	// before its diagonal is reset to one.
	Condition float64
}

// ClipMarchenkoPastur sets dst to the sample covariance whose correlation
// matrix has its noise eigenvalues clipped at the Marchenko–Pastur edge, and
// returns dst with its diagnostics:
//
//	C = D^{-1/2} S D^{-1/2} = Σ_k λ_k u_k u_kᵀ,   λ₊ = (1 + √(N/T))²,
//	λ̄ = (N − Σ_{λ_k > λ₊} λ_k) / (N − K),   K = #{λ_k > λ₊},
//	C' = λ̄ I + Σ_{λ_k > λ₊} (λ_k − λ̄) u_k u_kᵀ,
//	Σ = D^{1/2} diag(C')^{-1/2} C' diag(C')^{-1/2} D^{1/2},
//
// with S the divisor-T covariance of LedoitWolf (σ² = 1 for a correlation
// matrix) and weights entering S and, through Kish's effective size, the
// edge. The unit diagonal is restored after clipping, so the variances are
// the sample variances.
//
// Where N > T the eigenvalues come from the T×T Gram matrix of the
// standardised rows; no N×N matrix is eigen-decomposed (the N − T zero
// eigenvalues are noise). Errors: those of LedoitWolf, and a *DataError
// wrapping ErrZeroVariance for the first column with zero variance. Panics
// as LedoitWolf. Cost O(min(N,T)³ + T·N·min(N,T) + K·N²).
//
// References: Laloux, L., Cizeau, P., Bouchaud, J.-P. and Potters, M. (1999),
// "Noise dressing of financial correlation matrices", Phys. Rev. Lett.
// 83:1467–1470; Marchenko, V. A. and Pastur, L. A. (1967), "Distribution of
// eigenvalues for some sets of random matrices", Math. USSR-Sbornik 1:457–483.
func ClipMarchenkoPastur(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, ClipResult, error) {
	dense.CheckSym(dst, colsOf(x))
	s, err := newSample(x, w, 2)
	if err != nil {
		return dst, ClipResult{}, err
	}
	n := s.n
	sd := make([]float64, n)
	raw := s.y.RawMatrix()
	for t := 0; t < s.t; t++ {
		wt := s.weight(t)
		for j, v := range raw.Data[t*raw.Stride : t*raw.Stride+n] {
			sd[j] += wt * v * v
		}
	}
	varDiag := mat.NewSymDense(n, nil)
	for j := range sd {
		varDiag.SetSym(j, j, sd[j])
		sd[j] = math.Sqrt(sd[j])
	}
	if err := checkVariances(x, varDiag); err != nil {
		return dst, ClipResult{}, err
	}
	z := scaledRows(s.y, func(t int) float64 { return math.Sqrt(s.weight(t)) })
	zr := z.RawMatrix()
	for t := 0; t < s.t; t++ {
		row := zr.Data[t*zr.Stride : t*zr.Stride+n]
		for j := range row {
			row[j] /= sd[j]
		}
	}
	vals, u, err := rowSpectrum(z)
	if err != nil {
		return dst, ClipResult{}, err
	}
	res := ClipResult{Edge: mpEdge(n, 1/s.w2)}
	var kept []int
	var sum float64
	for k, l := range vals {
		if l > res.Edge {
			kept = append(kept, k)
			sum += l
		}
	}
	res.Signal = len(kept)
	res.NoiseMean = 0
	if res.Signal < n {
		res.NoiseMean = math.Max(0, (float64(n)-sum)/float64(n-res.Signal))
	}
	us := mat.NewDense(max(1, res.Signal), n, nil)
	d := make([]float64, max(1, res.Signal))
	for i, k := range kept {
		us.SetRow(i, u.RawRowView(k))
		d[i] = vals[k] - res.NoiseMean
	}
	// C' has the kept λ_k and λ̄ with multiplicity N − K.
	lo, hi := res.NoiseMean, res.NoiseMean
	if res.Signal > 0 {
		hi = vals[kept[len(kept)-1]]
		if res.Signal == n {
			lo = vals[kept[0]]
		}
	}
	res.Condition = condition([]float64{lo, hi})
	c := recompose(nil, us, d, res.NoiseMean)
	dst = dense.SizeSym(dst, n)
	unitDiag(dst, c)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			dst.SetSym(i, j, dst.At(i, j)*sd[i]*sd[j])
		}
	}
	return dst, res, nil
}

// MarchenkoPasturEdge returns λ₊ = σ²(1 + √(N/T))² for σ² = 1, the upper
// edge of the spectrum of the correlation matrix of N independent series of
// T observations as N, T → ∞ with N/T fixed. It panics if n or t is not
// positive.
//
// References: Marchenko and Pastur (1967); Laloux et al. (1999), eq. (2).
func MarchenkoPasturEdge(n, t int) float64 {
	if n <= 0 || t <= 0 {
		panic("shrink: MarchenkoPasturEdge needs positive sizes")
	}
	return mpEdge(n, float64(t))
}

func mpEdge(n int, t float64) float64 {
	r := 1 + math.Sqrt(float64(n)/t)
	return r * r
}
