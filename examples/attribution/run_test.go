package main

import (
	"bytes"
	"encoding/json"
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
	m, _, err := riskmodel.Build(d.Panel, d.Panel.Date(299), &riskmodel.BuildOptions{Window: 250, Factors: 3})
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
	for _, s := range []string{"Ex-ante tracking error as of 2033-11-16 (factor model", "tracking error", "factor part",
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
	require.Equal(t, "size_bucket", doc.GroupBy)
	var labels []string
	var sum float64
	for _, g := range doc.Groups {
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
			require.True(t, strings.HasPrefix(string(b), "section,name,group,"))
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
