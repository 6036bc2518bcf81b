package optimize

import (
	"fmt"
	"strconv"
	"strings"
)

// legend explains the built model to someone reading an exported file:
// what the objective measures, what each column and row family means, and
// the units inside the model (quantities as shares of each class, money in
// units of moneyUnit). Solve answers this model first; the tie-break solve
// that follows adds one row that holds this objective at its optimum.
func (b *builder) legend() []string {
	p := b.p
	out := []string{
		fmt.Sprintf("wearplan finite-horizon plan: %d classes, %d years, %d rows, %d columns", len(p.Classes), p.Horizon, len(b.m.Rows), len(b.m.Cols)),
	}
	if p.Objective == MaxCondition {
		out = append(out, fmt.Sprintf("objective (max-condition): the mean over the %d years of the network condition score at the end of each year, on 0-1 (score 0-100 divided by 100)", p.Horizon))
	} else {
		out = append(out, "objective (min-cost): the present value of treatment spend, in money units")
	}
	out = append(out,
		fmt.Sprintf("money unit: 1 = %s in the scenario's currency (the largest yearly cap, or the dearest treatment of a whole class)", strconv.FormatFloat(b.moneyUnit, 'f', -1, 64)),
		"column xK_T_I_A: share of class K's total quantity that is in state I (1 = best) at the start of year T and is given action A in year T (0 = do nothing)",
		"rows: flowK_T_J condition flow of class K into state J at the start of year T; budget_T network cap of year T; groupbudgetG_T cap of budget group G; minspendM_T least spend M of year T; targetN_T target N at the end of year T",
		"after this model is solved, a second solve holds its objective within 1e-9 relative and breaks ties (max-condition: least present-value spend; min-cost: best condition)",
		"when the targets cannot be met this model is infeasible; wearplan then adds a slack to every target row and minimises the total slack first",
	)
	for k := range p.Classes {
		c := &p.Classes[k]
		acts := make([]string, len(c.Actions))
		for a := range c.Actions {
			acts[a] = fmt.Sprintf("%d %s", a, c.Actions[a].Name)
		}
		out = append(out, fmt.Sprintf("class %d: %s (network weight %s); actions: %s", k+1, c.Name, num(b.weights[k]), strings.Join(acts, ", ")))
	}
	for g, gb := range p.GroupBudgets {
		out = append(out, fmt.Sprintf("budget group %d: %s", g+1, gb.Name))
	}
	for m, ms := range p.MinSpends {
		out = append(out, fmt.Sprintf("least spend %d: %s", m+1, ms.Name))
	}
	for n, t := range p.Targets {
		out = append(out, fmt.Sprintf("target %d: %s", n+1, t.Label))
	}
	return out
}
