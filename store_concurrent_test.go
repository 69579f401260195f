package riskmodel

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// The concurrent-publish test re-executes this test binary as the publishing
// jobs: with publishChildEnv set, TestMain publishes one model and exits
// instead of running the tests.
const (
	publishChildEnv = "RISKMODEL_TEST_PUBLISH_CHILD" // "store,round,job"
	publishJobs     = 3
	publishKeep     = 4
)

func TestMain(m *testing.M) {
	if spec := os.Getenv(publishChildEnv); spec != "" {
		os.Exit(publishChild(spec))
	}
	os.Exit(m.Run())
}

// publishChild publishes the model of (round, job) to the store, waiting for
// the lock, and prints the folder it wrote.
func publishChild(spec string) int {
	parts := strings.Split(spec, ",")
	if len(parts) != 3 {
		fmt.Fprintln(os.Stderr, "bad spec", spec)
		return 3
	}
	round, err1 := strconv.Atoi(parts[1])
	job, err2 := strconv.Atoi(parts[2])
	if err1 != nil || err2 != nil {
		fmt.Fprintln(os.Stderr, "bad spec", spec)
		return 3
	}
	p, err := Store{Dir: parts[0]}.PublishWith(concurrentModel(round, job),
		&PublishOptions{LockTimeout: time.Minute, Keep: publishKeep})
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	fmt.Println(p.Dir)
	return 0
}

// concurrentModel is the dense model job publishes in round: 30 assets, a
// random positive definite covariance, all jobs of a round on the same date.
func concurrentModel(round, job int) *Model {
	const n = 30
	rng := rand.New(rand.NewPCG(uint64(round), uint64(job)))
	g := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			g.Set(i, j, rng.NormFloat64()*1e-2)
		}
	}
	s := mat.NewSymDense(n, nil)
	s.SymOuterK(1, g)
	assets := make([]string, n)
	for i := range assets {
		s.SetSym(i, i, s.At(i, i)+1e-4)
		assets[i] = fmt.Sprintf("QC%02d", i)
	}
	return &Model{
		AsOf: DateOf(2030, 1, 1).AddDays(round), Assets: assets, PeriodsPerYear: 252, Method: MethodSample,
		Settings: map[string]string{"job": strconv.Itoa(job)}, Dense: s,
	}
}

// TestConcurrentPublish starts publishJobs processes that publish to one
// store at the same moment, round after round, and checks after each round
// that every job exited 0 with a complete folder holding its own model bit
// for bit, that "current" loads and equals one of the round's models bit for
// bit, and that no staging folder is left. Before the store's lock, jobs
// deleted each other's staging folders: in 102 overlapping runs a job twice
// reported a folder that was empty. 100 rounds (about 40 s on a loaded
// 2-core machine); -short runs 8.
func TestConcurrentPublish(t *testing.T) {
	rounds := 100
	if testing.Short() {
		rounds = 8
	}
	exe, err := os.Executable()
	require.NoError(t, err)
	store := Store{Dir: filepath.Join(t.TempDir(), "store")}
	start := time.Now()
	for round := 0; round < rounds; round++ {
		models := make([]*Model, publishJobs)
		cmds := make([]*exec.Cmd, publishJobs)
		outs := make([]*bytes.Buffer, publishJobs)
		for job := range cmds {
			models[job] = concurrentModel(round, job)
			cmd := exec.Command(exe, "-test.run=^$")
			cmd.Env = append(os.Environ(), fmt.Sprintf("%s=%s,%d,%d", publishChildEnv, store.Dir, round, job))
			outs[job] = new(bytes.Buffer)
			cmd.Stdout, cmd.Stderr = outs[job], outs[job]
			cmds[job] = cmd
		}
		for _, cmd := range cmds {
			require.NoError(t, cmd.Start())
		}
		for job, cmd := range cmds {
			require.NoError(t, cmd.Wait(), "round %d job %d: %s", round, job, outs[job])
		}
		folders := map[string]bool{}
		for job := range cmds {
			dir := strings.TrimSpace(outs[job].String())
			require.False(t, folders[dir], "round %d: two jobs report %s", round, dir)
			folders[dir] = true
			m, err := LoadModel(dir)
			require.NoError(t, err, "round %d job %d", round, job)
			require.True(t, models[job].equal(m), "round %d job %d: %s holds another model", round, job, dir)
		}
		cur, err := store.LoadCurrent()
		require.NoError(t, err, "round %d", round)
		match := 0
		for _, m := range models {
			if m.equal(cur) {
				match++
			}
		}
		require.Equal(t, 1, match, "round %d: current equals one of the round's models bit for bit", round)
		entries, err := os.ReadDir(store.Dir)
		require.NoError(t, err)
		dated := 0
		for _, e := range entries {
			require.False(t, strings.HasPrefix(e.Name(), ".staging-") || strings.HasPrefix(e.Name(), ".current-"),
				"round %d: %s left behind", round, e.Name())
			if _, ok := folderDate(e.Name()); ok {
				dated++
			}
		}
		require.LessOrEqual(t, dated, publishKeep+2, "round %d: retention", round)
	}
	t.Logf("%d rounds of %d concurrent jobs in %v", rounds, publishJobs, time.Since(start).Round(time.Millisecond))
}
