package optimize

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"wearplan/markov"
	"wearplan/treatments"
)

// generateCatalogue draws a problem shaped as planners write scenarios
// (GenSpec.Catalogue), for benchmarks that should not only see models of
// Generate's own shape: its classes share one scale and one catalogue of
// treatment types, but each class has its own copy of every type (its own
// unit costs, effects and wear), so nothing is shared between classes in
// the model; bands of states overlap, so most states have several
// treatments to choose from; the yearly budget and the network poor-share
// target both bind.
//
// Both are set from plans anyone could write by hand. The budget is a
// fifth to three tenths of what rebuilding everything that falls into poor
// states costs a year once today's backlog is cleared: treatment prices
// grow 2.2-fold from one type to the next, so a plan for the best mean
// condition spends most of it on cheap preservation of good states. The
// target is the worst poor share, from year 2 to the middle of the
// horizon, of the plan that spends the same budget on what takes the most
// quantity out of poor states per unit of money, plus 2% of the way to
// doing nothing: that plan meets it (the model is feasible), and the plan
// for the best mean condition, still working through today's backlog in
// those years, does not. TestCatalogueAgreesWithGLPK checks on small
// sizes that both bind.
func generateCatalogue(rng *rand.Rand, s GenSpec) *Problem {
	n, nt := s.States, max(s.Treatments, 1)
	p := &Problem{Horizon: s.Years, Escalation: 0.03 * rng.Float64(), DiscountRate: 0.05 * rng.Float64(), Objective: MaxCondition}
	score, group := make([]float64, n), make([]Group, n)
	good, poor := max(1, 2*n/5), max(1, (3*n+5)/10)
	for i := range score {
		score[i] = 100 * float64(n-1-i) / float64(max(n-1, 1))
		switch {
		case i < good:
			group[i] = Good
		case i >= n-poor:
			group[i] = Poor
		default:
			group[i] = Fair
		}
	}
	recon := nt - 1 // the last type rebuilds every state below the best
	for k := 0; k < s.Classes; k++ {
		c := Class{Name: fmt.Sprintf("c%d", k+1), Initial: make([]float64, n), Score: slices.Clone(score), Group: slices.Clone(group)}
		speed := 0.6 + rng.Float64()
		years := make([]float64, n-1)
		for i := range years {
			years[i] = math.Max(1.2, speed*(3+4*rng.Float64()))
		}
		chain, err := markov.FromYearsInState(years)
		if err != nil {
			panic(err)
		}
		price := 0.5 + 1.5*rng.Float64() // the class's unit: a lane-km costs more than a m2
		ts := make([]treatments.Treatment, 0, nt)
		for a := 0; a < nt; a++ {
			tr := treatments.Treatment{Name: string(rune('A' + a)), Cost: make([]float64, n)}
			base := 15 * math.Pow(2.2, float64(a)) * price * (0.85 + 0.3*rng.Float64())
			if a == recon {
				for i := 1; i < n; i++ {
					tr.Applies = append(tr.Applies, i)
					tr.Cost[i] = 2 * base * (1 + 0.05*float64(i))
				}
				tr.Effect = treatments.Effect{Kind: treatments.ToState, State: 0}
				ts = append(ts, tr)
				continue
			}
			lo := a * max(n-2, 0) / max(nt-1, 1)
			hi := min(n-1, lo+1+n/4)
			for i := lo; i <= hi; i++ {
				tr.Applies = append(tr.Applies, i)
				tr.Cost[i] = base * (1 + 0.1*float64(i-lo))
			}
			steps := max(1, 1+a*(n-1)/(2*nt)+rng.IntN(3)-1)
			if 3*a < nt {
				// Preservation: a state or so better, held for the year.
				tr.Effect = treatments.Effect{Kind: treatments.Improve, Steps: steps}
				tr.SkipsAging = true
			} else {
				// Rehabilitation: most of the quantity gains steps states, the
				// rest one state fewer.
				sure := 0.6 + 0.35*rng.Float64()
				tr.Effect = treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{}}
				for _, i := range tr.Applies {
					d := make([]float64, n)
					to := max(i-steps, 0)
					d[to] += sure
					d[min(to+1, i)] += 1 - sure
					tr.Effect.Rows[i] = d
				}
			}
			ts = append(ts, tr)
		}
		mode, spread := rng.IntN(n/2+1), 1+float64(n)/4
		unit := math.Pow(10, float64(rng.IntN(3)))
		for i := range c.Initial {
			z := (float64(i) - float64(mode)) / spread
			c.Initial[i] = unit * 100 * math.Exp(-z*z) * (0.5 + rng.Float64())
		}
		acts, err := treatments.Actions(chain, ts)
		if err != nil {
			panic(err)
		}
		c.Actions = acts
		total := 0.0
		for _, q := range c.Initial {
			total += q
		}
		// Weighted by replacement value, as scenarios weight classes by
		// default: a rebuild of the worst state, with a margin.
		c.Weight = 1.3 * acts[len(acts)-1].Cost[n-1] * total
		p.Classes = append(p.Classes, c)
	}
	// The money: what rebuilding all quantity that falls into poor states
	// costs a year once today's backlog is cleared (the mean of the years
	// after the first), cut to 20-30% of it: the budget cannot hold every
	// class, and the poor share rises unless the money goes to it.
	full := rebuildPoorPlan(p, math.Inf(1))
	mean := 0.0
	for _, v := range full[min(1, len(full)-1):] {
		mean += v / float64(len(full)-min(1, len(full)-1))
	}
	level := mean * (0.2 + 0.1*rng.Float64())
	p.Budget = make([]float64, p.Horizon)
	for t := range p.Budget {
		p.Budget[t] = level
	}
	rulePoor, idlePoor := leastPoorPlan(p, level)
	// The window is the first half of the horizon from year 2, where a
	// plan for the best mean condition is still working through today's
	// backlog and one that spends on poor states first is not. The plan
	// leastPoorPlan follows pays its work within the budget at the same
	// prices as the model (escalated), so it meets the target.
	from := min(2, p.Horizon)
	to := max(from, (p.Horizon+1)/2)
	worstRule, worstIdle := 0.0, 0.0
	for t := from - 1; t < to; t++ {
		worstRule, worstIdle = math.Max(worstRule, rulePoor[t]), math.Max(worstIdle, idlePoor[t])
	}
	p.Targets = []Target{{Label: "network poor share", Class: Network, Kind: MaxShare, Group: Poor, Value: worstRule + 0.02*(worstIdle-worstRule), From: from, To: to}}
	return p
}

// rebuildPoorPlan follows the plan that, every year, rebuilds the
// quantity in poor states with each class's last action, as far as a
// yearly budget (nominal) pays, and leaves the rest alone; it returns that
// plan's nominal spend of each year.
func rebuildPoorPlan(p *Problem, budget float64) []float64 {
	return followPlan(p, budget, func(c *Class, i int) (int, float64) {
		last := len(c.Actions) - 1
		if c.Group[i] != Poor || !c.Actions[last].Applies[i] {
			return 0, 0
		}
		return last, float64(len(c.Initial) - i) // worst first
	}).spend
}

// leastPoorPlan follows the plan that, every year, spends a yearly budget
// (nominal) on the treatments that take the most quantity out of poor
// states by the end of the year per unit of money, best first; it returns
// the network poor share at the end of each year, with that plan and with
// nothing done.
func leastPoorPlan(p *Problem, budget float64) (planned, idle []float64) {
	poorAfter := func(c *Class, row []float64) float64 {
		s := 0.0
		for j, pj := range row {
			if c.Group[j] == Poor {
				s += pj
			}
		}
		return s
	}
	fp := followPlan(p, budget, func(c *Class, i int) (int, float64) {
		best, ratio := 0, 0.0
		stay := poorAfter(c, c.Actions[0].Rows[i])
		for a := 1; a < len(c.Actions); a++ {
			act := &c.Actions[a]
			if !act.Applies[i] || act.Cost[i] <= 0 {
				continue
			}
			if r := (stay - poorAfter(c, act.Rows[i])) / act.Cost[i]; r > ratio {
				best, ratio = a, r
			}
		}
		return best, ratio
	})
	return fp.poor, fp.idlePoor
}

type followed struct {
	spend, poor, idlePoor []float64
}

// followPlan follows a yearly rule over p's horizon: choose(c, i) gives
// the action for state i of class c and its priority (0 for none); each
// year the budget (nominal) buys the chosen actions for whole states'
// quantities, highest priority first, until it runs out.
func followPlan(p *Problem, budget float64, choose func(c *Class, i int) (int, float64)) followed {
	out := followed{make([]float64, p.Horizon), make([]float64, p.Horizon), make([]float64, p.Horizon)}
	w := p.Weights()
	type pick struct {
		k, i, a  int
		priority float64
	}
	var picks []pick
	cur, idle := make([][]float64, len(p.Classes)), make([][]float64, len(p.Classes))
	totals := make([]float64, len(p.Classes))
	for k := range p.Classes {
		c := &p.Classes[k]
		cur[k], idle[k] = slices.Clone(c.Initial), slices.Clone(c.Initial)
		for i, q := range c.Initial {
			totals[k] += q
			if a, pr := choose(c, i); a > 0 && pr > 0 {
				picks = append(picks, pick{k, i, a, pr})
			}
		}
	}
	slices.SortStableFunc(picks, func(x, y pick) int {
		switch {
		case x.priority > y.priority:
			return -1
		case x.priority < y.priority:
			return 1
		}
		return 0
	})
	for t := 0; t < p.Horizon; t++ {
		left := budget
		treated := make([][]float64, len(p.Classes))
		for k := range p.Classes {
			treated[k] = make([]float64, len(cur[k]))
		}
		for _, pk := range picks {
			if left <= 0 {
				break
			}
			price := p.Classes[pk.k].Actions[pk.a].Cost[pk.i] * p.escalation(t)
			q := math.Min(cur[pk.k][pk.i], left/price)
			treated[pk.k][pk.i] = q
			left -= q * price
			out.spend[t] += q * price
		}
		for k := range p.Classes {
			c := &p.Classes[k]
			next, nextIdle := make([]float64, len(cur[k])), make([]float64, len(idle[k]))
			for i := range cur[k] {
				for j, pj := range c.Actions[0].Rows[i] {
					next[j] += (cur[k][i] - treated[k][i]) * pj
					nextIdle[j] += idle[k][i] * pj
				}
			}
			for _, pk := range picks {
				if pk.k == k && treated[k][pk.i] > 0 {
					for j, pj := range c.Actions[pk.a].Rows[pk.i] {
						next[j] += treated[k][pk.i] * pj
					}
				}
			}
			cur[k], idle[k] = next, nextIdle
			for j := range next {
				if c.Group[j] == Poor {
					out.poor[t] += w[k] * next[j] / totals[k]
					out.idlePoor[t] += w[k] * nextIdle[j] / totals[k]
				}
			}
		}
	}
	return out
}
