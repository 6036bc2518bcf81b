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
