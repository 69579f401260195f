package riskmodel

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// Store is a folder of published models for a nightly job:
//
//	DIR/2026-11-30/      one folder per published model, named by its as-of date
//	DIR/2026-12-01/      (a second model for the same date gets a suffix, 2026-12-01.2)
//	DIR/current          a symbolic link to the folder of the current model
//
// Publish writes a new model into a staging folder, reads it back and checks
// it bit for bit, renames it to its dated name and only then switches
// "current" to it with an atomic rename of a new link over the old one. A
// crash or an error at any point leaves the previous current model as it
// was; at worst a staging folder (".staging-…") is left behind, which the
// next Publish removes.
type Store struct {
	Dir string
}

const currentLink = "current"

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

// Publish saves m as a new dated model and makes it current. It returns the
// path of the new model folder. On error the current model is unchanged.
func (s Store) Publish(m *Model) (string, error) {
	if err := m.check(); err != nil {
		return "", err
	}
	if err := os.MkdirAll(s.Dir, 0o755); err != nil {
		return "", fmt.Errorf("riskmodel: publish: %w", err)
	}
	s.removeStaging()
	staging, err := os.MkdirTemp(s.Dir, ".staging-"+m.AsOf.String()+"-")
	if err != nil {
		return "", fmt.Errorf("riskmodel: publish: %w", err)
	}
	fail := func(err error) (string, error) {
		os.RemoveAll(staging)
		return "", fmt.Errorf("riskmodel: publish: %w", err)
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
	if err := hook("renamed"); err != nil {
		// The dated folder exists but is not current; keep it for inspection.
		return "", fmt.Errorf("riskmodel: publish: %w", err)
	}
	tmpLink := filepath.Join(s.Dir, ".current-"+name)
	os.Remove(tmpLink)
	if err := os.Symlink(name, tmpLink); err != nil {
		return "", fmt.Errorf("riskmodel: publish: %w", err)
	}
	if err := os.Rename(tmpLink, filepath.Join(s.Dir, currentLink)); err != nil {
		os.Remove(tmpLink)
		return "", fmt.Errorf("riskmodel: publish: %w", err)
	}
	if err := syncDir(s.Dir); err != nil {
		return "", fmt.Errorf("riskmodel: publish: %w", err)
	}
	return final, nil
}

// freeName returns base, or base.2, base.3, … whichever is not yet taken.
func (s Store) freeName(base string) string {
	name := base
	for i := 2; ; i++ {
		if _, err := os.Lstat(filepath.Join(s.Dir, name)); errors.Is(err, os.ErrNotExist) {
			return name
		}
		name = base + "." + strconv.Itoa(i)
	}
}

// removeStaging deletes staging folders and links left by an interrupted
// Publish. They are never current, so removing them loses nothing.
func (s Store) removeStaging() {
	entries, err := os.ReadDir(s.Dir)
	if err != nil {
		return
	}
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".staging-") || strings.HasPrefix(e.Name(), ".current-") {
			os.RemoveAll(filepath.Join(s.Dir, e.Name()))
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
