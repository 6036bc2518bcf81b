package scenarios

import (
	"fmt"

	"wearplan/optimize"
)

// minSpendInfeasible explains a plan that the solver found infeasible
// because of ring-fenced money (budget.min_yearly): with the targets set
// aside, the caps alone hold, but some least spend cannot be spent in
// every year (too little of its classes is in states its treatments apply
// to, or the caps leave too little), or the least spends cannot all be
// spent together. It returns nil when the least spends are not the cause
// (routine costs over a cap are; budgetInfeasible says so). feasible
// solves a problem and says whether its budgets can hold: the finite plan
// or the long-run policy, whichever failed.
func minSpendInfeasible(sc *Scenario, p *optimize.Problem, feasible func(*optimize.Problem) (bool, error)) error {
	if len(p.MinSpends) == 0 {
		return nil
	}
	// Caps set after the file was checked (a sweep's budget, say) may be
	// below the ring-fenced money: say so without solving.
	var list []*Issue
	for m := range sc.MinSpends {
		ms := &sc.MinSpends[m]
		for _, msg := range ms.aboveCaps(sc) {
			list = append(list, &Issue{File: ms.file, Line: ms.line, Field: "budget.min_yearly." + ms.Name, Msg: msg})
		}
	}
	if msg := classMinsAboveBudget(sc); msg != "" {
		list = append(list, &Issue{File: sc.Source, Field: "budget.min_yearly", Msg: msg})
	}
	if len(list) > 0 {
		return &InputError{Issues: list}
	}
	q := *p
	q.Targets, q.MinSpends = nil, nil
	if ok, err := feasible(&q); err != nil || !ok {
		return err
	}
	for m := range p.MinSpends {
		q.MinSpends = p.MinSpends[m : m+1]
		ok, err := feasible(&q)
		if err != nil {
			return err
		}
		if !ok {
			ms := &sc.MinSpends[m]
			list = append(list, &Issue{File: ms.file, Line: ms.line, Field: "budget.min_yearly." + ms.Name,
				Msg: fmt.Sprintf("no plan can spend this on %s in every year within the caps: in some year too little of it is in states its treatments apply to, or the caps leave too little; lower min_yearly", ms.Name)})
		}
	}
	if len(list) == 0 {
		list = append(list, &Issue{File: sc.Source, Field: "budget.min_yearly",
			Msg: "each amount can be spent on its own, but not all of them together within the caps; lower some of them or raise the budget"})
	}
	return &InputError{Issues: list}
}

// planFeasible says whether the finite plan of p keeps its budgets.
func planFeasible(opt Options) func(*optimize.Problem) (bool, error) {
	return func(p *optimize.Problem) (bool, error) {
		plan, err := optimize.SolveWith(p, optimize.Options{Method: opt.Solver})
		if err != nil {
			return false, err
		}
		return plan.Status != optimize.Infeasible, nil
	}
}

// longRunFeasible says whether the long-run policy of p keeps its budgets.
func longRunFeasible(p *optimize.Problem) (bool, error) {
	lr, err := optimize.SolveLongRun(p)
	if err != nil {
		return false, err
	}
	return lr.Status != optimize.Infeasible, nil
}

// minYearly is the money ring-fenced for a class or a budget group in
// plan year t (1-based), or nil when there is none.
func (s *Scenario) minYearly(name string, group bool, t int) *float64 {
	for _, ms := range s.MinSpends {
		if ms.Name == name && ms.Group == group && ms.Yearly[t-1] > 0 {
			v := ms.Yearly[t-1]
			return &v
		}
	}
	return nil
}

// addMinYearly puts the ring-fenced amounts beside the spend of each class
// and budget group in a plan's years (a plan keeps them; the worst-first
// rule does not, so its forecasts do not carry them).
func addMinYearly(sc *Scenario, r *Result) {
	for t := range r.Years {
		y := &r.Years[t]
		for k := range y.Classes {
			y.Classes[k].MinYearly = sc.minYearly(sc.Classes[k].Name, false, t+1)
		}
		for g := range y.Groups {
			y.Groups[g].MinYearly = sc.minYearly(y.Groups[g].Name, true, t+1)
		}
	}
}
