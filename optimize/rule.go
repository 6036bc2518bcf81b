package optimize

import (
	"math"
	"sort"
)

// WorstFirst plays the rule most agencies use without an optimizer, so that
// plans can show what optimization buys over it. Each year, with that
// year's money:
//
//  1. Every (class, state) holding quantity at the start of the year is a
//     candidate. Candidates are taken worst first: lowest condition score
//     (0-100) of the state, then class order.
//  2. For a candidate, the treatment is the cheapest (unit cost in that
//     state) of the class's treatments that apply to the state and whose
//     expected end-of-year score beats doing nothing; ties go to the higher
//     end-of-year score, then catalogue order. A state with no such
//     treatment is skipped.
//  3. As much of the candidate's quantity is treated as the money left
//     allows: the network budget and, for classes in budget groups, the
//     group's cap. When routine costs count against the budget, the year's
//     routine cost of everything is set aside first, and treating a unit
//     gives its routine cost back.
//  4. Money left over rolls to next year only with carry-over.
//
// Without a network budget only the group caps limit the money (classes in
// no group are then treated in full), so callers use the rule when the
// problem has a network budget. Targets and least spends play no part. The returned Plan's
// Status is Optimal in the sense of "ran"; its ConditionScore, TotalCost and
// PresentValue are computed as for an optimised plan.
func WorstFirst(p *Problem) (*Plan, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	T, nk := p.Horizon, len(p.Classes)
	plan := &Plan{Status: Optimal, Work: make([][][][]float64, nk), Condition: make([][][]float64, nk), Spend: make([][]float64, nk), Routine: make([][]float64, nk)}
	type candidate struct {
		class, state int
		score        float64
	}
	var order []candidate
	choice := make([][]int, nk) // chosen action per class and state, -1 none
	groupOf := make([][]int, nk)
	for k := range p.Classes {
		c := &p.Classes[k]
		ns := len(c.Initial)
		plan.Work[k] = make([][][]float64, T)
		plan.Condition[k] = make([][]float64, T+1)
		plan.Condition[k][0] = append([]float64(nil), c.Initial...)
		plan.Spend[k] = make([]float64, T)
		plan.Routine[k] = make([]float64, T)
		choice[k] = make([]int, ns)
		for i := 0; i < ns; i++ {
			order = append(order, candidate{k, i, c.Score[i]})
			choice[k][i] = -1
			nothing := dot(c.Actions[0].Rows[i], c.Score)
			bestCost, bestScore := math.Inf(1), 0.0
			for a := 1; a < len(c.Actions); a++ {
				act := &c.Actions[a]
				if !act.Applies[i] {
					continue
				}
				s := dot(act.Rows[i], c.Score)
				if s <= nothing+1e-12 {
					continue
				}
				if act.Cost[i] < bestCost || (act.Cost[i] == bestCost && s > bestScore) {
					choice[k][i], bestCost, bestScore = a, act.Cost[i], s
				}
			}
		}
	}
	for g, gb := range p.GroupBudgets {
		for _, k := range gb.Classes {
			groupOf[k] = append(groupOf[k], g)
		}
	}
	sort.SliceStable(order, func(a, b int) bool {
		if order[a].score != order[b].score {
			return order[a].score < order[b].score
		}
		return order[a].class < order[b].class
	})
	var netLeft float64
	groupLeft := make([]float64, len(p.GroupBudgets))
	for t := 0; t < T; t++ {
		esc := p.escalation(t)
		if !p.CarryOver {
			netLeft = 0
			clear(groupLeft)
		}
		if p.Budget != nil {
			netLeft += p.Budget[t]
		} else {
			netLeft = math.Inf(1)
		}
		for g, gb := range p.GroupBudgets {
			groupLeft[g] += gb.Yearly[t]
		}
		start := make([][]float64, nk)
		for k := range p.Classes {
			start[k] = append([]float64(nil), plan.Condition[k][t]...)
			plan.Work[k][t] = make([][]float64, len(start[k]))
			for i := range start[k] {
				plan.Work[k][t][i] = make([]float64, len(p.Classes[k].Actions))
			}
			if p.RoutineInBudget && p.Classes[k].Routine != nil {
				r := dot(start[k], p.Classes[k].Routine) * esc
				netLeft -= r
				for _, g := range groupOf[k] {
					groupLeft[g] -= r
				}
			}
		}
		treated := make([][]float64, nk)
		for k := range treated {
			treated[k] = make([]float64, len(start[k]))
		}
		for _, cd := range order {
			k, i := cd.class, cd.state
			a := choice[k][i]
			q := start[k][i]
			if a < 0 || q <= 0 {
				continue
			}
			c := &p.Classes[k]
			unit := c.Actions[a].Cost[i] * esc
			if p.RoutineInBudget && c.Routine != nil {
				unit -= c.Routine[i] * esc
			}
			if unit > 0 {
				left := netLeft
				for _, g := range groupOf[k] {
					left = math.Min(left, groupLeft[g])
				}
				if left <= 0 {
					continue
				}
				q = math.Min(q, left/unit)
			}
			treated[k][i] = q
			plan.Work[k][t][i][a] = q
			netLeft -= q * unit
			for _, g := range groupOf[k] {
				groupLeft[g] -= q * unit
			}
		}
		for k := range p.Classes {
			c := &p.Classes[k]
			end := make([]float64, len(start[k]))
			for i, q := range start[k] {
				rest := q - treated[k][i]
				plan.Work[k][t][i][0] = rest
				for j, pj := range c.Actions[0].Rows[i] {
					end[j] += rest * pj
				}
				if a := choice[k][i]; treated[k][i] > 0 {
					for j, pj := range c.Actions[a].Rows[i] {
						end[j] += treated[k][i] * pj
					}
					s := treated[k][i] * c.Actions[a].Cost[i] * esc
					plan.Spend[k][t] += s
					plan.TotalCost += s
					plan.PresentValue += s * p.discount(t)
				}
				if c.Routine != nil {
					r := rest * c.Routine[i] * esc
					plan.Routine[k][t] += r
					plan.RoutineCost += r
					plan.RoutinePresentValue += r * p.discount(t)
				}
			}
			plan.Condition[k][t+1] = end
		}
	}
	w := p.Weights()
	for t := 1; t <= T; t++ {
		for k := range p.Classes {
			plan.ConditionScore += w[k] * p.Classes[k].ScoreOf(plan.Condition[k][t]) / float64(T)
		}
	}
	return plan, nil
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
