package report

import (
	"fmt"
	"strings"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// confidenceTable lays out how a plan meets the targets that state a
// confidence: per target the confidence, the limit planned to, the margin,
// the share of runs meeting it with its standard error and whether it is
// reached; the note says how the plan was found, what the runs include
// and leave out, and the least level budget that reaches every confidence
// when it was asked.
func confidenceTable(id string, r *scenarios.Result) *table {
	c := r.Confidence
	if c == nil {
		return nil
	}
	t := &table{ID: id, Caption: fmt.Sprintf("Targets with a confidence: each must hold in every year it covers in at least that share of %s simulated runs (seed %d)", render.Money(float64(c.Runs)), c.Seed),
		Head: []string{"Target", "Confidence", "Planned to", "Margin", "Runs meeting it", "Reached"}, Num: []bool{false, true, true, true, true, false}}
	for _, ct := range c.Targets {
		t.add(render.ConfidentRow(ct)...)
		t.Rows[len(t.Rows)-1].Cells[5] = strings.ToLower(t.Rows[len(t.Rows)-1].Cells[5])
	}
	var note []string
	if !c.Reached {
		note = append(note, "Not every target reaches its confidence: "+c.Why+".")
	}
	if b := c.LevelBudget; b != nil {
		if b.Amount == nil {
			note = append(note, "Least level yearly budget that meets every target with its confidence: none; "+b.Unreachable+".")
		} else {
			var parts []string
			for _, ct := range b.Targets {
				parts = append(parts, fmt.Sprintf("%s planned to %s, met in %s of runs", ct.Target, render.PlannedLimit(ct), render.RunsMeeting(ct)))
			}
			note = append(note, fmt.Sprintf("Least level yearly budget that meets every target with its confidence: %s %s (%s).", currencyOf(r), render.Money(*b.Amount), strings.Join(parts, "; ")))
		}
	}
	note = append(note, "How: "+c.Method,
		"The runs include "+strings.Join(c.Included, "; ")+".",
		"They leave out "+strings.Join(c.Excluded, "; ")+": the confidence is a share of these runs, not of real futures.")
	t.Note = strings.Join(note, " ")
	return t
}
