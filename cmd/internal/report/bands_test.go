package report

import (
	"bytes"
	"fmt"
	"html"
	"math"
	"regexp"
	"strings"
	"testing"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// bandsRuns keeps the simulations of these tests small: the figures are
// rough, but the report only lays them out.
const bandsRuns = 40

// smallBandsReport is smallReport with the plan simulated (40 runs, seed 5).
func smallBandsReport(t *testing.T) *Report {
	t.Helper()
	rep := smallReport(t)
	sim, err := scenarios.Simulate(rep.Runs[0].Scenario, scenarios.SimulateOptions{Runs: bandsRuns, Seed: 5})
	if err != nil {
		t.Fatal(err)
	}
	rep.Runs[0].Simulation = sim
	return rep
}

// chartIDs lists the ids of the figures of an HTML report, in page order.
func chartIDs(page string) []string {
	var ids []string
	for _, m := range regexp.MustCompile(`<figure id="([^"]+)"`).FindAllStringSubmatch(page, -1) {
		ids = append(ids, m[1])
	}
	return ids
}

// TestBandChartsBesideTheStackedCharts: with a simulation, the HTML report
// has a band chart for the network and each class, each right after the
// stacked chart it belongs to, with the legend naming the runs; without
// one, none.
func TestBandChartsBesideTheStackedCharts(t *testing.T) {
	page := htmlOf(t, smallBandsReport(t))
	// The summary's network chart comes first; the spend by class closes.
	want := []string{"summary-chart-network", "run-1-chart-network", "run-1-chart-bands-network", "run-1-chart-class-1", "run-1-chart-bands-class-1",
		"run-1-chart-class-2", "run-1-chart-bands-class-2", "run-1-chart-spend", "run-1-chart-class-spend"}
	if got := chartIDs(page); strings.Join(got, " ") != strings.Join(want, " ") {
		t.Errorf("charts %v, want %v", got, want)
	}
	if n := strings.Count(page, "<svg "); n != len(want) {
		t.Errorf("%d SVG charts, want %d", n, len(want))
	}
	for _, id := range want {
		if !strings.Contains(id, "bands") {
			continue
		}
		fig := page[strings.Index(page, `<figure id="`+id+`"`):]
		fig = fig[:strings.Index(fig, "</figure>")]
		for _, text := range []string{">5th-95th percentile<", fmt.Sprintf(">of %d simulated runs<", bandsRuns), ">Plan<", ">Median of runs<", ">Poor (% ", ">Good (% ", ">today<"} {
			if !strings.Contains(fig, text) {
				t.Errorf("%s lacks %q", id, text)
			}
		}
		if !strings.Contains(fig, `role="img" aria-label="How sure: `) {
			t.Errorf("%s has no accessible label", id)
		}
	}
	if ids := chartIDs(htmlOf(t, smallReport(t))); strings.Contains(strings.Join(ids, " "), "bands") {
		t.Errorf("band charts without a simulation: %v", ids)
	}
}

// TestBandsSameBytes: two reports made from the same scenario, seed and
// date (each planned and simulated afresh) are the same bytes, in HTML and
// Markdown; another seed changes them.
func TestBandsSameBytes(t *testing.T) {
	a, b := smallBandsReport(t), smallBandsReport(t)
	if htmlOf(t, a) != htmlOf(t, b) {
		t.Error("HTML with bands differs between two runs")
	}
	if markdownOf(t, a) != markdownOf(t, b) {
		t.Error("Markdown with bands differs between two runs")
	}
	c := smallReport(t)
	sim, err := scenarios.Simulate(c.Runs[0].Scenario, scenarios.SimulateOptions{Runs: bandsRuns, Seed: 6})
	if err != nil {
		t.Fatal(err)
	}
	c.Runs[0].Simulation = sim
	if markdownOf(t, c) == markdownOf(t, a) {
		t.Error("another seed gives the same Markdown: the bands do not reach it")
	}
}

// TestBandsTables: the level-of-service table gains the poor share's
// range for each class and the network, formatted from the simulation's
// percentiles; the target probabilities and the sources of uncertainty are
// in both formats.
func TestBandsTables(t *testing.T) {
	rep := smallBandsReport(t)
	sim := rep.Runs[0].Simulation
	md, page := markdownOf(t, rep), htmlOf(t, rep)
	years := render.LOSYears(sim.Horizon)
	label := fmt.Sprintf("Poor, 5th-95th percentile of %d runs", bandsRuns)
	// One per class and the network, and the network's again in the
	// summary's table.
	if n := strings.Count(md, "| "+label+" |"); n != len(sim.Classes)+2 {
		t.Errorf("%d range rows in the Markdown LOS tables, want %d", n, len(sim.Classes)+2)
	}
	for k := -1; k < len(sim.Classes); k++ {
		row := "| " + label + " | - |"
		for _, y := range years {
			b := sim.Years[y-1].Network.Shares.Poor
			if k >= 0 {
				b = sim.Years[y-1].Classes[k].Shares.Poor
			}
			row += fmt.Sprintf(" %.1f-%.1f%% |", 100*b.P5, 100*b.P95)
		}
		if !strings.Contains(md, row) {
			t.Errorf("Markdown lacks the range row %q", row)
		}
	}
	if len(sim.Targets) == 0 {
		t.Fatal("the small scenario has no targets")
	}
	for _, tc := range sim.Targets {
		lo := tc.Years[0]
		for _, y := range tc.Years {
			if y.Probability < lo.Probability {
				lo = y
			}
		}
		row := fmt.Sprintf("| %s | %s | %s | %s | %d |", mdText(tc.Target), map[bool]string{true: "yes", false: "no"}[tc.MetByPlan],
			render.Chance(tc.AllYears), render.Chance(lo.Probability), lo.Year)
		if !strings.Contains(md, row) {
			t.Errorf("Markdown lacks the probability row %q", row)
		}
	}
	for _, want := range append(append([]string{"How sure the forecast is", "Included in the bands", "Not included", "Probability that each target is met",
		"The bands show how far", "Planning estimate only"}, sim.Uncertainty.Included...), sim.Uncertainty.Excluded...) {
		if !strings.Contains(md, mdText(want)) {
			t.Errorf("Markdown lacks %q", want)
		}
		if !strings.Contains(page, html.EscapeString(want)) {
			t.Errorf("HTML lacks %q", want)
		}
	}
	if plain := markdownOf(t, smallReport(t)); strings.Contains(plain, "5th-95th") || strings.Contains(plain, "How sure") {
		t.Error("bands content in a report without a simulation")
	}
}

// TestBandSeries: a band panel starts at today's known share and then
// follows the simulation's percentiles and the plan, in percent.
func TestBandSeries(t *testing.T) {
	rep := smallBandsReport(t)
	sim := rep.Runs[0].Simulation
	bands := make([]scenarios.ShareBands, len(sim.Years))
	for i, y := range sim.Years {
		bands[i] = y.Classes[1].Shares
	}
	today := sim.Initial.Classes[1].Shares.Poor
	xs, lo, mid, hi, plan := bandSeries(today, bands, func(s scenarios.ShareBands) scenarios.Band { return s.Poor })
	if len(xs) != sim.Horizon+1 || xs[0] != 0 || lo[0] != 100*today || hi[0] != 100*today || mid[0] != 100*today || plan[0] != 100*today {
		t.Fatalf("today: x %v lo %v hi %v", xs[:1], lo[:1], hi[:1])
	}
	spread := false
	for i, b := range bands {
		p := b.Poor
		if xs[i+1] != float64(i+1) || lo[i+1] != 100*p.P5 || mid[i+1] != 100*p.P50 || hi[i+1] != 100*p.P95 || plan[i+1] != 100*p.Plan {
			t.Errorf("year %d: %v %v %v %v, want %+v in percent", i+1, lo[i+1], mid[i+1], hi[i+1], plan[i+1], p)
		}
		if lo[i+1] > mid[i+1] || mid[i+1] > hi[i+1] {
			t.Errorf("year %d: percentiles out of order", i+1)
		}
		spread = spread || hi[i+1] > lo[i+1]
	}
	if !spread {
		t.Error("no year has a band wider than a line: the simulation did not vary")
	}
}

// TestPercentTicks: a band panel's axis gets four to eight labels at a
// round step, within the range.
func TestPercentTicks(t *testing.T) {
	for _, r := range [][2]float64{{0, 3}, {8, 20}, {10, 32}, {0, 100}, {40, 90}, {21, 24}} {
		ticks := percentTicks{}.Ticks(r[0], r[1])
		if len(ticks) < 3 || len(ticks) > 9 {
			t.Errorf("%v: %d ticks", r, len(ticks))
		}
		for _, tk := range ticks {
			if tk.Value < r[0] || tk.Value > r[1] || tk.Label == "" {
				t.Errorf("%v: tick %+v", r, tk)
			}
		}
		if step := ticks[1].Value - ticks[0].Value; !slicesContains([]float64{0.5, 1, 2, 5, 10, 20, 25}, step) {
			t.Errorf("%v: step %g", r, step)
		}
	}
}

func slicesContains(xs []float64, v float64) bool {
	for _, x := range xs {
		if math.Abs(x-v) < 1e-9 {
			return true
		}
	}
	return false
}

// TestBandsMustBeOfThePlan: a simulation of another scenario or of doing
// nothing is refused, not drawn beside the wrong plan.
func TestBandsMustBeOfThePlan(t *testing.T) {
	rep := smallBandsReport(t)
	sc := rep.Runs[0].Scenario
	nothing, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 5, Seed: 1, Policy: scenarios.PolicyDoNothing})
	if err != nil {
		t.Fatal(err)
	}
	renamed := *rep.Runs[0].Simulation
	renamed.Classes = append([]scenarios.SimClassInfo(nil), renamed.Classes...)
	renamed.Classes[1].Class = "trams"
	short := *rep.Runs[0].Simulation
	short.Years = short.Years[:2]
	for name, sim := range map[string]*scenarios.SimulationResult{"do-nothing": nothing, "other class": &renamed, "fewer years": &short} {
		rep.Runs[0].Simulation = sim
		var b bytes.Buffer
		if err := HTML(&b, rep); err == nil || b.Len() != 0 {
			t.Errorf("%s: err %v, %d bytes written", name, err, b.Len())
		}
	}
}
