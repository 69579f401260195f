package main

import (
	"io"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestDefaultExportIsTheUsers: the -export default is in the user's cache
// folder; without one, a per-user folder in the temporary folder that is
// refused when another user could have planted it (here a symbolic link).
// It was the fixed TMPDIR/riskmodel-optimizer, which any local user could
// pre-create as a link to a file of the victim's.
func TestDefaultExportIsTheUsers(t *testing.T) {
	cache := t.TempDir()
	t.Setenv("XDG_CACHE_HOME", cache)
	cfg, err := parseFlags(nil, io.Discard)
	require.NoError(t, err)
	require.Equal(t, filepath.Join(cache, "riskmodel", "optimizer"), cfg.export)

	tmp := t.TempDir()
	t.Setenv("XDG_CACHE_HOME", "")
	t.Setenv("HOME", "")
	t.Setenv("TMPDIR", tmp)
	require.NoError(t, os.Symlink(t.TempDir(), filepath.Join(tmp, "riskmodel-"+strconv.Itoa(os.Getuid()))))
	_, err = parseFlags(nil, io.Discard)
	require.ErrorContains(t, err, "is a symbolic link: refusing to write through it")
	_, err = parseFlags([]string{"-export", t.TempDir()}, io.Discard)
	require.NoError(t, err, "an explicit -export needs no default")
}
