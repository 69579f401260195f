//go:build amd64 && !purego

package te

import "github.com/riskmodel/riskmodel/internal/dense"

// figurePtrs holds the first elements of the slices figuresAVX2 reads and
// writes, in the order the assembly loads them.
type figurePtrs struct {
	act, sa, isd, idg, mg, ct, pc, cr, hg, ht *float64
}

//go:noescape
func figuresAVX2(n4 int, p *figurePtrs, te2, inv float64)

// vectorFigures computes the first n&^3 assets' figures of perAsset
// with AVX2 and returns how many it did (0 without AVX2). The slices all
// have length n.
func vectorFigures(act, sa, isd, idg, mg, ct, pc, cr, hg, ht []float64, te2, inv float64) int {
	n4 := len(act) &^ 3
	if n4 == 0 || !dense.VectorKernels() {
		return 0
	}
	_, _, _, _, _, _, _, _, _, _ = sa[n4-1], isd[n4-1], idg[n4-1], mg[n4-1], ct[n4-1], pc[n4-1], cr[n4-1], hg[n4-1], ht[n4-1], act[n4-1]
	p := figurePtrs{&act[0], &sa[0], &isd[0], &idg[0], &mg[0], &ct[0], &pc[0], &cr[0], &hg[0], &ht[0]}
	figuresAVX2(n4, &p, te2, inv)
	return n4
}
