//go:build amd64 && !purego

package te

import "github.com/riskmodel/riskmodel/internal/dense"

// The factor-form kernels of factor_amd64.s.

//go:noescape
func exposures20AVX2(rows int, b *float64, ldb int, x1, x2, y1, y2 *float64)

//go:noescape
func exposures4AVX2(rows int, b *float64, ldb int, x1, x2, y1, y2 *float64)

//go:noescape
func factorFiguresAVX2(n4 int, p *factorPtrs, te2, inv float64)

// factorAVX2 reports whether the kernels of factor_amd64.s run; the tests
// switch it off to compare them with the Go loops.
var factorAVX2 = dense.VectorKernels()

// exposuresVec does what exposuresGo does, twenty and then four columns a
// pass, and reports false, doing nothing, where the kernels do not run.
func exposuresVec(b []float64, ldb, rows, kp int, x1, x2, y1, y2 []float64) bool {
	if !factorAVX2 || rows == 0 || kp == 0 {
		return false
	}
	_, _, _ = b[(rows-1)*ldb+kp-1], x1[rows-1], x2[rows-1]
	_, _ = y1[kp-1], y2[kp-1]
	c := 0
	for ; c+20 <= kp; c += 20 {
		exposures20AVX2(rows, &b[c], ldb, &x1[0], &x2[0], &y1[c], &y2[c])
	}
	for ; c < kp; c += 4 {
		exposures4AVX2(rows, &b[c], ldb, &x1[0], &x2[0], &y1[c], &y2[c])
	}
	return true
}

// factorFiguresVec does factorFiguresGo's work for the first n&^3 assets
// and returns how many it did (0 where the kernel does not run).
func factorFiguresVec(f *factorRows, te2, inv float64) int {
	n4 := len(f.act) &^ 3
	if !factorAVX2 || n4 == 0 {
		return 0
	}
	f.check(n4)
	p := factorPtrs{b: nil, ldb: f.ldb, kp: f.kp}
	if f.kp > 0 {
		p.b, p.fx = &f.b[0], &f.fx[0]
	}
	p.act, p.d, p.isd, p.idg = &f.act[0], &f.d[0], &f.isd[0], &f.idg[0]
	p.sa, p.fp, p.sp, p.mg = &f.sa[0], &f.fp[0], &f.sp[0], &f.mg[0]
	p.ct, p.pc, p.cr, p.hg, p.ht = &f.ct[0], &f.pc[0], &f.cr[0], &f.hg[0], &f.ht[0]
	factorFiguresAVX2(n4, &p, te2, inv)
	return n4
}

//go:noescape
func activeSumsAVX2(n4 int, p, b, d, act *float64, sums *[12]float64)

//go:noescape
func gather20AVX2(gp *gatherPtrs)

//go:noescape
func gather4AVX2(gp *gatherPtrs)

// gatherPtrs is what gather20AVX2 and gather4AVX2 read, in the order of
// the offsets in factor_amd64.s.
type gatherPtrs struct {
	b            *float64 // B at the first column of the pass
	ldb          int
	order, start *int
	ng           int
	act, accX    *float64 // accX: acc at the first column of the pass
	stride       int      // bytes from one group's row of acc to the next
	sums         int      // the member sums in this pass too (not 0)
	d, accS      *float64 // accS: acc at column kp, the sums
}

// activeSumsVec does activeSums' work for the first n&^3 assets, the
// lanes of the sums in l, and returns how many it did (0 where the kernel
// does not run).
func activeSumsVec(act, p, b, d []float64, l *[12]float64) int {
	n4 := len(act) &^ 3
	if !factorAVX2 || n4 == 0 {
		return 0
	}
	_, _, _ = p[n4-1], b[n4-1], d[n4-1]
	activeSumsAVX2(n4, &p[0], &b[0], &d[0], &act[0], l)
	return n4
}

// groupScatterVec does groupScatter's work for every asset and returns
// how many it did (0 where the kernels do not run). The kernels go group
// by group over the members in increasing order (Grouping.order), the
// exposures in registers, twenty and then four columns a pass: for each
// group the same operations in the same order as the loop in asset order.
func groupScatterVec(g *groupRows) int {
	n := len(g.act)
	ng := len(g.start) - 1
	if !factorAVX2 || n == 0 || g.kp == 0 || ng < 1 {
		return 0
	}
	w := g.kp + 4
	// order holds a permutation of the assets, start ng+1 offsets into it
	// from 0 to N: a Grouping's, checked against the sizes here.
	_, _, _ = g.b[(n-1)*g.ldb+g.kp-1], g.order[n-1], g.acc[ng*w-1]
	_ = g.d[n-1]
	if g.start[0] != 0 || g.start[ng] != n || len(g.order) != n || cap(g.order) < n+8 {
		panic("te: grouping out of shape")
	}
	p := gatherPtrs{ldb: g.ldb, order: &g.order[0], start: &g.start[0], ng: ng, act: &g.act[0],
		stride: 8 * w, sums: 1, d: &g.d[0], accS: &g.acc[g.kp]}
	c := 0
	for ; c+20 <= g.kp; c += 20 {
		p.b, p.accX = &g.b[c], &g.acc[c]
		gather20AVX2(&p)
		p.sums = 0
	}
	for ; c < g.kp; c += 4 {
		p.b, p.accX = &g.b[c], &g.acc[c]
		gather4AVX2(&p)
		p.sums = 0
	}
	return n
}
