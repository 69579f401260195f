package riskmodel

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"time"
)

// Store is a folder of published models for a nightly job:
//
//	DIR/2026-11-30/      one folder per published model, named by its as-of date
//	DIR/2026-12-01/      (a second model for the same date gets a suffix, 2026-12-01.2)
//	DIR/current          a symbolic link to the folder of the current model
//	DIR/.lock            the lock a publishing job holds
//
// Publish takes an exclusive lock on the store (flock(2) on DIR/.lock) for
// its whole run, so two jobs started together publish one after the other:
// the second waits up to PublishOptions.LockTimeout and then fails with
// ErrLocked, naming the holder. Under the lock it removes the staging folders
// of dead jobs, writes the new model into a staging folder of its own, reads
// it back and checks it bit for bit, renames it to its dated name and only
// then switches "current" to it with an atomic rename of a new link over the
// old one. A crash or an error at any point leaves the previous current model
// as it was; at worst a staging folder (".staging-DATE-pPID-…") is left
// behind, which the next Publish removes once that process is gone.
//
// A model older than the current one (a backfill) gets its dated folder but
// does not become current unless PublishOptions.SetCurrent asks. With
// PublishOptions.Keep the oldest dated folders are removed (retention).
type Store struct {
	Dir string
}

const currentLink = "current"

// PublishOptions configure Store.PublishWith. A nil *PublishOptions or the
// zero value means the documented defaults.
type PublishOptions struct {
	// LockTimeout is how long to wait for the lock of another job that is
	// publishing to the store; zero fails at once if the store is locked.
	LockTimeout time.Duration
	// SetCurrent makes the model current even when its as-of date is before
	// the current model's (a backfill). By default a backfill is published
	// as a dated folder and "current" stays where it is. A model of the same
	// date as the current one (a rerun) always becomes current.
	SetCurrent bool
	// Keep, if positive, is the number of dated folders to keep: after the
	// switch, the dated folders beyond the Keep newest (by date, then
	// suffix) are removed, except the current model's, the one before it in
	// that order and the one just published, which are never removed. Zero
	// keeps every folder.
	Keep int
}

// Publication says what PublishWith did.
type Publication struct {
	Dir      string   // the new dated folder
	Current  bool     // whether the new model was made current
	Previous string   // the folder that was current before, "" if none
	Removed  []string // dated folders removed by retention, oldest first
}

// publishHook, when set by a test, runs at each stage of Publish and stops it
// with the error it returns, to prove that a failure at that stage leaves the
// current model untouched.
var publishHook func(stage string) error

func hook(stage string) error {
	if publishHook == nil {
		return nil
	}
	return publishHook(stage)
}

// Publish saves m as a new dated model and makes it current, unless it is
// older than the current model (see PublishWith). It returns the path of the
// new model folder. It is PublishWith(m, nil): it does not wait for another
// job's lock and keeps every dated folder.
func (s Store) Publish(m *Model) (string, error) {
	p, err := s.PublishWith(m, nil)
	if err != nil {
		return "", err
	}
	return p.Dir, nil
}

// PublishWith saves m as a new dated model folder under the store's lock and
// makes it current unless it is a backfill (see PublishOptions), then applies
// the retention. On error the current model is unchanged. It returns an error
// wrapping ErrLocked when another job holds the store past the timeout, and
// ErrInvalidModel for a model that fails its checks or does not read back
// bit for bit. A failure of the retention after a successful switch is
// returned with the Publication filled in.
func (s Store) PublishWith(m *Model, opts *PublishOptions) (*Publication, error) {
	var o PublishOptions
	if opts != nil {
		o = *opts
	}
	if err := m.check(); err != nil {
		return nil, err
	}
	if err := os.MkdirAll(s.Dir, 0o755); err != nil {
		return nil, fmt.Errorf("riskmodel: publish: %w", err)
	}
	l, err := s.lock(o.LockTimeout)
	if err != nil {
		return nil, fmt.Errorf("riskmodel: publish: %w", err)
	}
	defer l.unlock()
	s.removeStaging()
	staging, err := os.MkdirTemp(s.Dir, stagingPrefix(m.AsOf))
	if err != nil {
		return nil, fmt.Errorf("riskmodel: publish: %w", err)
	}
	fail := func(err error) (*Publication, error) {
		os.RemoveAll(staging)
		return nil, fmt.Errorf("riskmodel: publish: %w", err)
	}
	// MkdirTemp makes the folder private to its owner; a published model is
	// read by other users (the analyst, the optimizer), so open it up as a
	// plain MkdirAll would.
	if err := os.Chmod(staging, 0o755); err != nil {
		return fail(err)
	}
	if err := hook("staging"); err != nil {
		return fail(err)
	}
	if err := SaveModel(staging, m); err != nil {
		return fail(err)
	}
	if err := hook("written"); err != nil {
		return fail(err)
	}
	back, err := LoadModel(staging)
	if err != nil {
		return fail(fmt.Errorf("reading the new model back: %w", err))
	}
	if !m.equal(back) {
		return fail(fmt.Errorf("%w: the model read back differs from the one written", ErrInvalidModel))
	}
	if err := hook("verified"); err != nil {
		return fail(err)
	}
	name := s.freeName(m.AsOf.String())
	final := filepath.Join(s.Dir, name)
	if err := os.Rename(staging, final); err != nil {
		return fail(err)
	}
	pub := &Publication{Dir: final}
	if err := hook("renamed"); err != nil {
		// The dated folder exists but is not current; keep it for inspection.
		return nil, fmt.Errorf("riskmodel: publish: %w", err)
	}
	old, _ := os.Readlink(filepath.Join(s.Dir, currentLink))
	pub.Previous = old
	if old != "" && !filepath.IsAbs(old) {
		pub.Previous = filepath.Join(s.Dir, old)
	}
	if d, ok := folderDate(filepath.Base(old)); ok && m.AsOf < d && !o.SetCurrent {
		// A backfill: the dated folder is published, current stays.
		if err := syncDir(s.Dir); err != nil {
			return nil, fmt.Errorf("riskmodel: publish: %w", err)
		}
	} else {
		if err := s.switchCurrent(name); err != nil {
			return nil, fmt.Errorf("riskmodel: publish: %w", err)
		}
		pub.Current = true
	}
	if o.Keep > 0 {
		removed, err := s.retain(o.Keep, name)
		pub.Removed = removed
		if err != nil {
			return pub, fmt.Errorf("riskmodel: publish: retention: %w", err)
		}
	}
	return pub, nil
}

// switchCurrent points "current" at the folder name with an atomic rename of
// a new link over the old one.
func (s Store) switchCurrent(name string) error {
	tmpLink := filepath.Join(s.Dir, ".current-"+name+"-p"+strconv.Itoa(os.Getpid()))
	os.Remove(tmpLink)
	if err := os.Symlink(name, tmpLink); err != nil {
		return err
	}
	if err := os.Rename(tmpLink, filepath.Join(s.Dir, currentLink)); err != nil {
		os.Remove(tmpLink)
		return err
	}
	return syncDir(s.Dir)
}

// freeName returns base when no folder of that date exists, else base.N
// with N one more than the largest suffix of the date's folders, so that a
// rerun always sorts after the folders it follows, even when retention has
// removed the first of them.
func (s Store) freeName(base string) string {
	d, _ := ParseDate(base)
	last := 0
	if entries, err := os.ReadDir(s.Dir); err == nil {
		for _, e := range entries {
			if fd, n, ok := parseFolder(e.Name()); ok && fd == d {
				last = max(last, n)
			}
		}
	}
	for n := last + 1; ; n++ {
		name := base
		if n > 1 {
			name = base + "." + strconv.Itoa(n)
		}
		// Anything else of that name (a file, say) is not overwritten.
		if _, err := os.Lstat(filepath.Join(s.Dir, name)); errors.Is(err, os.ErrNotExist) {
			return name
		}
	}
}

// Current returns the path of the current model's folder.
func (s Store) Current() (string, error) {
	target, err := os.Readlink(filepath.Join(s.Dir, currentLink))
	if errors.Is(err, os.ErrNotExist) {
		return "", fmt.Errorf("riskmodel: %s: %w", s.Dir, ErrNoCurrent)
	}
	if err != nil {
		return "", fmt.Errorf("riskmodel: %w", err)
	}
	if !filepath.IsAbs(target) {
		target = filepath.Join(s.Dir, target)
	}
	return target, nil
}

// LoadCurrent reads the current model of the store.
func (s Store) LoadCurrent() (*Model, error) {
	dir, err := s.Current()
	if err != nil {
		return nil, err
	}
	return LoadModel(dir)
}
