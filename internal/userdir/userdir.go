// Package userdir gives the example programs default folders that belong to
// the user who runs them, so that no other local user can plant a folder or
// a symbolic link at a default path and have a program write through it.
package userdir

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
)

// Dir returns the default folder for name ("store", "optimizer"):
//
//	$XDG_CACHE_HOME/riskmodel/NAME   or ~/.cache/riskmodel/NAME (os.UserCacheDir)
//
// which only the user can create. Without a cache folder (no $HOME) it falls
// back to TMPDIR/riskmodel-UID/NAME, and then makes sure that
// TMPDIR/riskmodel-UID is a real folder (not a symbolic link) that the user
// owns and only the user can write to, creating it with mode 0700 if it is
// missing; otherwise it returns an error saying what is wrong. Dir creates
// nothing else; NAME itself is made by the program that writes into it.
func Dir(name string) (string, error) {
	if cache, err := os.UserCacheDir(); err == nil && filepath.IsAbs(cache) {
		return filepath.Join(cache, "riskmodel", name), nil
	}
	parent := filepath.Join(os.TempDir(), "riskmodel-"+strconv.Itoa(os.Getuid()))
	if err := os.Mkdir(parent, 0o700); err != nil && !errors.Is(err, os.ErrExist) {
		return "", fmt.Errorf("default folder: %w", err)
	}
	if err := private(parent); err != nil {
		return "", err
	}
	return filepath.Join(parent, name), nil
}

// private checks that dir is a folder, not a symbolic link, owned by this
// user and writable by nobody else.
func private(dir string) error {
	fi, err := os.Lstat(dir)
	if err != nil {
		return fmt.Errorf("default folder: %w", err)
	}
	switch {
	case fi.Mode()&os.ModeSymlink != 0:
		return fmt.Errorf("default folder %s is a symbolic link: refusing to write through it; give the folder explicitly", dir)
	case !fi.IsDir():
		return fmt.Errorf("default folder %s is not a folder; give the folder explicitly", dir)
	case fi.Mode().Perm()&0o022 != 0:
		return fmt.Errorf("default folder %s can be written by other users (mode %v); give the folder explicitly", dir, fi.Mode().Perm())
	}
	if uid, ok := owner(fi); ok && uid != os.Getuid() {
		return fmt.Errorf("default folder %s belongs to user %d, not %d; give the folder explicitly", dir, uid, os.Getuid())
	}
	return nil
}
