package optimize

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Invariants every plan must satisfy, checked over random problems. These
// follow from the model's definition (docs/model.md, Invariants), not from any
// number the optimizer produced.
func TestPlanInvariants(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 2027))
	optimal := 0
	for c := 0; c < 60; c++ {
		spec := randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(8), targets: rng.IntN(2) == 0, budgetShare: 0.05 + 0.3*rng.Float64()}
		p := randomProblem(rng, spec)
		if rng.IntN(4) == 0 {
			p.CarryOver = true
		}
		plan, err := Solve(p)
		if err != nil {
			t.Fatalf("case %d: %v", c, err)
		}
		if plan.Status == Infeasible {
			t.Fatalf("case %d: infeasible, but doing nothing always fits a non-negative budget", c)
		}
		if plan.Status == Optimal {
			optimal++
			if len(plan.Shortfalls) != 0 {
				t.Errorf("case %d: optimal plan with shortfalls %v", c, plan.Shortfalls)
			}
		} else if len(plan.Shortfalls) == 0 {
			t.Errorf("case %d: status %s without any shortfall", c, plan.Status)
		}
		checkConservation(t, c, p, plan)
		checkBudget(t, c, p, plan)
		if plan.Status == Optimal {
			checkTargets(t, c, p, plan)
		}
	}
	if optimal < 20 {
		t.Errorf("only %d optimal plans; the generator no longer covers the optimal case", optimal)
	}
}

// checkConservation: each class's total quantity is the same every year,
// work in a year equals the condition at its start, and nothing is negative.
func checkConservation(t *testing.T, c int, p *Problem, plan *Plan) {
	t.Helper()
	for k := range p.Classes {
		tot := p.Classes[k].Total()
		for y := 0; y <= p.Horizon; y++ {
			s := 0.0
			for i, q := range plan.Condition[k][y] {
				if q < -1e-9*tot {
					t.Errorf("case %d class %d year %d state %d: negative quantity %g", c, k, y, i, q)
				}
				s += q
			}
			if math.Abs(s-tot) > 1e-7*tot {
				t.Errorf("case %d class %d year %d: total %g, want %g", c, k, y, s, tot)
			}
		}
		for y := 0; y < p.Horizon; y++ {
			for i, byAction := range plan.Work[k][y] {
				s := 0.0
				for _, q := range byAction {
					if q < 0 {
						t.Errorf("case %d: negative work %g", c, q)
					}
					s += q
				}
				if math.Abs(s-plan.Condition[k][y][i]) > 1e-7*tot {
					t.Errorf("case %d class %d year %d state %d: work %g, condition at start %g", c, k, y+1, i, s, plan.Condition[k][y][i])
				}
			}
		}
	}
}

// checkBudget: spend never exceeds the cap (cumulatively with carry-over).
func checkBudget(t *testing.T, c int, p *Problem, plan *Plan) {
	t.Helper()
	if p.Budget == nil {
		return
	}
	spent, capSum := 0.0, 0.0
	for y := 0; y < p.Horizon; y++ {
		s := 0.0
		for k := range p.Classes {
			s += plan.Spend[k][y]
		}
		spent += s
		capSum += p.Budget[y]
		limit, used := p.Budget[y], s
		if p.CarryOver {
			limit, used = capSum, spent
		}
		if used > limit*(1+1e-7)+1e-6 {
			t.Errorf("case %d year %d: spend %g above cap %g (carry-over %v)", c, y+1, used, limit, p.CarryOver)
		}
	}
}

// checkTargets: in an optimal plan every target holds in every year it covers.
func checkTargets(t *testing.T, c int, p *Problem, plan *Plan) {
	t.Helper()
	w := p.Weights()
	measure := func(tg Target, y int) float64 {
		val := func(k int) float64 {
			q := plan.Condition[k][y]
			if tg.Kind == MinScore || tg.Kind == Hold {
				return p.Classes[k].ScoreOf(q)
			}
			if tg.States != nil {
				return tg.ShareOf(&p.Classes[k], q)
			}
			return p.Classes[k].SharesOf(q)[tg.Group]
		}
		if tg.Class != Network {
			return val(tg.Class)
		}
		s := 0.0
		for k := range p.Classes {
			s += w[k] * val(k)
		}
		return s
	}
	for _, tg := range p.Targets {
		from, to := tg.From, tg.To
		if tg.Kind == Hold {
			from, to = p.Horizon, p.Horizon
		}
		for y := from; y <= to; y++ {
			v := measure(tg, y)
			switch tg.Kind {
			case MaxShare:
				if v > tg.Value+1e-7 {
					t.Errorf("case %d %s year %d: %g above %g", c, tg.Label, y, v, tg.Value)
				}
			case MinShare:
				if v < tg.Value-1e-7 {
					t.Errorf("case %d %s year %d: %g below %g", c, tg.Label, y, v, tg.Value)
				}
			case MinScore:
				if v < tg.Value-1e-5 {
					t.Errorf("case %d %s year %d: score %g below %g", c, tg.Label, y, v, tg.Value)
				}
			case Hold:
				if today := p.InitialScore(tg.Class); v < today-1e-5 {
					t.Errorf("case %d hold: end score %g below today's %g", c, v, today)
				}
			}
		}
	}
}

// TestZeroBudgetIsDoNothing: with no money every unit is left to age, so
// the plan must equal the do-nothing roll-forward q·P^t exactly (to
// rounding) — common practice, no source: this is the definition of a
// do-nothing forecast.
func TestZeroBudgetIsDoNothing(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	for c := 0; c < 15; c++ {
		p := randomProblem(rng, randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 2 + rng.IntN(10), budgetShare: 0.1})
		for y := range p.Budget {
			p.Budget[y] = 0
		}
		p.Objective = MaxCondition
		plan, err := Solve(p)
		if err != nil || plan.Status != Optimal {
			t.Fatalf("case %d: %v %v", c, err, plan)
		}
		for k := range p.Classes {
			rows := p.Classes[k].Actions[0].Rows
			q := append([]float64(nil), p.Classes[k].Initial...)
			for y := 1; y <= p.Horizon; y++ {
				next := make([]float64, len(q))
				for i := range q {
					for j := range q {
						next[j] += q[i] * rows[i][j]
					}
				}
				q = next
				for j := range q {
					if math.Abs(plan.Condition[k][y][j]-q[j]) > 1e-9*p.Classes[k].Total() {
						t.Fatalf("case %d class %d year %d state %d: plan %g, do-nothing %g", c, k, y, j, plan.Condition[k][y][j], q[j])
					}
				}
			}
			for y := range plan.Spend[k] {
				if plan.Spend[k][y] != 0 {
					t.Fatalf("case %d: spend %g with a zero budget", c, plan.Spend[k][y])
				}
			}
		}
	}
}

// TestTieBreakSpendsNothingWithoutBenefit: the second, tie-breaking solve
// removes spending that buys no condition. (That it never trades away the
// primary optimum is checked against glpsol in TestAgreesWithGLPK.)
func TestTieBreakSpendsNothingWithoutBenefit(t *testing.T) {
	// One class already all in the best state, a treatment that leaves it in
	// the best state, and plenty of money: treating buys nothing, so the
	// tie-break must spend nothing (docs/model.md, The lexicographic
	// tie-break: no money spent without benefit).
	rng := rand.New(rand.NewPCG(9, 9))
	p := randomProblem(rng, randomSpec{classes: 1, states: 4, treatments: 2, years: 5, budgetShare: 5})
	c := &p.Classes[0]
	for i := range c.Initial {
		c.Initial[i] = 0
	}
	c.Initial[0] = 100
	// Make the do-nothing chain absorbing in the best state: nothing ever wears.
	for i := range c.Actions[0].Rows {
		for j := range c.Actions[0].Rows[i] {
			c.Actions[0].Rows[i][j] = 0
		}
		c.Actions[0].Rows[i][i] = 1
	}
	for a := 1; a < len(c.Actions); a++ {
		c.Actions[a].Applies[0] = true
		c.Actions[a].Cost[0] = 10
		c.Actions[a].Rows[0] = []float64{1, 0, 0, 0}
	}
	plan, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	if plan.TotalCost != 0 {
		t.Fatalf("spent %g on work that changes nothing", plan.TotalCost)
	}
	if math.Abs(plan.ConditionScore-100) > 1e-9 {
		t.Fatalf("score %g, want 100", plan.ConditionScore)
	}
}
