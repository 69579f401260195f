package riskmodel

import (
	"cmp"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// folderDate returns the as-of date of a dated folder's name ("2026-11-30"
// or "2026-11-30.3") and whether the name is one.
func folderDate(name string) (Date, bool) {
	d, _, ok := parseFolder(name)
	return d, ok
}

// parseFolder splits a dated folder's name into its date and suffix (1 for
// no suffix).
func parseFolder(name string) (Date, int, bool) {
	base, suffix, dotted := strings.Cut(name, ".")
	d, err := ParseDate(base)
	if err != nil || d.String() != base {
		return 0, 0, false
	}
	n := 1
	if dotted {
		var err error
		if n, err = strconv.Atoi(suffix); err != nil || n < 2 || strconv.Itoa(n) != suffix {
			return 0, 0, false
		}
	}
	return d, n, true
}

// datedFolders lists the store's dated model folders, oldest first (by date,
// then suffix).
func (s Store) datedFolders() ([]string, error) {
	entries, err := os.ReadDir(s.Dir)
	if err != nil {
		return nil, err
	}
	type folder struct {
		name   string
		date   Date
		suffix int
	}
	var fs []folder
	for _, e := range entries {
		if !e.IsDir() {
			continue
		}
		if d, n, ok := parseFolder(e.Name()); ok {
			fs = append(fs, folder{e.Name(), d, n})
		}
	}
	slices.SortFunc(fs, func(a, b folder) int {
		return cmp.Or(cmp.Compare(a.date, b.date), cmp.Compare(a.suffix, b.suffix))
	})
	names := make([]string, len(fs))
	for i, f := range fs {
		names[i] = f.name
	}
	return names, nil
}

// retain removes the dated folders beyond the keep newest, sparing the
// current model's folder, the one before it and the folder just published.
// It runs under the lock, after the switch of "current".
func (s Store) retain(keep int, published string) ([]string, error) {
	names, err := s.datedFolders()
	if err != nil {
		return nil, err
	}
	spare := map[string]bool{published: true}
	if cur, err := os.Readlink(filepath.Join(s.Dir, currentLink)); err == nil {
		cur = filepath.Base(cur)
		spare[cur] = true
		if i := slices.Index(names, cur); i > 0 {
			spare[names[i-1]] = true
		}
	}
	var removed []string
	for _, name := range names[:max(0, len(names)-keep)] {
		if spare[name] {
			continue
		}
		if err := os.RemoveAll(filepath.Join(s.Dir, name)); err != nil {
			return removed, err
		}
		removed = append(removed, filepath.Join(s.Dir, name))
	}
	if len(removed) > 0 {
		return removed, syncDir(s.Dir)
	}
	return removed, nil
}
