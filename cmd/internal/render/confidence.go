package render

import (
	"fmt"
	"strings"

	"wearplan/scenarios"
)

// ConfidentRow formats one target with a confidence for tables: the
// confidence asked, the limit the plan was made for, the margin, the share
// of runs meeting it with its standard error, and whether it was reached.
func ConfidentRow(ct scenarios.ConfidentTarget) []string {
	return []string{ct.Target, Percent(ct.Confidence), PlannedLimit(ct), Margin(ct), RunsMeeting(ct), yesNo(ct.Reached)}
}

// ConfidentHeader heads the columns of ConfidentRow.
var ConfidentHeader = []string{"TARGET", "CONFIDENCE", "PLANNED TO", "MARGIN", "RUNS MEETING IT", "REACHED"}

// PlannedLimit is the limit a confident target was planned to.
func PlannedLimit(ct scenarios.ConfidentTarget) string {
	if ct.Index {
		return Index(ct.PlannedLimit)
	}
	return fmt.Sprintf("%.1f%%", 100*ct.PlannedLimit)
}

// Margin is how much tighter than stated a confident target was planned.
func Margin(ct scenarios.ConfidentTarget) string {
	if ct.Index {
		return fmt.Sprintf("%.2f index points", ct.Margin)
	}
	return fmt.Sprintf("%.2f percentage points", 100*ct.Margin)
}

// RunsMeeting is the share of runs meeting a confident target with its
// Monte Carlo standard error.
func RunsMeeting(ct scenarios.ConfidentTarget) string {
	return fmt.Sprintf("%.1f%% (s.e. %.1f)", 100*ct.Probability, 100*ct.StandardError)
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "NO"
}

// confidenceText prints how the plan meets the targets that state a
// confidence: per target the margin and the share of runs reached, the
// least level budget that meets them (when asked), how the plan was found,
// and what the runs include and leave out.
func confidenceText(w *errWriter, r *scenarios.Result) {
	c := r.Confidence
	if c == nil {
		return
	}
	w.printf("\nTargets with a confidence: each must hold in every year it covers in at least that share of %s simulated runs (seed %d)\n", Money(float64(c.Runs)), c.Seed)
	t := table{header: ConfidentHeader, right: []bool{false, true, true, true, true, false}}
	for _, ct := range c.Targets {
		t.rows = append(t.rows, ConfidentRow(ct))
	}
	tabulate(w, t)
	if c.Reached {
		w.printf("  Every target reaches its confidence (%d plans tried).\n", c.Tries)
	} else {
		w.printf("  %s\n", wrapIndent("Not every target reaches its confidence: "+c.Why+fmt.Sprintf(" (%d plans tried).", c.Tries), 98, "  "))
	}
	if b := c.LevelBudget; b != nil {
		switch {
		case b.Amount == nil:
			w.printf("  %s\n", wrapIndent("Least level yearly budget that meets every target with its confidence: none; "+b.Unreachable, 98, "  "))
		default:
			var parts []string
			for _, ct := range b.Targets {
				parts = append(parts, fmt.Sprintf("%s planned to %s, met in %s of runs", ct.Target, PlannedLimit(ct), RunsMeeting(ct)))
			}
			line := fmt.Sprintf("Least level yearly budget that meets every target with its confidence: %s %s (%s)", currency(r), Money(*b.Amount), strings.Join(parts, "; "))
			if !b.Reached {
				line += "; not reached: " + b.Why
			}
			w.printf("  %s\n", wrapIndent(line, 98, "  "))
		}
	}
	w.printf("  %s\n", wrapIndent("How: "+c.Method, 98, "  "))
	w.printf("  %s\n", wrapIndent("The runs include "+strings.Join(c.Included, "; ")+".", 98, "  "))
	w.printf("  %s\n", wrapIndent("They leave out "+strings.Join(c.Excluded, "; ")+": the confidence is a share of these runs, not of real futures.", 98, "  "))
}

// wrapIndent wraps s and indents every line after the first.
func wrapIndent(s string, width int, indent string) string {
	return strings.ReplaceAll(wrap(s, width), "\n", "\n"+indent)
}

// sweepConfidenceColumn adds, when targets state a confidence, a column
// with the lowest share of runs meeting a confident target at each budget
// and whether every confidence is reached.
func sweepConfidenceColumn(t *table, r *scenarios.SweepResult) {
	with := false
	for _, p := range r.Points {
		with = with || p.ConfidenceReached != nil
	}
	if !with {
		return
	}
	t.header = append(t.header, "CONFIDENCE REACHED (LOWEST SHARE OF RUNS)")
	t.right = append(t.right, false)
	for n, p := range r.Points {
		if p.ConfidenceReached == nil {
			t.rows[n] = append(t.rows[n], "-")
			continue
		}
		lowest := 1.0
		for _, ct := range p.Confidence {
			lowest = min(lowest, ct.Probability)
		}
		t.rows[n] = append(t.rows[n], fmt.Sprintf("%s (%.1f%%)", yesNo(*p.ConfidenceReached), 100*lowest))
	}
}

// sweepConfidenceText prints the least level budget that meets every
// target with its confidence.
func sweepConfidenceText(w *errWriter, r *scenarios.SweepResult) {
	b := r.ConfidentBudget
	if b == nil {
		return
	}
	if b.Amount == nil {
		w.printf("Least level yearly budget that meets every target with its confidence: none; %s\n", b.Unreachable)
		return
	}
	var parts []string
	for _, ct := range b.Targets {
		parts = append(parts, fmt.Sprintf("%s planned to %s, met in %s of runs", ct.Target, PlannedLimit(ct), RunsMeeting(ct)))
	}
	line := fmt.Sprintf("Least level yearly budget that meets every target with its confidence: %s (%s)", Money(*b.Amount), strings.Join(parts, "; "))
	if !b.Reached {
		line += "; not reached: " + b.Why
	}
	w.printf("%s\n", wrap(line, 100))
}

// compareConfidenceRows adds, when a scenario's targets state a
// confidence, whether each reaches it, the lowest share of runs meeting a
// confident target, and the least level budget that reaches every
// confidence.
func compareConfidenceRows(r *scenarios.CompareResult, row func(string, func(scenarios.CompareColumn) string)) {
	has := false
	for _, c := range r.Scenarios {
		has = has || c.Confidence != nil
	}
	if !has {
		return
	}
	row("confidence reached", func(c scenarios.CompareColumn) string {
		if c.Confidence == nil {
			return "-"
		}
		return yesNo(c.Confidence.Reached)
	})
	row("lowest share of runs meeting a confident target", func(c scenarios.CompareColumn) string {
		if c.Confidence == nil {
			return "-"
		}
		lowest := 1.0
		for _, ct := range c.Confidence.Targets {
			lowest = min(lowest, ct.Probability)
		}
		return fmt.Sprintf("%.1f%%", 100*lowest)
	})
	row("level budget meeting them with confidence", func(c scenarios.CompareColumn) string {
		if c.Confidence == nil || c.Confidence.LevelBudget == nil || c.Confidence.LevelBudget.Amount == nil {
			return "-"
		}
		return Money(*c.Confidence.LevelBudget.Amount)
	})
}
