package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Implicit is a covariance estimate held as a low-rank part plus a diagonal,
//
//	Σ = ZᵀZ + diag(d),
//
// where Z is a T×N matrix built from the data (the centred, weighted rows,
// scaled by the shrinkage). It never forms the N×N matrix: MulVecTo and
// QuadForm cost O(N·T). It satisfies mat.Symmetric, but At computes one
// entry in O(T) and is slow; use DenseTo for the whole matrix.
type Implicit struct {
	z *mat.Dense // T×N
	d []float64  // length N
}

// LedoitWolfImplicit returns the estimate of LedoitWolf in implicit form,
// Z = √(1−δ)·diag(√ω)·Y and d = δμ, with its diagnostics. The intensity
// comes from the T×T Gram matrix of the centred rows and their sums of
// squares (LedoitWolfIntensity); XᵀX is never formed. Panics and errors are
// those of LedoitWolf. Cost O(T²·N) time and O(T·N) memory.
//
// References: as for LedoitWolf.
func LedoitWolfImplicit(x mat.Matrix, w []float64) (*Implicit, LinearResult, error) {
	s, err := newSample(x, w, 2)
	if err != nil {
		return nil, LinearResult{}, err
	}
	res := lwFromGram(s, s.gram())
	return newImplicit(s, res), res, nil
}

// OASImplicit returns the estimate of OAS in implicit form, as
// LedoitWolfImplicit does for LedoitWolf. Cost O(T²·N).
//
// References: as for OAS.
func OASImplicit(x mat.Matrix, w []float64) (*Implicit, LinearResult, error) {
	s, err := newSample(x, w, 2)
	if err != nil {
		return nil, LinearResult{}, err
	}
	g := s.gram()
	res := oasIntensity(s, g.trace, g.frob2)
	return newImplicit(s, res), res, nil
}

func newImplicit(s *sample, res LinearResult) *Implicit {
	raw := s.y.RawMatrix()
	for i := 0; i < s.t; i++ {
		f := math.Sqrt((1 - res.Intensity) * s.weight(i))
		row := raw.Data[i*raw.Stride : i*raw.Stride+s.n]
		for j := range row {
			row[j] *= f
		}
	}
	d := make([]float64, s.n)
	for j := range d {
		d[j] = res.Floor
	}
	return &Implicit{z: s.y, d: d}
}

// Dims returns N, N.
func (m *Implicit) Dims() (r, c int) { _, n := m.z.Dims(); return n, n }

// SymmetricDim returns N.
func (m *Implicit) SymmetricDim() int { _, n := m.z.Dims(); return n }

// T returns m itself: Σ is symmetric.
func (m *Implicit) T() mat.Matrix { return m }

// At returns Σ_ij in O(T). It panics with mat.ErrRowAccess or
// mat.ErrColAccess out of range.
func (m *Implicit) At(i, j int) float64 {
	t, n := m.z.Dims()
	if i < 0 || i >= n {
		panic(mat.ErrRowAccess)
	}
	if j < 0 || j >= n {
		panic(mat.ErrColAccess)
	}
	var v float64
	for k := 0; k < t; k++ {
		v += m.z.At(k, i) * m.z.At(k, j)
	}
	if i == j {
		v += m.d[i]
	}
	return v
}

// MulVecTo sets dst = Σx = Zᵀ(Zx) + d∘x and returns dst. A nil or empty dst
// is allocated; a dst or x whose length is not N panics with mat.ErrShape.
// dst and x may not share memory. Cost O(N·T).
func (m *Implicit) MulVecTo(dst, x []float64) []float64 {
	t, n := m.z.Dims()
	if len(x) != n {
		panic(mat.ErrShape)
	}
	dst = dense.SizeVec(dst, n)
	zx := mat.NewVecDense(t, nil)
	zx.MulVec(m.z, mat.NewVecDense(n, x))
	out := mat.NewVecDense(n, dst)
	out.MulVec(m.z.T(), zx)
	for j, v := range x {
		dst[j] += m.d[j] * v
	}
	return dst
}

// QuadForm returns xᵀΣx = ‖Zx‖² + Σ_j d_j x_j² in O(N·T). It panics with
// mat.ErrShape when len(x) is not N.
func (m *Implicit) QuadForm(x []float64) float64 {
	t, n := m.z.Dims()
	if len(x) != n {
		panic(mat.ErrShape)
	}
	zx := mat.NewVecDense(t, nil)
	zx.MulVec(m.z, mat.NewVecDense(n, x))
	q := mat.Dot(zx, zx)
	for j, v := range x {
		q += m.d[j] * v * v
	}
	return q
}

// DiagTo sets dst to the diagonal of Σ and returns it; a nil or empty dst is
// allocated, a
// dst whose length is not N panics with mat.ErrShape. Cost O(N·T).
func (m *Implicit) DiagTo(dst []float64) []float64 {
	t, n := m.z.Dims()
	dst = dense.SizeVec(dst, n)
	copy(dst, m.d)
	raw := m.z.RawMatrix()
	for k := 0; k < t; k++ {
		for j, v := range raw.Data[k*raw.Stride : k*raw.Stride+n] {
			dst[j] += v * v
		}
	}
	return dst
}

// DenseTo sets dst to the dense N×N matrix Σ and returns it. A nil or empty
// dst is allocated; a wrong-sized dst panics with mat.ErrShape. Cost
// O(T·N²) and O(N²) memory.
func (m *Implicit) DenseTo(dst *mat.SymDense) *mat.SymDense {
	_, n := m.z.Dims()
	dst = dense.SizeSym(dst, n)
	dense.XtWX(dst, m.z, nil)
	for j, v := range m.d {
		dst.SetSym(j, j, dst.At(j, j)+v)
	}
	return dst
}
