package ewma

import (
	"encoding/binary"
	"math"
)

// The binary form of a Recursive state, little-endian: the magic, a version,
// the settings, the counters, then the arrays. Symmetric arrays are written
// as their upper triangle; p in full.
const (
	codecMagic   = "ewmaRecursive"
	codecVersion = 1
)

// MarshalBinary encodes the state so that a later run can continue it with
// UnmarshalBinary. Size about 8·(3N² + Window·N) bytes for a full state
// (4N² with Demean), 8·(5N + Window·N) with VariancesOnly.
func (r *Recursive) MarshalBinary() ([]byte, error) {
	var b []byte
	b = append(b, codecMagic...)
	b = binary.LittleEndian.AppendUint32(b, codecVersion)
	flags := uint32(0)
	for k, on := range []bool{r.varOnly, r.opts.Demean, r.opts.CompleteCase, r.opts.Unbiased} {
		if on {
			flags |= 1 << k
		}
	}
	b = binary.LittleEndian.AppendUint32(b, flags)
	for _, v := range []int{r.n, r.window, r.days, r.next, r.filled, r.missing, r.used} {
		b = binary.LittleEndian.AppendUint64(b, uint64(v))
	}
	for _, v := range []float64{r.lambda, r.lambdaW, r.opts.MinEffectiveObs, r.sw, r.sw2} {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
	}
	b = appendFloats(b, r.ring)
	for _, a := range [][]float64{r.s, r.wt, r.w2, r.cnt} {
		b = r.appendSym(b, a)
	}
	if r.p != nil {
		b = appendFloats(b, r.p)
	}
	if r.q != nil {
		b = appendFloats(b, r.q)
	}
	return b, nil
}

func appendFloats(b []byte, a []float64) []byte {
	for _, v := range a {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
	}
	return b
}

func (r *Recursive) appendSym(b []byte, a []float64) []byte {
	if r.varOnly {
		return appendFloats(b, a)
	}
	for i := 0; i < r.n; i++ {
		b = appendFloats(b, a[i*r.n+i:(i+1)*r.n])
	}
	return b
}

// UnmarshalBinary replaces r with the state encoded by MarshalBinary. It
// returns an error wrapping ErrState if data is not such an encoding.
func (r *Recursive) UnmarshalBinary(data []byte) error {
	d := decoder{b: data}
	if string(d.take(len(codecMagic))) != codecMagic || d.u32() != codecVersion {
		return errAt(ErrState, -1, -1, -1, 0)
	}
	flags := d.u32()
	var s Recursive
	s.varOnly = flags&1 != 0
	s.opts.Demean = flags&2 != 0
	s.opts.CompleteCase = flags&4 != 0
	s.opts.Unbiased = flags&8 != 0
	ints := make([]int, 7)
	for k := range ints {
		ints[k] = int(d.u64())
	}
	s.n, s.window, s.days, s.next, s.filled, s.missing, s.used = ints[0], ints[1], ints[2], ints[3], ints[4], ints[5], ints[6]
	s.lambda, s.lambdaW, s.opts.MinEffectiveObs, s.sw, s.sw2 = d.f64(), d.f64(), d.f64(), d.f64(), d.f64()
	if d.bad || s.n < 1 || s.window < 0 || s.filled > s.window || s.next < 0 ||
		(s.window > 0 && s.next >= s.window) || !validDecay(s.lambda) ||
		s.n > 1<<20 || s.window > 1<<24 {
		return errAt(ErrState, -1, -1, -1, 0)
	}
	need := s.window * s.n
	tri := s.n * (s.n + 1) / 2
	full := s.n * s.n
	if s.varOnly {
		tri, full = s.n, s.n
	}
	need += 4 * tri
	if s.opts.Demean {
		need += full
	}
	if !s.varOnly {
		need += full
	}
	if len(d.b) != 8*need {
		return errAt(ErrState, -1, -1, -1, float64(len(d.b)))
	}
	s.alloc()
	d.floats(s.ring)
	for _, a := range [][]float64{s.s, s.wt, s.w2, s.cnt} {
		if s.varOnly {
			d.floats(a)
			continue
		}
		for i := 0; i < s.n; i++ {
			d.floats(a[i*s.n+i : (i+1)*s.n])
		}
	}
	if s.p != nil {
		d.floats(s.p)
	}
	if s.q != nil {
		d.floats(s.q)
	}
	*r = s
	return nil
}

type decoder struct {
	b   []byte
	bad bool
}

func (d *decoder) take(k int) []byte {
	if len(d.b) < k {
		d.bad = true
		d.b = nil
		return make([]byte, k)
	}
	out := d.b[:k]
	d.b = d.b[k:]
	return out
}

func (d *decoder) u32() uint32  { return binary.LittleEndian.Uint32(d.take(4)) }
func (d *decoder) u64() uint64  { return binary.LittleEndian.Uint64(d.take(8)) }
func (d *decoder) f64() float64 { return math.Float64frombits(d.u64()) }

func (d *decoder) floats(a []float64) {
	for i := range a {
		a[i] = d.f64()
	}
}
