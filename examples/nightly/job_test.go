package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel"
)

// fakeRepo lays out a repository root with go.mod and tiny demo files in the
// default places, and returns the root.
func fakeRepo(t *testing.T) string {
	t.Helper()
	root := t.TempDir()
	require.NoError(t, os.WriteFile(filepath.Join(root, "go.mod"), []byte("module example.test\n"), 0o644))
	demo := filepath.Join(root, "testdata", "demo")
	require.NoError(t, os.MkdirAll(demo, 0o755))
	nan := math.NaN()
	var dates []riskmodel.Date
	for i := 0; i < 8; i++ {
		dates = append(dates, riskmodel.DateOf(2031, 3, 3).AddDays(i))
	}
	// QN1 complete with one implausible return; QN2 listed on the third date;
	// QN3 delisted after the sixth with a run of five zero returns.
	r := mat.NewDense(8, 3, []float64{
		0.01, nan, 0,
		-0.02, nan, 0,
		0.015, 0.01, 0,
		1.6, -0.01, 0,
		0.005, 0.02, 0,
		-0.01, 0.00, 0.03,
		0.02, 0.01, nan,
		0.00, -0.03, nan,
	})
	p, err := riskmodel.NewPanel(dates, []string{"QN1", "QN2", "QN3"}, r, 0)
	require.NoError(t, err)
	require.NoError(t, riskmodel.WriteReturnsParquetFile(filepath.Join(demo, "returns.parquet"), p))
	require.NoError(t, riskmodel.WriteAssetsFile(filepath.Join(demo, "assets.csv"), []riskmodel.AssetInfo{
		{Asset: "QN1", Sector: "Harbour", MarketCap: math.NaN()},
		{Asset: "QN2", Sector: "Harbour", MarketCap: math.NaN()},
		{Asset: "QN3", Sector: "Orchard", MarketCap: math.NaN()},
		{Asset: "QN9", Sector: "Orchard", MarketCap: math.NaN()},
	}))
	require.NoError(t, riskmodel.WriteHoldingsFile(filepath.Join(demo, "fund.csv"), []riskmodel.Holding{{Asset: "QN1", Weight: 0.7}, {Asset: "QN2", Weight: 0.3}}))
	require.NoError(t, riskmodel.WriteHoldingsFile(filepath.Join(demo, "benchmark.csv"), []riskmodel.Holding{{Asset: "QN1", Weight: 0.5}, {Asset: "QN2", Weight: 0.5}}))
	return root
}

// smallMarket writes a generated invented market of 60 assets and 300 dates
// (600 when stationary: no missing returns) with assets, fund and benchmark
// into a temporary folder.
func smallMarket(t *testing.T, stationary bool) (dir string, args []string) {
	t.Helper()
	dates := 300
	if stationary {
		dates = 600 // room for the exposure methods' style look-back before a 500-date window's regressions
	}
	d, err := demo.Generate(&demo.Config{Seed: 5, Assets: 60, Dates: dates, Stationary: stationary})
	require.NoError(t, err)
	dir = t.TempDir()
	require.NoError(t, d.WriteFiles(dir))
	return dir, []string{
		"-returns", filepath.Join(dir, "returns.parquet"), "-assets", filepath.Join(dir, "assets.csv"),
		"-portfolio", filepath.Join(dir, "fund.csv"), "-benchmark", filepath.Join(dir, "benchmark.csv"),
		"-window", "250", "-min-coverage", "0.9",
	}
}

func runJob(args ...string) (code int, stdout, stderr string) {
	var out, errw bytes.Buffer
	code = run(args, &out, &errw)
	return code, out.String(), errw.String()
}

func lastLine(s string) string {
	lines := strings.Split(strings.TrimSpace(s), "\n")
	return lines[len(lines)-1]
}

// lastMsg returns the message of the last text-format log record, unquoted.
func lastMsg(t *testing.T, s string) string {
	t.Helper()
	line := lastLine(s)
	i := strings.Index(line, "msg=")
	require.GreaterOrEqual(t, i, 0, line)
	msg := line[i+4:]
	if strings.HasPrefix(msg, `"`) {
		q, err := strconv.QuotedPrefix(msg)
		require.NoError(t, err)
		msg, err = strconv.Unquote(q)
		require.NoError(t, err)
	}
	return msg
}

func TestQualitySummaryWithDefaultsFromASubdirectory(t *testing.T) {
	root := fakeRepo(t)
	sub := filepath.Join(root, "examples", "nightly")
	require.NoError(t, os.MkdirAll(sub, 0o755))
	t.Chdir(sub)
	store := t.TempDir()
	code, out, errs := runJob("-min-obs", "7", "-window", "8", "-min-dates", "8", "-method", "sample", "-min-coverage", "0", "-bias-window", "8", "-out", store)
	require.Equal(t, 0, code, errs)
	for _, want := range []string{
		"Data quality as of 2031-03-10: 8 dates from 2031-03-03 to 2031-03-10",
		"assets          3 in 2 sectors (metadata for 4; 0 without metadata; 1 in metadata without returns)",
		"coverage        83.33 % of 24 date-asset cells observed", // 8 + 6 + 6 = 20 of 24 cells
		"missing share   0.000 %",
		"listings        1 assets",
		"delistings      1 assets",
		"implausible     1 returns above 1",
		"QN1 2031-03-06 1.6000",
		"stale runs      1 runs of 5 or more zero returns",
		"QN3 2031-03-03 to 2031-03-07 (5 days)",
		"too few obs     2 assets with fewer than 7 observations",
		// QN2 has 6 of 7 observations: dropped, so half the benchmark is
		// uncovered, which -min-coverage 0 accepts.
		"coverage        50.00 % of the benchmark's weight (1 names missing)",
		"Published sample model as of 2031-03-10 for 1 assets",
	} {
		require.Contains(t, out, want)
	}
	require.Contains(t, errs, `msg="read returns"`, "logs go to stderr through slog")
	m, err := riskmodel.Store{Dir: store}.LoadCurrent()
	require.NoError(t, err)
	require.Equal(t, []string{"QN1"}, m.Assets)
	// QN1's sample variance with divisor T (the sample method's convention),
	// computed here from the eight returns above.
	x := []float64{0.01, -0.02, 0.015, 1.6, 0.005, -0.01, 0.02, 0.00}
	var mean, ss float64
	for _, v := range x {
		mean += v / 8
	}
	for _, v := range x {
		ss += (v - mean) * (v - mean)
	}
	require.InDelta(t, ss/8, m.Dense.At(0, 0), 1e-15)
}

func TestDemoTwoNights(t *testing.T) {
	// The bundled demo, found from this package's folder, as with no flags.
	store := filepath.Join(t.TempDir(), "store")
	code, out, errs := runJob("-out", store, "-asof", "2033-10-14")
	require.Equal(t, 0, code, errs)
	require.Contains(t, out, "Data quality as of 2033-10-14")
	require.Contains(t, out, "coverage        100.00 % of the benchmark's weight")
	require.Contains(t, out, "Published factor model as of 2033-10-14")
	require.NotContains(t, out, "Change from the model of")
	require.Contains(t, errs, "first publication")

	code, out, errs = runJob("-out", store)
	require.Equal(t, 0, code, errs)
	require.Contains(t, out, "Change from the model of 2033-10-14")
	require.Contains(t, out, "factor space    principal angles (degrees):")
	require.Contains(t, out, "test portfolio  tracking error")
	require.Contains(t, out, "largest changes in specific volatility (a year)")
	require.Contains(t, out, "Published factor model as of 2033-11-16")
	cur, err := riskmodel.Store{Dir: store}.Current()
	require.NoError(t, err)
	require.Equal(t, "2033-11-16", filepath.Base(cur))
}

func TestEveryMethodPublishes(t *testing.T) {
	if testing.Short() {
		t.Skip("builds one model per method (about 2 s)")
	}
	// Complete data: the pairwise sample and ewma estimates of gappy data are
	// repaired to a singular matrix, which validation rightly refuses.
	_, args := smallMarket(t, true)
	for _, method := range riskmodel.Methods {
		t.Run(method, func(t *testing.T) {
			store := t.TempDir()
			code, out, errs := runJob(append(args, "-method", method, "-out", store, "-window", "500")...)
			require.Equal(t, 0, code, errs)
			require.Contains(t, out, "Published "+method+" model")
			m, err := riskmodel.Store{Dir: store}.LoadCurrent()
			require.NoError(t, err)
			require.Equal(t, method, m.Method)
		})
	}
}

func TestDenseCSV(t *testing.T) {
	_, args := smallMarket(t, false)
	store, dense := t.TempDir(), filepath.Join(t.TempDir(), "cov.csv")
	for _, method := range []string{"factor", "ledoit-wolf"} {
		code, _, errs := runJob(append(args, "-method", method, "-out", store, "-dense", dense)...)
		require.Equal(t, 0, code, errs)
		m, err := riskmodel.Store{Dir: store}.LoadCurrent()
		require.NoError(t, err)
		assets, cov, err := riskmodel.ReadDenseCSV(dense)
		require.NoError(t, err)
		require.Equal(t, m.Assets, assets)
		want := m.Dense
		if m.Factor != nil {
			want = m.Factor.CovarianceTo(nil)
		}
		require.True(t, mat.Equal(want, cov), "the CSV holds the published covariance bit for bit")
		// The header as specified: asset,<id>,<id>,…
		f, err := os.Open(dense)
		require.NoError(t, err)
		head, err := bufio.NewReader(f).ReadString('\n')
		f.Close()
		require.NoError(t, err)
		require.Equal(t, "asset,"+strings.Join(m.Assets, ",")+"\n", head)
	}
}

// TestDenseCSVFailedValidation: the dense CSV is written beside the
// validation, and a model that fails it leaves neither the file nor its
// partial file behind (nor a published model).
func TestDenseCSVFailedValidation(t *testing.T) {
	_, args := smallMarket(t, false)
	store, dir := t.TempDir(), t.TempDir()
	dense := filepath.Join(dir, "cov.csv")
	code, _, errs := runJob(append(args, "-method", "ledoit-wolf", "-out", store, "-dense", dense, "-max-condition", "1.5")...)
	require.Equal(t, exitFailure, code, errs)
	require.Contains(t, lastLine(errs), "is above -max-condition")
	entries, err := os.ReadDir(dir)
	require.NoError(t, err)
	require.Empty(t, entries, "no dense file and no partial file")
	_, err = riskmodel.Store{Dir: store}.Current()
	require.ErrorIs(t, err, riskmodel.ErrNoCurrent)
}

func TestBadInput(t *testing.T) {
	root := fakeRepo(t)
	demo := filepath.Join(root, "testdata", "demo")
	bad := filepath.Join(root, "bad.csv")
	require.NoError(t, os.WriteFile(bad, []byte("date,asset,return\n2031-03-03,QN1,0.01\n2031-03-04,QN1,Inf\n"), 0o644))
	badHold := filepath.Join(root, "hold.csv")
	require.NoError(t, os.WriteFile(badHold, []byte("asset,weight\nQN1,x\n"), 0o644))
	rets, assets := filepath.Join(demo, "returns.parquet"), filepath.Join(demo, "assets.csv")
	fund, bench := filepath.Join(demo, "fund.csv"), filepath.Join(demo, "benchmark.csv")
	files := []string{"-returns", rets, "-assets", assets}
	for _, tc := range []struct {
		name string
		args []string
		msg  []string
	}{
		{"unknown flag", []string{"-bogus"}, []string{"flag provided but not defined: -bogus"}},
		{"bad asof", append(files, "-asof", "03/07/2031"), []string{"-asof", "03/07/2031"}},
		{"asof before the data", append(files, "-asof", "2000-01-01"), []string{"no date on or before 2000-01-01"}},
		{"short window", []string{"-window", "1"}, []string{"-window must be at least 2"}},
		{"unknown method", []string{"-method", "magic"}, []string{`-method "magic"`, "ledoit-wolf"}},
		{"log format", []string{"-log-format", "xml"}, []string{`-log-format "xml"`}},
		{"portfolio alone", []string{"-portfolio", fund}, []string{"-portfolio and -benchmark go together"}},
		{"negative half-life", []string{"-vol-half-life", "-3"}, []string{"-vol-half-life"}},
		{"extra argument", []string{"-returns", rets, "x"}, []string{`unexpected argument "x"`}},
		{"bad returns file", []string{"-returns", bad, "-assets", assets}, []string{bad, "line 3", `column "return"`, `value "Inf"`, "not finite"}},
		{"missing assets file", []string{"-returns", rets, "-assets", filepath.Join(root, "none.csv")}, []string{"none.csv", "no such file"}},
		{"bad holdings", append(files, "-portfolio", badHold, "-benchmark", bench), []string{"hold.csv", `value "x"`}},
		{"too many factors", append(files, "-window", "8", "-min-dates", "8", "-factors", "5", "-min-obs", "2"), []string{"too many factors"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			store := t.TempDir()
			code, _, errs := runJob(append(tc.args, "-out", store)...)
			require.Equal(t, 2, code, errs)
			last := lastMsg(t, errs)
			require.True(t, strings.HasPrefix(last, "nightly: "), last)
			require.Contains(t, last, "nothing published")
			for _, s := range tc.msg {
				require.Contains(t, last, s)
			}
			_, err := riskmodel.Store{Dir: store}.Current()
			require.ErrorIs(t, err, riskmodel.ErrNoCurrent)
		})
	}
}

func TestFailureLeavesCurrent(t *testing.T) {
	_, args := smallMarket(t, false)
	store := t.TempDir()
	code, _, errs := runJob(append(args, "-out", store, "-asof", "2031-01-01", "-min-coverage", "0")...)
	require.Equal(t, 0, code, errs)
	before, err := riskmodel.Store{Dir: store}.Current()
	require.NoError(t, err)

	// A model that fails validation: exit 1, and the JSON log's last record
	// says why.
	code, _, errs = runJob(append(args, "-out", store, "-max-condition", "2", "-log-format", "json")...)
	require.Equal(t, 1, code, errs)
	var rec map[string]any
	require.NoError(t, json.Unmarshal([]byte(lastLine(errs)), &rec))
	require.Equal(t, "ERROR", rec["level"])
	require.Contains(t, rec["msg"], "condition number")
	require.Contains(t, rec["msg"], "above -max-condition 2")

	// A benchmark the model cannot cover.
	code, _, errs = runJob(append(args, "-out", store, "-min-obs", "249")...)
	require.Equal(t, 1, code, errs)
	require.Contains(t, lastMsg(t, errs), "of the benchmark's weight, below -min-coverage 90.00 %")

	// A store that cannot be written: -out names a file. It is bad input,
	// found before anything is read (checks_test.go has the other cases).
	file := filepath.Join(t.TempDir(), "file")
	require.NoError(t, os.WriteFile(file, nil, 0o644))
	code, _, errs = runJob(append(args, "-out", file)...)
	require.Equal(t, 2, code, errs)
	require.Contains(t, lastMsg(t, errs), "is not a folder; nothing published")

	after, err := riskmodel.Store{Dir: store}.Current()
	require.NoError(t, err)
	require.Equal(t, before, after)
}

func TestRunWithoutRepository(t *testing.T) {
	t.Chdir(t.TempDir()) // no go.mod at or above a fresh temporary directory
	if _, err := findRoot(mustGetwd(t)); err == nil {
		t.Skip("a go.mod exists above the temporary directory on this machine")
	}
	code, _, errs := runJob()
	require.Equal(t, 2, code)
	require.Contains(t, errs, "no go.mod in the working directory or above it; give -returns and -assets")
}

func mustGetwd(t *testing.T) string {
	wd, err := os.Getwd()
	require.NoError(t, err)
	return wd
}

func TestHelp(t *testing.T) {
	code, _, errs := runJob("-h")
	require.Equal(t, 0, code)
	for _, f := range []string{"Usage: nightly", "-returns", "-assets", "-asof", "-window", "-min-obs", "-method", "-out", "-dense",
		"-log-format", "-vol-half-life", "-factors", "Exit status",
		"-periods-per-year", "-accept-implausible", "-min-dates", "-set-current", "-keep", "-lock-timeout", "backfill"} {
		require.Contains(t, errs, f)
	}
	for _, m := range riskmodel.Methods {
		require.Contains(t, errs, m, "the -method help lists riskmodel.Methods")
	}
}

func TestProgressOnlyOnATerminal(t *testing.T) {
	var buf bytes.Buffer
	p := newProgress(&buf, 3)
	p.step("read")
	_, _ = p.Write([]byte("record\n"))
	p.done()
	require.Equal(t, "record\n", buf.String(), "no bar on a writer that is not a terminal")

	f, err := os.CreateTemp(t.TempDir(), "stderr")
	require.NoError(t, err)
	defer f.Close()
	require.False(t, newProgress(f, 3).on, "a regular file is not a terminal")
	// A bar that is on clears itself around records.
	p = &progress{w: &buf, total: 2, on: true}
	buf.Reset()
	p.step("read")
	_, _ = p.Write([]byte("record\n"))
	p.done()
	bar := "[" + strings.Repeat(".", 28) + "] 1/2 read"
	require.Equal(t, bar+"\r\033[Krecord\n"+bar+"\r\033[K", buf.String())
}

func TestFindRoot(t *testing.T) {
	root := fakeRepo(t)
	deep := filepath.Join(root, "a", "b", "c")
	require.NoError(t, os.MkdirAll(deep, 0o755))
	got, err := findRoot(deep)
	require.NoError(t, err)
	require.Equal(t, root, got)
}
