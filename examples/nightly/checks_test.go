package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/gob"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/factor"
)

// With nightlyChildEnv set, the test binary is the nightly job: TestMain
// runs it on the arguments and exits, so that tests can start several jobs
// as separate processes without building the program.
const nightlyChildEnv = "RISKMODEL_TEST_NIGHTLY_CHILD"

func TestMain(m *testing.M) {
	if os.Getenv(nightlyChildEnv) != "" {
		os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

// marketPanel reads back the returns of smallMarket's folder.
func marketPanel(t *testing.T, dir string) *riskmodel.Panel {
	t.Helper()
	p, err := riskmodel.ReadReturns(filepath.Join(dir, "returns.parquet"), nil)
	require.NoError(t, err)
	return p
}

// withReturns writes a return file made from p's returns by f (and p's
// dates, or dates when given) and returns args pointing -returns at it.
func withReturns(t *testing.T, args []string, p *riskmodel.Panel, dates []riskmodel.Date, ppy float64, f func(i, j int, v float64) float64) []string {
	t.Helper()
	tt, n := p.Dims()
	if dates == nil {
		dates = p.Dates()
	}
	x := mat.NewDense(len(dates), n, nil)
	for i := range dates {
		for j := 0; j < n; j++ {
			v := math.NaN()
			if i < tt {
				v = p.At(i, j)
			}
			x.Set(i, j, f(i, j, v))
		}
	}
	q, err := riskmodel.NewPanel(dates, p.Assets(), x, ppy)
	require.NoError(t, err)
	path := filepath.Join(t.TempDir(), "returns.parquet")
	require.NoError(t, riskmodel.WriteReturnsParquetFile(path, q))
	out := append([]string(nil), args...)
	for i := range out {
		if out[i] == "-returns" {
			out[i+1] = path
		}
	}
	return out
}

func keep(_, _ int, v float64) float64 { return v }

func readManifest(t *testing.T, dir string) map[string]any {
	t.Helper()
	js, err := os.ReadFile(filepath.Join(dir, "model.json"))
	require.NoError(t, err)
	var man map[string]any
	require.NoError(t, json.Unmarshal(js, &man))
	return man
}

// TestPricesAndPercentRefused: a file of prices, or of percent returns with
// no value at or below −1 (which the reader would refuse), is refused with
// exit 2 and the likely cause; -accept-implausible builds anyway and warns.
// Both were published before.
func TestPricesAndPercentRefused(t *testing.T) {
	dir, args := smallMarket(t, false)
	p := marketPanel(t, dir)
	_, n := p.Dims()
	level := make([]float64, n)
	prices := withReturns(t, args, p, nil, 0, func(i, j int, v float64) float64 {
		if i == 0 {
			level[j] = 100
		}
		if !math.IsNaN(v) {
			level[j] *= 1 + v
			return level[j]
		}
		return v
	})
	percent := withReturns(t, args, p, nil, 0, func(_, _ int, v float64) float64 {
		return math.Max(100*v, -0.9) // percent, with the losses beyond 0.9 % cut so that none is ≤ −1
	})
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"prices", prices, "the returns look like prices, not returns (every value is positive"},
		{"percent", percent, "the returns look like percent returns (divide by 100)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			store := t.TempDir()
			code, _, errs := runJob(append(tc.args, "-out", store, "-method", "ledoit-wolf")...)
			require.Equal(t, 2, code, errs)
			require.Contains(t, lastMsg(t, errs), tc.want)
			require.Contains(t, lastMsg(t, errs), "-accept-implausible builds anyway")
			_, err := riskmodel.Store{Dir: store}.Current()
			require.ErrorIs(t, err, riskmodel.ErrNoCurrent)

			code, _, errs = runJob(append(tc.args, "-out", store, "-method", "ledoit-wolf", "-accept-implausible", "-max-condition", "1e12")...)
			require.Equal(t, 0, code, errs)
			require.Contains(t, errs, "-accept-implausible: building from returns that fail the units check")
		})
	}
	// The real returns pass.
	code, _, errs := runJob(append(args, "-out", t.TempDir())...)
	require.Equal(t, 0, code, errs)
}

// TestWeeklyDatesInferred: returns 7 days apart in a file that says 252
// periods a year are annualised as weekly, and the record says why; an
// explicit -periods-per-year 252 is refused, 52 is accepted.
func TestWeeklyDatesInferred(t *testing.T) {
	dir, args := smallMarket(t, false)
	p := marketPanel(t, dir)
	tt, _ := p.Dims()
	weeks := make([]riskmodel.Date, tt)
	for i := range weeks {
		weeks[i] = riskmodel.DateOf(2026, 1, 2).AddDays(7 * i)
	}
	weekly := withReturns(t, args, p, weeks, 252, keep)
	store := t.TempDir()
	code, _, errs := runJob(append(weekly, "-out", store)...)
	require.Equal(t, 0, code, errs)
	require.Contains(t, errs, "periods per year of the file do not match its dates")
	m, err := riskmodel.Store{Dir: store}.LoadCurrent()
	require.NoError(t, err)
	require.Equal(t, 52.0, m.PeriodsPerYear)
	require.Equal(t, "52 inferred from the dates: weekly (median gap 7 days) (the file said 252)", m.Settings["periods_per_year_source"])

	code, _, errs = runJob(append(weekly, "-out", t.TempDir(), "-periods-per-year", "252")...)
	require.Equal(t, 2, code, errs)
	require.Contains(t, lastMsg(t, errs), "-periods-per-year 252, but the dates of")
	require.Contains(t, lastMsg(t, errs), "are weekly (median gap 7 days), which takes 48 to 53 periods a year")

	code, _, errs = runJob(append(weekly, "-out", t.TempDir(), "-periods-per-year", "52")...)
	require.Equal(t, 0, code, errs)

	// Daily data keep the file's number.
	store = t.TempDir()
	code, _, errs = runJob(append(args, "-out", store)...)
	require.Equal(t, 0, code, errs)
	m, err = riskmodel.Store{Dir: store}.LoadCurrent()
	require.NoError(t, err)
	require.Equal(t, 252.0, m.PeriodsPerYear)
	require.Contains(t, m.Settings["periods_per_year_source"], "252 from the file or its format's default; dates daily")
}

// TestDatesRefused: too few dates, an -asof past the data, and a stray row
// on a late date are refused with the numbers; -window longer than the data
// warns and the record says what was used.
func TestDatesRefused(t *testing.T) {
	dir, args := smallMarket(t, false)
	p := marketPanel(t, dir)
	tt, _ := p.Dims()
	last := p.Date(tt - 1)

	code, _, errs := runJob(append(args, "-out", t.TempDir(), "-window", "30")...)
	require.Equal(t, 2, code, errs)
	require.Contains(t, lastMsg(t, errs), "has 30 dates, fewer than -min-dates 60")

	code, _, errs = runJob(append(args, "-out", t.TempDir(), "-asof", "2040-01-01")...)
	require.Equal(t, 2, code, errs)
	require.Contains(t, lastMsg(t, errs), fmt.Sprintf("-asof 2040-01-01 is %d days after the last date with data, %s (at most 4 days",
		int(riskmodel.DateOf(2040, 1, 1)-last), last))
	// A weekend after the last date is fine.
	code, _, errs = runJob(append(args, "-out", t.TempDir(), "-asof", last.AddDays(3).String())...)
	require.Equal(t, 0, code, errs)

	stray := withReturns(t, args, p, append(p.Dates(), riskmodel.DateOf(2099, 1, 1)), 0, func(i, j int, v float64) float64 {
		if i == tt {
			if j == 0 {
				return 0.01
			}
			return math.NaN()
		}
		return v
	})
	code, _, errs = runJob(append(stray, "-out", t.TempDir())...)
	require.Equal(t, 2, code, errs)
	require.Contains(t, lastMsg(t, errs), "the last date 2099-01-01 has returns for 1 assets against a median of")
	require.Contains(t, lastMsg(t, errs), "a stale or stray row")
	code, _, errs = runJob(append(stray, "-out", t.TempDir(), "-asof", last.String())...)
	require.Equal(t, 0, code, errs)

	store := t.TempDir()
	code, _, errs = runJob(append(args, "-out", store, "-window", "2000", "-min-coverage", "0")...)
	require.Equal(t, 0, code, errs)
	require.Contains(t, errs, "-window is longer than the history up to -asof: using what there is")
	m, err := riskmodel.Store{Dir: store}.LoadCurrent()
	require.NoError(t, err)
	require.Equal(t, strconv.Itoa(tt), m.Settings["window"])
	require.Equal(t, "2000", m.Settings["window_requested"])
}

// TestBackfillAndRetention: an older -asof publishes a dated folder and
// keeps current, unless -set-current; -keep bounds the dated folders.
func TestBackfillAndRetention(t *testing.T) {
	dir, args := smallMarket(t, false)
	p := marketPanel(t, dir)
	tt, _ := p.Dims()
	store := riskmodel.Store{Dir: t.TempDir()}
	code, _, errs := runJob(append(args, "-out", store.Dir, "-min-coverage", "0")...)
	require.Equal(t, 0, code, errs)
	latest, err := store.Current()
	require.NoError(t, err)

	old := p.Date(tt - 20).String()
	code, out, errs := runJob(append(args, "-out", store.Dir, "-min-coverage", "0", "-asof", old)...)
	require.Equal(t, 0, code, errs)
	require.Contains(t, out, "Not made current (a backfill): current stays at "+latest)
	require.Contains(t, errs, "backfill: published as a dated folder; current stays (give -set-current to make it current)")
	cur, _ := store.Current()
	require.Equal(t, latest, cur)
	_, err = os.Stat(filepath.Join(store.Dir, old))
	require.NoError(t, err, "the backfilled folder is there")

	code, _, errs = runJob(append(args, "-out", store.Dir, "-min-coverage", "0", "-asof", old, "-set-current")...)
	require.Equal(t, 0, code, errs)
	cur, _ = store.Current()
	require.Equal(t, old+".2", filepath.Base(cur))

	// Reruns with -keep 2: the two newest stay, and current is one of them.
	for range 3 {
		code, _, errs = runJob(append(args, "-out", store.Dir, "-min-coverage", "0", "-keep", "2")...)
		require.Equal(t, 0, code, errs)
	}
	require.Contains(t, errs, "retention: removed an old model")
	entries, err := os.ReadDir(store.Dir)
	require.NoError(t, err)
	var dated []string
	for _, e := range entries {
		if e.IsDir() && !strings.HasPrefix(e.Name(), ".") {
			dated = append(dated, e.Name())
		}
	}
	last := p.Date(tt - 1).String()
	require.Equal(t, []string{last + ".3", last + ".4"}, dated)
	cur, _ = store.Current()
	require.Equal(t, last+".4", filepath.Base(cur))
}

// TestOutputsCheckedFirst: an -out or -dense the job cannot write is bad
// input found before the returns are read.
func TestOutputsCheckedFirst(t *testing.T) {
	_, args := smallMarket(t, false)
	file := filepath.Join(t.TempDir(), "file")
	require.NoError(t, os.WriteFile(file, nil, 0o644))
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"out is a file", []string{"-out", file}, "-out " + file + " is not a folder"},
		{"out below a file", []string{"-out", filepath.Join(file, "store")}, "-out: cannot create the store"},
		{"dense in a missing folder", []string{"-out", t.TempDir(), "-dense", filepath.Join(t.TempDir(), "no", "cov.csv")}, "-dense: cannot write next to"},
		{"dense is a folder", []string{"-out", t.TempDir(), "-dense", t.TempDir()}, "is a folder, not a file"},
	}
	if os.Geteuid() != 0 { // root writes into read-only folders
		ro := t.TempDir()
		require.NoError(t, os.Chmod(ro, 0o555))
		cases = append(cases, struct {
			name string
			args []string
			want string
		}{"out read-only", []string{"-out", ro}, "-out: cannot write into the store"})
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			code, _, errs := runJob(append(args, tc.args...)...)
			require.Equal(t, 2, code, errs)
			require.Contains(t, lastMsg(t, errs), tc.want)
			require.NotContains(t, errs, "read returns", "checked before reading")
		})
	}
}

// TestDefaultStoreIsTheUsers: the -out default is the user's cache folder,
// and a planted link at the fallback in the shared temporary folder is
// refused.
func TestDefaultStoreIsTheUsers(t *testing.T) {
	cache := t.TempDir()
	t.Setenv("XDG_CACHE_HOME", cache)
	cfg, err := parseFlags([]string{"-returns", "r.csv", "-assets", "a.csv"}, os.Stderr)
	require.NoError(t, err)
	require.Equal(t, filepath.Join(cache, "riskmodel", "store"), cfg.out)

	tmp := t.TempDir()
	t.Setenv("XDG_CACHE_HOME", "")
	t.Setenv("HOME", "")
	t.Setenv("TMPDIR", tmp)
	require.NoError(t, os.Symlink(t.TempDir(), filepath.Join(tmp, "riskmodel-"+strconv.Itoa(os.Getuid()))))
	code, _, errs := runJob("-returns", "r.csv", "-assets", "a.csv")
	require.Equal(t, 2, code, errs)
	require.Contains(t, lastMsg(t, errs), "is a symbolic link: refusing to write through it")
}

// corruptInfo rewrites the factor diagnostics of a published model with one
// more asset than the model has, and fixes the checksums so that only the
// consistency check can find it.
func corruptInfo(t *testing.T, dir string) {
	t.Helper()
	path := filepath.Join(dir, "factor_info.gob")
	raw, err := os.ReadFile(path)
	require.NoError(t, err)
	var info factor.Info
	require.NoError(t, gob.NewDecoder(bytes.NewReader(raw)).Decode(&info))
	info.Assets = append(info.Assets, "QX999")
	var buf bytes.Buffer
	require.NoError(t, gob.NewEncoder(&buf).Encode(info))
	require.NoError(t, os.WriteFile(path, buf.Bytes(), 0o644))
	js, err := os.ReadFile(filepath.Join(dir, "model.json"))
	require.NoError(t, err)
	var man map[string]any
	require.NoError(t, json.Unmarshal(js, &man))
	sum := sha256.Sum256(buf.Bytes())
	man["files"].(map[string]any)["factor_info.gob"] = hex.EncodeToString(sum[:])
	js, err = json.MarshalIndent(man, "", "  ")
	require.NoError(t, err)
	js = append(js, '\n')
	require.NoError(t, os.WriteFile(filepath.Join(dir, "model.json"), js, 0o644))
	msum := sha256.Sum256(js)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "model.sha256"), []byte(hex.EncodeToString(msum[:])+"  model.json\n"), 0o644))
}

// TestUnreadableCurrent: a current model whose files agree with their
// checksums but not with each other made every later run panic (exit 2,
// "bad input" to a scheduler); now the job warns and builds without it.
func TestUnreadableCurrent(t *testing.T) {
	_, args := smallMarket(t, false)
	store := riskmodel.Store{Dir: t.TempDir()}
	code, _, errs := runJob(append(args, "-out", store.Dir)...)
	require.Equal(t, 0, code, errs)
	cur, err := store.Current()
	require.NoError(t, err)
	corruptInfo(t, cur)
	_, err = store.LoadCurrent()
	require.ErrorIs(t, err, riskmodel.ErrInvalidModel)

	code, out, errs := runJob(append(args, "-out", store.Dir)...)
	require.Equal(t, 0, code, errs)
	require.Contains(t, errs, "current model unreadable: building without it")
	require.NotContains(t, out, "Change from the model of")
	_, err = store.LoadCurrent()
	require.NoError(t, err)
}

// TestCompareAfterMethodChange: from a factor model to a dense one the
// comparison lists total volatility against total volatility; the previous
// value is the factor model's √(252·Σ_ii), computed here from the loaded
// model, not its specific volatility.
func TestCompareAfterMethodChange(t *testing.T) {
	_, args := smallMarket(t, false)
	store := riskmodel.Store{Dir: t.TempDir()}
	code, _, errs := runJob(append(args, "-out", store.Dir)...)
	require.Equal(t, 0, code, errs)
	prev, err := store.LoadCurrent()
	require.NoError(t, err)
	code, out, errs := runJob(append(args, "-out", store.Dir, "-method", "nonlinear")...)
	require.Equal(t, 0, code, errs)
	i := strings.Index(out, "largest changes in total volatility (a year)\n")
	require.GreaterOrEqual(t, i, 0, out)
	line := strings.Fields(strings.SplitN(out[i:], "\n", 3)[1])
	require.Len(t, line, 6, "asset, previous, %%, →, current, %%")
	col := -1
	for j, a := range prev.Assets {
		if a == line[0] {
			col = j
		}
	}
	require.GreaterOrEqual(t, col, 0)
	total := 100 * math.Sqrt(prev.PeriodsPerYear*prev.Factor.At(col, col))
	printed, err := strconv.ParseFloat(line[1], 64)
	require.NoError(t, err)
	require.InDelta(t, total, printed, 0.0005)
}

// TestManifestRecordsTheRun: model.json says the units, where the periods
// per year came from, the grouping of the specific shrinkage and the
// validation results.
func TestManifestRecordsTheRun(t *testing.T) {
	_, args := smallMarket(t, false)
	store := riskmodel.Store{Dir: t.TempDir()}
	code, _, errs := runJob(append(args, "-out", store.Dir)...)
	require.Equal(t, 0, code, errs)
	cur, err := store.Current()
	require.NoError(t, err)
	man := readManifest(t, cur)
	require.Equal(t, "simple decimal returns per period (0.01 = 1 %)", man["returns"])
	require.Equal(t, 252.0, man["periods_per_year"])
	settings := man["settings"].(map[string]any)
	require.Contains(t, settings["periods_per_year_source"], "dates daily (median gap 1 days)")
	require.Regexp(t, `^sector: \d+ groups$`, settings["specific_groups"])
	v := man["validation"].(map[string]any)
	for _, k := range []string{"finite", "positive_definite", "condition", "min_eigenvalue", "bias", "bias_band", "benchmark_weight_covered", "problems"} {
		require.Contains(t, v, k)
	}
	require.Equal(t, "true", v["positive_definite"])
}

// TestLockTimeout: a store another job holds makes the job wait
// -lock-timeout and exit 1 naming the holder; nothing is published.
func TestLockTimeout(t *testing.T) {
	_, args := smallMarket(t, false)
	store := t.TempDir()
	f, err := os.OpenFile(filepath.Join(store, ".lock"), os.O_RDWR|os.O_CREATE, 0o644)
	require.NoError(t, err)
	defer f.Close()
	require.NoError(t, syscall.Flock(int(f.Fd()), syscall.LOCK_EX))
	_, err = f.WriteString("pid 4242 since 2031-01-02T03:04:05Z\n")
	require.NoError(t, err)
	code, _, errs := runJob(append(args, "-out", store, "-lock-timeout", "150ms")...)
	require.Equal(t, 1, code, errs)
	require.Contains(t, lastMsg(t, errs), "another job (pid 4242 since 2031-01-02T03:04:05Z) holds the store")
	_, err = riskmodel.Store{Dir: store}.Current()
	require.ErrorIs(t, err, riskmodel.ErrNoCurrent)
}

// TestOverlappingJobs starts three nightly jobs at once on one store, as
// separate processes, a few times: every job exits 0 with its own complete
// folder, and current loads and equals one of them bit for bit. Before the
// lock, most overlapping jobs failed and some reported an empty folder.
// The many-round version of this test is the library's TestConcurrentPublish.
func TestOverlappingJobs(t *testing.T) {
	rounds := 3
	if testing.Short() {
		rounds = 1
	}
	_, args := smallMarket(t, false)
	exe, err := os.Executable()
	require.NoError(t, err)
	store := riskmodel.Store{Dir: t.TempDir()}
	for round := 0; round < rounds; round++ {
		cmds := make([]*exec.Cmd, 3)
		outs, logs := make([]*bytes.Buffer, 3), make([]*bytes.Buffer, 3)
		for j := range cmds {
			cmds[j] = exec.Command(exe, append(args, "-out", store.Dir, "-method", "ledoit-wolf", "-lock-timeout", "5m")...)
			cmds[j].Env = append(os.Environ(), nightlyChildEnv+"=1")
			outs[j], logs[j] = new(bytes.Buffer), new(bytes.Buffer)
			cmds[j].Stdout, cmds[j].Stderr = outs[j], logs[j]
			require.NoError(t, cmds[j].Start())
		}
		errs := make([]error, 3)
		for j, cmd := range cmds {
			errs[j] = cmd.Wait()
		}
		var models []*riskmodel.Model
		for j := range cmds {
			require.NoError(t, errs[j], "round %d job %d: %s", round, j, logs[j])
			line := lastLine(outs[j].String())
			i := strings.LastIndex(line, " to ")
			require.True(t, strings.HasPrefix(line, "Published ") && i > 0, line)
			dir := line[i+4:]
			m, err := riskmodel.LoadModel(dir)
			require.NoError(t, err, "round %d job %d", round, j)
			models = append(models, m)
		}
		cur, err := store.LoadCurrent()
		require.NoError(t, err)
		match := false
		for _, m := range models {
			match = match || (m.AsOf == cur.AsOf && mat.Equal(m.Dense, cur.Dense))
		}
		require.True(t, match, "round %d: current is one of the published models", round)
	}
}

// TestOrderStatistic checks the selection against sorting (the naive
// reference): random values, many ties, sorted and reversed input, tiny slices.
func TestOrderStatistic(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	cases := map[string][]float64{"one": {0.5}, "two": {2, 1}}
	for _, n := range []int{17, 100, 1001, 50000} {
		random, ties, sorted := make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range n {
			random[i] = rng.NormFloat64()
			ties[i] = float64(rng.IntN(3))
			sorted[i] = float64(i)
		}
		reversed := slices.Clone(sorted)
		slices.Reverse(reversed)
		cases[fmt.Sprint("random ", n)] = random
		cases[fmt.Sprint("ties ", n)] = ties
		cases[fmt.Sprint("sorted ", n)] = sorted
		cases[fmt.Sprint("reversed ", n)] = reversed
	}
	for name, a := range cases {
		want := slices.Sorted(slices.Values(a))
		for _, k := range []int{0, len(a) / 2, len(a) - 1} {
			got := orderStatistic(slices.Clone(a), k)
			require.Equal(t, want[k], got, "%s, k = %d", name, k)
		}
	}
}
