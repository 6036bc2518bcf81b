package scenarios

import (
	"errors"
	"fmt"

	"wearplan/optimize"
)

// TargetMoney is the extra money that would close one missed target: the
// least present value of money on top of the budgets (network and budget
// groups) with which the plan meets that target and every target it
// already meets.
type TargetMoney struct {
	Target string `json:"target"`
	// Total is the nominal sum and PresentValue its discounted value;
	// both nil when no amount of money closes the target.
	Total        *float64 `json:"total,omitempty"`
	PresentValue *float64 `json:"present_value,omitempty"`
}

// FundingDetailColumns bounds the flat model for which a plan adds the
// funding figures beyond the level budget and the extra money of the
// targets it misses: the least level budget that holds today's condition,
// the least level budget of a plan that meets its targets, and the money
// per missed target. Each is a flat LP of the plan's size, which lp_solve
// solves in about half a second at this size and in several seconds at
// three times it; larger networks leave them out and say so.
const FundingDetailColumns = 4000

// fundingDetail adds to f the hold budget, the level budget where the plan
// did not need it, and the money per missed target, when the model is
// small enough (FundingDetailColumns).
func fundingDetail(sc *Scenario, p *optimize.Problem, r *Result, f *Funding) error {
	if cols := flatColumns(p); cols > FundingDetailColumns {
		f.Notes = append(f.Notes, fmt.Sprintf("the least level budgets that hold today's condition and that meet the targets, and the money per missed target, are left out: the network's flat model has %d columns, more than the %d these extra solves are made for", cols, FundingDetailColumns))
		return nil
	}
	q := *p
	q.Targets = []optimize.Target{{Label: "hold", Class: optimize.Network, Kind: optimize.Hold}}
	hold, err := optimize.LevelBudget(&q)
	switch {
	case errors.Is(err, optimize.ErrUnreachable) && len(p.GroupBudgets) > 0:
		f.Notes = append(f.Notes, "no level network budget holds today's network condition to the last year while the budget groups keep their caps: the treatments, or a group's cap, cannot keep it up")
	case errors.Is(err, optimize.ErrUnreachable):
		f.Notes = append(f.Notes, "no level budget holds today's network condition to the last year: the treatments cannot keep it up")
	case err != nil:
		return fmt.Errorf("least level budget that holds today's condition: %w", err)
	default:
		f.HoldBudget = &hold
	}
	if len(sc.Targets) > 0 && f.LevelBudget == nil && f.Unreachable == "" {
		if err := levelBudget(p, f); err != nil {
			return err
		}
	}
	var met, missed []int
	for i, t := range r.Targets {
		if t.Met {
			met = append(met, i)
		} else {
			missed = append(missed, i)
		}
	}
	for _, i := range missed {
		tm := TargetMoney{Target: r.Targets[i].Target}
		if len(missed) == 1 && f.ExtraTotal != nil {
			// The money that closes every shortfall closes this one.
			tot, pv := *f.ExtraTotal, *f.ExtraPresentValue
			tm.Total, tm.PresentValue = &tot, &pv
			f.Targets = append(f.Targets, tm)
			continue
		}
		q := *p
		q.Targets = nil
		for _, j := range append(append([]int(nil), met...), i) {
			q.Targets = append(q.Targets, p.Targets[j])
		}
		gap, err := optimize.ClosingMoney(&q)
		switch {
		case errors.Is(err, optimize.ErrUnreachable):
		case err != nil:
			return fmt.Errorf("extra money for target %q: %w", r.Targets[i].Target, err)
		default:
			tot, pv := gap.Total(), gap.PresentValue
			tm.Total, tm.PresentValue = &tot, &pv
		}
		f.Targets = append(f.Targets, tm)
	}
	return nil
}

// flatColumns counts the columns of the plan's flat model: one per class,
// year, state and action that applies there.
func flatColumns(p *optimize.Problem) int {
	n := 0
	for k := range p.Classes {
		for _, a := range p.Classes[k].Actions {
			for _, ok := range a.Applies {
				if ok {
					n++
				}
			}
		}
	}
	return n * p.Horizon
}
