package te

import "math"

// The factor-form passes of DecomposeTo, TrackingError and GroupsTo. Each
// has a Go loop here and an AVX2 kernel (factor_amd64.s) that gives the
// same bits: the sums run in the same fixed order, one fused multiply-add
// (math.FMA) a step. B is stored row-major with its K columns padded with
// zeros to kp, a multiple of 4, so the kernels have no column tail.

// activeSums sets act = p − b and returns Σ d_i a_i², Σ d_i a_i b_i and
// Σ d_i b_i², each summed in order of i, from one pass over p, b and D.
func activeSums(act, p, b, d []float64) (saa, sab, sbb float64) {
	n := len(act)
	p, b, d = p[:n], b[:n], d[:n]
	for i := range act {
		bi, di := b[i], d[i]
		ai := p[i] - bi
		act[i] = ai
		saa += di * ai * ai
		sab += di * ai * bi
		sbb += di * bi * bi
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

// scatter adds x_i b_i (row i of b, kp values) to row of_i of acc (kp
// values a row), for i < rows, one fused multiply-add a value in order of
// i: row g of acc becomes Σ_{i: of_i = g} x_i b_i. Every of_i must be below
// len(acc)/kp.
func scatter(b []float64, ldb, rows, kp int, x []float64, of []int, acc []float64) {
	if scatterVec(b, ldb, rows, kp, x, of, acc) {
		return
	}
	for i := 0; i < rows; i++ {
		row := b[i*ldb : i*ldb+kp]
		g := acc[of[i]*kp : of[i]*kp+kp][:len(row)]
		xi := x[i]
		for c, v := range row {
			g[c] = math.FMA(v, xi, g[c])
		}
	}
}
