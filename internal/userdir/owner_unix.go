//go:build unix

package userdir

import (
	"os"
	"syscall"
)

// owner returns the user id that owns the file.
func owner(fi os.FileInfo) (int, bool) {
	st, ok := fi.Sys().(*syscall.Stat_t)
	if !ok {
		return 0, false
	}
	return int(st.Uid), true
}
