package factor

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
)

// baseSettings are the settings the tests share: one-year windows of daily
// data with half-lives in the range common in practice (no source).
func baseSettings() Settings {
	return Settings{
		Covariance:       ewma.Settings{VolHalfLife: 90, CorrHalfLife: 180},
		SpecificHalfLife: 90,
	}
}

// market is a simulated K-factor market with a known covariance.
type market struct {
	x     *mat.Dense    // T×N returns
	b     *mat.Dense    // N×K true loadings
	f     *mat.SymDense // K×K true factor covariance
	d     []float64     // N true specific variances
	sigma *mat.SymDense // N×N true covariance
}

// simulate draws T dates of a K-factor market over N assets: factor
// volatilities from 2 % down, loadings N(1, 0.5) on the first factor and
// N(0, 1) on the others, specific volatilities uniform in [1 %, 3 %].
func simulate(seed uint64, t, n, k int) market {
	rng := rand.New(rand.NewPCG(seed, 7))
	m := market{x: mat.NewDense(t, n, nil), b: mat.NewDense(n, k, nil), f: mat.NewSymDense(k, nil), d: make([]float64, n)}
	vol := make([]float64, k)
	for j := range vol {
		vol[j] = 0.02 / (1 + 0.5*float64(j))
		m.f.SetSym(j, j, vol[j]*vol[j])
	}
	for i := 0; i < n; i++ {
		for j := 0; j < k; j++ {
			v := rng.NormFloat64()
			if j == 0 {
				v = 1 + 0.5*v
			}
			m.b.Set(i, j, v)
		}
		s := 0.01 + 0.02*rng.Float64()
		m.d[i] = s * s
	}
	fr := make([]float64, k)
	for r := 0; r < t; r++ {
		for j := range fr {
			fr[j] = vol[j] * rng.NormFloat64()
		}
		for i := 0; i < n; i++ {
			v := math.Sqrt(m.d[i]) * rng.NormFloat64()
			for j, g := range fr {
				v += m.b.At(i, j) * g
			}
			m.x.Set(r, i, v)
		}
	}
	if n > 1000 {
		return m // the dense truth is not needed at benchmark sizes
	}
	var bf mat.Dense
	bf.Mul(m.b, m.f)
	var s mat.Dense
	s.Mul(&bf, m.b.T())
	m.sigma = mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := s.At(i, j)
			if i == j {
				v += m.d[i]
			}
			m.sigma.SetSym(i, j, v)
		}
	}
	return m
}

// projector returns Q·Qᵀ for an orthonormal basis Q of the columns of a.
func projector(a mat.Matrix) *mat.Dense {
	q := mat.DenseCopyOf(a)
	orthonormalize(q)
	var p mat.Dense
	p.Mul(q, q.T())
	return &p
}

// maxAngle returns the largest principal angle between the column spaces.
func maxAngle(a, b mat.Matrix) float64 {
	ang := principalAngles(mat.DenseCopyOf(a), mat.DenseCopyOf(b))
	return ang[len(ang)-1]
}

type svdFixture struct {
	Source         string `json:"source"`
	T, N, K, Kmax  int
	X              [][]float64 `json:"x"`
	SingularValues []float64   `json:"singular_values"`
	Vt             [][]float64 `json:"vt"`
	ICp1           []float64   `json:"icp1"`
	ICp2           []float64   `json:"icp2"`
	ER             []float64   `json:"er"`
	GR             []float64   `json:"gr"`
}

func loadSVDFixture(t *testing.T, name string) svdFixture {
	t.Helper()
	raw, err := os.ReadFile("../testdata/factor/" + name)
	require.NoError(t, err)
	var f svdFixture
	require.NoError(t, json.Unmarshal(raw, &f))
	return f
}

func rowsToDense(rows [][]float64) *mat.Dense {
	m := mat.NewDense(len(rows), len(rows[0]), nil)
	for i, r := range rows {
		m.SetRow(i, r)
	}
	return m
}
