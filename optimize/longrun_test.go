package optimize

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"wearplan/markov"
	"wearplan/treatments"
)

// machineProblem is the machine-maintenance Markov decision process of
// Hillier and Lieberman, Introduction to Operations Research (the Markov
// decision process chapter, solved there by linear programming), numbers
// from memory. A machine is inspected once a period and found in state 0
// (good as new), 1 (minor deterioration), 2 (major deterioration) or 3
// (inoperable). Left alone it moves by the matrix below; defective output
// costs 0, 1000 and 3000 a period in states 0-2 (routine cost here); an
// overhaul (state 2 only) costs 4000 and returns it to state 1; a
// replacement (states 1-3) costs 6000 and returns it to state 0; both take
// the period, so they do not also age (SkipsAging). An inoperable machine
// must be replaced: the book forbids doing nothing in state 3, written here
// as a routine cost of 1e5 a period, over 16 times any other cost, which no
// least-cost policy can choose (it would make state 3 absorbing at 1e5 a
// period).
func machineProblem() *Problem { return machineProblemWith(1e5) }

// machineProblemWith is machineProblem with the given cost a period for
// leaving an inoperable machine as it is.
func machineProblemWith(penalty float64) *Problem {
	P, err := markov.NewTransition([][]float64{
		{0, 7.0 / 8, 1.0 / 16, 1.0 / 16},
		{0, 3.0 / 4, 1.0 / 8, 1.0 / 8},
		{0, 0, 1.0 / 2, 1.0 / 2},
		{0, 0, 0, 1},
	}, markov.Options{})
	if err != nil {
		panic(err)
	}
	ts := []treatments.Treatment{
		{Name: "overhaul", Applies: []int{2}, Cost: []float64{0, 0, 4000, 0}, Effect: treatments.Effect{Kind: treatments.ToState, State: 1}, SkipsAging: true},
		{Name: "replace", Applies: []int{1, 2, 3}, Cost: []float64{0, 6000, 6000, 6000}, Effect: treatments.Effect{Kind: treatments.ToState, State: 0}, SkipsAging: true},
	}
	acts, err := treatments.Actions(P, ts)
	if err != nil {
		panic(err)
	}
	return &Problem{
		Horizon: 1, Objective: MinCost,
		Classes: []Class{{
			Name: "machine", Initial: []float64{1, 0, 0, 0}, Score: []float64{100, 200.0 / 3, 100.0 / 3, 0},
			Group: []Group{Good, Fair, Fair, Poor}, Weight: 1, Actions: acts, Routine: []float64{0, 1000, 3000, penalty},
		}},
	}
}

// policyCost is an independent computation: the long-run cost per period
// of a deterministic policy (action per state), from its stationary
// distribution by gonum's linear solve (markov.SteadyState).
func policyCost(t *testing.T, c *Class, policy []int) (float64, []float64) {
	t.Helper()
	n := len(policy)
	m := mat.NewDense(n, n, nil)
	for i, a := range policy {
		m.SetRow(i, c.Actions[a].Rows[i])
	}
	pi, err := markov.SteadyState(m)
	if err != nil {
		return math.Inf(1), nil
	}
	cost := 0.0
	for i, a := range policy {
		unit := c.Actions[a].Cost[i]
		if a == 0 {
			unit += c.Routine[i]
		}
		cost += pi[i] * unit
	}
	return cost, pi
}

func TestLongRunMachineMaintenance(t *testing.T) {
	p := machineProblem()
	lr, err := SolveLongRun(p)
	if err != nil {
		t.Fatal(err)
	}
	if lr.Status != Optimal {
		t.Fatalf("status %s", lr.Status)
	}
	// Hillier and Lieberman (from memory): optimal policy do nothing in
	// states 0 and 1, overhaul in 2, replace in 3; stationary
	// probabilities 2/21, 5/7, 2/21, 2/21; expected long-run cost
	// 1000·5/7 + 4000·2/21 + 6000·2/21 = 35000/21 ≈ 1666.67 a period.
	// Checked here by enumerating every deterministic policy (policy
	// enumeration, the book's first method) with policyCost.
	best, bestPolicy, _ := machineOptimum(t, &p.Classes[0])
	const book = 35000.0 / 21
	if math.Abs(best-book) > 1e-9*book || bestPolicy[1] != 0 || bestPolicy[2] != 1 || bestPolicy[3] != 2 {
		t.Fatalf("enumeration: best policy %v at %g, book says [0 0 1 2] at %g", bestPolicy, best, book)
	}
	// Tolerances: the tie-break stage (max condition at that cost) may give
	// up 1e-9·max(z, 0.1) of the cost in money units, here the largest unit
	// cost 1e5: about 1e-5 a period, 6e-9 relative; shares may move by that
	// over the cost difference between policies (hundreds), under 1e-7.
	if got := lr.AnnualCost(); math.Abs(got-book) > 1e-7*book {
		t.Errorf("long-run annual cost %.9g, want %.9g", got, book)
	}
	wantPi := []float64{2.0 / 21, 5.0 / 7, 2.0 / 21, 2.0 / 21}
	for i, a := range []int{0, 0, 1, 2} {
		if math.Abs(lr.Distribution[0][i]-wantPi[i]) > 1e-7 {
			t.Errorf("state %d: long-run share %g, want %g", i, lr.Distribution[0][i], wantPi[i])
		}
		if math.Abs(lr.Policy[0][i][a]-wantPi[i]) > 1e-7 {
			t.Errorf("state %d: quantity given action %d is %g, want all of %g", i, a, lr.Policy[0][i][a], wantPi[i])
		}
	}
}

// For a fixed policy (each state given one action) the LP has one feasible
// point, the policy's stationary distribution: it must equal the steady
// state that gonum's linear solve finds (markov.SteadyState).
func TestLongRunFixedPolicyIsSteadyState(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 1982))
	checked := 0
	for c := 0; c < 40; c++ {
		p := randomProblem(rng, randomSpec{classes: 1, states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 1})
		cl := &p.Classes[0]
		n := len(cl.Initial)
		policy := make([]int, n)
		fixed := treatments.Action{Name: treatments.DoNothing, Applies: make([]bool, n), Cost: make([]float64, n), Rows: make([][]float64, n)}
		for i := 0; i < n; i++ {
			var ok []int
			for a := range cl.Actions {
				if cl.Actions[a].Applies[i] {
					ok = append(ok, a)
				}
			}
			policy[i] = ok[rng.IntN(len(ok))]
			fixed.Applies[i] = true
			fixed.Cost[i] = cl.Actions[policy[i]].Cost[i]
			fixed.Rows[i] = cl.Actions[policy[i]].Rows[i]
		}
		_, pi := policyCost(t, &Class{Actions: []treatments.Action{fixed}, Routine: make([]float64, n)}, make([]int, n))
		if pi == nil {
			continue // several closed sets: no unique steady state to compare with
		}
		cl.Actions = []treatments.Action{fixed}
		p.Objective, p.Budget, p.Targets = MinCost, nil, nil
		lr, err := SolveLongRun(p)
		if err != nil {
			t.Fatal(err)
		}
		checked++
		tot := cl.Total()
		for i := range pi {
			// 1e-8 of the total: lp_solve holds each of the up to 7
			// balance rows to its feasibility tolerance of 1e-9, and the
			// errors add up along the chain.
			if math.Abs(lr.Distribution[0][i]/tot-pi[i]) > 1e-8 {
				t.Errorf("case %d state %d: LP %g, steady state %g", c, i, lr.Distribution[0][i]/tot, pi[i])
			}
		}
	}
	if checked < 20 {
		t.Errorf("only %d policies with a unique steady state", checked)
	}
}

// Consistency between the two engines: a finite-horizon min-cost plan that
// starts from the long-run distribution, with the long-run optimum's
// condition as targets every year and Hold at the end, costs per year what
// the long-run plan costs, away from the last years (where the horizon
// ends; the long-run answer has no end). No discounting or escalation, so
// that a year's money is worth the same in both.
func TestFiniteHorizonFromLongRunCostsTheLongRunCost(t *testing.T) {
	p := machineProblem()
	lr, err := SolveLongRun(p)
	if err != nil {
		t.Fatal(err)
	}
	q := machineProblem()
	q.Horizon = 12
	q.Classes[0].Initial = append([]float64(nil), lr.Distribution[0]...)
	for i := range q.Classes[0].Initial {
		q.Classes[0].Initial[i] *= 21 // 21 machines: quantities away from 1
	}
	q.Targets = []Target{{Label: "hold", Class: Network, Kind: Hold}}
	plan, err := Solve(q)
	if err != nil || plan.Status != Optimal {
		t.Fatalf("%v %v", plan.Status, err)
	}
	want := 21 * lr.AnnualCost()
	for y := 0; y < q.Horizon-2; y++ {
		got := plan.Spend[0][y] + plan.Routine[0][y]
		if math.Abs(got-want) > 1e-6*want {
			t.Errorf("year %d: cost %.9g, long-run %.9g", y+1, got, want)
		}
	}
}

// machineOptimum is an independent computation of the machine problem's
// least long-run cost a period: every deterministic policy (an action per
// state) is enumerated and its cost found from its stationary distribution
// (policyCost). It returns the cost, the best policy and its relative
// values h (h of state 0 is 0): g + h(i) = c(i, a(i)) + Σ_j P(i,j) h(j).
func machineOptimum(t *testing.T, c *Class) (float64, []int, []float64) {
	t.Helper()
	best, bestPolicy := math.Inf(1), []int(nil)
	for _, s1 := range []int{0, 2} {
		for _, s2 := range []int{0, 1, 2} {
			for _, s3 := range []int{0, 2} {
				pol := []int{0, s1, s2, s3}
				if cost, _ := policyCost(t, c, pol); cost < best-1e-9 {
					best, bestPolicy = cost, pol
				}
			}
		}
	}
	// The relative values solve (I - P) h + g·1 = c with h(0) = 0: unknowns
	// g, h(1), h(2), h(3).
	n := len(bestPolicy)
	a := mat.NewDense(n, n, nil)
	rhs := mat.NewVecDense(n, nil)
	for i, act := range bestPolicy {
		row := c.Actions[act].Rows[i]
		a.Set(i, 0, 1) // g
		for j := 1; j < n; j++ {
			v := -row[j]
			if i == j {
				v++
			}
			a.Set(i, j, v)
		}
		cost := c.Actions[act].Cost[i]
		if act == 0 {
			cost += c.Routine[i]
		}
		rhs.SetVec(i, cost)
	}
	var sol mat.VecDense
	if err := sol.SolveVec(a, rhs); err != nil {
		t.Fatal(err)
	}
	h := make([]float64, n)
	for j := 1; j < n; j++ {
		h[j] = sol.AtVec(j)
	}
	if math.Abs(sol.AtVec(0)-best) > 1e-9*best {
		t.Fatalf("relative values give g = %g, enumeration %g", sol.AtVec(0), best)
	}
	return best, bestPolicy, h
}

// TestMachineMaintenanceWhateverThePenalty: the machine problem's least
// cost a period is 5000/3 (Hillier and Lieberman, from memory; checked by
// enumerating every policy) however prohibitive the cost of leaving an
// inoperable machine: 1e5 to 1e12 a period. A prohibitive cost is a
// common device for a forbidden state, and must not loosen the answer:
// the long-run plan and a 10-year min-cost plan both give it within 1e-9
// relative.
//
// The 10-year plan starts 21 machines in the optimal policy's stationary
// distribution and holds the condition score at the end at least today's,
// with each state scored by minus its relative value h (scaled onto
// 0-100). For any plan, the 10-year cost is at least 10·21·g + 21·(π·h -
// μ·h), where μ is the end distribution (the relative values satisfy
// g + h(i) <= c(i,a) + Σ_j P(i,j) h(j) for every action, so each year
// costs at least g plus the drop in h), and the hold says μ·h <= π·h:
// so no plan costs less than 10·21·g a year, and the stationary policy,
// which keeps π, costs exactly that. Its yearly average per machine is g.
func TestMachineMaintenanceWhateverThePenalty(t *testing.T) {
	const book = 5000.0 / 3
	for _, penalty := range []float64{1e5, 1e6, 1e8, 1e10, 1e12} {
		t.Run(fmt.Sprintf("penalty %g", penalty), func(t *testing.T) {
			p := machineProblemWith(penalty)
			g, policy, h := machineOptimum(t, &p.Classes[0])
			if math.Abs(g-book) > 1e-12*book {
				t.Fatalf("enumeration: best policy %v at %.12g, the book says %.12g", policy, g, book)
			}
			lr, err := SolveLongRun(p)
			if err != nil || lr.Status != Optimal {
				t.Fatalf("long run: %v %v", lr, err)
			}
			if got := lr.AnnualCost(); math.Abs(got-g) > 1e-9*g {
				t.Errorf("long run: %.12g a period, want %.12g (relative %.2g)", got, g, math.Abs(got-g)/g)
			}

			_, pi := policyCost(t, &p.Classes[0], policy)
			q := machineProblemWith(penalty)
			q.Horizon = 10
			c := &q.Classes[0]
			worst := 0.0
			for _, v := range h {
				worst = math.Max(worst, v)
			}
			for i := range c.Initial {
				c.Initial[i] = 21 * pi[i]
				c.Score[i] = 100 * (1 - h[i]/worst)
			}
			q.Targets = []Target{{Label: "hold", Class: Network, Kind: Hold}}
			plan, err := Solve(q)
			if err != nil || plan.Status != Optimal {
				t.Fatalf("10-year plan: %v %v", plan, err)
			}
			got := (plan.TotalCost + plan.RoutineCost) / (10 * 21)
			if math.Abs(got-g) > 1e-9*g {
				t.Errorf("10-year plan: %.12g a machine a year, want %.12g (relative %.2g)", got, g, math.Abs(got-g)/g)
			}
		})
	}
}
