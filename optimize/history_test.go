package optimize

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"wearplan/markov"
	"wearplan/optimize/optimizetest"
	"wearplan/treatments"
)

// historyCase is a class whose treatments keep intervals and that wears
// more slowly for a few years after work, written out plainly so that the
// test can build its widened decision process on its own.
type historyCase struct {
	n       int
	p, q    [][]float64 // usual wear, wear after work (q = p when k = 0)
	k       int         // years of wear after work
	ts      []treatments.Treatment
	effect  [][][]float64 // effect[a][i]: distribution right after treatment a of state i
	routine []float64
}

// randomHistoryCase draws a class of 3-6 states: wear that drops one or
// two states, after-work wear that leaves a state 2-5 times less often for
// 0-3 years, a seal on the best states that waits 3-8 years, a repair on
// the middle states that waits 0 or 2-4 years, and a rebuild of the worst
// two states with no wait; routine costs grow down the scale.
func randomHistoryCase(rng *rand.Rand) historyCase {
	n := 3 + rng.IntN(4)
	c := historyCase{n: n, k: rng.IntN(4)}
	c.p = make([][]float64, n)
	c.q = make([][]float64, n)
	slow := 0.2 + 0.3*rng.Float64()
	for i := range c.p {
		c.p[i], c.q[i] = make([]float64, n), make([]float64, n)
		if i == n-1 {
			c.p[i][i], c.q[i][i] = 1, 1
			continue
		}
		leave := 0.08 + 0.3*rng.Float64()
		two := 0.0
		if i+2 < n && rng.IntN(2) == 0 {
			two = leave * 0.3 * rng.Float64()
			c.p[i][i+2], c.q[i][i+2] = two, two*slow
		}
		c.p[i][i+1], c.q[i][i+1] = leave-two, (leave-two)*slow
		c.p[i][i], c.q[i][i] = 1-leave, 1-leave*slow
	}
	if c.k == 0 {
		c.q = c.p
	}
	unit := func(j int) []float64 { r := make([]float64, n); r[j] = 1; return r }
	// Seal: holds the state, or lifts it one, on the best one or two states.
	seal := treatments.Treatment{Name: "seal", Cost: make([]float64, n), MinInterval: 3 + rng.IntN(6), SkipsAging: rng.IntN(2) == 0,
		Effect: treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{}}}
	lift := rng.IntN(2)
	for i := 0; i <= min(1, n-3); i++ {
		seal.Applies = append(seal.Applies, i)
		seal.Cost[i] = 20 + 40*rng.Float64()
		seal.Effect.Rows[i] = unit(max(i-lift, 0))
	}
	repair := treatments.Treatment{Name: "repair", Cost: make([]float64, n), Effect: treatments.Effect{Kind: treatments.Improve, Steps: 1 + rng.IntN(2)}}
	if rng.IntN(2) == 0 {
		repair.MinInterval = 2 + rng.IntN(3)
	}
	for i := 1; i < n-1; i++ {
		repair.Applies = append(repair.Applies, i)
		repair.Cost[i] = 150 + 50*float64(i) + 100*rng.Float64()
	}
	rebuild := treatments.Treatment{Name: "rebuild", Cost: make([]float64, n), SkipsAging: true, Effect: treatments.Effect{Kind: treatments.ToState, State: 0}}
	for i := n - 2; i < n; i++ {
		rebuild.Applies = append(rebuild.Applies, i)
		rebuild.Cost[i] = 1000 + 500*rng.Float64()
	}
	c.ts = []treatments.Treatment{seal, repair, rebuild}
	// The effects, written out here rather than read from EffectRow.
	c.effect = make([][][]float64, len(c.ts))
	for a := range c.effect {
		c.effect[a] = make([][]float64, n)
	}
	for _, i := range seal.Applies {
		c.effect[0][i] = unit(max(i-lift, 0))
	}
	for _, i := range repair.Applies {
		c.effect[1][i] = unit(max(i-repair.Effect.Steps, 0))
	}
	for _, i := range rebuild.Applies {
		c.effect[2][i] = unit(0)
	}
	c.routine = make([]float64, n)
	for i := range c.routine {
		c.routine[i] = 30 * math.Pow(float64(i), 1.5) * (0.5 + rng.Float64())
	}
	return c
}

// span is the years since work the widened state needs to keep.
func (c *historyCase) span() int {
	s := c.k + 1
	for _, t := range c.ts {
		s = max(s, t.MinInterval)
	}
	return s
}

// mdp writes the class's widened decision process out state by state,
// independently of treatments.History: state (i, y) is condition i with y
// = 1..S years since the year of the last work (S: S or more), numbered
// i·S + y - 1. Doing nothing costs the routine cost and wears by q while
// y <= k, else by p, to y+1 (at most S); a treatment is allowed where it
// applies and y reaches its interval, costs its unit cost, and lands in
// year 1 through its effect followed by the year's wear after work (q), or
// through the effect alone when it does not age in its year. actionOf[s][c]
// is the class's action index of choice c in state s.
func (c *historyCase) mdp() (*optimizetest.MDP, [][]int) {
	S := c.span()
	m := &optimizetest.MDP{Choices: make([][]optimizetest.Choice, c.n*S)}
	actionOf := make([][]int, c.n*S)
	idx := func(i, y int) int { return i*S + y - 1 }
	moves := func(dist []float64, y int) []optimizetest.Move {
		var out []optimizetest.Move
		for j, v := range dist {
			if v > 0 {
				out = append(out, optimizetest.Move{State: idx(j, y), P: v})
			}
		}
		return out
	}
	for i := 0; i < c.n; i++ {
		for y := 1; y <= S; y++ {
			s := idx(i, y)
			wear := c.p[i]
			if y <= c.k {
				wear = c.q[i]
			}
			m.Choices[s] = append(m.Choices[s], optimizetest.Choice{Cost: c.routine[i], Next: moves(wear, min(y+1, S))})
			actionOf[s] = append(actionOf[s], 0)
			for a, t := range c.ts {
				e := c.effect[a][i]
				if e == nil || y < t.MinInterval {
					continue
				}
				after := e
				if !t.SkipsAging {
					after = make([]float64, c.n)
					for l, el := range e {
						for j := range after {
							after[j] += el * c.q[l][j]
						}
					}
				}
				m.Choices[s] = append(m.Choices[s], optimizetest.Choice{Cost: t.Cost[i], Next: moves(after, 1)})
				actionOf[s] = append(actionOf[s], a+1)
			}
		}
	}
	return m, actionOf
}

// problem builds the class through treatments.History, the code under
// test, as a one-class problem of the given horizon; initial spreads 100
// units over the widened states at random.
func (c *historyCase) problem(t *testing.T, rng *rand.Rand, horizon int) (*Problem, *treatments.History) {
	t.Helper()
	p, err := markov.NewTransition(c.p, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var after *treatments.AfterWork
	if c.k > 0 {
		q, err := markov.NewTransition(c.q, markov.Options{})
		if err != nil {
			t.Fatal(err)
		}
		after = &treatments.AfterWork{Years: c.k, Transition: q}
	}
	h := treatments.NewHistory(c.n, c.ts, after)
	if h == nil {
		t.Fatal("no history for a class with intervals")
	}
	acts, err := h.Actions(p, after, c.ts)
	if err != nil {
		t.Fatal(err)
	}
	score, group := make([]float64, c.n), make([]Group, c.n)
	for i := range score {
		score[i] = 100 * float64(c.n-1-i) / float64(c.n-1)
		group[i] = [...]Group{Good, Fair, Poor}[min(3*i/c.n, 2)]
	}
	init := make([]float64, h.States())
	for w := range init {
		if rng.IntN(3) == 0 {
			init[w] = 1 + 9*rng.Float64()
		}
	}
	init[h.State(0, h.Span)] += 5
	tot := 0.0
	for _, v := range init {
		tot += v
	}
	for w := range init {
		init[w] *= 100 / tot
	}
	return &Problem{Horizon: horizon, Objective: MinCost, Classes: []Class{{
		Name: "c", Initial: init, Score: treatments.Widen(h, score), Group: treatments.Widen(h, group), Weight: 1,
		Actions: acts, Routine: treatments.Widen(h, c.routine),
	}}}, h
}

// TestLongRunWithHistoryMatchesValueIteration: for 20 generated classes
// with intervals and wear after work, the steady-state LP's least annual
// cost equals the optimal average cost of the widened decision process
// found by relative value iteration (optimizetest.RelativeValueIteration,
// Puterman 1994, chapter 8) on the process written out independently in
// this test, within 1e-6 relative; and every action the LP's policy uses,
// in every state it holds, attains the minimum of the average-cost
// optimality equation with the iteration's relative values (residual
// within 1e-6 of the largest cost), so the two policies agree wherever the
// optimum is unique.
func TestLongRunWithHistoryMatchesValueIteration(t *testing.T) {
	rng := rand.New(rand.NewPCG(2027, 15))
	sealed := 0
	for n := 0; n < 20; n++ {
		c := randomHistoryCase(rng)
		t.Run(fmt.Sprintf("class%02d", n), func(t *testing.T) {
			p, h := c.problem(t, rng, 1)
			S := c.span()
			if h.Span != S {
				t.Fatalf("history span %d, independent span %d", h.Span, S)
			}
			for i := 0; i < c.n; i++ {
				for y := 1; y <= S; y++ {
					if h.State(i, y) != i*S+y-1 {
						t.Fatalf("widened state of (%d, %d) is %d, documented %d", i, y, h.State(i, y), i*S+y-1)
					}
				}
			}
			m, actionOf := c.mdp()
			scale := 0.0
			for _, ch := range m.Choices {
				for _, x := range ch {
					scale = math.Max(scale, x.Cost)
				}
			}
			// Stop when Odoni's bounds on the gain are 1e-11 of the
			// largest cost apart: five orders tighter than the check.
			vi, err := optimizetest.RelativeValueIteration(m, 1e-11*scale, 2_000_000)
			if err != nil {
				t.Fatal(err)
			}
			lr, err := SolveLongRun(p)
			if err != nil {
				t.Fatal(err)
			}
			if lr.Status != Optimal {
				t.Fatalf("status %s", lr.Status)
			}
			tot := p.Classes[0].Total()
			got := lr.AnnualCost() / tot
			if !relClose(got, vi.Gain, 1e-6) {
				t.Errorf("long-run cost per unit %.10g, value iteration %.10g", got, vi.Gain)
			}
			for s := range m.Choices {
				for ci, a := range actionOf[s] {
					// Quantities under a millionth of the class are solver
					// noise: the tie-break stage may move that much
					// (holdTolerance), and the long-run report leaves
					// them out.
					q := lr.Policy[0][s][a] / tot
					if q <= 1e-6 {
						continue
					}
					if a == 1 {
						sealed++
					}
					if r := vi.Residual(m, s, ci); r > 1e-6*scale {
						t.Errorf("state %d (condition %d, %d years since work): the LP gives %.3g of the class action %d, which misses the optimality equation by %.3g", s, s/S, s%S+1, q, a, r)
					}
				}
				// No action the widened chain forbids is used.
				for a := range p.Classes[0].Actions {
					allowed := false
					for _, b := range actionOf[s] {
						allowed = allowed || a == b
					}
					if !allowed && lr.Policy[0][s][a] > 0 {
						t.Errorf("state %d: the LP uses action %d, which the rules forbid there", s, a)
					}
				}
			}
			t.Logf("%d states x %d years: cost %.6g a unit, value iteration %.6g in %d iterations", c.n, S, got, vi.Gain, vi.Iterations)
		})
	}
	if sealed == 0 {
		t.Error("no class seals in the long run: the intervals were never tested")
	}
}

// TestPlanWithHistoryMatchesGLPK: for the same 20 kinds of class, the
// finite-horizon plan's optimum (flat and decomposed) equals GLPK's glpsol
// (glpk-utils, simplex) on the exported model within 1e-6 relative; half
// the plans minimise cost (routine costs included), half maximise
// condition under a yearly budget.
func TestPlanWithHistoryMatchesGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	rng := rand.New(rand.NewPCG(2027, 16))
	for n := 0; n < 20; n++ {
		c := randomHistoryCase(rng)
		t.Run(fmt.Sprintf("class%02d", n), func(t *testing.T) {
			p, _ := c.problem(t, rng, 6+rng.IntN(5))
			if n%2 == 1 {
				p.Objective = MaxCondition
				p.Budget = make([]float64, p.Horizon)
				for y := range p.Budget {
					p.Budget[y] = 2000 + 6000*rng.Float64()
				}
			}
			m, err := BuildModel(p)
			if err != nil {
				t.Fatal(err)
			}
			want, ok := GlpsolOptimum(t, m)
			if !ok {
				t.Fatal("glpsol found no optimum")
			}
			for _, method := range []Method{Flat, Decomposed} {
				plan, err := SolveWith(p, Options{Method: method})
				if err != nil {
					t.Fatal(err)
				}
				if plan.Status != Optimal {
					t.Fatalf("%s: status %s", method, plan.Status)
				}
				got := plan.ConditionScore / 100
				if p.Objective == MinCost {
					got = plan.PresentValue + plan.RoutinePresentValue
					want := want * newBuilder(p).moneyUnit // the model counts money in its unit
					if !relClose(got, want, 1e-6) {
						t.Errorf("%s: present value %.10g, glpsol %.10g", method, got, want)
					}
					continue
				}
				if !relClose(got, want, 1e-6) {
					t.Errorf("%s: mean score %.10g, glpsol %.10g", method, got, want)
				}
			}
		})
	}
}

// TestGeneratedIntervalModelsMatchGLPK: generated networks of several
// classes with a waiting interval on every third treatment (GenSpec.Interval),
// budgets and targets: both methods reach glpsol's optimum (GLPK,
// glpk-utils, simplex) on the exported flat model within 1e-6 relative, or
// both find the targets out of reach where glpsol finds the model
// infeasible.
func TestGeneratedIntervalModelsMatchGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	rng := rand.New(rand.NewPCG(2027, 17))
	for n := 0; n < 8; n++ {
		spec := GenSpec{Classes: 2 + rng.IntN(4), States: 4 + rng.IntN(3), Treatments: 3 + rng.IntN(3), Years: 5 + rng.IntN(6),
			Targets: n%2 == 0, BudgetShare: 0.1 + 0.2*rng.Float64(), Interval: 3 + rng.IntN(4)}
		p := Generate(rng, spec)
		t.Run(spec.String(), func(t *testing.T) {
			m, err := BuildModel(p)
			if err != nil {
				t.Fatal(err)
			}
			want, ok := GlpsolOptimum(t, m)
			for _, method := range []Method{Flat, Decomposed} {
				plan, err := SolveWith(p, Options{Method: method})
				if err != nil {
					t.Fatal(err)
				}
				if !ok {
					if plan.Status != TargetsNotMet {
						t.Errorf("%s: status %s, glpsol finds no optimum", method, plan.Status)
					}
					continue
				}
				if plan.Status != Optimal {
					t.Fatalf("%s: status %s, glpsol finds an optimum", method, plan.Status)
				}
				got := plan.ConditionScore / 100
				if p.Objective == MinCost {
					got = plan.PresentValue / newBuilder(p).moneyUnit // no routine costs here
				}
				if !relClose(got, want, 1e-6) {
					t.Errorf("%s: objective %.10g, glpsol %.10g", method, got, want)
				}
			}
			t.Logf("%s, %d targets: glpsol optimum found %t", p.Objective, len(p.Targets), ok)
		})
	}
}
