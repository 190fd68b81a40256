// Package memguard tells how much memory this process may use (the cgroup
// limit it runs under, or the memory the kernel says is available) and sets
// the Go runtime's soft memory limit from it, so that hoplore refuses work
// it cannot hold instead of driving a shared machine into swap or the
// out-of-memory killer.
package memguard

import (
	"bufio"
	"bytes"
	"fmt"
	"math"
	"os"
	"runtime/debug"
	"strconv"
	"strings"
)

// Available returns the bytes this process may still take and where the
// figure comes from: the smaller of the cgroup's headroom (memory.max −
// memory.current under cgroup v2, memory.limit_in_bytes − usage under v1)
// and MemAvailable from /proc/meminfo. ok is false when neither is known.
func Available() (bytes float64, source string, ok bool) {
	bytes = math.Inf(1)
	if v, found := memAvailable(); found {
		bytes, source, ok = v, "MemAvailable in /proc/meminfo", true
	}
	if limit, used, found := cgroup(); found && limit-used < bytes {
		bytes, source, ok = math.Max(limit-used, 0), "the cgroup memory limit", true
	}
	return bytes, source, ok
}

func memAvailable() (float64, bool) {
	f, err := os.Open("/proc/meminfo")
	if err != nil {
		return 0, false
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) >= 2 && fields[0] == "MemAvailable:" {
			kb, err := strconv.ParseFloat(fields[1], 64)
			if err != nil {
				return 0, false
			}
			return kb * 1024, true
		}
	}
	return 0, false
}

// cgroup returns the memory limit and usage of this process's cgroup.
func cgroup() (limit, used float64, ok bool) {
	self, err := os.ReadFile("/proc/self/cgroup")
	if err != nil {
		return 0, 0, false
	}
	for _, line := range bytes.Split(self, []byte("\n")) {
		parts := strings.SplitN(string(line), ":", 3)
		if len(parts) != 3 {
			continue
		}
		if parts[0] == "0" && parts[1] == "" { // cgroup v2
			dir := "/sys/fs/cgroup" + parts[2]
			if l, ok := readNumber(dir + "/memory.max"); ok {
				u, _ := readNumber(dir + "/memory.current")
				return l, u, true
			}
			if l, ok := readNumber("/sys/fs/cgroup/memory.max"); ok {
				u, _ := readNumber("/sys/fs/cgroup/memory.current")
				return l, u, true
			}
		}
		if strings.Contains(","+parts[1]+",", ",memory,") { // cgroup v1
			for _, dir := range []string{"/sys/fs/cgroup/memory" + parts[2], "/sys/fs/cgroup/memory"} {
				if l, ok := readNumber(dir + "/memory.limit_in_bytes"); ok && l < 1<<60 {
					u, _ := readNumber(dir + "/memory.usage_in_bytes")
					return l, u, true
				}
			}
		}
	}
	return 0, 0, false
}

// readNumber reads a file holding one number ("max" is no number).
func readNumber(path string) (float64, bool) {
	b, err := os.ReadFile(path)
	if err != nil {
		return 0, false
	}
	v, err := strconv.ParseFloat(strings.TrimSpace(string(b)), 64)
	return v, err == nil
}

// ParseSize parses a memory size: a number of bytes with an optional SI or
// binary suffix (500MB, 8GB, 8GiB, 1.5TB); case does not matter.
func ParseSize(s string) (float64, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	mult := 1.0
	for _, u := range []struct {
		suffix string
		m      float64
	}{{"kib", 1 << 10}, {"mib", 1 << 20}, {"gib", 1 << 30}, {"tib", 1 << 40}, {"kb", 1e3}, {"mb", 1e6}, {"gb", 1e9}, {"tb", 1e12}, {"k", 1e3}, {"m", 1e6}, {"g", 1e9}, {"t", 1e12}, {"b", 1}} {
		if strings.HasSuffix(t, u.suffix) {
			t, mult = strings.TrimSpace(strings.TrimSuffix(t, u.suffix)), u.m
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v <= 0 {
		return 0, fmt.Errorf("%q is not a memory size (use e.g. 500MB, 8GB, 16GiB)", s)
	}
	return v * mult, nil
}

// SetSoftLimit sets the Go runtime's soft memory limit to bytes unless the
// user set GOMEMLIMIT, so the garbage collector works harder before the
// process outgrows what it may use.
func SetSoftLimit(bytes float64) {
	if os.Getenv("GOMEMLIMIT") != "" || !(bytes > 0) || math.IsInf(bytes, 0) {
		return
	}
	debug.SetMemoryLimit(int64(math.Min(bytes, math.MaxInt64/2)))
}

// Format prints bytes in MB or GB, as the check command does.
func Format(b float64) string {
	if b >= 1e9 {
		return fmt.Sprintf("%.1f GB", b/1e9)
	}
	return fmt.Sprintf("%.0f MB", math.Ceil(b/1e6))
}
