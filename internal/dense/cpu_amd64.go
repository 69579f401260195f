//go:build amd64 && !purego

package dense

// cpuid and xgetbv are in cpu_amd64.s.
func cpuid(eax, ecx uint32) (a, b, c, d uint32)
func xgetbv() (eax, edx uint32)

// features are the instruction sets the kernels need, each usable only if
// the CPU has it and the operating system saves its registers on a context
// switch.
type features struct {
	avx2   bool // AVX, AVX2 and FMA, with YMM state enabled
	avx512 bool // the above and AVX-512F, with opmask and ZMM state enabled
}

// detect reads CPUID and the XCR0 register. Intel SDM vol. 1, §14.3 and
// §15.2: check OSXSAVE before XGETBV, then XCR0 bits 1–2 (SSE, AVX state)
// and 5–7 (opmask, upper halves of ZMM0–15, ZMM16–31).
func detect() features {
	maxLeaf, _, _, _ := cpuid(0, 0)
	if maxLeaf < 7 {
		return features{}
	}
	_, _, c1, _ := cpuid(1, 0)
	const (
		fma     = 1 << 12
		osxsave = 1 << 27
		avx     = 1 << 28
	)
	if c1&(fma|osxsave|avx) != fma|osxsave|avx {
		return features{}
	}
	xcr0, _ := xgetbv()
	_, b7, _, _ := cpuid(7, 0)
	const (
		avx2    = 1 << 5
		avx512f = 1 << 16
	)
	var f features
	f.avx2 = xcr0&0x6 == 0x6 && b7&avx2 != 0
	f.avx512 = f.avx2 && xcr0&0xe0 == 0xe0 && b7&avx512f != 0
	return f
}
