package dense

import (
	"runtime"
	"slices"
	"sync"
	"sync/atomic"
)

// Blocking of the product C = PᵀQ, where P is K×M and Q is K×N.
//
// The reduction index k runs in blocks of kc, and every element of C is
// summed in the same fixed order — within a block by the micro-kernel, then
// block after block into C — so the result does not depend on how tiles are
// shared among workers. The output is cut into square tiles of side at most
// tile, a multiple of every kernel's mr and nr; a tile of packed Q (tile×kc)
// stays in the 1 MiB L2 cache of a core while the mr×kc slivers of P stream
// through L1.
const (
	kc   = 256
	tile = 240
	unit = 24 // every tile side is a multiple of unit, unit of every mr and nr
)

// tileFor returns the side of the tiles of an m×n output: tile, or less for
// small outputs, so that there are at least four rows of tiles to share
// among the cores. Neither the tiling nor the number of workers changes the
// order in which any element is summed.
func tileFor(m, n int) int {
	side := (min(m, n) + 3) / 4
	return max(2*unit, min(tile, side/unit*unit))
}

// operand is the K×M matrix P of a product PᵀQ, read from row-major data:
// P(k, i) = data[k*stride+i], or data[i*stride+k] when trans is set. A
// non-nil kw multiplies P(k, i) by kw[k], a non-nil iw by iw[i], as P is
// packed.
type operand struct {
	data   []float64
	stride int
	trans  bool
	kw, iw []float64
}

// maxPack bounds the values packed for one chunk of a product's reduction
// (32 MiB): a T×N operand of 10000×2500 would otherwise be copied whole.
var maxPack = 1 << 22

// from returns the operand of reductions k0, k0+1, … of op.
func (op *operand) from(k0 int) *operand {
	r := *op
	if op.trans {
		r.data = op.data[k0:]
	} else {
		r.data = op.data[k0*op.stride:]
	}
	if op.kw != nil {
		r.kw = op.kw[k0:]
	}
	return &r
}

// packed is an operand copied into slivers r indices wide: for each block of
// kc reductions, the slivers of r consecutive indices one after the other,
// each holding its kk×r values k-major, zero padded past index m.
type packed struct {
	buf  []float64
	r    int
	mpad int // m rounded up to a multiple of r
}

// sliver returns the kk×r values of the sliver holding index i (a multiple
// of r) in the block of reductions starting at k0.
func (p *packed) sliver(k0, kk, i int) []float64 {
	off := k0*p.mpad + i*kk
	return p.buf[off : off+kk*p.r]
}

// pack copies the K×m operand into slivers r wide. The work is cut into
// blocks of kc reductions × tile indices spread over the workers. The buffer
// comes from a pool; release returns it.
func (op *operand) pack(k, m, r, ts, workers int) *packed {
	mpad := (m + r - 1) / r * r
	p := &packed{buf: getBuf(k * mpad), r: r, mpad: mpad}
	blocks, chunks := (k+kc-1)/kc, (m+ts-1)/ts
	parallel(blocks*chunks, workers, func(t int) {
		k0 := (t / chunks) * kc
		kk := min(kc, k-k0)
		lo := (t % chunks) * ts
		hi := min(lo+ts, m)
		if op.trans {
			for i := lo; i < hi; i += r {
				op.packTrans(p.sliver(k0, kk, i), k0, kk, i, min(r, m-i), r)
			}
			return
		}
		for k := k0; k < k0+kk; k++ {
			op.packRow(p.buf[k0*mpad+(k-k0)*r:], k, kk, lo, hi, r)
		}
	})
	return p
}

// packRow spreads indices lo ≤ i < hi (lo a multiple of r) of row k of a
// non-transposed P over the slivers of its block, whose first sliver starts
// at dst: index i goes to sliver i/r at offset (i/r)·kk·r + i%r.
func (op *operand) packRow(dst []float64, k, kk, lo, hi, r int) {
	src := op.data[k*op.stride:][:hi]
	s := 1.0
	if op.kw != nil {
		s = op.kw[k]
	}
	step := kk * r
	for i0 := lo; i0 < hi; i0 += r {
		d := dst[(i0/r)*step:][:r]
		w := min(r, hi-i0)
		seg := src[i0 : i0+w]
		switch {
		case op.iw != nil:
			for j, v := range seg {
				d[j] = v * s * op.iw[i0+j]
			}
		case op.kw != nil:
			for j, v := range seg {
				d[j] = v * s
			}
		default:
			for j, v := range seg {
				d[j] = v
			}
		}
		clear(d[w:])
	}
}

// packTrans writes P(k0..k0+kk, i0..i0+w) of a transposed P into dst
// (kk×r, zero padded), reading four rows of x at a time so that each step
// writes four neighbouring values.
func (op *operand) packTrans(dst []float64, k0, kk, i0, w, r int) {
	if w < r {
		clear(dst)
	}
	scale := func(j int) float64 {
		if op.iw != nil {
			return op.iw[i0+j]
		}
		return 1
	}
	row := func(j int) []float64 { return op.data[(i0+j)*op.stride+k0:][:kk] }
	j := 0
	if op.kw == nil {
		for ; j+4 <= w; j += 4 {
			r0, r1, r2, r3 := row(j), row(j+1), row(j+2), row(j+3)
			s0, s1, s2, s3 := scale(j), scale(j+1), scale(j+2), scale(j+3)
			for k := range r0 {
				d := dst[k*r+j : k*r+j+4]
				d[0], d[1], d[2], d[3] = r0[k]*s0, r1[k]*s1, r2[k]*s2, r3[k]*s3
			}
		}
	}
	for ; j < w; j++ {
		src, s := row(j), scale(j)
		if op.kw != nil {
			for k, v := range src {
				dst[k*r+j] = v * op.kw[k0+k] * s
			}
			continue
		}
		for k, v := range src {
			dst[k*r+j] = v * s
		}
	}
}

// bufs recycles packing buffers between calls: the estimators call the
// products repeatedly on same-sized data, and a fresh buffer of many
// megabytes costs more to fault in and clear than to reuse.
var bufs sync.Pool

func getBuf(n int) []float64 {
	if b, ok := bufs.Get().(*[]float64); ok && cap(*b) >= n {
		return (*b)[:n]
	}
	return make([]float64, n)
}

func (p *packed) release() {
	if p != nil {
		b := p.buf[:0]
		bufs.Put(&b)
	}
}

// product sets the m×n matrix C, row-major in c with stride ldc, to PᵀQ,
// where P is k×m and Q is k×n. With upper set (m == n), only the elements
// with i ≤ j are written: the rest of c is left untouched.
func product(c []float64, ldc, m, n, k int, p, q *operand, upper bool, kern kernel) {
	accumulate(c, ldc, m, n, k, p, q, upper, false, kern)
}

// accumulate is product, adding PᵀQ to the values already in c when add is
// set: each element then starts from its old value instead of zero and takes
// the block sums in the same order.
//
// The packed operands of a long reduction would take as much memory as the
// operands themselves, so the reduction is cut into chunks whose packings
// hold at most maxPack values, each chunk added to c after the one before.
// The chunks end on multiples of kc, where the block sums are added to c
// anyway, so the summation order, and every bit of c, stays the same.
func accumulate(c []float64, ldc, m, n, k int, p, q *operand, upper, add bool, kern kernel) {
	per := m + n
	if p == q {
		per = n
	}
	if chunk := max(kc, maxPack/max(per, 1)/kc*kc); chunk < k {
		for k0 := 0; k0 < k; k0 += chunk {
			kk := min(chunk, k-k0)
			ps := p.from(k0)
			qs := ps
			if p != q {
				qs = q.from(k0)
			}
			accumulate(c, ldc, m, n, kk, ps, qs, upper, add || k0 > 0, kern)
		}
		return
	}
	workers := runtime.GOMAXPROCS(0)
	type task struct{ i, j int }
	var tasks []task
	ts := tileFor(m, n)
	for i := 0; i < m; i += ts {
		j0 := 0
		if upper {
			j0 = i
		}
		for j := j0; j < n; j += ts {
			tasks = append(tasks, task{i, j})
		}
	}
	// Largest tiles first, so that the workers finish together (the tiles
	// on the diagonal hold half the work, those at the edges less).
	work := func(t task) int {
		w := min(ts, m-t.i) * min(ts, n-t.j)
		if upper && t.i == t.j {
			w /= 2
		}
		return w
	}
	slices.SortStableFunc(tasks, func(a, b task) int { return work(b) - work(a) })
	// When P and Q are one operand, the slivers of P are read inside the
	// wider slivers of Q (mr divides nr), lda = nr apart: one packing
	// instead of two.
	var pp, qp *packed
	shared := p == q
	if k > 0 {
		qp = q.pack(k, n, kern.nr, ts, workers)
		defer qp.release()
		if !shared {
			pp = p.pack(k, m, kern.mr, ts, workers)
			defer pp.release()
		}
	}
	lda := kern.mr
	if shared {
		lda = kern.nr
	}
	sliverA := func(k0, kk, i int) []float64 {
		if shared {
			return qp.sliver(k0, kk, i-i%kern.nr)[i%kern.nr:]
		}
		return pp.sliver(k0, kk, i)
	}
	parallel(len(tasks), workers, func(t int) {
		tk := tasks[t]
		mi, nj := min(ts, m-tk.i), min(ts, n-tk.j)
		for i := tk.i; i < tk.i+mi && !add; i++ {
			j0 := tk.j
			if upper {
				j0 = max(j0, i)
			}
			if j0 < tk.j+nj {
				clear(c[i*ldc+j0 : i*ldc+tk.j+nj])
			}
		}
		var tmp []float64
		for k0 := 0; k0 < k; k0 += kc {
			kk := min(kc, k-k0)
			for ir := 0; ir < mi; ir += kern.mr {
				gi := tk.i + ir
				a := sliverA(k0, kk, gi)
				for jr := 0; jr < nj; jr += kern.nr {
					gj := tk.j + jr
					if upper && gi > gj+kern.nr-1 {
						continue // wholly below the diagonal
					}
					b := qp.sliver(k0, kk, gj)
					if ir+kern.mr <= mi && jr+kern.nr <= nj && (!upper || gi+kern.mr-1 <= gj) {
						kern.fn(kk, a, lda, b, c[gi*ldc+gj:], ldc)
						continue
					}
					// An edge or diagonal sliver: through a scratch block, so
					// that only elements of C inside the product are written,
					// each by the same single addition as the direct path.
					if tmp == nil {
						tmp = make([]float64, kern.mr*kern.nr)
					}
					clear(tmp)
					kern.fn(kk, a, lda, b, tmp, kern.nr)
					for i := 0; i < min(kern.mr, mi-ir); i++ {
						row := c[(gi+i)*ldc:]
						for j := 0; j < min(kern.nr, nj-jr); j++ {
							if !upper || gi+i <= gj+j {
								row[gj+j] += tmp[i*kern.nr+j]
							}
						}
					}
				}
			}
		}
	})
}

// Parallel calls f(0), …, f(n-1) on up to GOMAXPROCS goroutines and returns
// when all have returned. Which goroutine runs which call, and in which order
// the calls run, varies: f must not depend on either, so a result that each
// f(i) writes to its own place is bit-identical for any GOMAXPROCS.
func Parallel(n int, f func(i int)) {
	parallel(n, runtime.GOMAXPROCS(0), f)
}

// parallel is Parallel on up to workers goroutines.
func parallel(n, workers int, f func(int)) {
	workers = min(workers, n)
	if workers <= 1 {
		for i := 0; i < n; i++ {
			f(i)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				i := int(next.Add(1) - 1)
				if i >= n {
					return
				}
				f(i)
			}
		}()
	}
	wg.Wait()
}
