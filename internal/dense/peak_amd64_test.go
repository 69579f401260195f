//go:build amd64 && !purego

package dense

// peakLoops returns the FMA loops this CPU can run, by kernel name.
func peakLoops() map[string]func(int) {
	f := detect()
	m := map[string]func(int){}
	if f.avx2 {
		m["avx2"] = peakAVX2
	}
	if f.avx512 {
		m["avx512"] = peakAVX512
	}
	return m
}
