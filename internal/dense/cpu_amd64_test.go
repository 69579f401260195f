//go:build amd64 && !purego

package dense

import (
	"os"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestDetectAgreesWithLinux compares the CPUID/XGETBV detection with the
// flags the Linux kernel reports in /proc/cpuinfo, which lists avx2, fma and
// avx512f only when the kernel saves their registers.
func TestDetectAgreesWithLinux(t *testing.T) {
	raw, err := os.ReadFile("/proc/cpuinfo")
	if err != nil {
		t.Skip("no /proc/cpuinfo: not Linux")
	}
	var flags []string
	for _, line := range strings.Split(string(raw), "\n") {
		if name, value, ok := strings.Cut(line, ":"); ok && strings.TrimSpace(name) == "flags" {
			flags = strings.Fields(value)
			break
		}
	}
	require.NotEmpty(t, flags)
	has := func(f string) bool { return slices.Contains(flags, f) }
	f := detect()
	require.Equal(t, has("avx") && has("avx2") && has("fma"), f.avx2, "avx2")
	require.Equal(t, f.avx2 && has("avx512f"), f.avx512, "avx512")
}
