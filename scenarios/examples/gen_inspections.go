//go:build ignore

// gen_inspections writes marrowby-inspections.csv: INVENTED inspection
// records of the invented town of Marrowby, for docs/guide.md's walk-through
// from an inspection export to a fitted matrix to a plan. Every number is
// made up; the "data" column of every row says so.
//
//	go run scenarios/examples/gen_inspections.go > scenarios/examples/marrowby-inspections.csv
//
// Local asphalt road segments are surveyed each summer (ISO dates, PCI
// values 0-100); culverts are rated once a year by state name, a third of
// them only every second year. Work is recorded when a segment or culvert
// is rehabilitated. About 1% of readings come out one state too good (as
// surveys do), a few years are missed, one line is repeated and one asset
// is listed out of date order, so that the data preparation has something
// to report.
package main

import (
	"encoding/csv"
	"fmt"
	"math/rand/v2"
	"os"
)

// The deterioration the records are drawn from (invented). The demo
// scenario's years in state for the same classes differ on purpose: the
// fit should find these.
var localAsphalt = [][]float64{
	{0.78, 0.19, 0.03, 0, 0, 0, 0},
	{0, 0.76, 0.21, 0.03, 0, 0, 0},
	{0, 0, 0.72, 0.24, 0.04, 0, 0},
	{0, 0, 0, 0.72, 0.25, 0.03, 0},
	{0, 0, 0, 0, 0.70, 0.27, 0.03},
	{0, 0, 0, 0, 0, 0.66, 0.34},
	{0, 0, 0, 0, 0, 0, 1},
}

var culverts = [][]float64{
	{0.89, 0.11, 0, 0, 0},
	{0, 0.86, 0.14, 0, 0},
	{0, 0, 0.83, 0.17, 0},
	{0, 0, 0, 0.80, 0.20},
	{0, 0, 0, 0, 1},
}

// PCI ranges of the demo scenario's pci scale, best first.
var pciRange = [][2]int{{86, 100}, {71, 85}, {56, 70}, {41, 55}, {26, 40}, {11, 25}, {0, 10}}

var culvertStates = []string{"Very good", "Good", "Fair", "Poor", "Very poor"}

func step(r *rand.Rand, row []float64) int {
	u := r.Float64()
	for j, p := range row {
		if u < p {
			return j
		}
		u -= p
	}
	return len(row) - 1
}

func main() {
	r := rand.New(rand.NewPCG(2027, 4))
	w := csv.NewWriter(os.Stdout)
	rows := [][]string{{"asset", "class", "inspected", "condition", "work", "surveyor", "data"}}
	add := func(row ...string) { rows = append(rows, append(row, "invented")) }

	for a := 1; a <= 220; a++ {
		id := fmt.Sprintf("MRB-L%03d", a)
		s := r.IntN(5) // start in one of the five best states
		for year := 2016; year <= 2025; year++ {
			work := ""
			if year > 2016 {
				// A quarter of the segments found Poor or worse are
				// overlaid during the year; the rest deteriorate.
				if s >= 3 && r.Float64() < 0.25 {
					s, work = 0, "overlay"
				} else {
					s = step(r, localAsphalt[s])
				}
			}
			if r.Float64() < 0.06 && year > 2016 && work == "" {
				continue // survey missed this segment this year
			}
			seen := s
			if seen > 0 && r.Float64() < 0.01 {
				seen-- // reads one state too good
			}
			lo, hi := pciRange[seen][0], pciRange[seen][1]
			pci := float64(lo*10+r.IntN((hi-lo)*10+1)) / 10
			date := fmt.Sprintf("%d-%02d-%02d", year, 6+r.IntN(3), 1+r.IntN(28))
			add(id, "local-asphalt", date, fmt.Sprintf("%.1f", pci), work, fmt.Sprintf("crew %d", 1+r.IntN(3)))
		}
	}
	for a := 1; a <= 110; a++ {
		id := fmt.Sprintf("MRB-C%03d", a)
		s := r.IntN(4)
		every := 1
		if a%3 == 0 {
			every = 2
		}
		var culvertRows [][]string
		pendingWork := ""
		for year := 2016; year <= 2025; year++ {
			if year > 2016 {
				if s >= 3 && r.Float64() < 0.2 {
					s, pendingWork = 0, "relined"
				} else {
					s = step(r, culverts[s])
				}
			}
			if (year-2016)%every != 0 {
				continue
			}
			culvertRows = append(culvertRows, []string{id, "culverts", fmt.Sprint(year), culvertStates[s], pendingWork, "bridge unit"})
			pendingWork = ""
		}
		if a == 17 {
			// Listed out of date order in the export.
			culvertRows[2], culvertRows[3] = culvertRows[3], culvertRows[2]
		}
		for _, row := range culvertRows {
			add(row...)
		}
		if a == 40 {
			add(culvertRows[1]...) // the same inspection exported twice
		}
	}
	if err := w.WriteAll(rows); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
}
