package render

import (
	"fmt"
	"strings"

	"wearplan/scenarios"
)

// robustText prints a robust plan's comparison with the point-estimate
// plan: both under the point estimate and the samples, the price of
// robustness, each target under the samples, the budgets a robust plan
// needs, what "the same plan" means and how the plan was made.
func robustText(w *errWriter, r *scenarios.Result) {
	rb := r.Robust
	if rb == nil {
		return
	}
	w.printf("\nRobust plan against matrix uncertainty: %d sampled matrix sets for %s (%s; seed %d)\n", rb.Samples, strings.Join(rb.Drawn, ", "), rb.From, rb.Seed)
	if rb.HoldsUnderSamples {
		w.printf("  %s\n", wrapIndent("Every target holds under the point estimate and under every sample, with the same work. The tables above are this robust plan under the point estimate.", 98, "  "))
	} else {
		w.printf("  %s\n", wrapIndent("No plan within the budget meets every target under every sample with the same work. The tables above are the ordinary plan (point estimate); below, how it fares under the samples and what budget a robust plan needs.", 98, "  "))
	}
	t := table{header: []string{"PLAN", "SCORE", "MEAN SCORE OVER SAMPLES", "WORST SAMPLE SCORE", "SPEND (" + currency(r) + ")", "PRESENT VALUE", "SAMPLES MEETING EVERY TARGET", "SAMPLES WHERE THE WORK CANNOT BE DONE AS WRITTEN"}, right: []bool{false, true, true, true, true, true, true, true}}
	for _, f := range rb.Plans {
		t.rows = append(t.rows, []string{f.Plan, fmt.Sprintf("%.2f", f.ConditionScore), fmt.Sprintf("%.2f", f.MeanSampleScore), fmt.Sprintf("%.2f", f.WorstSampleScore),
			Money(f.TotalCost), Money(f.PresentValue), fmt.Sprintf("%d of %d", f.SamplesMeetingAll, rb.Samples), fmt.Sprintf("%d of %d", f.SamplesShortOfWork, rb.Samples)})
	}
	tabulate(w, t)
	w.printf("  %s\n", wrapIndent("SCORE, SPEND and PRESENT VALUE are under the point estimate. Under a sample, a work program that asks to treat more of a state than the sample has there cannot be done as written; it is then done as far as the state holds, and the targets are checked on that.", 98, "  "))
	if rb.HoldsUnderSamples && len(rb.Plans) == 2 && rb.Plans[1].SamplesMeetingAll == rb.Samples {
		w.printf("  %s\n", wrapIndent("Here the ordinary plan, done as far as each state holds, also meets every target under every sample: what the robust plan adds is a work program that can be carried out as written whatever the matrices turn out to be.", 98, "  "))
	}
	if rb.HoldsUnderSamples {
		w.printf("  %s\n", wrapIndent(fmt.Sprintf("Price of robustness, under the point estimate: %.2f condition score points given up, and %s %s more present value of spend (negative: less).", rb.PriceScore, currency(r), Money(rb.PricePresentValue)), 98, "  "))
	}
	switch {
	case rb.LevelBudget != nil && rb.PointLevelBudget != nil:
		w.printf("  %s\n", wrapIndent(fmt.Sprintf("Least level yearly budget that meets every target under every sample: %s %s; under the point estimate only: %s %s (%s %s a year more for robustness).",
			currency(r), Money(*rb.LevelBudget), currency(r), Money(*rb.PointLevelBudget), currency(r), Money(*rb.LevelBudget-*rb.PointLevelBudget)), 98, "  "))
	case rb.LevelBudget != nil:
		w.printf("  Least level yearly budget that meets every target under every sample: %s %s.\n", currency(r), Money(*rb.LevelBudget))
	case rb.Unreachable != "":
		w.printf("  %s\n", wrapIndent("Least level yearly budget that meets every target under every sample: none; "+rb.Unreachable+".", 98, "  "))
	}
	tt := table{header: []string{"TARGET", "LIMIT", "ROBUST: SAMPLES MET", "WORST", "POINT ESTIMATE: SAMPLES MET", "WORST"}, right: []bool{false, true, true, true, true, true}}
	for _, rt := range rb.Targets {
		val := func(v float64) string {
			if rt.Index {
				return Index(v)
			}
			return Percent(v)
		}
		met, worst := "-", "-"
		if rt.RobustSamplesMet != nil {
			met, worst = fmt.Sprintf("%d of %d", *rt.RobustSamplesMet, rb.Samples), val(*rt.RobustWorst)
		}
		tt.rows = append(tt.rows, []string{rt.Target, val(rt.Limit), met, worst, fmt.Sprintf("%d of %d", rt.PointSamplesMet, rb.Samples), val(rt.PointWorst)})
	}
	tabulate(w, tt)
	w.printf("  %s\n", wrapIndent("The same plan: "+rb.SamePlan, 98, "  "))
	w.printf("  %s\n", wrapIndent("How: "+rb.Method, 98, "  "))
}
