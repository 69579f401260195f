//go:build unix

package riskmodel

import (
	"errors"
	"os"
	"syscall"
)

// tryLock takes an exclusive flock(2) on f without waiting; it reports false
// when another open file description holds it.
func tryLock(f *os.File) (bool, error) {
	for {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		switch {
		case err == nil:
			return true, nil
		case errors.Is(err, syscall.EWOULDBLOCK):
			return false, nil
		case errors.Is(err, syscall.EINTR):
			continue
		}
		return false, err
	}
}

// processAlive reports whether a process with this id exists (signal 0
// checks without sending; EPERM means it exists under another user).
func processAlive(pid int) bool {
	err := syscall.Kill(pid, 0)
	return err == nil || errors.Is(err, syscall.EPERM)
}
