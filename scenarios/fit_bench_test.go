package scenarios_test

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

// benchRoads is an invented seven-state pavement matrix for generated
// exports.
var benchRoads = [][]float64{
	{0.78, 0.19, 0.03, 0, 0, 0, 0},
	{0, 0.76, 0.21, 0.03, 0, 0, 0},
	{0, 0, 0.72, 0.24, 0.04, 0, 0},
	{0, 0, 0, 0.72, 0.25, 0.03, 0},
	{0, 0, 0, 0, 0.70, 0.27, 0.03},
	{0, 0, 0, 0, 0, 0.66, 0.34},
	{0, 0, 0, 0, 0, 0, 1},
}

// writeBenchExportWith writes a generated export of records inspections
// of local asphalt segments (PCI values, ISO dates, a work column), ten per
// segment; with mixed, a third of the segments are seen every year, a
// third every two years and a third every three. Segments found Poor or
// worse are overlaid with probability 0.2 a year. With covariates, two more
// columns, traffic (vehicles a day, fixed per segment) and age (years,
// growing), and the yearly drop of a segment follows an ordered logit in
// them instead of benchRoads (invented parameters).
func writeBenchExportWith(b *testing.B, records int, mixed, covariates bool) string {
	b.Helper()
	path := filepath.Join(b.TempDir(), "export.csv")
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	w := bufio.NewWriter(f)
	if covariates {
		w.WriteString("asset,class,inspected,condition,work,crew,aadt,age\n")
	} else {
		w.WriteString("asset,class,inspected,condition,work,crew\n")
	}
	r := rand.New(rand.NewPCG(1, 2))
	lo := []int{86, 71, 56, 41, 26, 11, 0}
	written := 0
	for a := 0; written < records; a++ {
		every := 1
		if mixed {
			every = 1 + a%3
		}
		s := r.IntN(5)
		work := ""
		aadt := 500 + r.Float64()*19500
		age := 1 + r.IntN(30)
		for k := 0; k < 10 && written < records; k++ {
			for range every {
				if k == 0 {
					break
				}
				if s >= 3 && r.Float64() < 0.2 {
					s, work = 0, "overlay"
					continue
				}
				if covariates {
					eta := 0.00008*(aadt-10000) + 0.03*float64(age+k*every-15)
					u, drop := r.Float64(), 2
					for d, mu := range []float64{1.3, 3.2} {
						if u < 1/(1+math.Exp(-(mu-eta))) {
							drop = d
							break
						}
					}
					s = min(6, s+drop)
					continue
				}
				u := r.Float64()
				for j, p := range benchRoads[s] {
					if u < p {
						s = j
						break
					}
					u -= p
				}
			}
			pci := lo[s] + r.IntN(10)
			if covariates {
				fmt.Fprintf(w, "S%07d,local-asphalt,%d-07-%02d,%d,%s,crew %d,%.0f,%d\n", a, 2000+k*every, 1+r.IntN(28), pci, work, r.IntN(9), aadt, age+k*every)
			} else {
				fmt.Fprintf(w, "S%07d,local-asphalt,%d-07-%02d,%d,%s,crew %d\n", a, 2000+k*every, 1+r.IntN(28), pci, work, r.IntN(9))
			}
			work = ""
			written++
		}
	}
	if err := w.Flush(); err != nil {
		b.Fatal(err)
	}
	f.Close()
	return path
}

// BenchmarkFit reads a generated export and fits it end to end (reading,
// data preparation, estimate, bootstrap, goodness of fit, mean condition),
// as wearplan fit does: 1,000,000 records with the counting method and
// 100,000 with the interval method, each with and without the default
// 1,000 bootstrap resamples; and 1,000,000 records with two covariates
// (the ordered logit model of the yearly drop besides the matrix).
func BenchmarkFit(b *testing.B) {
	set, err := scenarios.LoadScaleSet(demoScenario)
	if err != nil {
		b.Fatal(err)
	}
	cases := []struct {
		method     string
		records    int
		mixed      bool
		bootstrap  int
		covariates []string
	}{
		{scenarios.MethodCounting, 1_000_000, false, 0, nil},
		{scenarios.MethodCounting, 1_000_000, false, 1000, nil},
		{scenarios.MethodInterval, 100_000, true, 0, nil},
		{scenarios.MethodInterval, 100_000, true, 1000, nil},
		{scenarios.MethodCounting, 1_000_000, false, 0, []string{"aadt", "age"}},
		{scenarios.MethodCounting, 1_000_000, false, 1000, []string{"aadt", "age"}},
	}
	for _, c := range cases {
		name := fmt.Sprintf("%s/%d/bootstrap=%d", c.method, c.records, c.bootstrap)
		if c.covariates != nil {
			name += "/covariates=" + strings.Join(c.covariates, ",")
		}
		b.Run(name, func(b *testing.B) {
			path := writeBenchExportWith(b, c.records, c.mixed, c.covariates != nil)
			optimizetest.ResetPeakRSS()
			for b.Loop() {
				f, err := os.Open(path)
				if err != nil {
					b.Fatal(err)
				}
				ins, err := scenarios.ReadInspections(f, path, scenarios.InspectionOptions{ScaleFor: set.ForClass, Covariates: c.covariates})
				f.Close()
				if err != nil {
					b.Fatal(err)
				}
				res, err := scenarios.Fit(ins, scenarios.FitOptions{Method: c.method, Bootstrap: c.bootstrap, Seed: 1, Covariates: c.covariates})
				if err != nil {
					b.Fatal(err)
				}
				if res.Rows != c.records {
					b.Fatalf("read %d rows, want %d", res.Rows, c.records)
				}
			}
			b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
		})
	}
}
