package riskmodel

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

func dated(t *testing.T, m *Model, asof Date) *Model {
	t.Helper()
	c := *m
	c.AsOf = asof
	return &c
}

// TestPublishBackfillKeepsCurrent: a model older than the current one is
// published as a dated folder but does not become current unless asked; a
// rerun of the current date does.
func TestPublishBackfillKeepsCurrent(t *testing.T) {
	s := Store{Dir: t.TempDir()}
	base := testDenseModel(t, 5)
	newer := dated(t, base, DateOf(2026, 12, 1))
	p, err := s.PublishWith(newer, nil)
	require.NoError(t, err)
	require.True(t, p.Current)
	require.Empty(t, p.Previous)

	back := dated(t, base, DateOf(2026, 6, 30))
	p, err = s.PublishWith(back, nil)
	require.NoError(t, err)
	require.False(t, p.Current, "a backfill does not move current backwards")
	require.Equal(t, filepath.Join(s.Dir, "2026-06-30"), p.Dir)
	cur, err := s.Current()
	require.NoError(t, err)
	require.Equal(t, "2026-12-01", filepath.Base(cur))
	m, err := LoadModel(p.Dir)
	require.NoError(t, err)
	require.True(t, back.equal(m), "the backfilled folder is complete")

	p, err = s.PublishWith(dated(t, base, DateOf(2026, 7, 31)), &PublishOptions{SetCurrent: true})
	require.NoError(t, err)
	require.True(t, p.Current)
	require.Equal(t, filepath.Join(s.Dir, "2026-12-01"), p.Previous)
	cur, _ = s.Current()
	require.Equal(t, "2026-07-31", filepath.Base(cur))

	// Publish (no options) of an older date keeps current too; of the same
	// date (a rerun) switches.
	path, err := s.Publish(dated(t, base, DateOf(2026, 7, 1)))
	require.NoError(t, err)
	cur, _ = s.Current()
	require.Equal(t, "2026-07-31", filepath.Base(cur))
	require.Equal(t, "2026-07-01", filepath.Base(path))
	path, err = s.Publish(dated(t, base, DateOf(2026, 7, 31)))
	require.NoError(t, err)
	cur, _ = s.Current()
	require.Equal(t, path, cur)
	require.Equal(t, "2026-07-31.2", filepath.Base(cur))
}

// TestPublishRetention: Keep removes the oldest dated folders, never the
// current one, the one before it or the one just published.
func TestPublishRetention(t *testing.T) {
	s := Store{Dir: t.TempDir()}
	base := testDenseModel(t, 4)
	for _, d := range []Date{DateOf(2026, 1, 5), DateOf(2026, 1, 6), DateOf(2026, 1, 7)} {
		_, err := s.Publish(dated(t, base, d))
		require.NoError(t, err)
	}
	// Three reruns of the 8th with Keep 2.
	var p *Publication
	var err error
	for range 3 {
		p, err = s.PublishWith(dated(t, base, DateOf(2026, 1, 8)), &PublishOptions{Keep: 2})
		require.NoError(t, err)
	}
	require.Equal(t, []string{filepath.Join(s.Dir, "2026-01-08")}, p.Removed)
	names, err := s.datedFolders()
	require.NoError(t, err)
	require.Equal(t, []string{"2026-01-08.2", "2026-01-08.3"}, names)
	// The next rerun is .4, not the freed 2026-01-08, which would sort
	// before the folders it follows.
	p, err = s.PublishWith(dated(t, base, DateOf(2026, 1, 8)), &PublishOptions{Keep: 2})
	require.NoError(t, err)
	require.Equal(t, filepath.Join(s.Dir, "2026-01-08.4"), p.Dir)
	names, _ = s.datedFolders()
	require.Equal(t, []string{"2026-01-08.3", "2026-01-08.4"}, names)

	// A backfill with Keep 1: the current folder and the one before it stay,
	// and so does the backfill just published, though it is the oldest.
	p, err = s.PublishWith(dated(t, base, DateOf(2025, 12, 31)), &PublishOptions{Keep: 1})
	require.NoError(t, err)
	require.False(t, p.Current)
	require.Empty(t, p.Removed)
	names, _ = s.datedFolders()
	require.Equal(t, []string{"2025-12-31", "2026-01-08.3", "2026-01-08.4"}, names)
	// The next nightly with Keep 1 removes what is no longer protected.
	p, err = s.PublishWith(dated(t, base, DateOf(2026, 1, 9)), &PublishOptions{Keep: 1})
	require.NoError(t, err)
	names, _ = s.datedFolders()
	require.Equal(t, []string{"2026-01-08.4", "2026-01-09"}, names)
	require.Len(t, p.Removed, 2)
	_, err = s.LoadCurrent()
	require.NoError(t, err)
}

// TestPublishWaitsForTheLock: a store locked by another holder makes Publish
// fail at once (no timeout) naming the holder, or wait for the lock.
func TestPublishWaitsForTheLock(t *testing.T) {
	s := Store{Dir: t.TempDir()}
	m := testDenseModel(t, 4)
	l, err := s.lock(0)
	require.NoError(t, err)
	_, err = s.PublishWith(m, &PublishOptions{LockTimeout: 60 * time.Millisecond})
	require.ErrorIs(t, err, ErrLocked)
	require.ErrorContains(t, err, "another job (pid "+strconv.Itoa(os.Getpid())+" since ")
	require.ErrorContains(t, err, "waited 60ms")
	_, err = s.Current()
	require.ErrorIs(t, err, ErrNoCurrent, "nothing was published")

	go func() {
		time.Sleep(100 * time.Millisecond)
		l.unlock()
	}()
	p, err := s.PublishWith(m, &PublishOptions{LockTimeout: time.Minute})
	require.NoError(t, err)
	require.True(t, p.Current)
}

// TestPublishSparesLiveStaging: cleanup removes the staging folders of dead
// jobs and of jobs from before the lock, not those of a live process.
func TestPublishSparesLiveStaging(t *testing.T) {
	s := Store{Dir: t.TempDir()}
	dead := exec.Command("true")
	require.NoError(t, dead.Run())
	live := os.Getppid() // the go command that runs this test
	names := map[string]bool{
		".staging-2026-11-30-p" + strconv.Itoa(live) + "-123":             true,
		".staging-2026-11-30-p" + strconv.Itoa(dead.Process.Pid) + "-456": false,
		".staging-2026-11-30-789":                                         false, // no owner recorded
		".current-2026-11-30-p" + strconv.Itoa(dead.Process.Pid):          false,
	}
	for name := range names {
		require.NoError(t, os.MkdirAll(filepath.Join(s.Dir, name), 0o755))
	}
	_, err := s.Publish(testDenseModel(t, 4))
	require.NoError(t, err)
	for name, kept := range names {
		_, err := os.Stat(filepath.Join(s.Dir, name))
		require.Equal(t, kept, err == nil, name)
	}
}

func TestOwnerPID(t *testing.T) {
	for name, want := range map[string]int{
		".staging-2026-11-30-p1234-998877": 1234,
		".current-2026-11-30.2-p77":        77,
		".staging-2026-11-30-998877":       0,
		".current-2026-11-30":              0,
	} {
		require.Equal(t, want, ownerPID(name), name)
	}
}

// TestManifestIsCovered: an edit to model.json (periods per year 252 → 12,
// which would change every annualised number) is refused, as is a folder
// without the digest.
func TestManifestIsCovered(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "m")
	require.NoError(t, SaveModel(dir, testFactorModel(t, 1, 10, 2)))
	path := filepath.Join(dir, manifestFile)
	js, err := os.ReadFile(path)
	require.NoError(t, err)
	var man map[string]any
	require.NoError(t, json.Unmarshal(js, &man))
	man["periods_per_year"] = 12
	edited, err := json.MarshalIndent(man, "", "  ")
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(path, append(edited, '\n'), 0o644))
	_, err = LoadModel(dir)
	require.ErrorIs(t, err, ErrInvalidModel)
	require.ErrorContains(t, err, "model.json does not match model.sha256")

	require.NoError(t, os.WriteFile(path, js, 0o644))
	_, err = LoadModel(dir)
	require.NoError(t, err, "the original manifest loads")
	require.NoError(t, os.Remove(filepath.Join(dir, digestFile)))
	_, err = LoadModel(dir)
	require.ErrorIs(t, err, ErrInvalidModel)
	require.ErrorContains(t, err, "no model.sha256")
}

// TestManifestRecordsUnits: model.json says what the numbers are.
func TestManifestRecordsUnits(t *testing.T) {
	m := testFactorModel(t, 1, 10, 2)
	m.Validation = map[string]string{"condition": "12.5", "positive_definite": "true"}
	dir := filepath.Join(t.TempDir(), "m")
	require.NoError(t, SaveModel(dir, m))
	js, err := os.ReadFile(filepath.Join(dir, manifestFile))
	require.NoError(t, err)
	var man map[string]any
	require.NoError(t, json.Unmarshal(js, &man))
	require.Equal(t, "simple decimal returns per period (0.01 = 1 %)", man["returns"])
	require.Equal(t, "per period; multiply by periods_per_year to annualise", man["covariance_units"])
	require.Equal(t, 252.0, man["periods_per_year"])
	require.Equal(t, map[string]any{"condition": "12.5", "positive_definite": "true"}, man["validation"])
	back, err := LoadModel(dir)
	require.NoError(t, err)
	require.Equal(t, m.Validation, back.Validation)
}
