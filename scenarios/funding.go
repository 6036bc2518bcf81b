package scenarios

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"wearplan/optimize"
)

// Funding answers the funding questions of a plan.
type Funding struct {
	// LevelBudget is the least network budget, the same nominal amount
	// every year, that meets every target (min-cost plans with targets, and
	// plans whose targets are not met).
	LevelBudget *float64 `json:"level_budget,omitempty"`
	// ExtraMoney is the extra money per year, on top of the network budget,
	// that would close every shortfall at the least present value;
	// ExtraGroups the same on top of budget group caps.
	ExtraMoney        []YearMoney  `json:"extra_money,omitempty"`
	ExtraGroups       []GroupMoney `json:"extra_group_money,omitempty"`
	ExtraTotal        *float64     `json:"extra_total,omitempty"`
	ExtraPresentValue *float64     `json:"extra_present_value,omitempty"`
	// Unreachable explains why no amount of money meets the targets.
	Unreachable string `json:"unreachable,omitempty"`
	// HoldBudget is the least level network budget that holds today's
	// network condition score to the last year; Targets the extra money
	// per missed target; Notes say why a figure is left out
	// (fundinggap.go).
	HoldBudget *float64      `json:"hold_budget,omitempty"`
	Targets    []TargetMoney `json:"target_money,omitempty"`
	Notes      []string      `json:"notes,omitempty"`
}

// YearMoney is an amount of money in one year.
type YearMoney struct {
	Year   int     `json:"year"`
	Amount float64 `json:"amount"`
}

// GroupMoney is extra money for one budget group.
type GroupMoney struct {
	Name  string      `json:"name"`
	Years []YearMoney `json:"years"`
}

// Baseline is a rule-based program under the same budget, for comparison.
type Baseline struct {
	Rule           string  `json:"rule"`
	ConditionScore float64 `json:"condition_score"`
	TotalCost      float64 `json:"total_cost"`
	// Gain is the plan's condition score minus the rule's: what
	// optimization buys with the same money.
	Gain float64 `json:"gain"`
}

const unreachableText = "no amount of money meets the targets: a target asks for a condition the treatments cannot reach by its first year (or a budget group's cap holds it back); relax the target or start it later"

// levelBudget answers "the least level budget that meets the targets" for
// a plan result.
func levelBudget(p *optimize.Problem, f *Funding) error {
	level, err := optimize.LevelBudget(p)
	if errors.Is(err, optimize.ErrUnreachable) {
		f.Unreachable = unreachableText
		return nil
	}
	if err != nil {
		return fmt.Errorf("least level budget: %w", err)
	}
	f.LevelBudget = &level
	return nil
}

// closingMoney fills the extra money that closes every shortfall.
func closingMoney(sc *Scenario, p *optimize.Problem, f *Funding) error {
	gap, err := optimize.ClosingMoney(p)
	if errors.Is(err, optimize.ErrUnreachable) {
		f.Unreachable = unreachableText
		return nil
	}
	if err != nil {
		return fmt.Errorf("extra money: %w", err)
	}
	f.ExtraMoney = yearMoney(sc, gap.Network)
	for g, years := range gap.Groups {
		if ym := yearMoney(sc, years); len(ym) > 0 {
			f.ExtraGroups = append(f.ExtraGroups, GroupMoney{Name: sc.BudgetGroups[g].Name, Years: ym})
		}
	}
	tot, pv := gap.Total(), gap.PresentValue
	f.ExtraTotal, f.ExtraPresentValue = &tot, &pv
	return nil
}

// yearMoney lists the years with a positive amount.
func yearMoney(sc *Scenario, v []float64) []YearMoney {
	var out []YearMoney
	for t, a := range v {
		if a > 0 {
			out = append(out, YearMoney{Year: sc.Year(t + 1), Amount: a})
		}
	}
	return out
}

// budgetInfeasible explains a budget that cannot be kept even by doing
// nothing, which happens only when routine costs count against it.
func budgetInfeasible(sc *Scenario, p *optimize.Problem) error {
	q := *p
	q.Targets = nil
	msg := "the routine costs counted against the budget (budget.includes_routine: true) exceed it even with no work done"
	if gap, err := optimize.ClosingMoney(&q); err == nil {
		var parts []string
		for _, ym := range yearMoney(sc, gap.Network) {
			parts = append(parts, fmt.Sprintf("%d: %s", ym.Year, money(ym.Amount)))
		}
		for g, years := range gap.Groups {
			for _, ym := range yearMoney(sc, years) {
				parts = append(parts, fmt.Sprintf("group %s %d: %s", sc.BudgetGroups[g].Name, ym.Year, money(ym.Amount)))
			}
		}
		if len(parts) > 0 {
			msg += "; the budget needs at least this much more to cover them: " + strings.Join(parts, ", ")
		}
	}
	msg += "; raise budget.yearly, or set includes_routine: false to keep routine costs out of the caps"
	return &InputError{Issues: []*Issue{{File: sc.Source, Field: "budget.yearly", Msg: msg}}}
}

// money writes an amount in whole units with thousands separators.
func money(v float64) string {
	s := fmt.Sprintf("%.0f", math.Abs(v))
	var b strings.Builder
	if v < 0 {
		b.WriteByte('-')
	}
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	return b.String()
}

// addRoutine sets the routine cost figures of a result from routine[k][t]
// (nominal), when the scenario gives routine costs.
func addRoutine(sc *Scenario, r *Result, routine [][]float64) {
	has := false
	for k := range sc.Classes {
		has = has || sc.Classes[k].Routine != nil
	}
	if !has {
		return
	}
	tot, pv := 0.0, 0.0
	for t := range r.Years {
		s := 0.0
		for k := range routine {
			s += routine[k][t]
		}
		r.Years[t].Routine = &s
		tot += s
		pv += s * math.Pow(1+sc.DiscountRate, -float64(t))
	}
	r.RoutineCost, r.RoutinePresentValue = &tot, &pv
}

// forecastRoutine is the routine cost of doing nothing: every unit is
// untreated every year.
func forecastRoutine(sc *Scenario, cond [][][]float64) [][]float64 {
	out := make([][]float64, len(sc.Classes))
	for k := range sc.Classes {
		out[k] = make([]float64, sc.Horizon)
		c := &sc.Classes[k]
		if c.Routine == nil {
			continue
		}
		for t := 0; t < sc.Horizon; t++ {
			for i, q := range cond[k][t] {
				out[k][t] += q * c.Routine[i] * math.Pow(1+sc.Escalation, float64(t))
			}
		}
	}
	return out
}

// Rule names a rule-based program for forecasts.
type Rule string

const (
	// NoWork does nothing.
	NoWork Rule = "none"
	// WorstFirst spends each year's budget on the worst states first
	// (optimize.WorstFirst documents the rule exactly).
	WorstFirst Rule = "worst-first"
)

// Rules lists the rules in help order.
var Rules = []Rule{NoWork, WorstFirst}

// ForecastRule rolls the condition forward under a rule.
func ForecastRule(sc *Scenario, rule Rule) (*Result, error) {
	switch rule {
	case NoWork, "":
		return Forecast(sc)
	case WorstFirst:
	default:
		return nil, fmt.Errorf("unknown rule %q; use none or worst-first", rule)
	}
	if sc.Budget == nil {
		return nil, &InputError{Issues: []*Issue{{File: sc.Source, Field: "budget.yearly", Msg: "the worst-first rule spends the network's yearly budget; give budget.yearly"}}}
	}
	p, err := sc.Problem()
	if err != nil {
		return nil, err
	}
	plan, err := optimize.WorstFirst(p)
	if err != nil {
		return nil, err
	}
	r := assemble(sc, p, plan.Condition, plan.Work, plan.Spend)
	addRoutine(sc, r, plan.Routine)
	r.Kind, r.Status = "forecast", string(WorstFirst)
	return r, nil
}

// baseline runs the worst-first rule for comparison with a plan.
func baseline(p *optimize.Problem, r *Result) error {
	if p.Budget == nil {
		return nil
	}
	rule, err := optimize.WorstFirst(p)
	if err != nil {
		return fmt.Errorf("worst-first baseline: %w", err)
	}
	r.Baseline = &Baseline{Rule: string(WorstFirst), ConditionScore: rule.ConditionScore, TotalCost: rule.TotalCost, Gain: r.ConditionScore - rule.ConditionScore}
	return nil
}
