package optimizetest

import (
	"os"
	"strconv"
	"strings"
	"syscall"
)

// PeakRSS is the process's resident-set high-water mark in MiB (Linux's
// VmHWM), which includes lp_solve's C allocations; 0 where it cannot be
// read.
func PeakRSS() float64 {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(line, "VmHWM:") {
			kb, _ := strconv.ParseFloat(strings.Fields(line)[1], 64)
			return kb / 1024
		}
	}
	return 0
}

// ResetPeakRSS restarts the high-water mark (Linux: "5" to clear_refs), so
// that each benchmark reports its own peak.
func ResetPeakRSS() { _ = os.WriteFile("/proc/self/clear_refs", []byte("5"), 0) }

// CPUSeconds is the process's user and system CPU time so far. On a shared
// machine it varies far less than wall time, so benchmarks report it per
// operation beside ns/op.
func CPUSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}

// ChildPeakRSS is the resident-set high-water mark of a child process that
// has exited, in MiB (getrusage's ru_maxrss, kilobytes on Linux); 0 where
// it cannot be read. Linux records, when a child started with vfork (as
// os/exec does) execs, the high-water mark of the memory it shared with
// its parent: the figure is at least the parent's peak at that moment, an
// upper bound on the child's own. Call ResetPeakRSS before starting the
// child to keep that floor at the parent's current size.
func ChildPeakRSS(ps *os.ProcessState) float64 {
	if ps == nil {
		return 0
	}
	if ru, ok := ps.SysUsage().(*syscall.Rusage); ok {
		return float64(ru.Maxrss) / 1024
	}
	return 0
}
