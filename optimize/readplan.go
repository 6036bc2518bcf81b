package optimize

import "math"

// workFloor is the smallest quantity of a treatment a plan reports, as a
// share of its class: lp_solve meets rows to about 1e-9 in the model's
// units (shares of a class), so smaller quantities are the solver's
// tolerance, not work anyone could carry out.
const workFloor = 1e-9

// cent is the smallest amount of money a plan's spend is reported to: a
// hundredth of the currency unit.
const cent = 0.01

// readPlan turns column values into the reported plan: quantities,
// condition and money. The solver's tolerance is cleaned out on the way,
// so that the plan reports only work that can be done with the money it
// has:
//
//  1. Each class is rolled forward from today's condition. In each year
//     and state the plan's mix of actions (the columns' shares of the
//     state's total) is applied to the quantity actually there, so that
//     quantities add up exactly from year to year.
//  2. A treatment whose quantity is below workFloor of its class is done
//     nothing instead.
//  3. When a year's spend on what a cap covers is above the cap (with
//     carry-over: the spend to that year above the caps to that year), or
//     would round to a cent above it, the treatments of the classes it
//     covers are scaled down together until it is not: the rows hold only
//     to the solver's tolerance, which on a large budget is a few cents
//     and on a zero budget any positive spend at all.
//
// Each step moves quantities by the solver's tolerance at most; spend and
// condition are then computed from the cleaned quantities.
func (b *builder) readPlan(x []float64, slacks []slackCol) *Plan {
	p := b.p
	T, K := p.Horizon, len(p.Classes)
	plan := &Plan{
		Work:      make([][][][]float64, K),
		Condition: make([][][]float64, K),
		Spend:     make([][]float64, K),
		Routine:   make([][]float64, K),
	}
	q := make([][]float64, K) // start-of-year quantities by class and state
	for k := range p.Classes {
		c := &p.Classes[k]
		plan.Work[k] = make([][][]float64, T)
		plan.Condition[k] = make([][]float64, T+1)
		plan.Condition[k][0] = append([]float64(nil), c.Initial...)
		plan.Spend[k] = make([]float64, T)
		plan.Routine[k] = make([]float64, T)
		q[k] = append([]float64(nil), c.Initial...)
	}
	spent := newSpendTracker(p)
	for t := 0; t < T; t++ {
		for k := range p.Classes {
			plan.Work[k][t] = b.yearMix(k, t, x, q[k])
		}
		spent.keepCaps(b, plan, t)
		esc := p.escalation(t)
		for k := range p.Classes {
			c := &p.Classes[k]
			end := make([]float64, len(c.Initial))
			for i, byAction := range plan.Work[k][t] {
				for a, w := range byAction {
					if w == 0 {
						continue
					}
					act := &c.Actions[a]
					for j, pj := range act.Rows[i] {
						end[j] += w * pj
					}
					plan.Spend[k][t] += w * act.Cost[i] * esc
					if a == 0 && c.Routine != nil {
						plan.Routine[k][t] += w * c.Routine[i] * esc
					}
				}
			}
			plan.Condition[k][t+1] = end
			q[k] = end
			plan.TotalCost += plan.Spend[k][t]
			plan.PresentValue += plan.Spend[k][t] * p.discount(t)
			plan.RoutineCost += plan.Routine[k][t]
			plan.RoutinePresentValue += plan.Routine[k][t] * p.discount(t)
		}
		spent.add(b, plan, t)
	}
	w := b.weights
	for t := 1; t <= T; t++ {
		s := 0.0
		for k := range p.Classes {
			s += w[k] * p.Classes[k].ScoreOf(plan.Condition[k][t])
		}
		plan.ConditionScore += s / float64(T)
	}
	for _, sc := range slacks {
		v := x[sc.col]
		if v <= shortfallFloor {
			continue
		}
		tg := p.Targets[sc.target]
		if tg.Kind == MinScore || tg.Kind == Hold {
			v *= 100
		}
		plan.Shortfalls = append(plan.Shortfalls, Shortfall{Target: sc.target, Year: sc.year, Amount: v})
	}
	return plan
}

// yearMix applies class k's mix of actions in year t (0-based) from the
// column values x to the start-of-year quantities q, with treatments below
// workFloor of the class done nothing instead (steps 1 and 2 of readPlan).
func (b *builder) yearMix(k, t int, x []float64, q []float64) [][]float64 {
	c := &b.p.Classes[k]
	tot := c.Total()
	pairs := b.lay.pairs[k]
	work := make([][]float64, len(c.Initial))
	share := make([]float64, len(c.Initial)) // the columns' total by state
	for i := range work {
		work[i] = make([]float64, len(c.Actions))
	}
	for n, pr := range pairs {
		share[pr.state] += math.Max(x[b.lay.col(k, t, n)], 0)
	}
	for n, pr := range pairs {
		i := pr.state
		if q[i] == 0 {
			continue
		}
		if share[i] <= 0 {
			if pr.action == 0 {
				work[i][0] = q[i] // the columns left the state empty: noise
			}
			continue
		}
		v := math.Max(x[b.lay.col(k, t, n)], 0) / share[i] * q[i]
		if pr.action != 0 && v < workFloor*tot {
			work[i][0] += v
			continue
		}
		work[i][pr.action] += v
	}
	return work
}

// spendTracker keeps the spend under each cap so far, for carry-over.
type spendTracker struct {
	network []float64   // per year
	groups  [][]float64 // per group and year
}

func newSpendTracker(p *Problem) *spendTracker {
	s := &spendTracker{network: make([]float64, p.Horizon), groups: make([][]float64, len(p.GroupBudgets))}
	for g := range s.groups {
		s.groups[g] = make([]float64, p.Horizon)
	}
	return s
}

// capped is one cap that binds a year: its limit in money and the spend
// under it before this year (with carry-over; zero without), and the
// classes it covers (nil for all).
type capped struct {
	limit, before float64
	classes       []int
}

// capsOf lists the caps that bind year t.
func (s *spendTracker) capsOf(p *Problem, t int) []capped {
	var out []capped
	add := func(caps []float64, spent []float64, classes []int) {
		limit, before := caps[t], 0.0
		if p.CarryOver {
			for y := 0; y < t; y++ {
				limit += caps[y]
				before += spent[y]
			}
		}
		if !math.IsInf(limit, 1) {
			out = append(out, capped{limit: limit, before: before, classes: classes})
		}
	}
	if p.Budget != nil {
		add(p.Budget, s.network, nil)
	}
	for g, gb := range p.GroupBudgets {
		add(gb.Yearly, s.groups[g], gb.Classes)
	}
	return out
}

// budgetSpend is what year t of the plan spends on the classes (nil: all)
// against the budget: treatments, and routine costs when they count.
func budgetSpend(p *Problem, plan *Plan, t int, classes []int) float64 {
	s := 0.0
	each := func(k int) {
		c := &p.Classes[k]
		esc := p.escalation(t)
		for i, byAction := range plan.Work[k][t] {
			for a, w := range byAction {
				s += w * c.Actions[a].Cost[i] * esc
				if a == 0 && p.RoutineInBudget && c.Routine != nil {
					s += w * c.Routine[i] * esc
				}
			}
		}
	}
	for _, k := range p.classesOf(classes) {
		each(k)
	}
	return s
}

// keepCaps is step 3 of readPlan: it scales down the treatments of year t
// under each cap whose spend, rounded to cents, is above it. The cut is
// taken first from the classes no least spend covers, when they alone can
// absorb it: rounding a cap to the cent below may cost up to a cent, which
// must not take a ring-fenced class below its least spend.
func (s *spendTracker) keepCaps(b *builder, plan *Plan, t int) {
	p := b.p
	for _, cp := range s.capsOf(p, t) {
		// The most the plan may spend: the cap, or when the cap rounds up
		// to the next cent, the cent below it.
		target := cp.limit
		if math.Round(target/cent)*cent > target {
			target = math.Floor(target/cent) * cent
		}
		spend := cp.before + budgetSpend(p, plan, t, cp.classes)
		if spend <= target {
			continue
		}
		target -= 1e-12 * math.Abs(target) // so that rounding cannot tip it over
		classes := p.classesOf(cp.classes)
		if free := withoutLeastSpend(p, classes); len(free) > 0 && cutSlope(p, plan, t, free) >= spend-target {
			classes = free
		}
		slope := cutSlope(p, plan, t, classes)
		if slope <= 0 {
			continue // doing less would not spend less
		}
		f := math.Max(0, math.Min(1, 1-(spend-target)/slope))
		for _, k := range classes {
			for _, byAction := range plan.Work[k][t] {
				for a := 1; a < len(byAction); a++ {
					if w := byAction[a]; w != 0 {
						kept := w * f
						if kept < workFloor*p.Classes[k].Total() {
							kept = 0
						}
						byAction[0] += w - kept
						byAction[a] = kept
					}
				}
			}
		}
	}
}

// cutSlope is what year t saves on the classes when all their treatments
// are done nothing instead: spend is linear in the share f of treatments
// kept, spend(f) = spend - (1-f)·slope, and what stays untreated costs its
// routine cost when that counts.
func cutSlope(p *Problem, plan *Plan, t int, classes []int) float64 {
	treated, moved := 0.0, 0.0
	esc := p.escalation(t)
	for _, k := range classes {
		c := &p.Classes[k]
		for i, byAction := range plan.Work[k][t] {
			for a, w := range byAction {
				if a == 0 || w == 0 {
					continue
				}
				treated += w * c.Actions[a].Cost[i] * esc
				if p.RoutineInBudget && c.Routine != nil {
					moved += w * c.Routine[i] * esc
				}
			}
		}
	}
	return treated - moved
}

// withoutLeastSpend lists the classes no least spend covers.
func withoutLeastSpend(p *Problem, classes []int) []int {
	floored := map[int]bool{}
	for _, ms := range p.MinSpends {
		for _, k := range ms.Classes {
			floored[k] = true
		}
	}
	var out []int
	for _, k := range classes {
		if !floored[k] {
			out = append(out, k)
		}
	}
	return out
}

// add records year t's spend under each cap.
func (s *spendTracker) add(b *builder, plan *Plan, t int) {
	p := b.p
	s.network[t] = budgetSpend(p, plan, t, nil)
	for g, gb := range p.GroupBudgets {
		s.groups[g][t] = budgetSpend(p, plan, t, gb.Classes)
	}
}
