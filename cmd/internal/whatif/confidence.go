package whatif

import (
	"fmt"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// confidenceWords says, for each target that states a confidence, in what
// share of the simulated runs the plan meets it, and whether that reaches
// the confidence.
func confidenceWords(r *scenarios.Result) []string {
	c := r.Confidence
	if c == nil {
		return nil
	}
	var out []string
	for _, ct := range c.Targets {
		verb := "Met with its confidence"
		if !ct.Reached {
			verb = "Not met with " + render.Percent(ct.Confidence) + " confidence"
		}
		out = append(out, fmt.Sprintf("%s: %s holds in every year in %s of %s simulated runs (the plan is made to %s, %s inside the limit).",
			verb, ct.Target, render.RunsMeeting(ct), render.Money(float64(c.Runs)), render.PlannedLimit(ct), render.Margin(ct)))
	}
	if !c.Reached && c.Why != "" {
		out = append(out, "Why: "+c.Why+".")
	}
	return out
}

// confidentBudgetWords says what level budget meets every target with its
// confidence, when it was worked out.
func confidentBudgetWords(r *scenarios.Result) []string {
	if r.Confidence == nil || r.Confidence.LevelBudget == nil {
		return nil
	}
	b := r.Confidence.LevelBudget
	if b.Amount == nil {
		return []string{"No level budget meets every target with its confidence: " + b.Unreachable + "."}
	}
	s := fmt.Sprintf("A level budget of %s%s a year would meet every target with its confidence.", currency(r), render.Money(*b.Amount))
	if !b.Reached {
		s = fmt.Sprintf("A level budget of %s%s a year comes closest to meeting every target with its confidence, but not all the way: %s.", currency(r), render.Money(*b.Amount), b.Why)
	}
	return []string{s}
}
