package scenarios_test

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// The default pieces: the size of the unit's pieces (common practice: a
// road section, a deck or footpath block, one asset), enlarged to at most
// MaxDefaultPieces pieces a class; the counts are arithmetic on the
// quantities (ceil(q/L) per state).
func TestDefaultSegmentSize(t *testing.T) {
	tests := []struct {
		name     string
		unit     string
		initial  []float64
		size     float64
		rule     string
		maxCount int
	}{
		{"lane-km", "lane-km", []float64{100, 200, 300}, 0.5, "the default for lane-km", 1200},
		{"spelled with a space and capitals", "Lane km", []float64{600}, 0.5, "the default for Lane km", 1200},
		{"footpaths typed as quantities (the issue's 178,500 m2)", "m2", []float64{60000, 78500, 40000}, 500, "the default for m2", 357},
		{"culverts", "each", []float64{38, 52, 41, 20, 9}, 1, "one asset", 160},
		{"a generated 200,000-unit class", "each", []float64{50000, 60000, 40000, 30000, 20000}, 50, "enlarged so that the class has at most 5,000 pieces", 4000},
		{"a state network of 60,000 lane-km", "lane-km", []float64{20000, 20000, 20000}, 20, "enlarged", 3000},
		{"an odd remainder in every state", "each", []float64{2001, 2001, 2001}, 2, "enlarged", 3003},
		{"a unit without a default", "tonnes", []float64{12345}, 20, "about 1,000 pieces", 618},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			size, rule := scenarios.DefaultSegmentSize(tc.unit, tc.initial)
			if math.Abs(size-tc.size) > 1e-12 || !strings.Contains(rule, tc.rule) {
				t.Errorf("size %g (%s), want %g (%s)", size, rule, tc.size, tc.rule)
			}
			n := 0
			for _, q := range tc.initial {
				n += int(math.Ceil(q/size - 1e-9))
			}
			if n != tc.maxCount || n > scenarios.MaxDefaultPieces {
				t.Errorf("%d pieces, want %d (at most %d)", n, tc.maxCount, scenarios.MaxDefaultPieces)
			}
		})
	}
}

// The demo moves segment by segment, and every class is within the bounds
// without a warning; typed as quantities instead (its segment lists
// aggregated), the default pieces stay within MaxDefaultPieces.
func TestDemoPiecesWithinBounds(t *testing.T) {
	sc, err := scenarios.LoadFile(demoPath)
	if err != nil {
		t.Fatal(err)
	}
	r := simulate(t, sc, scenarios.SimulateOptions{Runs: 2, Seed: 1})
	for _, c := range r.Classes {
		if c.Segments < scenarios.FewPieces || c.Segments > scenarios.ManyPieces || !strings.Contains(c.SegmentsFrom, "segments of the inventory list") {
			t.Errorf("%s: %d pieces from %q", c.Class, c.Segments, c.SegmentsFrom)
		}
	}
	for _, w := range r.Warnings {
		if strings.Contains(w, "pieces") {
			t.Errorf("warning on the demo's pieces: %s", w)
		}
	}
	for k := range sc.Classes {
		sc.Classes[k].Segments = nil // typed as quantities
	}
	r = simulate(t, sc, scenarios.SimulateOptions{Runs: 2, Seed: 1})
	for k, c := range r.Classes {
		size, _ := scenarios.DefaultSegmentSize(sc.Classes[k].Unit, sc.Classes[k].Initial)
		if c.LotSize != size || c.Segments > scenarios.MaxDefaultPieces || c.Segments < 1 {
			t.Errorf("%s typed as quantities: %d pieces of %g, want pieces of %g, at most %d", c.Class, c.Segments, c.LotSize, size, scenarios.MaxDefaultPieces)
		}
	}
}

// Warnings fire just outside FewPieces..ManyPieces pieces, not on the bounds.
func TestPieceWarningsAtTheThresholds(t *testing.T) {
	for _, tc := range []struct {
		total float64
		warn  string
	}{
		{scenarios.FewPieces - 1, "fewer than 20"},
		{scenarios.FewPieces, ""},
		{scenarios.ManyPieces, ""},
		{scenarios.ManyPieces + 1, "more than 10000"},
	} {
		t.Run(fmt.Sprint(tc.total), func(t *testing.T) {
			sc := mustParse(t, scenarioYAML("", []string{
				classYAML("lamps", fmt.Sprintf("{Very good: %g, Good: 0, Fair: 0, Poor: 0, Very poor: 0}", tc.total), yearsDet, "segment_size: 1"),
			}, "", ""))
			r := simulate(t, sc, scenarios.SimulateOptions{Runs: 2, Seed: 1})
			if r.Classes[0].Segments != int(tc.total) || !strings.Contains(r.Classes[0].SegmentsFrom, "segment_size") {
				t.Fatalf("%d pieces from %q, want %g from segment_size", r.Classes[0].Segments, r.Classes[0].SegmentsFrom, tc.total)
			}
			var got string
			for _, w := range r.Warnings {
				if strings.Contains(w, "pieces") {
					got = w
				}
			}
			if (tc.warn == "") != (got == "") || !strings.Contains(got, tc.warn) {
				t.Errorf("warning %q, want one containing %q", got, tc.warn)
			}
		})
	}
}

// The pieces a simulation cuts a class typed as quantities into, when the
// scenario gives no segment_size: the default piece of its unit, larger
// when the class would have more than 5,000 (invented quantities).
func ExampleDefaultSegmentSize() {
	for _, c := range []struct {
		unit    string
		initial []float64
	}{
		{"m2", []float64{60000, 78500, 40000}},     // footpaths
		{"lane-km", []float64{160, 150, 120, 190}}, // roads
		{"each", []float64{50000, 60000, 90000}},   // street lights
	} {
		size, rule := scenarios.DefaultSegmentSize(c.unit, c.initial)
		fmt.Printf("%s: pieces of %g (%s)\n", c.unit, size, rule)
	}
	// Output:
	// m2: pieces of 500 (the default for m2, a bridge deck or a footpath block)
	// lane-km: pieces of 0.5 (the default for lane-km, a road section of about 250 m of two lanes)
	// each: pieces of 50 (the default for each, one asset, enlarged so that the class has at most 5,000 pieces)
}

// A target on one named state is measured on that state's share in every
// run: on a scale whose poor group is the worst state alone, the state
// target and the group target are the same measure, so their shares of
// runs agree exactly, year by year.
func TestSimulateStateTargetIsMeasuredOnItsState(t *testing.T) {
	text := scenarioYAML("", []string{classYAML("roads", "{Very good: 400, Good: 300, Fair: 200, Poor: 60, Very poor: 40}", yearsDet)}, "",
		"budget:\n  yearly: 3000\ntargets:\n  - {class: roads, group: poor, max_share: 0.06}\n  - {class: roads, state: Very poor, max_share: 0.06}\n")
	text = strings.Replace(text, "fair: [Fair], poor: [Poor, Very poor]", "fair: [Fair, Poor], poor: [Very poor]", 1)
	r := simulate(t, mustParse(t, text), scenarios.SimulateOptions{Runs: 300, Seed: 5})
	g, s := r.Targets[0], r.Targets[1]
	if g.AllYears != s.AllYears || len(g.Years) != len(s.Years) {
		t.Fatalf("group target %+v, state target %+v", g, s)
	}
	between := false
	for y := range g.Years {
		if g.Years[y] != s.Years[y] {
			t.Errorf("%d: group %.3f, state %.3f", g.Years[y].Year, g.Years[y].Probability, s.Years[y].Probability)
		}
		between = between || (g.Years[y].Probability > 0 && g.Years[y].Probability < 1)
	}
	if !between {
		t.Errorf("every year's share is 0 or 1; the case does not test the measure: %+v", g.Years)
	}
}
