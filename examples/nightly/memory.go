package main

import (
	"fmt"
	"os"
	"runtime/debug"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/sysmem"
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

// availableMemory is sysmem.Available.
func availableMemory() (int64, bool) { return sysmem.Available() }

func gigabytes(b int64) string { return sysmem.Gigabytes(b) }
