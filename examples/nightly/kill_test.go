package main

import (
	"bufio"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel"
)

// TestKillMidPublish builds the nightly binary, publishes a first model, then
// starts the job again on a market big enough that writing the model takes a
// few hundred milliseconds (a dense 1500-asset Ledoit–Wolf covariance: 1.1
// million Parquet rows, read back and checked), and sends SIGKILL at
// increasing delays after the log says writing has started. After every kill
// the store's current model must still load and equal the first model bit for
// bit. It takes about 9 s on a loaded 2-core machine, so -short
// skips it; go test ./... runs it.
func TestKillMidPublish(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and runs the job six times (about 9 s)")
	}
	start := time.Now()
	tmp := t.TempDir()
	bin := filepath.Join(tmp, "nightly")
	build := exec.Command("go", "build", "-o", bin, ".")
	build.Stderr = os.Stderr
	require.NoError(t, build.Run())
	t.Logf("built the binary in %v", time.Since(start))

	d, err := demo.Generate(&demo.Config{Seed: 9, Assets: 1500, Dates: 300, Stationary: true})
	require.NoError(t, err)
	rets, assets := filepath.Join(tmp, "returns.parquet"), filepath.Join(tmp, "assets.csv")
	require.NoError(t, riskmodel.WriteReturnsParquetFile(rets, d.Panel))
	require.NoError(t, riskmodel.WriteAssetsFile(assets, d.Assets))
	store := riskmodel.Store{Dir: filepath.Join(tmp, "store")}
	args := []string{"-returns", rets, "-assets", assets, "-method", "ledoit-wolf", "-window", "300",
		"-out", store.Dir, "-log-format", "json"}

	first := exec.Command(bin, append(args, "-asof", d.Panel.Date(280).String())...)
	out, err := first.CombinedOutput()
	require.NoError(t, err, string(out))
	before, err := store.Current()
	require.NoError(t, err)
	prev, err := store.LoadCurrent()
	require.NoError(t, err)

	killed := 0
	for _, delay := range []time.Duration{0, 10 * time.Millisecond, 50 * time.Millisecond, 120 * time.Millisecond} {
		cmd := exec.Command(bin, args...)
		stderr, err := cmd.StderrPipe()
		require.NoError(t, err)
		require.NoError(t, cmd.Start())
		sc := bufio.NewScanner(stderr)
		writing := false
		for !writing && sc.Scan() {
			var rec map[string]any
			require.NoError(t, json.Unmarshal(sc.Bytes(), &rec), sc.Text())
			require.NotEqual(t, "ERROR", rec["level"], sc.Text())
			writing = rec["msg"] == "writing model"
		}
		require.True(t, writing, "the job logs before it writes")
		time.Sleep(delay)
		require.NoError(t, cmd.Process.Signal(syscall.SIGKILL))
		var rest strings.Builder
		for sc.Scan() {
			rest.WriteString(sc.Text())
		}
		err = cmd.Wait()
		if err == nil || strings.Contains(rest.String(), `"msg":"published"`) {
			// The kill came after the switch: the new model is current and
			// complete. Nothing to prove about the old one.
			m, lerr := store.LoadCurrent()
			require.NoError(t, lerr)
			require.Equal(t, d.Panel.Date(299), m.AsOf)
			t.Logf("delay %v: the job finished before the kill", delay)
			break
		}
		ws, ok := cmd.ProcessState.Sys().(syscall.WaitStatus)
		require.True(t, ok && ws.Signaled() && ws.Signal() == syscall.SIGKILL, "killed by SIGKILL: %v", err)
		killed++

		cur, err := store.Current()
		require.NoError(t, err, "delay %v", delay)
		require.Equal(t, before, cur, "delay %v: current still points at the first model", delay)
		m, err := store.LoadCurrent()
		require.NoError(t, err, "delay %v: current still loads", delay)
		require.Equal(t, prev.AsOf, m.AsOf)
		require.Equal(t, prev.Assets, m.Assets)
		require.True(t, mat.Equal(prev.Dense, m.Dense), "delay %v: the same numbers", delay)
	}
	require.GreaterOrEqual(t, killed, 3, "at least three kills landed while the model was being written")

	// The next run cleans up what the kills left and publishes.
	out, err = exec.Command(bin, args...).CombinedOutput()
	require.NoError(t, err, string(out))
	cur, err := store.Current()
	require.NoError(t, err)
	require.NotEqual(t, before, cur)
	entries, err := os.ReadDir(store.Dir)
	require.NoError(t, err)
	for _, e := range entries {
		require.False(t, strings.HasPrefix(e.Name(), ".staging-"), "staging folder %s left behind", e.Name())
	}
}
