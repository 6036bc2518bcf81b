package scenarios_test

import (
	"math"
	"slices"
	"strconv"
	"testing"
	"time"

	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

// segmentsOf splits each class's quantity in each state into equal
// segments, counts[k] per class in all, spread over the states in
// proportion to their quantity (the largest state takes the rounding). For a
// class read from a segment list the split is per state and year of last
// treatment, so that the segments carry the years since work the plan was
// made for.
func segmentsOf(sc *scenarios.Scenario, counts []int) []scenarios.Lot {
	var out []scenarios.Lot
	for k := range sc.Classes {
		c := &sc.Classes[k]
		type group struct{ state, last int }
		var groups []group
		qty := map[group]float64{}
		if c.Segments != nil {
			for _, s := range c.Segments {
				g := group{s.State, s.LastTreated}
				if _, ok := qty[g]; !ok {
					groups = append(groups, g)
				}
				qty[g] += s.Quantity
			}
		} else {
			for i, q := range c.Initial {
				groups = append(groups, group{i, 0})
				qty[group{i, 0}] = q
			}
		}
		n := make([]int, len(groups))
		left, big := counts[k], 0
		for gi, g := range groups {
			if q := qty[g]; q > 0 {
				n[gi] = max(1, int(math.Round(float64(counts[k])*q/c.Total())))
			}
			left -= n[gi]
			if qty[g] > qty[groups[big]] {
				big = gi
			}
		}
		n[big] += left
		for gi, g := range groups {
			for s := range n[gi] {
				out = append(out, scenarios.Lot{ID: c.Name + "-" + strconv.Itoa(gi) + "-" + strconv.Itoa(s), Class: c.Name, State: g.state, Quantity: qty[g] / float64(n[gi]), LastTreated: g.last})
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
			optimizetest.ResetPeakRSS()
			for b.Loop() {
				if _, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 1000, Seed: 1, Lots: segs, Matrix: matrix}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
		})
	}
}

// BenchmarkSimulateDefaultPieces is the issue's speed check, as `wearplan
// simulate` runs: the plan solved, then 1,000 runs with the default pieces
// and every band and target probability computed.
//   - trial: the invented trial network typed as quantities (4 classes,
//     about 200,000 units: 620 lane-km, 178,500 m2 of footpaths, 14,500 m2
//     of decks, 6,380 culverts; 15 years): 4,819 pieces of the units'
//     defaults;
//   - demo: the demo (20 years), moving its 2,893 listed segments.
//
// Besides the mean it reports the median wall time (ms-median), the CPU
// time per run of the whole process (cpu-ms/op, steadier on a shared
// machine) and the peak resident memory.
func BenchmarkSimulateDefaultPieces(b *testing.B) {
	for _, c := range []struct{ name, path string }{
		{"trial", "../testdata/trial-network.yaml"},
		{"demo", demoPath},
	} {
		b.Run(c.name, func(b *testing.B) {
			sc, err := scenarios.LoadFile(c.path)
			if err != nil {
				b.Fatal(err)
			}
			optimizetest.ResetPeakRSS()
			var times []time.Duration
			cpu := optimizetest.CPUSeconds()
			for b.Loop() {
				start := time.Now()
				if _, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 1000, Seed: 1}); err != nil {
					b.Fatal(err)
				}
				times = append(times, time.Since(start))
			}
			slices.Sort(times)
			b.ReportMetric(float64(times[len(times)/2].Microseconds())/1000, "ms-median")
			b.ReportMetric((optimizetest.CPUSeconds()-cpu)*1000/float64(len(times)), "cpu-ms/op")
			b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
		})
	}
}
