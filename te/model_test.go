package te

import (
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// factorModel is a test covariance in factor form Σ = B·F·Bᵀ + D, standing in
// for a factor model (te must not import one).
type factorModel struct {
	b *mat.Dense
	f *mat.SymDense
	d []float64
}

var _ Factored = (*factorModel)(nil)

func (m *factorModel) Dims() (int, int)  { n := len(m.d); return n, n }
func (m *factorModel) T() mat.Matrix     { return m }
func (m *factorModel) SymmetricDim() int { return len(m.d) }
func (m *factorModel) NumFactors() int   { _, k := m.b.Dims(); return k }
func (m *factorModel) At(i, j int) float64 {
	k := m.NumFactors()
	var s float64
	for p := 0; p < k; p++ {
		for q := 0; q < k; q++ {
			s += m.b.At(i, p) * m.f.At(p, q) * m.b.At(j, q)
		}
	}
	if i == j {
		s += m.d[i]
	}
	return s
}

func (m *factorModel) LoadingsTo(dst *mat.Dense) *mat.Dense {
	if dst == nil {
		dst = &mat.Dense{}
	}
	dst.CloneFrom(m.b)
	return dst
}

func (m *factorModel) FactorCovarianceTo(dst *mat.SymDense) *mat.SymDense {
	if dst == nil {
		dst = &mat.SymDense{}
	}
	k := m.f.SymmetricDim()
	if dst.IsEmpty() {
		dst.ReuseAsSym(k)
	}
	dst.CopySym(m.f)
	return dst
}

func (m *factorModel) SpecificVariancesTo(dst []float64) []float64 {
	if dst == nil {
		dst = make([]float64, len(m.d))
	}
	copy(dst, m.d)
	return dst
}

// dense returns Σ = B·F·Bᵀ + D as a *mat.SymDense, computed with gonum.
func (m *factorModel) dense() *mat.SymDense {
	n := len(m.d)
	var bf, bfb mat.Dense
	bf.Mul(m.b, m.f)
	bfb.Mul(&bf, m.b.T())
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := (bfb.At(i, j) + bfb.At(j, i)) / 2
			if i == j {
				v += m.d[i]
			}
			s.SetSym(i, j, v)
		}
	}
	return s
}

// randomModel returns a simulated factor model with daily-return scales: a
// market-like first factor and K−1 style factors with correlated returns.
func randomModel(rng *rand.Rand, n, k int) *factorModel {
	b := mat.NewDense(n, k, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < k; j++ {
			v := rng.NormFloat64() * 0.5
			if j == 0 {
				v = 1 + 0.3*rng.NormFloat64()
			}
			b.Set(i, j, v)
		}
	}
	l := mat.NewDense(k, k, nil)
	for i := 0; i < k; i++ {
		for j := 0; j < k; j++ {
			l.Set(i, j, 0.004*rng.NormFloat64())
		}
	}
	f := mat.NewSymDense(k, nil)
	f.SymOuterK(1, l)
	for i := 0; i < k; i++ {
		f.SetSym(i, i, f.At(i, i)+1e-5)
	}
	d := make([]float64, n)
	for i := range d {
		d[i] = 1e-4 + 4e-4*rng.Float64()
	}
	return &factorModel{b: b, f: f, d: d}
}

// randomWeights returns long-only weights summing to 1 on held random assets.
func randomWeights(rng *rand.Rand, n, held int) []float64 {
	w := make([]float64, n)
	var s float64
	for _, i := range rng.Perm(n)[:held] {
		w[i] = 0.2 + rng.Float64()
		s += w[i]
	}
	for i := range w {
		w[i] /= s
	}
	return w
}

// randomLabels assigns each asset one of g labels.
func randomLabels(rng *rand.Rand, n, g int) []string {
	names := []string{"Ash", "Birch", "Cedar", "Elm", "Fir", "Hazel", "Larch", "Maple", "Oak", "Pine", "Rowan", "Yew"}
	l := make([]string, n)
	for i := range l {
		l[i] = names[rng.IntN(g)]
	}
	return l
}

// plainCov hides the raw storage of a *mat.SymDense, to exercise the At path.
type plainCov struct{ s *mat.SymDense }

func (c plainCov) Dims() (int, int)    { return c.s.Dims() }
func (c plainCov) At(i, j int) float64 { return c.s.At(i, j) }
func (c plainCov) T() mat.Matrix       { return c }
func (c plainCov) SymmetricDim() int   { return c.s.SymmetricDim() }
