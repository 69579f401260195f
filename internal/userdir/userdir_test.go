package userdir

import (
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestDirUsesTheUserCache(t *testing.T) {
	cache := t.TempDir()
	t.Setenv("XDG_CACHE_HOME", cache)
	got, err := Dir("store")
	require.NoError(t, err)
	require.Equal(t, filepath.Join(cache, "riskmodel", "store"), got)
}

// TestDirFallbackRefusesAPlantedFolder: without a cache folder the default
// is a per-user folder in the temporary folder, and a symbolic link, a
// folder others can write or a folder of another user planted there is
// refused.
func TestDirFallbackRefusesAPlantedFolder(t *testing.T) {
	tmp := t.TempDir()
	t.Setenv("XDG_CACHE_HOME", "")
	t.Setenv("HOME", "")
	t.Setenv("TMPDIR", tmp)
	parent := filepath.Join(tmp, "riskmodel-"+strconv.Itoa(os.Getuid()))

	got, err := Dir("store")
	require.NoError(t, err)
	require.Equal(t, filepath.Join(parent, "store"), got)
	fi, err := os.Lstat(parent)
	require.NoError(t, err)
	require.Equal(t, os.FileMode(0o700), fi.Mode().Perm())

	require.NoError(t, os.Remove(parent))
	target := t.TempDir()
	require.NoError(t, os.Symlink(target, parent))
	_, err = Dir("store")
	require.ErrorContains(t, err, "is a symbolic link: refusing to write through it")

	require.NoError(t, os.Remove(parent))
	require.NoError(t, os.Mkdir(parent, 0o700))
	require.NoError(t, os.Chmod(parent, 0o777))
	_, err = Dir("store")
	require.ErrorContains(t, err, "can be written by other users")

	if os.Getuid() == 0 {
		// Only root can give a folder to another user.
		require.NoError(t, os.Chmod(parent, 0o700))
		require.NoError(t, os.Chown(parent, 4242, 4242))
		_, err = Dir("store")
		require.ErrorContains(t, err, "belongs to user 4242")
	}
}
