// Package sysmem reads how much memory a job may still use, for the
// examples' checks before a large job starts (the nightly's build, the
// evaluation).
package sysmem

import (
	"bufio"
	"fmt"
	"os"
	"strconv"
	"strings"
)

// Available is the smaller of /proc/meminfo's MemAvailable and the room
// left under a cgroup (v2) memory limit; ok is false where neither can be
// read.
func Available() (int64, bool) {
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

// Gigabytes formats a number of bytes in GB (10⁹ bytes), two decimals.
func Gigabytes(b int64) string { return fmt.Sprintf("%.2f GB", float64(b)/1e9) }
