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
func groupScatterAVX2(rows int, gp *groupPtrs)

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
// how many it did (0 where the kernel does not run).
func groupScatterVec(g *groupRows) int {
	n := len(g.act)
	if !factorAVX2 || n == 0 || g.kp == 0 {
		return 0
	}
	// of holds group indices below len(acc)/(kp + 8): a Grouping's,
	// checked against the scratch size by the caller.
	_, _, _ = g.b[(n-1)*g.ldb+g.kp-1], g.of[n-1], g.acc[g.kp+7]
	_, _, _, _ = g.ct[n-1], g.fp[n-1], g.sp[n-1], g.d[n-1]
	p := groupPtrs{b: &g.b[0], ldb: g.ldb, kp: g.kp, act: &g.act[0], of: &g.of[0], acc: &g.acc[0],
		ct: &g.ct[0], fp: &g.fp[0], sp: &g.sp[0], d: &g.d[0]}
	groupScatterAVX2(n, &p)
	return n
}
