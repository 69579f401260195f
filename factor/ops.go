package factor

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// MulVecTo sets dst to Σ·x = B·(F·(Bᵀx)) + D·x and returns it. dst may be x
// itself. A nil or empty dst is allocated; a dst or x whose length is not N
// panics with mat.ErrShape. Cost O(N·K + K²).
func (m *Model) MulVecTo(dst, x []float64) []float64 {
	if len(x) != m.n {
		panic(mat.ErrShape)
	}
	dst = dense.SizeVec(dst, m.n)
	if m.k == 0 {
		for i, v := range x {
			dst[i] = m.d[i] * v
		}
		return dst
	}
	// The K-vectors live on the stack for the usual K.
	var buf [64]float64
	y := buf[:]
	if 2*m.k > len(buf) {
		y = make([]float64, 2*m.k)
	}
	z := y[m.k : 2*m.k]
	y = y[:m.k]
	braw := m.b.RawMatrix()
	dense.MulVecT(y, braw, x)
	// z = F·y from the upper triangle of F; blas64.Symv would move the
	// buffer to the heap.
	f := m.f.RawSymmetric()
	clear(z)
	for i, yi := range y {
		row := f.Data[i*f.Stride+i : i*f.Stride+m.k]
		s := row[0] * yi
		for j := 1; j < len(row); j++ {
			s += row[j] * y[i+j]
			z[i+j] += row[j] * yi
		}
		z[i] += s
	}
	// Row i of the result reads x_i before writing dst_i, so dst may alias x.
	dense.MulVecDiag(dst, braw, z, m.d, x)
	return dst
}

// QuadForm returns xᵀΣx = (Bᵀx)ᵀ·F·(Bᵀx) + Σ_i d_i·x_i², the variance of a
// portfolio with weights x. A x whose length is not N panics with
// mat.ErrShape. Cost O(N·K + K²).
func (m *Model) QuadForm(x []float64) float64 {
	if len(x) != m.n {
		panic(mat.ErrShape)
	}
	var spec float64
	for i, v := range x {
		spec += m.d[i] * v * v
	}
	if m.k == 0 {
		return spec
	}
	y := make([]float64, m.k)
	blas64.Gemv(blas.Trans, 1, m.b.RawMatrix(), blas64.Vector{N: m.n, Inc: 1, Data: x}, 0, blas64.Vector{N: m.k, Inc: 1, Data: y})
	yv := mat.NewVecDense(m.k, y)
	return mat.Inner(yv, m.f, yv) + spec
}

// SqrtTo returns the square-root form of Σ used by second-order-cone
// optimizers,
//
//	Σ = GᵀG,   G = [ Lᵀ·Bᵀ ; diag(s) ],   F = L·Lᵀ,   s_i = √d_i,
//
// as its K×N factor block g = Lᵀ·Bᵀ and the N specific volatilities s, so
// that ‖G·x‖² = ‖g·x‖² + Σ_i (s_i·x_i)² = xᵀΣx. L is the symmetric-eigen
// square root Q·Λ^½ of F (any orthogonal change of L gives another valid G).
// Nil or empty destinations are allocated; wrong sizes panic with
// mat.ErrShape. Cost O(N·K).
func (m *Model) SqrtTo(g *mat.Dense, s []float64) (*mat.Dense, []float64) {
	g = dense.SizeDense(g, m.k, m.n)
	s = dense.SizeVec(s, m.n)
	if m.k > 0 {
		g.Copy(m.bl.T())
	}
	for i, v := range m.d {
		s[i] = math.Sqrt(v)
	}
	return g, s
}

// CovarianceTo sets dst to the dense N×N matrix Σ = B·F·Bᵀ + D and returns
// it. A nil or empty dst is allocated; a dst of another size panics with
// mat.ErrShape. Cost O(N²·K) flops and N² memory: use it only when a dense
// matrix is really needed.
func (m *Model) CovarianceTo(dst *mat.SymDense) *mat.SymDense {
	dst = dense.SizeSym(dst, m.n)
	if m.k > 0 {
		dense.XtWX(dst, m.bl.T(), nil) // (B·L)·(B·L)ᵀ, read in place
	} else {
		dst.Zero()
	}
	for i, v := range m.d {
		dst.SetSym(i, i, dst.At(i, i)+v)
	}
	return dst
}

// SolveVecTo sets dst to Σ⁻¹·x by the Woodbury identity and returns it,
//
//	Σ⁻¹ = D⁻¹ − D⁻¹W·(I + WᵀD⁻¹W)⁻¹·WᵀD⁻¹,   W = B·L,   F = L·Lᵀ,
//
// which needs no inverse of F, so a singular F is fine (Σ is positive
// definite because D > 0). dst may be x. A nil or empty dst is allocated; a
// dst or x whose length is not N panics with mat.ErrShape. Cost O(N·K + K²) per call;
// the K×K factorization is done once in NewModel, O(N·K²).
//
// References: Woodbury, M.A. (1950), "Inverting modified matrices",
// Memorandum Report 42, Statistical Research Group, Princeton University.
func (m *Model) SolveVecTo(dst, x []float64) []float64 {
	if len(x) != m.n {
		panic(mat.ErrShape)
	}
	dst = dense.SizeVec(dst, m.n)
	if m.k == 0 {
		for i, v := range x {
			dst[i] = v / m.d[i]
		}
		return dst
	}
	u := make([]float64, m.n)
	for i, v := range x {
		u[i] = v / m.d[i]
	}
	v := mat.NewVecDense(m.k, nil)
	v.MulVec(m.bl.T(), mat.NewVecDense(m.n, u))
	var z mat.VecDense
	if err := m.inner.SolveVecTo(&z, v); err != nil {
		// inner is SPD by construction; a failure here is a bug.
		panic(err)
	}
	zr := z.RawVector().Data
	for i := 0; i < m.n; i++ {
		row := m.bl.RawRowView(i)
		var s float64
		for j, w := range row {
			s += w * zr[j]
		}
		dst[i] = u[i] - s/m.d[i]
	}
	return dst
}

// InverseTo sets dst to the dense N×N inverse Σ⁻¹ by the Woodbury identity
// (see SolveVecTo) and returns it: Σ⁻¹ = D⁻¹ − Y·Yᵀ with Y = D⁻¹W·R⁻¹ and
// RᵀR the Cholesky factor of I + WᵀD⁻¹W. A nil or empty dst is allocated; a
// dst of another size panics with mat.ErrShape. Cost O(N²·K) flops and N²
// memory.
func (m *Model) InverseTo(dst *mat.SymDense) *mat.SymDense {
	dst = dense.SizeSym(dst, m.n)
	if m.k > 0 {
		// Yᵀ = R⁻ᵀ·(D⁻¹W)ᵀ, K×N.
		yt := mat.NewDense(m.k, m.n, nil)
		for i := 0; i < m.n; i++ {
			for j, w := range m.bl.RawRowView(i) {
				yt.Set(j, i, w/m.d[i])
			}
		}
		var r mat.TriDense
		m.inner.UTo(&r)
		raw := yt.RawMatrix()
		blas64.Trsm(blas.Left, blas.Trans, 1, r.RawTriangular(), raw)
		dense.XtWX(dst, yt, nil)
		dst.ScaleSym(-1, dst)
	} else {
		dst.Zero()
	}
	for i, v := range m.d {
		dst.SetSym(i, i, dst.At(i, i)+1/v)
	}
	return dst
}

// Submodel returns the model of the assets at positions idx, in that order:
// the rows idx of B and the entries idx of d with the same F, and the info
// with its asset labels subset. Positions may repeat; each copy has its own,
// independent specific risk. Submodel panics with
// mat.ErrIndexOutOfRange for a position outside [0, N) and with
// mat.ErrZeroLength for an empty idx. Cost O(len(idx)·K²).
func (m *Model) Submodel(idx []int) *Model {
	if len(idx) == 0 {
		panic(mat.ErrZeroLength)
	}
	d := make([]float64, len(idx))
	var b *mat.Dense
	if m.k > 0 {
		b = mat.NewDense(len(idx), m.k, nil)
	}
	info := m.info.clone()
	if info.Assets != nil {
		info.Assets = make([]string, len(idx))
	}
	for r, i := range idx {
		if uint(i) >= uint(m.n) {
			panic(mat.ErrIndexOutOfRange)
		}
		d[r] = m.d[i]
		if b != nil {
			copy(b.RawRowView(r), m.b.RawRowView(i))
		}
		if info.Assets != nil {
			info.Assets[r] = m.info.Assets[i]
		}
	}
	sub, err := NewModel(b, m.f, d, info)
	if err != nil {
		// The parts were validated when m was built.
		panic(err)
	}
	return sub
}
