package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"

	"github.com/riskmodel/riskmodel"
)

func runReport(args ...string) (code int, stdout, stderr string) {
	var out, errw bytes.Buffer
	code = run(args, &out, &errw)
	return code, out.String(), errw.String()
}

// store publishes a factor model of a small generated market and returns the
// store folder and the market's files.
func store(t *testing.T) (dir string, files map[string]string) {
	t.Helper()
	d, err := demo.Generate(&demo.Config{Seed: 4, Assets: 80, Dates: 300})
	require.NoError(t, err)
	data := t.TempDir()
	require.NoError(t, d.WriteFiles(data))
	m, _, err := riskmodel.Build(d.Panel, d.Panel.Date(299), &riskmodel.BuildOptions{Window: 250, Factor: riskmodel.FactorOptions{K: 3}})
	require.NoError(t, err)
	dir = filepath.Join(t.TempDir(), "store")
	_, err = riskmodel.Store{Dir: dir}.Publish(m)
	require.NoError(t, err)
	return dir, map[string]string{
		"portfolio": filepath.Join(data, "fund.csv"), "benchmark": filepath.Join(data, "benchmark.csv"),
		"assets": filepath.Join(data, "assets.csv"),
	}
}

func TestDemoWithoutArguments(t *testing.T) {
	code, out, errs := runReport()
	require.Equal(t, 0, code, errs)
	for _, s := range []string{"Ex-ante tracking error attribution", "model            factor, as of 2033-11-16, K = 18 factors", "tracking error", "factor part",
		"specific part", "By sector", "Top contributors", "Best single-name hedges", "By factor", "Caution:"} {
		require.Contains(t, out, s)
	}
}

func TestFormatsFromAStore(t *testing.T) {
	dir, f := store(t)
	base := []string{"-model", dir, "-portfolio", f["portfolio"], "-benchmark", f["benchmark"], "-assets", f["assets"]}
	out := t.TempDir()

	js := filepath.Join(out, "r.json")
	code, _, errs := runReport(append(base, "-format", "json", "-o", js, "-group", "size_bucket", "-band", "0.01,0.05")...)
	require.Equal(t, 0, code, errs)
	raw, err := os.ReadFile(js)
	require.NoError(t, err)
	var doc riskmodel.Attribution
	require.NoError(t, json.Unmarshal(raw, &doc))
	require.Equal(t, []string{"size_bucket"}, doc.GroupBy)
	var labels []string
	var sum float64
	for _, g := range doc.Groupings[0].Groups {
		labels = append(labels, g.Group)
		sum += g.Contribution
	}
	require.Equal(t, []string{"large", "mid", "small"}, labels)
	require.InDelta(t, doc.TrackingError, sum, 1e-12)
	require.NotNil(t, doc.Band)
	require.Equal(t, 0.05, doc.Band.Upper)

	// One dated model folder works as well as the store.
	cur, err := riskmodel.Store{Dir: dir}.Current()
	require.NoError(t, err)
	for _, format := range []string{"text", "csv", "html"} {
		path := filepath.Join(out, "r."+format)
		code, _, errs := runReport(append(base, "-model", cur, "-format", format, "-o", path)...)
		require.Equal(t, 0, code, errs)
		b, err := os.ReadFile(path)
		require.NoError(t, err)
		switch format {
		case "text":
			require.Contains(t, string(b), "By sector")
		case "csv":
			require.True(t, strings.HasPrefix(string(b), "section,grouping,name,group,value,"))
		case "html":
			require.Contains(t, string(b), "<svg")
		}
	}
}

func TestBadInput(t *testing.T) {
	dir, f := store(t)
	base := []string{"-model", dir, "-portfolio", f["portfolio"], "-benchmark", f["benchmark"], "-assets", f["assets"]}
	bad := filepath.Join(t.TempDir(), "bad.csv")
	require.NoError(t, os.WriteFile(bad, []byte("asset,weight\nQV0001,abc\n"), 0o644))
	for _, tc := range []struct {
		name string
		args []string
		msg  string
	}{
		{"unknown flag", []string{"-bogus"}, "flag provided but not defined: -bogus"},
		{"format", append(base, "-format", "pdf"), `-format "pdf"`},
		{"band text", append(base, "-band", "0.01"), `-band "0.01": want lower,upper`},
		{"band order", append(base, "-band", "0.03,0.01"), "invalid tracking-error band"},
		{"band number", append(base, "-band", "a,b"), "want two numbers"},
		{"group column", append(base, "-group", "country"), `group by "country": no asset has this metadata column`},
		{"model folder", append(base, "-model", t.TempDir()), "-model:"},
		{"holdings", append(base, "-portfolio", bad), `value "abc"`},
		{"missing file", append(base, "-assets", filepath.Join(t.TempDir(), "none.csv")), "no such file"},
		{"top", append(base, "-top", "0"), "-top must be at least 1"},
		{"argument", append(base, "extra"), `unexpected argument "extra"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, out, errs := runReport(tc.args...)
			require.Equal(t, 2, code, errs)
			require.Empty(t, out)
			last := strings.Split(strings.TrimSpace(errs), "\n")
			require.True(t, strings.HasPrefix(last[len(last)-1], "attribution: "), errs)
			require.Contains(t, last[len(last)-1], tc.msg)
		})
	}
}

func TestHelp(t *testing.T) {
	code, _, errs := runReport("-h")
	require.Equal(t, 0, code)
	for _, s := range []string{"Usage: attribution", "-model", "-portfolio", "-benchmark", "-assets", "-group", "-band", "-format", "-o"} {
		require.Contains(t, errs, s)
	}
}

// TestDemoLongOnlyHedges: on the demo fund (long-only) no hedge sells more
// than the holding, each shows the current weight, and with -shorts the
// unconstrained hedges come back.
func TestDemoLongOnlyHedges(t *testing.T) {
	code, out, errs := runReport("-format", "json", "-group", "sector,size_bucket")
	require.Equal(t, 0, code, errs)
	var doc riskmodel.Attribution
	require.NoError(t, json.Unmarshal([]byte(out), &doc))
	require.True(t, doc.LongOnly)
	require.Len(t, doc.Hedges, riskmodel.DefaultTopNames)
	for _, h := range doc.Hedges {
		require.GreaterOrEqual(t, h.Trade, -h.Current, h.Asset)
		require.GreaterOrEqual(t, h.After, 0.0, h.Asset)
		require.True(t, h.Current > 0 || h.Bench > 0, h.Asset)
	}
	// The README's and ExampleAttribute's figure (root package).
	require.Equal(t, "2.7259", fmt.Sprintf("%.4f", 100*doc.TrackingError))
	require.Len(t, doc.Groupings, 2)
	require.NotNil(t, doc.Cross)
	for _, f := range doc.Factors {
		require.NotEmpty(t, f.Label, f.Factor)
		require.Less(t, f.Volatility, 0.5, "%s: scaled to unit RMS loadings", f.Factor)
	}

	code, out, errs = runReport("-format", "json", "-shorts")
	require.Equal(t, 0, code, errs)
	require.NoError(t, json.Unmarshal([]byte(out), &doc))
	short := false
	for _, h := range doc.Hedges {
		short = short || h.Trade < -h.Current
	}
	require.True(t, short, "with -shorts a hedge sells more than the holding")
}

// TestREADMESample: every line of the README's text sample (but the "…"
// elisions) is a line of the demo report.
func TestREADMESample(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	require.NoError(t, err)
	text := string(raw)
	start := strings.Index(text, "Sample (demo fund, text")
	require.GreaterOrEqual(t, start, 0)
	block := text[start:]
	block = block[strings.Index(block, "```\n")+4:]
	block = block[:strings.Index(block, "```")]
	t.Chdir(filepath.Join("..", ".."))
	code, out, errs := runReport("-group", "sector,size_bucket", "-portfolio", "testdata/demo/fund.csv", "-benchmark", "testdata/demo/benchmark.csv")
	require.Equal(t, 0, code, errs)
	lines := map[string]bool{}
	for _, l := range strings.Split(out, "\n") {
		lines[strings.TrimRight(l, " ")] = true
	}
	n := 0
	for _, l := range strings.Split(block, "\n") {
		if l = strings.TrimRight(l, " "); l == "" || strings.TrimSpace(l) == "…" {
			continue
		}
		require.True(t, lines[l], "README line not in the report: %q", l)
		n++
	}
	require.Greater(t, n, 20)
}

// TestInputChecks: percent weights and percent bands are refused with the
// hint, huge weights are an input error, a sum away from 1 warns (an error
// with -long-only), identifiers in the wrong case name their matches, and
// -o never overwrites an input.
func TestInputChecks(t *testing.T) {
	dir, f := store(t)
	tmp := t.TempDir()
	write := func(name, body string) string {
		p := filepath.Join(tmp, name)
		require.NoError(t, os.WriteFile(p, []byte(body), 0o644))
		return p
	}
	fund, err := riskmodel.ReadHoldings(f["portfolio"])
	require.NoError(t, err)
	scaled := func(name string, k float64, lower bool) string {
		var b strings.Builder
		b.WriteString("asset,weight\n")
		for _, h := range fund {
			id := h.Asset
			if lower {
				id = strings.ToLower(id)
			}
			fmt.Fprintf(&b, "%s,%g\n", id, h.Weight*k)
		}
		return write(name, b.String())
	}
	base := []string{"-model", dir, "-benchmark", f["benchmark"], "-assets", f["assets"]}
	for _, tc := range []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"percent", append(base, "-portfolio", scaled("pct.csv", 100, false)), 2, "weights look like percent"},
		{"huge", append(base, "-portfolio", write("huge.csv", "asset,weight\nQV0001,1e160\n")), 2, "1e+160"},
		{"band percent", append(base, "-portfolio", f["portfolio"], "-band", "1,3"), 2, "look like percent"},
		{"case", append(base, "-portfolio", scaled("lower.csv", 1, true)), 2, "→ QV"},
		{"sum long-only", append(base, "-portfolio", scaled("short.csv", 0.9, false), "-long-only"), 2, "weights do not sum to 1"},
		{"sum warning", append(base, "-portfolio", scaled("nine.csv", 0.9, false)), 0, "warning: the portfolio's weights sum to 0.9"},
		{"output is input", append(base, "-portfolio", f["portfolio"], "-o", f["assets"]), 2, "is an input file"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, errs := runReport(tc.args...)
			require.Equal(t, tc.code, code, errs)
			require.Contains(t, errs, tc.msg)
		})
	}
	before, err := os.ReadFile(f["assets"])
	require.NoError(t, err)
	require.True(t, strings.HasPrefix(string(before), "asset,sector"), "the input survived")
}

// TestWriteFileAtomic: a failed write leaves the old file as it was and no
// temporary file behind; a good one replaces it.
func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "report.html")
	require.NoError(t, os.WriteFile(path, []byte("old report"), 0o644))
	err := writeFileAtomic(path, func(w io.Writer) error {
		if _, err := io.WriteString(w, strings.Repeat("partial ", 1<<14)); err != nil {
			return err
		}
		return errors.New("no space left on device")
	})
	require.ErrorContains(t, err, "no space left")
	got, err := os.ReadFile(path)
	require.NoError(t, err)
	require.Equal(t, "old report", string(got))
	entries, err := os.ReadDir(dir)
	require.NoError(t, err)
	require.Len(t, entries, 1, "no temporary file left")

	require.NoError(t, writeFileAtomic(path, func(w io.Writer) error { _, err := io.WriteString(w, "new report"); return err }))
	got, err = os.ReadFile(path)
	require.NoError(t, err)
	require.Equal(t, "new report", string(got))
}
