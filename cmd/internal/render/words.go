package render

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"wearplan/scenarios"
)

// The plain words of a plan: what it achieves, what it misses and what
// money would close the gap. The terminal, the what-if page and every
// report take them from here, so they say the same thing in the same words.

// Amount writes an amount of money with the result's currency in front
// (USD 4,457,172), or the number alone when the scenario names none.
func Amount(r *scenarios.Result, v float64) string {
	if r.Currency == "" {
		return Money(v)
	}
	return r.Currency + " " + Money(v)
}

// Headline says in one or two sentences whether the plan meets its
// targets and what condition it keeps.
func Headline(r *scenarios.Result) string {
	years := Plural(r.Horizon, "year", "years")
	scoreText := fmt.Sprintf("condition score %s out of 100 (the network's average over the %s)", strconv.FormatFloat(r.ConditionScore, 'f', 1, 64), years)
	missed := len(r.Targets) - TargetsMet(r)
	switch {
	case r.Kind != scenarios.KindPlan:
		if missed > 0 {
			return fmt.Sprintf("With no work, %d of %d targets are missed; %s.", missed, len(r.Targets), scoreText)
		}
		return fmt.Sprintf("A forecast with no work: %s.", scoreText)
	case missed > 0:
		return fmt.Sprintf("Not every target can be met with this budget: %d of %d missed. The plan keeps the shortfall as small as possible; %s.",
			missed, len(r.Targets), scoreText)
	case r.Objective == "min-cost" && len(r.Targets) > 0:
		return fmt.Sprintf("Every target is met at the least cost: %s over %s (present value %s); %s.",
			Amount(r, r.TotalCost), years, Money(r.PresentValue), scoreText)
	case len(r.Targets) > 0:
		return fmt.Sprintf("Every target is met; %s.", scoreText)
	default:
		return fmt.Sprintf("The best plan for the money: %s. The scenario has no targets.", upperFirst(scoreText))
	}
}

// TargetsMet counts the targets that hold.
func TargetsMet(r *scenarios.Result) int {
	n := 0
	for _, t := range r.Targets {
		if t.Met {
			n++
		}
	}
	return n
}

// Plural writes a count and its noun: 1 year, 20 years.
func Plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return strconv.Itoa(n) + " " + many
}

func upperFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// TargetValue writes a target's value in its measure: a share as a
// percentage, an index or a score with their precision.
func TargetValue(o scenarios.TargetOutcome, v float64) string {
	if o.Measure == scenarios.MeasureShare {
		return Percent(v)
	}
	return Index(v)
}

// ShortfallAmount writes a shortfall in its measure's points.
func ShortfallAmount(o scenarios.TargetOutcome, v float64) string {
	switch o.Measure {
	case scenarios.MeasureShare:
		return strconv.FormatFloat(100*v, 'f', 1, 64) + " percentage points"
	case scenarios.MeasureScore:
		return Index(v) + " score points (0-100)"
	default:
		return Index(v) + " index points"
	}
}

// WorstShortfall is a target's largest shortfall.
func WorstShortfall(o scenarios.TargetOutcome) float64 {
	w := 0.0
	for _, s := range o.Shortfalls {
		w = math.Max(w, s.Amount)
	}
	return w
}

// ShortfallYears writes the years a target is missed: "in 2031", "in 3
// years from 2031 to 2033".
func ShortfallYears(o scenarios.TargetOutcome) string {
	n := len(o.Shortfalls)
	switch n {
	case 0:
		return ""
	case 1:
		return fmt.Sprintf("in %d", o.Shortfalls[0].Year)
	}
	return fmt.Sprintf("in %d years from %d to %d", n, o.Shortfalls[0].Year, o.Shortfalls[n-1].Year)
}

// TargetMoney returns the funding answer's money for a missed target, or
// nil when the result has none for it.
func TargetMoney(r *scenarios.Result, target string) *scenarios.TargetMoney {
	if r.Funding == nil {
		return nil
	}
	for i := range r.Funding.Targets {
		if r.Funding.Targets[i].Target == target {
			return &r.Funding.Targets[i]
		}
	}
	return nil
}

// ShortfallWords says, for each target missed, when, by how much, and
// what extra money would close it.
func ShortfallWords(r *scenarios.Result) []string {
	out := []string{}
	for _, o := range r.Targets {
		if o.Met {
			continue
		}
		worst := fmt.Sprintf("worst in %d: %s against a limit of %s", o.WorstYear, TargetValue(o, o.WorstValue), TargetValue(o, o.Limit))
		s := "Missed: " + o.Target
		if len(o.Shortfalls) > 0 {
			s += fmt.Sprintf(", %s, by up to %s", ShortfallYears(o), ShortfallAmount(o, WorstShortfall(o)))
		}
		s += " (" + worst + ")"
		if m := TargetMoney(r, o.Target); m != nil {
			switch {
			case m.Total == nil:
				s += "; no amount of money closes it"
			case Money(*m.Total) == "0":
				// The target alone fits the budget: the least total
				// shortfall gave some of it up for the other targets.
				s += "; the budget could meet it on its own: the plan misses it to come closer to the other targets it misses (the least total shortfall)"
			default:
				s += fmt.Sprintf("; closing it takes %s more than the budget (present value %s)", Amount(r, *m.Total), Money(*m.PresentValue))
			}
		}
		out = append(out, s+".")
	}
	return out
}

// FundingWords says what money would meet the targets and hold today's
// condition, what routine costs come on top of treatment spend, and how
// the same money spent worst first compares.
func FundingWords(r *scenarios.Result) []string {
	out := []string{}
	last := r.StartYear + r.Horizon - 1
	if f := r.Funding; f != nil {
		if f.Unreachable != "" {
			out = append(out, upperFirst(strings.TrimSuffix(f.Unreachable, "."))+".")
		}
		// With targets no money meets, the money answers are for the
		// others.
		which := "every target"
		if f.OtherTargetsOnly {
			which = "every target that money can meet"
		}
		if f.LevelBudget != nil {
			if TargetsMet(r) < len(r.Targets) {
				out = append(out, fmt.Sprintf("A level budget of %s a year (the same amount every year) would meet %s.", Amount(r, *f.LevelBudget), which))
			} else {
				out = append(out, fmt.Sprintf("The least level budget that meets %s is %s a year (the same amount every year).", which, Amount(r, *f.LevelBudget)))
			}
		}
		if f.ExtraTotal != nil {
			parts := MoneyByYear(r, f.ExtraMoney)
			for _, g := range f.ExtraGroups {
				parts = append(parts, "for budget group "+g.Name+" "+strings.Join(MoneyByYear(r, g.Years), ", "))
			}
			lead := "Keep this budget and add"
			if f.LevelBudget != nil {
				lead = "Or keep this budget and add"
			}
			s := fmt.Sprintf("%s %s: the extra money that meets %s at the least present value", lead, strings.Join(parts, ", "), which)
			switch {
			case len(parts) > 1 || len(f.ExtraMoney) > 1:
				s += fmt.Sprintf(" (%s in all, present value %s)", Amount(r, *f.ExtraTotal), Money(*f.ExtraPresentValue))
			case *f.ExtraPresentValue != *f.ExtraTotal:
				s += fmt.Sprintf(" (present value %s)", Money(*f.ExtraPresentValue))
			}
			out = append(out, s+".")
		}
		if f.HeldBack != "" {
			out = append(out, upperFirst(strings.TrimSuffix(f.HeldBack, "."))+".")
		}
		if f.HoldBudget != nil {
			out = append(out, fmt.Sprintf("A level budget of %s a year holds today's network condition score to the end of %d.", Amount(r, *f.HoldBudget), last))
		}
		for _, n := range f.Notes {
			out = append(out, "Note: "+upperFirst(n)+".")
		}
	}
	if r.RoutineCost != nil {
		out = append(out, fmt.Sprintf("Routine costs of untreated assets, apart from treatment spend: %s over the %s (present value %s).", Amount(r, *r.RoutineCost), Plural(r.Horizon, "year", "years"), Money(*r.RoutinePresentValue)))
	}
	if b := r.Baseline; b != nil {
		out = append(out, fmt.Sprintf("The same money spent worst first (each year on the worst states, the cheapest treatment that helps; common practice, no source) gives a condition score of %s: %s points %s this plan's.",
			strconv.FormatFloat(b.ConditionScore, 'f', 1, 64), strconv.FormatFloat(math.Abs(b.Gain), 'f', 1, 64), map[bool]string{true: "below", false: "above"}[b.Gain >= 0]))
	}
	return out
}

// FundingGap says in one sentence what money the targets need and what
// holds today's condition: the line of a report's summary.
func FundingGap(r *scenarios.Result) string {
	f := r.Funding
	var s string
	switch {
	case f != nil && f.Unreachable != "" && f.OtherTargetsOnly && (f.ExtraTotal != nil || f.LevelBudget != nil):
		s = "No amount of money meets every target; meeting the others needs "
		if f.ExtraTotal != nil {
			s += fmt.Sprintf("%s more than this budget (present value %s)", Amount(r, *f.ExtraTotal), Money(*f.ExtraPresentValue))
			if f.LevelBudget != nil {
				s += ", or "
			}
		}
		if f.LevelBudget != nil {
			s += fmt.Sprintf("a level budget of %s a year", Amount(r, *f.LevelBudget))
		}
	case f != nil && f.ExtraTotal != nil && f.Unreachable == "":
		s = fmt.Sprintf("Meeting every target needs %s more than this budget (present value %s)", Amount(r, *f.ExtraTotal), Money(*f.ExtraPresentValue))
		if f.LevelBudget != nil {
			s += fmt.Sprintf(", or a level budget of %s a year", Amount(r, *f.LevelBudget))
		}
	case f != nil && f.Unreachable != "":
		s = "No amount of money meets every target"
	case f != nil && f.LevelBudget != nil && len(r.Targets) > TargetsMet(r):
		s = fmt.Sprintf("Meeting every target needs a level budget of %s a year", Amount(r, *f.LevelBudget))
	case f != nil && f.LevelBudget != nil:
		s = fmt.Sprintf("The least level budget that meets every target is %s a year", Amount(r, *f.LevelBudget))
	case len(r.Targets) == 0:
		s = "The scenario sets no targets"
	case TargetsMet(r) == len(r.Targets):
		s = "Every target is met"
	default:
		s = "Not every target is met"
	}
	if f != nil && f.HoldBudget != nil {
		s += fmt.Sprintf("; holding today's network condition takes %s a year", Amount(r, *f.HoldBudget))
	}
	return s + "."
}

// MoneyByYear lists amounts by year, the first six and a count of the rest.
func MoneyByYear(r *scenarios.Result, ys []scenarios.YearMoney) []string {
	var out []string
	for i, y := range ys {
		if i == 6 {
			out = append(out, "and "+Plural(len(ys)-6, "more year", "more years"))
			break
		}
		out = append(out, fmt.Sprintf("%s in %d", Amount(r, y.Amount), y.Year))
	}
	return out
}
