package scenarios

import (
	"fmt"
	"slices"
	"strings"

	"wearplan/optimize"
)

// unspentShare is the part of a year's network budget a max-condition plan
// may leave unspent before the plan says why: less is rounding and the
// solver's tolerance.
const unspentShare = 0.005

// unspentWarning explains money a max-condition plan leaves unspent while
// it has a network budget: a council reading "unspent 800,000" next to a
// class that wears out asks why. The plan maximises condition (after the
// least total shortfall), so unspent money could buy neither condition nor
// a smaller shortfall; what stops it is a budget group spending its whole
// cap, or the treatments themselves (their reach, their intervals). With
// carry-over unspent money moves to later years, and a min-cost plan
// spends the least by design, so neither gets the note. Empty when nothing
// is left unspent.
func unspentWarning(sc *Scenario, r *Result) string {
	if sc.CarryOver || sc.Objective != optimize.MaxCondition {
		return ""
	}
	var years []int
	var amounts []string
	total := 0.0
	var capped []string // groups at their cap in every such year
	first := true
	for _, y := range r.Years {
		if y.Budget == nil {
			continue
		}
		left := *y.Budget - y.Spend
		if y.Routine != nil && sc.RoutineInBudget {
			left -= *y.Routine
		}
		if left <= max(1, unspentShare**y.Budget) {
			continue
		}
		years = append(years, y.Year)
		amounts = append(amounts, fmt.Sprintf("%s in %d", money(left), y.Year))
		total += left
		var full []string
		for _, g := range y.Groups {
			if g.Spend >= g.Budget*(1-1e-6)-1 {
				full = append(full, g.Name)
			}
		}
		if first {
			capped, first = full, false
			continue
		}
		capped = slices.DeleteFunc(capped, func(n string) bool { return !slices.Contains(full, n) })
	}
	if len(years) == 0 {
		return ""
	}
	msg := fmt.Sprintf("the plan leaves %s of the network budget unspent in %s", moneyIn(sc, total), yearSpans(years))
	if len(years) > 1 {
		msg += " (" + listYears(amounts) + ")"
	}
	// What unspent money could not buy: with targets missed the plan
	// first keeps the total shortfall least, so work that raises the score
	// but widens a shortfall is not done (a later year's target may need
	// the money's work done later).
	gain := "raise the condition score"
	if r.Status == TargetsNotMet {
		gain = "reduce the targets' total shortfall, or raise the condition score without adding to it"
	}
	if len(capped) == 0 {
		return msg + ": no further work the treatments allow (their reach, the years between them) would " + gain
	}
	var outside []string
	for _, c := range sc.Classes {
		if !inGroups(sc, c.Name, capped) {
			outside = append(outside, c.Name)
		}
	}
	noun := "budget group"
	if len(capped) > 1 {
		noun = "budget groups"
	}
	quoted := make([]string, len(capped))
	for i, n := range capped {
		quoted[i] = fmt.Sprintf("%q", n)
	}
	spends, under, raise := "spends its whole cap", "it", "raising the cap"
	if len(capped) > 1 {
		spends, under, raise = "spend their whole caps", "one of them", "raising the caps"
	}
	msg += fmt.Sprintf(": %s %s %s in those years", noun, joinAnd(quoted), spends)
	if len(outside) == 0 {
		return msg + ", and every class is under " + under + "; " + raise + " is what would put the money to work"
	}
	return msg + fmt.Sprintf(", and no other work the treatments allow (on %s) would %s; %s is what would put the money to work", joinAnd(outside), gain, raise)
}

// inGroups reports whether class name is in one of the named budget groups.
func inGroups(sc *Scenario, name string, groups []string) bool {
	for _, g := range sc.BudgetGroups {
		if slices.Contains(groups, g.Name) && slices.Contains(g.Classes, name) {
			return true
		}
	}
	return false
}

// yearSpans writes ascending years as spans: "2029, 2034-2036".
func yearSpans(years []int) string {
	var parts []string
	for i := 0; i < len(years); {
		j := i
		for j+1 < len(years) && years[j+1] == years[j]+1 {
			j++
		}
		if j == i {
			parts = append(parts, fmt.Sprint(years[i]))
		} else {
			parts = append(parts, fmt.Sprintf("%d-%d", years[i], years[j]))
		}
		i = j + 1
	}
	return strings.Join(parts, ", ")
}
