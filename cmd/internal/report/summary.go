package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// summaryView is the one-page summary at the top of a single-scenario
// report: whether the targets are met and the score, a few figures, the
// network's level of service, the funding gap in one sentence and the
// network condition chart. It prints on one page.
type summaryView struct {
	ID       string
	Headline string
	Facts    []fact
	Gap      string
	LOS      table
	Chart    *chart
	// Warnings are the run's notes, in brief; the run's section repeats
	// them in full.
	Warnings []string
}

func buildSummary(id string, run Run, withCharts bool) (*summaryView, error) {
	r := run.Result
	v := &summaryView{ID: id, Headline: render.Headline(r), Gap: render.FundingGap(r)}
	// At most two notes, so that the summary keeps to its page; the plan's
	// section lists them all.
	// Class warnings are long (figures and targets to paste): the summary
	// names the classes and points to the section that has the figures.
	classText := map[string]bool{}
	var classes []string
	for _, w := range r.ClassWarnings {
		classText[w.Text] = true
		classes = append(classes, w.Class)
	}
	var notes []string
	for _, w := range r.Warnings {
		if !classText[w] {
			notes = append(notes, w)
		}
	}
	v.Warnings = notes
	if n := len(notes); n > maxSummaryNotes {
		v.Warnings = append(append([]string(nil), notes[:maxSummaryNotes]...), fmt.Sprintf("and %s in the plan's section", render.Plural(n-maxSummaryNotes, "more note", "more notes")))
	}
	if len(classes) > 0 {
		v.Warnings = append(v.Warnings, fmt.Sprintf("the plan runs down or leaves without work: %s; see \"What the plan does to each class\"", strings.Join(classes, ", ")))
	}
	last := r.StartYear + r.Horizon - 1
	v.Facts = append(v.Facts, fact{"Condition score", fmt.Sprintf("%s out of 100, the network's average over %d-%d", strconv.FormatFloat(r.ConditionScore, 'f', 1, 64), r.StartYear, last)})
	if len(r.Targets) > 0 {
		v.Facts = append(v.Facts, fact{"Targets met", fmt.Sprintf("%d of %d", render.TargetsMet(r), len(r.Targets))})
	}
	if r.Kind == scenarios.KindPlan {
		v.Facts = append(v.Facts,
			fact{"Budget", budgetSummary(r)},
			fact{"Spend", fmt.Sprintf("%s over %d-%d at each year's prices (present value %s)", render.Amount(r, r.TotalCost), r.StartYear, last, render.Money(r.PresentValue))},
		)
	}
	if r.RoutineCost != nil {
		v.Facts = append(v.Facts, fact{"Routine costs", fmt.Sprintf("%s apart from treatment spend", render.Amount(r, *r.RoutineCost))})
	}
	v.LOS = losTable(id+"-los", run, false)
	v.LOS.Caption = "Network level of service today and at the end of selected years"
	if withCharts {
		ch, err := networkChart(id+"-chart-network", r)
		if err != nil {
			return nil, err
		}
		v.Chart = &ch
	}
	return v, nil
}

// maxSummaryNotes is the most notes the one-page summary lists.
const maxSummaryNotes = 2

// budgetSummary writes the network budget in brief: one amount a year, a
// range, or no cap.
func budgetSummary(r *scenarios.Result) string {
	lo, hi, capped := math.Inf(1), math.Inf(-1), 0
	for _, y := range r.Years {
		if y.Budget != nil {
			lo, hi = math.Min(lo, *y.Budget), math.Max(hi, *y.Budget)
			capped++
		}
	}
	switch {
	case capped == 0:
		return "no network cap"
	case lo == hi && capped == len(r.Years):
		return render.Amount(r, lo) + " a year"
	case capped == len(r.Years):
		return fmt.Sprintf("%s to %s a year", render.Amount(r, lo), render.Money(hi))
	}
	return fmt.Sprintf("%s to %s a year in %d of the %d years, no cap in the others", render.Amount(r, lo), render.Money(hi), capped, len(r.Years))
}
