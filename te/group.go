package te

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
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
	Factor       float64 // Σ_{i∈g} FactorPart_i = x_gᵀFx / TE (0 when not Factored)
	Specific     float64 // Σ_{i∈g} SpecificPart_i = a_gᵀDa_g / TE (0 when not Factored)
	Volatility   float64
	Correlation  float64
}

// Grouping is a labelling of assets (labels[i] for asset i) prepared once,
// so that decomposing many portfolios by the same groups does not sort the
// labels each time. It is read-only and safe for concurrent use.
type Grouping struct {
	names   []string // distinct labels, increasing
	of      []int    // group of each asset, an index into names
	members [][]int  // assets of each group, increasing
	order   []int    // the members, group after group
	start   []int    // start[g] is where group g's members begin in order
}

// NewGrouping prepares a labelling of len(labels) assets. The labels are
// copied. Cost O(N log G) for G distinct labels.
func NewGrouping(labels []string) *Grouping {
	idx := make(map[string]int)
	for _, s := range labels {
		idx[s] = 0
	}
	names := make([]string, 0, len(idx))
	for s := range idx {
		names = append(names, s)
	}
	slices.Sort(names)
	for g, s := range names {
		idx[s] = g
	}
	gr := &Grouping{names: names, of: make([]int, len(labels)), members: make([][]int, len(names))}
	for i, s := range labels {
		g := idx[s]
		gr.of[i] = g
		gr.members[g] = append(gr.members[g], i)
	}
	gr.order, gr.start = make([]int, 0, len(labels)+8), make([]int, len(names)+1)
	for g, m := range gr.members {
		gr.start[g] = len(gr.order)
		gr.order = append(gr.order, m...)
	}
	gr.start[len(names)] = len(gr.order)
	// Eight more entries for the kernels to read ahead (group.go's
	// prefetches), past the end of order[:N].
	gr.order = append(gr.order, make([]int, 8)...)[:len(labels)]
	return gr
}

// Len returns the number of assets labelled.
func (g *Grouping) Len() int { return len(g.of) }

// Labels returns the distinct labels in increasing order, the order of the
// groups in GroupsTo's result.
func (g *Grouping) Labels() []string { return slices.Clone(g.names) }

// Groups returns the decomposition by group for the labelling labels[i] of
// asset i. It is GroupsTo(nil, NewGrouping(labels)).
func (d *Decomposition) Groups(labels []string) []Group {
	return d.GroupsTo(nil, NewGrouping(labels))
}

// GroupsTo sets dst to the decomposition by group, one Group per distinct
// label in increasing order of label, and returns it. A nil or empty dst is
// allocated; a dst whose length is not the number of groups panics with
// mat.ErrShape. A group's contribution is the sum of its assets'
// contributions, so the groups' sum to TE: dense, it is summed so; in
// factor form it is a_gᵀΣa/TE = (x_gᵀFx + a_gᵀDa_g)/TE with the group's
// exposures x_g = B_gᵀa_g, equal to that sum up to rounding, and Factor and
// Specific are its two terms.
//
// GroupsTo panics with mat.ErrShape if the grouping does not label N assets.
// Cost O(N·K + G·K²) in factor form for G groups (one pass over B, in asset
// order), O(N + Σ_g n_g²) dense (n_g members of group g).
//
// References:
//
// Menchero, J. & Davis, B. (2011). Risk contribution is exposure times
// volatility times correlation. Journal of Portfolio Management 37(2), 97–106.
func (d *Decomposition) GroupsTo(dst []Group, gr *Grouping) []Group {
	a := d.an
	if len(gr.of) != a.n {
		panic(mat.ErrShape)
	}
	gs := dense.SizeVec(dst, len(gr.names))
	for g, s := range gr.names {
		gs[g] = Group{Label: s, Members: len(gr.members[g])}
	}
	inv := 0.0
	if d.TE > 0 {
		inv = 1 / d.TE
	}
	vars := d.groupSums(gs, gr)
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

// groupSums sets each group's ActiveWeight, Contribution, Factor and
// Specific (sums over its members in increasing asset order, in registers
// rather than through the Group structs) and returns a_gᵀΣa_g for each
// group g, in one pass over the members in factor form.
func (d *Decomposition) groupSums(gs []Group, gr *Grouping) []float64 {
	a := d.an
	n, ng := a.n, len(gr.names)
	act, ct := d.Active[:n], d.Contribution[:n]
	if a.factored {
		k, kp := a.k, a.kp
		// Row g of acc is the group's exposures x_g = B_gᵀa_g, then
		// Σ_{i∈g} a_i and a_gᵀDa_g, from one pass over B. With them
		// a_gᵀΣa = x_gᵀ(Fx) + a_gᵀDa_g (Fx from the decomposition) and
		// a_gᵀΣa_g = x_gᵀFx_g + a_gᵀDa_g.
		w := kp + 4
		d.gsc = grow(d.gsc, ng*w+kp+ng)
		acc, fxg, v := d.gsc[:ng*w], d.gsc[ng*w:ng*w+kp], d.gsc[ng*w+kp:]
		clear(acc)
		groupScatter(&groupRows{b: a.b.Data, ldb: kp, kp: kp, act: act, of: gr.of, order: gr.order,
			start: gr.start, acc: acc, d: a.d[:n]})
		inv := 0.0
		if d.TE > 0 {
			inv = 1 / d.TE
		}
		fx := d.fx[:k]
		for g := range v {
			r := acc[g*w : g*w+w]
			x, aw, spec := r[:k], r[kp], r[kp+1]
			p := &gs[g]
			p.ActiveWeight = aw
			p.Factor = dot(x, fx) * inv
			p.Specific = spec * inv
			p.Contribution = p.Factor + p.Specific
			gemv(blas.NoTrans, a.f, x, fxg[:k])
			v[g] = spec + max(0, dot(x, fxg[:k]))
		}
		return v
	}
	d.gsc = grow(d.gsc, ng)
	v := d.gsc
	for g, m := range gr.members {
		var aw, c float64
		for _, i := range m {
			aw += act[i]
			c += ct[i]
		}
		gs[g].ActiveWeight, gs[g].Contribution = aw, c
	}
	for g, m := range gr.members {
		var s float64
		for p, i := range m {
			ai := d.Active[i]
			if ai == 0 {
				continue
			}
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
