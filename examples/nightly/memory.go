package main

import (
	"bufio"
	"fmt"
	"os"
	"runtime/debug"
	"strconv"
	"strings"

	"github.com/riskmodel/riskmodel"
)

// checkMemory estimates the job's peak memory before the build and refuses
// a job that cannot fit the memory available, with the estimate in the
// error; otherwise it sets the estimate as the Go runtime's soft memory
// limit, so that the collector keeps the heap near what is live instead of
// letting it grow to twice that (GOGC's default) while N×N matrices come and
// go. A limit the operator set (GOMEMLIMIT) is kept.
func checkMemory(method string, dates, assets int, prev *riskmodel.Model) (int64, error) {
	need := riskmodel.BuildMemory(method, dates, assets) + riskmodel.LoadedMemory(prev)
	if avail, ok := availableMemory(); ok && need > avail {
		return need, fmt.Errorf("a %s model of %d assets on %d dates needs about %s of memory and %s is available; "+
			"use a factor method (-method factor) or fewer assets, or run it on a larger machine",
			method, assets, dates, gigabytes(need), gigabytes(avail))
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(need)
	}
	return need, nil
}

// availableMemory is the smaller of /proc/meminfo's MemAvailable and the
// room left under a cgroup (v2) memory limit; ok is false where neither can
// be read.
func availableMemory() (int64, bool) {
	avail, ok := memInfoAvailable()
	if lim, used, cg := cgroupRoom(); cg && (!ok || lim-used < avail) {
		avail, ok = lim-used, true
	}
	return avail, ok
}

func memInfoAvailable() (int64, bool) {
	f, err := os.Open("/proc/meminfo")
	if err != nil {
		return 0, false
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) >= 2 && fields[0] == "MemAvailable:" {
			kb, err := strconv.ParseInt(fields[1], 10, 64)
			return kb << 10, err == nil
		}
	}
	return 0, false
}

func cgroupRoom() (limit, used int64, ok bool) {
	read := func(name string) (int64, bool) {
		b, err := os.ReadFile("/sys/fs/cgroup/" + name)
		if err != nil {
			return 0, false
		}
		v, err := strconv.ParseInt(strings.TrimSpace(string(b)), 10, 64) // "max" fails: no limit
		return v, err == nil
	}
	limit, ok = read("memory.max")
	if !ok {
		return 0, 0, false
	}
	used, ok = read("memory.current")
	return limit, used, ok
}

func gigabytes(b int64) string { return fmt.Sprintf("%.2f GB", float64(b)/1e9) }
