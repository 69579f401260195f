package riskmodel

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"
)

// lockFile is the store's lock: Publish holds an exclusive flock(2) on it
// from the first look at the folder to the switch of "current" and the
// retention that follows. The kernel releases the lock when the holder exits,
// however it exits, so a killed job never leaves the store locked. The
// file's text (process id and time) only serves the message of the job that
// waits; the lock itself is the flock.
const lockFile = ".lock"

// lockPoll is how often a job waiting for the lock tries again.
const lockPoll = 20 * time.Millisecond

// storeLock is a held lock on a store.
type storeLock struct{ f *os.File }

// lock takes the store's exclusive lock, waiting up to timeout for another
// holder to release it. It returns an error wrapping ErrLocked, naming the
// holder and since when it holds the store, when the wait runs out.
func (s Store) lock(timeout time.Duration) (*storeLock, error) {
	path := filepath.Join(s.Dir, lockFile)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, err
	}
	deadline := time.Now().Add(timeout)
	for {
		ok, err := tryLock(f)
		if err != nil {
			f.Close()
			return nil, fmt.Errorf("lock %s: %w", path, err)
		}
		if ok {
			break
		}
		if !time.Now().Before(deadline) {
			holder := readHolder(path)
			f.Close()
			return nil, fmt.Errorf("%w: another job (%s) holds the store %s; waited %v", ErrLocked, holder, s.Dir, timeout)
		}
		time.Sleep(min(lockPoll, time.Until(deadline)+time.Millisecond))
	}
	// Record who holds the store, for the message of a job that waits.
	stamp := fmt.Sprintf("pid %d since %s\n", os.Getpid(), time.Now().UTC().Format(time.RFC3339))
	if err := f.Truncate(0); err == nil {
		_, _ = f.WriteAt([]byte(stamp), 0)
	}
	return &storeLock{f: f}, nil
}

// unlock releases the lock; closing the file releases the flock.
func (l *storeLock) unlock() { l.f.Close() }

// readHolder returns the lock file's record of its holder.
func readHolder(path string) string {
	b, err := os.ReadFile(path)
	if err != nil || len(b) == 0 {
		return "holder unknown"
	}
	return strings.TrimSpace(string(b))
}

// Staging folders and temporary links carry the id of the process that made
// them: ".staging-2026-11-30-p1234-…", ".current-2026-11-30-p1234".
func stagingPrefix(asof Date) string {
	return ".staging-" + asof.String() + "-p" + strconv.Itoa(os.Getpid()) + "-"
}

// ownerPID returns the process id in a staging folder's or temporary link's
// name, or 0 when it carries none (a name from before the lock).
func ownerPID(name string) int {
	i := strings.LastIndex(name, "-p")
	for i >= 0 {
		rest := name[i+2:]
		if j := strings.IndexByte(rest, '-'); j >= 0 {
			rest = rest[:j]
		}
		if pid, err := strconv.Atoi(rest); err == nil && pid > 0 {
			return pid
		}
		i = strings.LastIndex(name[:i], "-p")
	}
	return 0
}

// removeStaging deletes staging folders and links that no live job owns.
// It runs with the lock held, so no job that takes the lock can be writing
// one; a folder whose process is still alive (a job that did not take the
// lock, or a process that reused a dead job's id) is left for a later run.
func (s Store) removeStaging() {
	entries, err := os.ReadDir(s.Dir)
	if err != nil {
		return
	}
	for _, e := range entries {
		name := e.Name()
		if !strings.HasPrefix(name, ".staging-") && !strings.HasPrefix(name, ".current-") {
			continue
		}
		if pid := ownerPID(name); pid != 0 && pid != os.Getpid() && processAlive(pid) {
			continue
		}
		os.RemoveAll(filepath.Join(s.Dir, name))
	}
}

var errNoLocking = errors.New("store locking is not supported on this platform")
