package scenarios_test

import (
	"bufio"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

// Benchmarks of real-size inventories: a generated segment list of a
// million rows (invented, like the demo) for the demo's four classes, with
// WKT lines or points and a traffic column, written to a temporary file
// and read, aggregated, planned and listed as `wearplan worklist` does.
// Peak memory is the process's resident-set high-water mark.

// writeMillionSegments writes the demo scenario beside a generated list of
// rows segments and returns the scenario's path.
func writeMillionSegments(b *testing.B, rows int) string {
	b.Helper()
	dir := b.TempDir()
	demo, err := os.ReadFile(demoPath)
	if err != nil {
		b.Fatal(err)
	}
	scenario := strings.Replace(string(demo), "file: marrowby-segments-invented.csv", "file: million.csv", 1)
	if err := os.WriteFile(filepath.Join(dir, "million.yaml"), []byte(scenario), 0o644); err != nil {
		b.Fatal(err)
	}
	f, err := os.Create(filepath.Join(dir, "million.csv"))
	if err != nil {
		b.Fatal(err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	fmt.Fprintln(w, "id,class,name,quantity,condition,aadt,wkt")
	rng := splitmix64(42)
	culvertStates := []string{"Very good", "Good", "Fair", "Poor", "Very poor"}
	for i := range rows {
		lon := -30.5 + float64(i%1000)*0.0004
		lat := -41.3 + float64(i/1000)*0.0004
		var class, qty, cond, geom string
		switch r := i % 20; {
		case r < 3:
			class, qty, cond = "arterial-asphalt", fmt.Sprintf("0.%03d", rng.between(150, 999)), fmt.Sprint(rng.between(0, 100))
		case r < 17:
			class, qty, cond = "local-asphalt", fmt.Sprintf("0.%03d", rng.between(60, 400)), fmt.Sprint(rng.between(0, 100))
		case r < 18:
			class, qty, cond = "bridge-decks", fmt.Sprint(rng.between(80, 700)), fmt.Sprint(rng.between(0, 9))
		default:
			class, qty, cond = "culverts", "1", culvertStates[rng.between(0, 4)]
		}
		if class == "bridge-decks" || class == "culverts" {
			geom = fmt.Sprintf("POINT (%.6f %.6f)", lon, lat)
		} else {
			geom = fmt.Sprintf("LINESTRING (%.6f %.6f, %.6f %.6f)", lon, lat, lon+0.0003, lat)
		}
		fmt.Fprintf(w, "S%07d,%s,Street %d block %d,%s,%s,%d,\"%s\"\n", i, class, i/40, i%40, qty, cond, rng.between(100, 30000), geom)
	}
	if err := w.Flush(); err != nil {
		b.Fatal(err)
	}
	if err := f.Close(); err != nil {
		b.Fatal(err)
	}
	return filepath.Join(dir, "million.yaml")
}

// BenchmarkMillionSegments reads a million segment rows, aggregates them
// per class and state, plans the demo's 20 years and lists the work by
// segment for one year and for five (four of them indicative).
func BenchmarkMillionSegments(b *testing.B) {
	const rows = 1_000_000
	path := writeMillionSegments(b, rows)
	for _, years := range []int{1, 5} {
		b.Run(fmt.Sprintf("rows=%d/years=%d", rows, years), func(b *testing.B) {
			optimizetest.ResetPeakRSS()
			cpu0 := optimizetest.CPUSeconds()
			var w *scenarios.Worklist
			for b.Loop() {
				sc, err := scenarios.LoadFile(path)
				if err != nil {
					b.Fatal(err)
				}
				r, err := scenarios.Plan(sc, scenarios.Options{})
				if err != nil {
					b.Fatal(err)
				}
				if w, err = scenarios.MakeWorklist(sc, r, years); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric((optimizetest.CPUSeconds()-cpu0)/float64(b.N), "cpu-s/op")
			b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
			b.ReportMetric(float64(len(w.Items)), "items")
		})
	}
}

// BenchmarkLoadSegments is the reading and aggregation alone.
func BenchmarkLoadSegments(b *testing.B) {
	path := writeMillionSegments(b, 1_000_000)
	optimizetest.ResetPeakRSS()
	cpu0 := optimizetest.CPUSeconds()
	for b.Loop() {
		if _, err := scenarios.LoadFile(path); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric((optimizetest.CPUSeconds()-cpu0)/float64(b.N), "cpu-s/op")
	b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
}

// BenchmarkCheckSegments reads a generated segment list as `wearplan
// check` does (scenarios.LoadOptions{CountSegments: true}: totals per class
// and state, every row checked, ids checked for repeats, nothing of the
// rows kept), at one million and ten million rows, so that the memory per
// million rows can be read off. The ten-million-row file (about 1.2 GB) is
// written to a temporary folder first and removed after.
func BenchmarkCheckSegments(b *testing.B) {
	for _, rows := range []int{1_000_000, 10_000_000} {
		b.Run(fmt.Sprintf("rows=%d", rows), func(b *testing.B) {
			path := writeMillionSegments(b, rows)
			optimizetest.ResetPeakRSS()
			cpu0 := optimizetest.CPUSeconds()
			for b.Loop() {
				sc, err := scenarios.LoadFileWith(path, scenarios.LoadOptions{CountSegments: true})
				if err != nil {
					b.Fatal(err)
				}
				if sc.Inventories[0].Rows != rows {
					b.Fatalf("%d rows read, want %d", sc.Inventories[0].Rows, rows)
				}
			}
			b.ReportMetric((optimizetest.CPUSeconds()-cpu0)/float64(b.N), "cpu-s/op")
			b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
		})
	}
}
