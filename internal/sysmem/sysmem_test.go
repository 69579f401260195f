package sysmem

import (
	"os"
	"testing"

	"github.com/stretchr/testify/require"
)

// On Linux, MemAvailable is in /proc/meminfo (since kernel 3.14) and the
// figure is positive; elsewhere Available reports that it cannot tell.
func TestAvailable(t *testing.T) {
	avail, ok := Available()
	if _, err := os.Stat("/proc/meminfo"); err != nil {
		require.False(t, ok)
		return
	}
	require.True(t, ok)
	require.Positive(t, avail)
	m, ok := memInfoAvailable()
	require.True(t, ok)
	require.LessOrEqual(t, avail, m, "never more than MemAvailable")
	require.Equal(t, "1.50 GB", Gigabytes(1_500_000_000))
}
