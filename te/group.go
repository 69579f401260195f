package te

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/mat"
)

// Group is the part of the tracking error that falls on one group of assets
// (a sector, a size bucket, a country: any labelling). With a_g the active
// weights of the group's members (zero elsewhere):
//
//	Contribution = Σ_{i∈g} a_i (Σa)_i / TE = a_gᵀΣa / TE
//	Volatility   = √(a_gᵀΣa_g)              (the group's stand-alone TE)
//	Correlation  = a_gᵀΣa / (Volatility · TE)
//	Contribution = Volatility · Correlation  (Menchero–Davis)
//
// The exposure of the Menchero–Davis form is folded into Volatility: a
// group's active weight can be zero while its positions are not (a long and
// a short that offset), so the volatility of the weight-normalised group is
// not always defined. ActiveWeight is reported separately.
type Group struct {
	Label        string
	Members      int
	ActiveWeight float64 // Σ_{i∈g} a_i
	Contribution float64
	Percent      float64 // 100 · Contribution / TE
	Factor       float64 // Σ_{i∈g} FactorPart_i (0 when not Factored)
	Specific     float64 // Σ_{i∈g} SpecificPart_i (0 when not Factored)
	Volatility   float64
	Correlation  float64
}

// Groups returns the decomposition by group, one Group per distinct label,
// in increasing order of label. labels[i] is the label of asset i. The group
// contributions are sums of the asset contributions, so they sum to TE.
//
// Groups panics with mat.ErrShape if len(labels) is not N. Cost O(N·K + G·K²)
// in factor form for G groups, O(N + Σ_g n_g²) dense (n_g members of group g).
//
// References:
//
// Menchero, J. & Davis, B. (2011). Risk contribution is exposure times
// volatility times correlation. Journal of Portfolio Management 37(2), 97–106.
func (d *Decomposition) Groups(labels []string) []Group {
	a := d.an
	if len(labels) != a.n {
		panic(mat.ErrShape)
	}
	names := slices.Clone(labels)
	slices.Sort(names)
	names = slices.Compact(names)
	idx := make(map[string]int, len(names))
	gs := make([]Group, len(names))
	for g, s := range names {
		idx[s] = g
		gs[g].Label = s
	}
	of := make([]int, a.n)
	for i, s := range labels {
		of[i] = idx[s]
	}
	inv := 0.0
	if d.TE > 0 {
		inv = 1 / d.TE
	}
	for i, g := range of {
		p := &gs[g]
		p.Members++
		p.ActiveWeight += d.Active[i]
		p.Contribution += d.Contribution[i]
		if d.Factored {
			p.Factor += d.FactorPart[i]
			p.Specific += d.SpecificPart[i]
		}
	}
	vars := d.groupVariances(of, len(gs))
	for g := range gs {
		p := &gs[g]
		p.Percent = 100 * p.Contribution * inv
		p.Volatility = math.Sqrt(vars[g])
		if p.Volatility > 0 {
			p.Correlation = p.Contribution / p.Volatility
		}
	}
	return gs
}

// groupVariances returns a_gᵀΣa_g for each group g.
func (d *Decomposition) groupVariances(of []int, ng int) []float64 {
	a := d.an
	v := make([]float64, ng)
	if a.factored {
		k := a.k
		// x_g = Bᵀa_g for every group in one pass over B.
		xg := make([]float64, ng*k+k)
		for i, g := range of {
			ai := d.Active[i]
			if ai == 0 {
				continue
			}
			row := a.b.Data[i*k : (i+1)*k]
			x := xg[g*k : (g+1)*k]
			for j, bij := range row {
				x[j] += ai * bij
			}
			v[g] += a.d[i] * ai * ai
		}
		fx := xg[ng*k:]
		for g := range v {
			x := xg[g*k : (g+1)*k]
			gemv(blas.NoTrans, a.f, x, fx)
			v[g] += max(0, dot(x, fx))
		}
		return v
	}
	members := make([][]int, ng)
	for i, g := range of {
		if d.Active[i] != 0 {
			members[g] = append(members[g], i)
		}
	}
	for g, m := range members {
		var s float64
		for p, i := range m {
			ai := d.Active[i]
			s += ai * ai * a.diag[i]
			var off float64
			for _, j := range m[p+1:] {
				off += a.symAt(i, j) * d.Active[j]
			}
			s += 2 * ai * off
		}
		v[g] = max(0, s)
	}
	return v
}
