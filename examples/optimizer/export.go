package main

import (
	"bufio"
	"fmt"
	"os"
	"path/filepath"
	"strconv"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/te"
)

// export writes the square-root form of the universe's covariance and the
// problem's weights into dir.
func export(dir string, m *riskmodel.Model, cov te.Covariance, pr *problem, w []float64) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("-export: %w", err)
	}
	g, s, names, err := sqrtForm(cov)
	if err != nil {
		return err
	}
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	k, n := g.Dims()
	// A dense Σ has no factor form: its square root is the Cholesky factor,
	// N×N, and there is no specific part.
	name, first := "sqrt_factor.csv", "factor"
	if s == nil {
		name, first = "cholesky_factor.csv", "row"
	}
	rows := [][]string{append([]string{first}, pr.assets...)}
	for i := 0; i < k; i++ {
		r := []string{names[i]}
		for j := 0; j < n; j++ {
			r = append(r, f(g.At(i, j)))
		}
		rows = append(rows, r)
	}
	if err := writeCSV(filepath.Join(dir, name), rows); err != nil {
		return err
	}
	if s != nil {
		rows = [][]string{{"asset", "specific_volatility"}}
		for j, a := range pr.assets {
			rows = append(rows, []string{a, f(s[j])})
		}
		if err := writeCSV(filepath.Join(dir, "sqrt_specific.csv"), rows); err != nil {
			return err
		}
	}
	rows = [][]string{{"asset", "benchmark", "start", "optimized", "max_weight"}}
	for j, a := range pr.assets {
		rows = append(rows, []string{a, f(pr.bench[j]), f(pr.start[j]), f(w[j]), f(pr.caps[j])})
	}
	return writeCSV(filepath.Join(dir, "problem.csv"), rows)
}

// sqrtForm returns g (K×N) and s (N) with Σ = gᵀg + diag(s²): the factor
// model's SqrtTo, or for a dense Σ the transposed Cholesky factor Lᵀ
// (N×N, upper triangular, Σ = L·Lᵀ) with s nil.
func sqrtForm(cov te.Covariance) (*mat.Dense, []float64, []string, error) {
	if fm, ok := cov.(*factor.Model); ok {
		g, s := fm.SqrtTo(nil, nil)
		return g, s, fm.FactorNames(), nil
	}
	var ch mat.Cholesky
	if !ch.Factorize(cov) {
		return nil, nil, nil, fmt.Errorf("export: the dense covariance is not positive definite")
	}
	var l mat.TriDense
	ch.LTo(&l)
	n := cov.SymmetricDim()
	g := mat.DenseCopyOf(l.T())
	names := make([]string, n)
	for i := range names {
		names[i] = "r" + strconv.Itoa(i+1)
	}
	return g, nil, names, nil
}

func writeCSV(path string, rows [][]string) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("-export: %w", err)
	}
	bw := bufio.NewWriter(f)
	for _, r := range rows {
		for k, c := range r {
			if k > 0 {
				bw.WriteByte(',')
			}
			bw.WriteString(c)
		}
		bw.WriteByte('\n')
	}
	if err := bw.Flush(); err != nil {
		f.Close()
		return fmt.Errorf("-export: %w", err)
	}
	return f.Close()
}
