package te

import "math"

// The factor-form passes of DecomposeTo, TrackingError and GroupsTo. Each
// has a Go loop here and an AVX2 kernel (factor_amd64.s) that gives the
// same bits: the sums run in the same fixed order, one fused multiply-add
// (math.FMA) a step. B is stored row-major with its K columns padded with
// zeros to kp, a multiple of 4, so the kernels have no column tail.

// activeSums sets act = p − b and returns Σ d_i a_i², Σ d_i a_i b_i and
// Σ d_i b_i², from one pass over p, b and D. Each sum runs in four lanes,
// i ≡ 0, 1, 2, 3 mod 4 for i < N&^3, added as (lane0 + lane1) + (lane2 +
// lane3), then the last assets in order; every product is rounded:
// (d_i a_i)·a_i, (d_i a_i)·b_i, (d_i b_i)·b_i.
func activeSums(act, p, b, d []float64) (saa, sab, sbb float64) {
	n := len(act)
	p, b, d = p[:n], b[:n], d[:n]
	var l [12]float64
	n4 := activeSumsVec(act, p, b, d, &l)
	if n4 == 0 {
		n4 = n &^ 3
		for i := 0; i < n4; i++ {
			bi, di := b[i], d[i]
			ai := p[i] - bi
			act[i] = ai
			t := float64(ai * di)
			j := i & 3
			l[j] += float64(t * ai)
			l[4+j] += float64(t * bi)
			l[8+j] += float64(float64(bi*di) * bi)
		}
	}
	saa = (l[0] + l[1]) + (l[2] + l[3])
	sab = (l[4] + l[5]) + (l[6] + l[7])
	sbb = (l[8] + l[9]) + (l[10] + l[11])
	for i := n4; i < n; i++ {
		bi, di := b[i], d[i]
		ai := p[i] - bi
		act[i] = ai
		t := float64(ai * di)
		saa += float64(t * ai)
		sab += float64(t * bi)
		sbb += float64(float64(bi*di) * bi)
	}
	return saa, sab, sbb
}

// exposures sets y1 = Bᵀx1 and y2 = Bᵀx2 (kp values each) for the rows×kp
// matrix b (ldb values a row), in one pass over b: y_c = Σ_i b_ic x_i, one
// chain of fused multiply-adds from 0 in order of i.
func exposures(b []float64, ldb, rows, kp int, x1, x2, y1, y2 []float64) {
	if exposuresVec(b, ldb, rows, kp, x1, x2, y1, y2) {
		return
	}
	exposuresGo(b, ldb, rows, kp, x1, x2, y1, y2)
}

func exposuresGo(b []float64, ldb, rows, kp int, x1, x2, y1, y2 []float64) {
	y1, y2 = y1[:kp], y2[:kp]
	clear(y1)
	clear(y2)
	for i := 0; i < rows; i++ {
		row := b[i*ldb : i*ldb+kp][:len(y1)]
		u, v := x1[i], x2[i]
		for c, bc := range row {
			y1[c] = math.FMA(bc, u, y1[c])
			y2[c] = math.FMA(bc, v, y2[c])
		}
	}
}

// factorRows is what the per-asset pass of the factor form reads and
// writes: B (kp values a row, ldb apart), F·x (kp values, zero past K),
// and slices of length N.
type factorRows struct {
	b       []float64
	ldb, kp int
	fx      []float64

	act, d, isd, idg                   []float64
	sa, fp, sp, mg, ct, pc, cr, hg, ht []float64
}

// factorPtrs is factorRows as the kernel reads it: first elements, in the
// order of the offsets in factor_amd64.s.
type factorPtrs struct {
	b       *float64
	ldb, kp int
	fx      *float64

	act, d, isd, idg                   *float64
	sa, fp, sp, mg, ct, pc, cr, hg, ht *float64
}

// check panics unless every slice of f holds n assets (and B n rows).
func (f *factorRows) check(n int) {
	if f.kp > 0 {
		_, _ = f.b[(n-1)*f.ldb+f.kp-1], f.fx[f.kp-1]
	}
	for _, s := range [...][]float64{f.act, f.d, f.isd, f.idg, f.sa, f.fp, f.sp, f.mg, f.ct, f.pc, f.cr, f.hg, f.ht} {
		_ = s[n-1]
	}
}

// factorFigures sets, for every asset, Σa = B·(Fx) + D·a and the figures
// of DecomposeTo from it, in one pass over B: the AVX2 kernel four assets
// a step, the rest here with the same roundings.
func factorFigures(f *factorRows, te2, inv float64) {
	done := factorFiguresVec(f, te2, inv)
	factorFiguresGo(f, done, te2, inv)
}

// factorFiguresGo does assets i ≥ lo. The factor part b_i·fx sums in four
// lanes, columns c ≡ 0, 1, 2, 3 mod 4, then (lane0 + lane1) + (lane2 +
// lane3); each product of the figures is rounded (no fused multiply-add).
func factorFiguresGo(f *factorRows, lo int, te2, inv float64) {
	n := len(f.act)
	act, spd, isd, idg := f.act[:n], f.d[:n], f.isd[:n], f.idg[:n]
	sa, fp, sp, mg, ct, pc := f.sa[:n], f.fp[:n], f.sp[:n], f.mg[:n], f.ct[:n], f.pc[:n]
	cr, hg, ht := f.cr[:n], f.hg[:n], f.ht[:n]
	fx := f.fx[:f.kp]
	for i := lo; i < n; i++ {
		row := f.b[i*f.ldb : i*f.ldb+f.kp][:len(fx)]
		var l0, l1, l2, l3 float64
		for c := 0; c+3 < len(row); c += 4 {
			l0 = math.FMA(fx[c], row[c], l0)
			l1 = math.FMA(fx[c+1], row[c+1], l1)
			l2 = math.FMA(fx[c+2], row[c+2], l2)
			l3 = math.FMA(fx[c+3], row[c+3], l3)
		}
		fac := (l0 + l1) + (l2 + l3)
		ai := act[i]
		// The conversions keep each product rounded before its sum, as
		// the kernel does (the Go spec allows a fused multiply-add
		// otherwise).
		spec := float64(ai * spd[i])
		fp[i] = ai * fac * inv
		sp[i] = ai * spec * inv
		s := fac + spec
		sa[i] = s
		mg[i] = s * inv
		c := ai * s * inv
		ct[i] = c
		pc[i] = 100 * c * inv
		// isd and idg are 0 where Σ_ii = 0: correlation and hedge 0, TE kept.
		cr[i] = s * inv * isd[i]
		h := -s * idg[i]
		hg[i] = h
		ht[i] = math.Sqrt(max(0, te2+float64(s*h)))
	}
}

// groupRows is what the group pass of the factor form reads and writes:
// B (kp values a row, ldb apart), the group of each asset, and acc, a row
// of kp + 4 values per group: the exposures x_g = Σ_{i∈g} a_i b_i, then
// the sums over the members of a_i and d_i a_i².
type groupRows struct {
	b            []float64
	ldb, kp      int
	act          []float64
	of           []int // group of each asset
	order, start []int // the members group by group, and where each starts
	acc          []float64
	d            []float64
}

// groupScatter adds each asset's terms to its group's row of g.acc, in
// order of asset: the exposures one fused multiply-add a value, the sums
// one rounded addition each, (d_i a_i)·a_i rounded before it is added.
// Every group index must be below len(g.acc)/(kp + 4).
func groupScatter(g *groupRows) {
	done := groupScatterVec(g)
	kp, w := g.kp, g.kp+4
	for i := done; i < len(g.act); i++ {
		row := g.b[i*g.ldb : i*g.ldb+kp]
		r := g.acc[g.of[i]*w : g.of[i]*w+w]
		x := r[:len(row)]
		ai := g.act[i]
		for c, v := range row {
			x[c] = math.FMA(v, ai, x[c])
		}
		s := r[kp : kp+2]
		s[0] += ai
		s[1] += float64(g.d[i]*ai) * ai
	}
}
