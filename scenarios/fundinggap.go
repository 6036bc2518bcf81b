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
// solves in about half a second at the demo's 5,120 columns (its classes
// widened by treatment history) and in several seconds at three times
// this bound; larger networks leave them out and say so.
const FundingDetailColumns = 8000

// fundingDetail adds to f the hold budget, the level budget where the plan
// did not need it, and the money per missed target, when the model is
// small enough (FundingDetailColumns). The hold and level budgets come from
// bf when it has them.
func fundingDetail(sc *Scenario, p *optimize.Problem, r *Result, f *Funding, bf *BudgetFree) error {
	if cols := flatColumns(p); cols > FundingDetailColumns {
		f.Notes = append(f.Notes, fmt.Sprintf("the least level budgets that hold today's condition and that meet the targets, and the money per missed target, are left out: the network's flat model has %d columns, more than the %d these extra solves are made for", cols, FundingDetailColumns))
		return nil
	}
	// The hold budget, the level budget (where the plan did not need it)
	// and the money per missed target are independent LPs: solved side by
	// side, each into its own slot, and put together in order.
	var (
		hold        float64
		holdErr     error
		levelF      Funding
		levelErr    error
		met, missed []int
		targetGaps  []*optimize.Gap
		targetErrs  []error
		needLevel   = len(sc.Targets) > 0 && f.LevelBudget == nil && f.Unreachable == "" && f.HeldBack == ""
		jobs        []func() error
	)
	for i, t := range r.Targets {
		if t.Met {
			met = append(met, i)
		} else {
			missed = append(missed, i)
		}
	}
	jobs = append(jobs, func() error {
		hold, holdErr = bf.holdBudget(p)
		return nil
	})
	if needLevel {
		jobs = append(jobs, func() error {
			levelErr = levelBudget(sc, p, &levelF, bf, nil)
			return nil
		})
	}
	targetGaps, targetErrs = make([]*optimize.Gap, len(missed)), make([]error, len(missed))
	for n, i := range missed {
		if len(missed) == 1 && f.ExtraTotal != nil {
			continue // the money that closes every shortfall closes this one
		}
		jobs = append(jobs, func() error {
			q := *p
			q.Targets = nil
			for _, j := range append(append([]int(nil), met...), i) {
				q.Targets = append(q.Targets, p.Targets[j])
			}
			targetGaps[n], targetErrs[n] = optimize.ClosingMoney(&q)
			return nil
		})
	}
	if err := runParallel(p.Context(), jobs); err != nil {
		return err
	}
	switch {
	case errors.Is(holdErr, optimize.ErrHeldBack), errors.Is(holdErr, optimize.ErrUnreachable) && len(p.GroupBudgets) > 0:
		f.Notes = append(f.Notes, "no level network budget holds today's network condition to the last year while the budget groups keep their caps: the treatments, or a group's cap, cannot keep it up")
	case errors.Is(holdErr, optimize.ErrUnreachable):
		f.Notes = append(f.Notes, "no level budget holds today's network condition to the last year: the treatments cannot keep it up")
	case holdErr != nil:
		return fmt.Errorf("least level budget that holds today's condition: %w", holdErr)
	default:
		f.HoldBudget = &hold
	}
	if needLevel {
		if levelErr != nil {
			return levelErr
		}
		f.LevelBudget, f.Unreachable, f.HeldBack = levelF.LevelBudget, levelF.Unreachable, levelF.HeldBack
	}
	for n, i := range missed {
		tm := TargetMoney{Target: r.Targets[i].Target}
		switch {
		case len(missed) == 1 && f.ExtraTotal != nil:
			tot, pv := *f.ExtraTotal, *f.ExtraPresentValue
			tm.Total, tm.PresentValue = &tot, &pv
		case errors.Is(targetErrs[n], optimize.ErrUnreachable):
		case targetErrs[n] != nil:
			return fmt.Errorf("extra money for target %q: %w", r.Targets[i].Target, targetErrs[n])
		default:
			tot, pv := targetGaps[n].Total(), targetGaps[n].PresentValue
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
