package markov_test

import (
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"testing"

	"wearplan/markov"
)

// peakRSS reads the process's resident-set high-water mark in MiB.
//
// It and resetPeakRSS are copies of optimizetest.PeakRSS and ResetPeakRSS,
// kept here on purpose: markov is the bottom of the one-way layout (cmd ->
// scenarios -> optimize -> treatments -> markov) and its tests import
// nothing from the optimize tree, wearplan/optimize/optimizetest included.
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

// BenchmarkSimulateEngine is the engine alone: 10,000 lots of one 7-state
// class with three actions under a random policy, 20 years, 1,000 runs,
// keeping each run's end-of-year quantities (what a caller needs for bands).
func BenchmarkSimulateEngine(b *testing.B) {
	const lotsN, years, runs, n = 10000, 20, 1000, 7
	c, _ := randomPolicyClass(rand.New(rand.NewPCG(1, 1)), n, years)
	lots := make([]markov.Lot, lotsN)
	for l := range lots {
		lots[l] = markov.Lot{Class: 0, State: l % n, Quantity: 1}
	}
	resetPeakRSS()
	for b.Loop() {
		keep := make([]float64, runs*(years+1)*n)
		err := markov.Simulate([]markov.SimClass{c}, lots, markov.SimOptions{Years: years, Runs: runs, Seed: 1}, func(run int, o *markov.RunOutcome) error {
			for y, q := range o.Quantity[0] {
				copy(keep[(run*(years+1)+y)*n:], q)
			}
			return nil
		})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(peakRSS(), "MiB-peak")
	b.ReportMetric(float64(lotsN*years*runs*b.N)/b.Elapsed().Seconds()/1e6, "Mlot-years/s")
}
