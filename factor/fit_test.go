package factor

import (
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestNumpySVD compares the loadings and the number-of-factors statistics
// with numpy 1.24.2: numpy.linalg.svd(x - x.mean(axis=0), full_matrices=False)
// and the Bai–Ng (2002) eq. (9) and Ahn–Horenstein (2013) formulas evaluated
// on numpy's singular values (testdata/factor/make_svd_fixture.py).
func TestNumpySVD(t *testing.T) {
	for _, tc := range []struct {
		name, file string
		method     Solver
		iters      int
		tol        float64
	}{
		{name: "tall gram", file: "svd_tall.json", method: SolverGram, tol: 1e-10},
		{name: "wide gram", file: "svd_wide.json", method: SolverGram, tol: 1e-10},
		{name: "tall randomized", file: "svd_tall.json", method: SolverRandomized, iters: 8, tol: 1e-8},
		{name: "wide randomized", file: "svd_wide.json", method: SolverRandomized, iters: 8, tol: 1e-8},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fx := loadSVDFixture(t, tc.file)
			x := rowsToDense(fx.X)
			s := baseSettings()
			s.K, s.MaxFactors, s.Solver, s.PowerIters = fx.K, fx.Kmax, tc.method, tc.iters
			m, err := Fit(x, s)
			require.NoError(t, err)
			want := projector(rowsToDense(fx.Vt).T())
			got := projector(m.LoadingsTo(nil))
			require.True(t, mat.EqualApprox(want, got, tc.tol), "projectors differ")
			// Loadings are the right singular vectors themselves, up to sign.
			b := m.LoadingsTo(nil)
			for j := 0; j < fx.K; j++ {
				sign := 1.0
				if b.At(0, j)*fx.Vt[j][0] < 0 {
					sign = -1
				}
				for i := 0; i < fx.N; i++ {
					require.InDelta(t, fx.Vt[j][i], sign*b.At(i, j), tc.tol)
				}
			}
			sel := m.Info().Selection
			require.Equal(t, fx.Kmax, sel.MaxFactors)
			for j := 0; j < fx.K; j++ {
				sv := fx.SingularValues[j]
				require.InDelta(t, sv*sv/float64(fx.T), sel.Eigenvalues[j], tc.tol*sv*sv)
			}
			if tc.method == SolverGram {
				// Every eigenvalue is exact on the Gram path, so the criteria match.
				require.InDeltaSlice(t, fx.ICp1, sel.ICp1, 1e-9)
				require.InDeltaSlice(t, fx.ICp2, sel.ICp2, 1e-9)
				require.InDeltaSlice(t, fx.ER, sel.ER, 1e-8)
				require.InDeltaSlice(t, fx.GR, sel.GR, 1e-8)
				require.Equal(t, fx.K, sel.BaiNgP2)
			}
		})
	}
}
