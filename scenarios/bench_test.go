package scenarios_test

import (
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// peakRSS reads the process's resident-set high-water mark in MiB (it
// includes lp_solve's C memory, which -benchmem cannot see).
func peakRSS() float64 {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(line, "VmHWM:") {
			f := strings.Fields(line)
			kb, _ := strconv.ParseFloat(f[1], 64)
			return kb / 1024
		}
	}
	return 0
}

// resetPeakRSS restarts the high-water mark (Linux: "5" to clear_refs).
func resetPeakRSS() { _ = os.WriteFile("/proc/self/clear_refs", []byte("5"), 0) }

// segmentsOf splits each class's quantity in each state into equal
// segments, counts[k] per class in all, spread over the states in
// proportion to their quantity (the largest state takes the rounding).
func segmentsOf(sc *scenarios.Scenario, counts []int) []scenarios.Segment {
	var out []scenarios.Segment
	for k := range sc.Classes {
		c := &sc.Classes[k]
		n := make([]int, len(c.Initial))
		left, big := counts[k], 0
		for i, q := range c.Initial {
			if q > 0 {
				n[i] = max(1, int(math.Round(float64(counts[k])*q/c.Total())))
			}
			left -= n[i]
			if q > c.Initial[big] {
				big = i
			}
		}
		n[big] += left
		for i, q := range c.Initial {
			for s := range n[i] {
				out = append(out, scenarios.Segment{ID: c.Name + "-" + strconv.Itoa(i) + "-" + strconv.Itoa(s), Class: c.Name, State: i, Quantity: q / float64(n[i])})
			}
		}
	}
	return out
}

// BenchmarkSimulate10k is the benchmark: the demo plan (invented
// Marrowby data, 4 classes) simulated for 10,000 segments x 20 years x
// 1,000 runs, including the plan's LP solve and the bands. Segments:
// 1,800 and 4,200 road segments of 0.1 lane-km, 3,840 deck segments, 160
// culverts. With matrix uncertainty every class draws Dirichlet rows from
// invented counts (about 30 moves per row) in every run.
func BenchmarkSimulate10k(b *testing.B) {
	for _, matrix := range []string{scenarios.MatrixNone, scenarios.MatrixDirichlet} {
		b.Run("matrix-"+matrix, func(b *testing.B) {
			sc, err := scenarios.LoadFile(demoPath)
			if err != nil {
				b.Fatal(err)
			}
			segs := segmentsOf(sc, []int{1800, 4200, 3840, 160})
			if len(segs) != 10000 {
				b.Fatalf("%d segments, want 10000", len(segs))
			}
			if matrix == scenarios.MatrixDirichlet {
				for k := range sc.Classes {
					c := &sc.Classes[k]
					counts := c.Transition.Rows()
					for i := range counts {
						for j := range counts[i] {
							counts[i][j] = math.Round(30 * counts[i][j])
						}
					}
					c.Evidence = &scenarios.MatrixEvidence{Counts: counts}
				}
			}
			resetPeakRSS()
			for b.Loop() {
				if _, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 1000, Seed: 1, Segments: segs, Matrix: matrix}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(peakRSS(), "MiB-peak")
		})
	}
}
