package riskmodel_test

import (
	"math"
	"sync"
	"testing"

	"github.com/riskmodel/riskmodel"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/shrink"
	"github.com/riskmodel/riskmodel/te"
)

// The types users share across goroutines are safe for concurrent reads:
// many goroutines call their read methods at once and every one gets the
// answer a lone caller gets, bit for bit. `go test -race` (CI runs it with
// -short) reports any unsynchronised write.

// hammer runs read in 8 goroutines, 4 times each, and requires every result
// to equal want.
func hammer[T any](t *testing.T, want T, read func() T) {
	t.Helper()
	var wg sync.WaitGroup
	results := make([]T, 32)
	for g := 0; g < 8; g++ {
		wg.Add(1)
		go func(g int) {
			defer wg.Done()
			for k := 0; k < 4; k++ {
				results[g*4+k] = read()
			}
		}(g)
	}
	wg.Wait()
	for _, r := range results {
		require.Equal(t, want, r)
	}
}

// bitsOf returns the bits of a slice, so that NaN compares equal to NaN.
func bitsOf(v []float64) []uint64 {
	out := make([]uint64, len(v))
	for i, x := range v {
		out[i] = math.Float64bits(x)
	}
	return out
}

func TestConcurrentReads(t *testing.T) {
	market := smallDemo(t)
	p := market.Panel
	tt, n := p.Dims()
	asof := p.Date(tt - 1)
	w := make([]float64, n)
	b := make([]float64, n)
	for i := range w {
		w[i], b[i] = 1/float64(n), 0
	}
	b[0], b[1] = 0.5, 0.5

	t.Run("Panel", func(t *testing.T) {
		read := func() []uint64 {
			win, err := p.Window(asof, 200)
			if err != nil {
				panic(err)
			}
			kept, _ := win.DropSparse(100)
			cov := kept.Coverage()
			x := kept.ReturnsTo(nil)
			out := bitsOf(x.RawMatrix().Data)
			for _, c := range cov {
				out = append(out, uint64(c.Count), uint64(c.LongestGap))
			}
			j, _ := p.Column(p.Asset(n - 1))
			return append(out, uint64(j), uint64(len(p.Dates())), math.Float64bits(p.At(tt-1, 0)))
		}
		hammer(t, read(), read)
	})

	for _, method := range []string{riskmodel.MethodFactor, riskmodel.MethodLedoitWolf} {
		m, _, err := riskmodel.Build(p, asof, &riskmodel.BuildOptions{Method: method, Window: 250, Factor: riskmodel.FactorOptions{K: 4}})
		require.NoError(t, err)
		k := len(m.Assets)
		x := make([]float64, k)
		for i := range x {
			x[i] = float64(i%5) - 2
		}
		t.Run("Model "+method, func(t *testing.T) {
			read := func() []uint64 {
				c := m.Covariance()
				out := []uint64{math.Float64bits(c.At(0, k-1))}
				if m.Factor != nil {
					out = append(out, bitsOf(m.Factor.MulVecTo(nil, x))...)
					out = append(out, bitsOf(m.Factor.SolveVecTo(nil, x))...)
					out = append(out, math.Float64bits(m.Factor.QuadForm(x)))
					out = append(out, bitsOf(m.Factor.CovarianceTo(nil).RawSymmetric().Data)...)
				}
				return out
			}
			hammer(t, read(), read)
		})
		t.Run("te.Analyzer "+method, func(t *testing.T) {
			a, err := te.NewAnalyzer(m.Covariance())
			require.NoError(t, err)
			pw, bw := make([]float64, k), make([]float64, k)
			for i := range pw {
				pw[i] = 1 / float64(k)
			}
			bw[0], bw[k-1] = 0.6, 0.4
			read := func() []uint64 {
				d, err := a.Decompose(pw, bw)
				if err != nil {
					panic(err)
				}
				te, err := a.TrackingError(pw, bw)
				if err != nil {
					panic(err)
				}
				return append(bitsOf(d.Contribution), math.Float64bits(d.TE), math.Float64bits(te))
			}
			hammer(t, read(), read)
		})
	}

	win, err := p.Window(asof, 250)
	require.NoError(t, err)
	win, _ = win.DropSparse(250) // complete columns only, as shrink needs
	x := win.ReturnsTo(nil)
	_, k := x.Dims()
	require.Greater(t, k, 2)
	v := make([]float64, k)
	for i := range v {
		v[i] = float64(i%3) - 1
	}

	t.Run("shrink.Implicit", func(t *testing.T) {
		m, _, err := shrink.LedoitWolfImplicit(x, nil)
		require.NoError(t, err)
		read := func() []uint64 {
			out := bitsOf(m.MulVecTo(nil, v))
			out = append(out, math.Float64bits(m.QuadForm(v)), math.Float64bits(m.At(0, k-1)))
			out = append(out, bitsOf(m.DiagTo(nil))...)
			return append(out, bitsOf(m.DenseTo(nil).RawSymmetric().Data)...)
		}
		hammer(t, read(), read)
	})

	t.Run("ewma.Recursive", func(t *testing.T) {
		r, err := ewma.NewRecursive(k, ewma.RecursiveSettings{HalfLife: 30, Window: 100})
		require.NoError(t, err)
		rows, _ := x.Dims()
		for i := 0; i < rows; i++ {
			require.NoError(t, r.Update(x.RawRowView(i)))
		}
		read := func() []uint64 {
			var c, cr mat.SymDense
			if _, _, err := r.CovarianceTo(&c); err != nil {
				panic(err)
			}
			if _, _, err := r.CorrelationTo(&cr); err != nil {
				panic(err)
			}
			vars, err := r.VariancesTo(nil)
			if err != nil {
				panic(err)
			}
			out := append(bitsOf(c.RawSymmetric().Data), bitsOf(cr.RawSymmetric().Data)...)
			return append(append(out, bitsOf(vars)...), uint64(r.Len()), uint64(r.Days()))
		}
		hammer(t, read(), read)
	})
}
