package report

import (
	"fmt"
	"strconv"
	"strings"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// bandsView is a run's section on how sure the forecast is: what was
// simulated, which sources of uncertainty the bands include and leave out,
// how each class was cut into segments, the probability that each target
// is met, and the caution that goes with the bands.
type bandsView struct {
	Facts    []fact
	Method   []fact
	Included []string
	Excluded []string
	Classes  table
	Chances  *table
	Notes    []string
	Caution  string
}

// bandsCaution goes with every report that shows bands.
const bandsCaution = "The bands show how far the plan's outcome spreads under the sources of uncertainty listed as included. " +
	"The sources not included can widen the spread, so real outcomes may fall outside the bands; a probability of 100% means " +
	"every simulated run met the target, not that the target is certain to be met."

func buildBands(id string, sim *scenarios.SimulationResult) *bandsView {
	runs := render.Money(float64(sim.Runs))
	v := &bandsView{Included: sim.Uncertainty.Included, Excluded: sim.Uncertainty.Excluded, Notes: sim.Warnings, Caution: bandsCaution}
	v.Facts = []fact{
		{"What was simulated", fmt.Sprintf("the plan above, %s times at segment level: in each run every segment (or lot) gets its treatment at random with the plan's share for its state and year, then moves to its next state at random", runs)},
		{"Runs and seed", fmt.Sprintf("%s runs, seed %d; the same seed gives the same bands", runs, sim.Seed)},
	}
	if sim.PolicyRule != "" {
		v.Method = append(v.Method, fact{"How runs follow the plan", sim.PolicyRule})
	}
	v.Method = append(v.Method, fact{"Percentiles", sim.Percentiles})
	v.Classes = table{ID: id + "-bands-classes", Caption: "How each class was simulated",
		Head: []string{"Class", "Pieces", "Quantity", "Unit", "Pieces from", "Matrix in each run"}, Num: []bool{false, true, true, false, false, false}}
	for _, c := range sim.Classes {
		v.Classes.add(c.Class, render.Money(float64(c.Segments)), render.Quantity(c.Quantity), c.Unit, c.SegmentsFrom, c.Matrix)
	}
	if len(sim.Targets) > 0 {
		t := chanceTable(id+"-bands-targets", sim)
		v.Chances = &t
	}
	return v
}

// chanceTable is the probability that each target is met: in every year it
// covers, and its lowest yearly probability with the year.
func chanceTable(id string, sim *scenarios.SimulationResult) table {
	t := table{ID: id, Caption: fmt.Sprintf("Probability that each target is met (share of %s simulated runs)", render.Money(float64(sim.Runs))),
		Head: []string{"Target", "Plan meets it", "Met in every year it covers", "Lowest yearly probability", "Year of the lowest"},
		Num:  []bool{false, false, true, true, true}}
	for _, tc := range sim.Targets {
		met := "yes"
		if !tc.MetByPlan {
			met = "no"
		}
		low, year := "-", "-"
		if y, ok := lowestChance(tc.Years); ok {
			low, year = render.Chance(y.Probability), strconv.Itoa(y.Year)
		}
		t.add(tc.Target, met, render.Chance(tc.AllYears), low, year)
	}
	t.Note = "A target is met in a run when the run's figure is within the same tolerance the plan's own check allows. " +
		"Every year's probability is in the workbook (sheet " + SheetTargetChances + ")."
	return t
}

// lowestChance returns the year with the lowest probability, the earliest
// on a tie.
func lowestChance(ys []scenarios.YearChance) (scenarios.YearChance, bool) {
	if len(ys) == 0 {
		return scenarios.YearChance{}, false
	}
	lo := ys[0]
	for _, y := range ys[1:] {
		if y.Probability < lo.Probability {
			lo = y
		}
	}
	return lo, true
}

// bandRange writes a share band's 5th-95th percentile range: 10.2-13.5%.
func bandRange(b scenarios.Band) string {
	return strings.TrimSuffix(render.Percent(b.P5), "%") + "-" + render.Percent(b.P95)
}

// poorRangeRow is the level-of-service row of the poor share's range, for
// class k (or the network when k < 0) at the plan years given.
func poorRangeRow(sim *scenarios.SimulationResult, k int, years []int) []string {
	cells := []string{fmt.Sprintf("Poor, 5th-95th percentile of %s runs", render.Money(float64(sim.Runs))), "-"}
	for _, y := range years {
		by := sim.Years[y-1]
		b := by.Network.Shares.Poor
		if k >= 0 {
			b = by.Classes[k].Shares.Poor
		}
		cells = append(cells, bandRange(b))
	}
	return cells
}

// withBandCharts puts each band chart after the stacked chart of the same
// class or network: charts are the network's, one per class, then any
// others (spend); bands are the network's, then one per class.
func withBandCharts(charts, bands []chart) []chart {
	out := make([]chart, 0, len(charts)+len(bands))
	for i, c := range charts {
		out = append(out, c)
		if i < len(bands) {
			out = append(out, bands[i])
		}
	}
	return out
}
