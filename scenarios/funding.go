package scenarios

import (
	"errors"
	"fmt"
	"math"
	"strconv"
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
	// Unreachable explains why no amount of money meets the targets,
	// naming each target that no money meets and what is reachable
	// instead; UnreachableTargets holds the same as figures.
	Unreachable        string              `json:"unreachable,omitempty"`
	UnreachableTargets []UnreachableTarget `json:"unreachable_targets,omitempty"`
	// OtherTargetsOnly: the level budget and extra money answer for the
	// targets that money can meet, leaving out UnreachableTargets.
	OtherTargetsOnly bool `json:"other_targets_only,omitempty"`
	// HeldBack says which budget groups' caps keep every level network
	// budget from meeting the targets, although the extra money (which
	// raises those caps too) meets them.
	HeldBack string `json:"held_back,omitempty"`
	// HoldBudget is the least level network budget that holds today's
	// network condition score to the last year; Targets the extra money
	// per missed target; Notes say why a figure is left out
	// (fundinggap.go).
	HoldBudget *float64      `json:"hold_budget,omitempty"`
	Targets    []TargetMoney `json:"target_money,omitempty"`
	Notes      []string      `json:"notes,omitempty"`
}

// UnreachableTarget is a target that no amount of money meets: the years
// it misses and the best value any plan reaches in each, in the target's
// own terms (a share 0-1, or an average index on the target's scale).
// Together marks a target that can be met alone but not with the others.
type UnreachableTarget struct {
	Target   string      `json:"target"`
	Years    []YearValue `json:"years,omitempty"`
	Together bool        `json:"together,omitempty"`
}

// YearValue is a value in one year.
type YearValue struct {
	Year  int     `json:"year"`
	Value float64 `json:"value"`
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

// unreachableText is the verdict when no amount of money meets the
// targets; the sentences naming each target follow it.
const unreachableText = "no amount of money meets the targets"

// funding answers the funding questions of a plan of p (status given):
// the extra money that closes the shortfalls (targets not met) and the
// least level budget (min-cost with targets, or targets not met). Targets
// that no amount of money meets are named with what is reachable, and the
// questions are answered for the others. The answers never fail the plan:
// when a funding LP gives no answer on any path, the error comes back as a
// warning. The answers that do not depend on the network's budget come
// from bf when it has them.
func funding(sc *Scenario, p *optimize.Problem, status optimize.Status, bf *BudgetFree) (*Funding, error) {
	f := &Funding{}
	wantExtra := status == optimize.TargetsNotMet
	wantLevel := len(sc.Targets) > 0 && (sc.Objective == optimize.MinCost || status == optimize.TargetsNotMet)
	if !wantExtra && !wantLevel {
		return nil, nil
	}
	q := p
	var reach []optimize.TargetReach
	if status == optimize.TargetsNotMet {
		var err error
		reach, err = bf.reachability(p)
		if err != nil {
			return nil, fmt.Errorf("targets no money meets: %w", err)
		}
		if len(reach) > 0 {
			unreachable(sc, p, reach, f)
			q = withoutTargets(p, reach)
			f.OtherTargetsOnly = len(q.Targets) > 0
			if len(q.Targets) == 0 {
				return f, nil
			}
			// The other targets may be met under the budget already.
			plan, err := optimize.Solve(q)
			if err != nil {
				return f, fmt.Errorf("plan for the other targets: %w", err)
			}
			wantExtra = plan.Status == optimize.TargetsNotMet
			wantLevel = wantLevel && len(q.Targets) > 0
		}
	}
	if wantExtra {
		if err := closingMoney(sc, q, f); err != nil {
			return f, err
		}
	}
	if wantLevel && (f.Unreachable == "" || f.OtherTargetsOnly) {
		if err := levelBudget(sc, q, f, bf, reach); err != nil {
			return f, err
		}
	}
	return f, nil
}

// withoutTargets returns p without the targets in reach.
func withoutTargets(p *optimize.Problem, reach []optimize.TargetReach) *optimize.Problem {
	drop := map[int]bool{}
	for _, r := range reach {
		drop[r.Target] = true
	}
	q := *p
	q.Targets = nil
	for n, t := range p.Targets {
		if !drop[n] {
			q.Targets = append(q.Targets, t)
		}
	}
	return &q
}

// unreachable fills the unreachable targets of f and the verdict naming
// them.
func unreachable(sc *Scenario, p *optimize.Problem, reach []optimize.TargetReach, f *Funding) {
	var parts, together []string
	for _, r := range reach {
		t := sc.Targets[r.Target]
		u := UnreachableTarget{Target: t.Label, Together: r.Together}
		if r.Together {
			together = append(together, t.Label)
			f.UnreachableTargets = append(f.UnreachableTargets, u)
			continue
		}
		var years []string
		for _, y := range r.Years {
			v := y.Best
			if t.Spec.Kind == optimize.MinScore || t.Spec.Kind == optimize.Hold {
				v = scoreToIndex(sc, t, y.Best)
			}
			u.Years = append(u.Years, YearValue{Year: sc.Year(y.Year), Value: v})
			years = append(years, fmt.Sprintf("%s in %d", reachValue(sc, t, v), sc.Year(y.Year)))
		}
		f.UnreachableTargets = append(f.UnreachableTargets, u)
		lead, tail := reachWords(sc, t)
		list := listYears(years)
		if len(r.Years) == 1 {
			list = reachValue(sc, t, u.Years[0].Value)
			tail += " that year"
		}
		part := fmt.Sprintf("%s: %s %s%s", t.Label, lead, list, tail)
		if len(r.Years) > 1 {
			part = fmt.Sprintf("%s: %s%s %s", t.Label, lead, tail, list)
			if lead == "at most" {
				part = fmt.Sprintf("%s: the most that is reachable is %s", t.Label, list)
			}
		}
		if t.Spec.Kind == optimize.Hold {
			part += fmt.Sprintf(" (today %s)", reachValue(sc, t, scoreToIndex(sc, t, p.InitialScore(t.Spec.Class))))
		}
		parts = append(parts, part)
	}
	msg := unreachableText
	if len(parts) > 0 {
		msg += ": " + strings.Join(parts, "; ")
	}
	if len(together) > 0 {
		msg += fmt.Sprintf("; these targets can each be met alone but not together: %s", strings.Join(together, "; "))
	}
	f.Unreachable = msg
}

// listYears joins the values by year, the first four and a count of the
// rest.
func listYears(parts []string) string {
	if len(parts) > 4 {
		return strings.Join(parts[:4], ", ") + fmt.Sprintf(" and %d more years", len(parts)-4)
	}
	return strings.Join(parts, ", ")
}

// reachWords says what the best reachable value is, in the target's
// terms: the words before and after the value ("at most 90.2% is
// reachable", "no plan brings it below 50.6%").
func reachWords(sc *Scenario, t Target) (string, string) {
	if t.Spec.Kind == optimize.MaxShare {
		return "no plan brings it below", ""
	}
	if t.Spec.Kind != optimize.MinShare {
		if s := sc.targetScale(t); s != nil && s.Best < s.Worst {
			return "no plan brings the average index below", "" // lower is better
		}
	}
	return "at most", " is reachable"
}

// reachValue writes a best reachable value: a share as a percentage, an
// index on its scale.
func reachValue(sc *Scenario, t Target, v float64) string {
	if t.Spec.Kind == optimize.MaxShare || t.Spec.Kind == optimize.MinShare {
		return strconv.FormatFloat(100*v, 'f', 1, 64) + "%"
	}
	if sc.targetScale(t) == nil {
		return "a condition score of " + strconv.FormatFloat(v, 'f', 2, 64)
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// levelBudget answers "the least level budget that meets the targets" for
// p, the scenario's problem less the targets in dropped, from bf when it
// has the answer.
func levelBudget(sc *Scenario, p *optimize.Problem, f *Funding, bf *BudgetFree, dropped []optimize.TargetReach) error {
	level, err := bf.levelBudget(p, dropped)
	var hb *optimize.HeldBackError
	switch {
	case errors.As(err, &hb):
		f.HeldBack = heldBackText(sc, hb)
		return nil
	case errors.Is(err, optimize.ErrUnreachable):
		if f.Unreachable == "" {
			f.Unreachable = unreachableText
		}
		return nil
	case err != nil:
		return fmt.Errorf("least level budget: %w", err)
	}
	f.LevelBudget = &level
	return nil
}

// heldBackText says which budget groups' caps keep every level network
// budget from meeting the targets, and what would reach them.
func heldBackText(sc *Scenario, hb *optimize.HeldBackError) string {
	var names []string
	for _, g := range hb.Groups {
		names = append(names, fmt.Sprintf("%q", sc.BudgetGroups[g].Name))
	}
	const lead = "no level network budget meets every target"
	switch {
	case len(names) == 1:
		return lead + " while the cap of budget group " + names[0] + " stays as it is; raising that cap as well reaches them"
	case hb.Together:
		return lead + " unless the caps of budget groups " + joinAnd(names) + " are all raised as well; raising the network budget alone, or one group's cap, does not reach them"
	default:
		return lead + " while the caps of budget groups " + joinAnd(names) + " all stay as they are; raising any one of them as well reaches them"
	}
}

// closingMoney fills the extra money that closes every shortfall.
func closingMoney(sc *Scenario, p *optimize.Problem, f *Funding) error {
	gap, err := optimize.ClosingMoney(p)
	if errors.Is(err, optimize.ErrUnreachable) {
		if f.Unreachable == "" {
			f.Unreachable = unreachableText
		}
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
	r.Kind, r.Status = KindForecast, FollowsWorstFirst
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
