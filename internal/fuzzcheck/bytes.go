package fuzzcheck

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Bytes hands out a fuzz input a byte at a time, then zeros, so that every
// input decodes to something: the one decoder of the library's fuzz targets.
// Convert the input with Bytes(data) and read it through a pointer.
type Bytes []byte

// Next returns the next byte, or 0 once the input is used up.
func (b *Bytes) Next() byte {
	if len(*b) == 0 {
		return 0
	}
	c := (*b)[0]
	*b = (*b)[1:]
	return c
}

// special lists the values of the top byte codes, 0xff first.
var special = [...]float64{math.NaN(), math.Inf(1), math.Inf(-1), 1e150, 1e-150}

// MaxSpecials is the largest specials argument of Value.
const MaxSpecials = len(special)

// Value decodes the next byte c. The top specials codes (0 ≤ specials ≤
// MaxSpecials) decode in turn to NaN (0xff), +Inf (0xfe), −Inf (0xfd), 1e150
// (0xfc) and 1e−150 (0xfb); every other code to int8(c)/100, a multiple of
// 0.01 in [−1.28, 1.27]. A target that checks fewer properties asks for
// fewer specials, and its seed corpus keeps its meaning.
func (b *Bytes) Value(specials int) float64 {
	c := b.Next()
	if k := 0xff - int(c); k < specials {
		return special[k]
	}
	return float64(int8(c)) / 100
}

// Dense decodes a t×n matrix, row by row, of Value(specials)·scale.
func (b *Bytes) Dense(t, n int, scale float64, specials int) *mat.Dense {
	x := mat.NewDense(t, n, nil)
	for i := 0; i < t; i++ {
		for j := 0; j < n; j++ {
			x.Set(i, j, b.Value(specials)*scale)
		}
	}
	return x
}

// Scale decodes a power of ten 10^e, e = lo + c mod span for the next byte c.
func (b *Bytes) Scale(lo, span int) float64 {
	return math.Pow(10, float64(int(b.Next())%span+lo))
}
