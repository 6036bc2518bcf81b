package optimize

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"wearplan/optimize/optimizetest"
)

// Class guardrails: targets on a set of states of one class, holds on one
// class, and least spends (ring-fenced money) on one class or two.

// policySpend is the yearly spend (as the budget rows count it) of class k
// when it keeps giving its first treatment to every state that treatment
// applies to (treat) or does nothing (!treat).
func policySpend(p *Problem, k int, treat bool) []float64 {
	c := &p.Classes[k]
	q := append([]float64(nil), c.Initial...)
	out := make([]float64, p.Horizon)
	for t := range out {
		next := make([]float64, len(q))
		for i, v := range q {
			a := 0
			if treat && len(c.Actions) > 1 && c.Actions[1].Applies[i] {
				a = 1
			}
			cost := c.Actions[a].Cost[i]
			if a == 0 && p.RoutineInBudget && c.Routine != nil {
				cost += c.Routine[i]
			}
			out[t] += v * cost * p.escalation(t)
			for j, pj := range c.Actions[a].Rows[i] {
				next[j] += v * pj
			}
		}
		q = next
	}
	return out
}

// addGuardrails puts class guardrails on a generated problem: at most a
// share of one class in its worst state (or its two worst), sometimes at
// least a share in its best state in the last year, a hold on one class,
// and a least spend on one class or two. The least spend is at most what a
// plan that mixes "treat the best states with the first treatment" and
// "do nothing" spends on those classes while every cap holds, so the
// budgets alone never make it infeasible (targets may still be missed).
func addGuardrails(rng *rand.Rand, p *Problem) {
	K, H := len(p.Classes), p.Horizon
	k := rng.IntN(K)
	ns := len(p.Classes[k].Initial)
	worst := make([]bool, ns)
	worst[ns-1] = true
	if rng.IntN(3) == 0 {
		worst[ns-2] = true
	}
	p.Targets = append(p.Targets, Target{Label: "worst states", Class: k, Kind: MaxShare, States: worst, Value: 0.02 + 0.25*rng.Float64(), From: 1 + rng.IntN(H), To: H})
	if rng.IntN(3) == 0 {
		k := rng.IntN(K)
		best := make([]bool, len(p.Classes[k].Initial))
		best[0] = true
		p.Targets = append(p.Targets, Target{Label: "best state", Class: k, Kind: MinShare, States: best, Value: 0.05 + 0.2*rng.Float64(), From: H, To: H})
	}
	p.Targets = append(p.Targets, Target{Label: "class hold", Class: rng.IntN(K), Kind: Hold})

	classes := []int{rng.IntN(K)}
	if K > 1 && rng.IntN(3) == 0 {
		classes = append(classes, (classes[0]+1)%K)
	}
	in := make([]bool, K)
	for _, c := range classes {
		in[c] = true
	}
	// Per class, the spend of doing nothing and of treating; summed over
	// the least spend's classes.
	idle, busy := make([][]float64, K), make([][]float64, K)
	treat, nothing := make([]float64, H), make([]float64, H)
	for c := range p.Classes {
		idle[c], busy[c] = policySpend(p, c, false), policySpend(p, c, true)
		if in[c] {
			for t := range treat {
				treat[t] += busy[c][t]
				nothing[t] += idle[c][t]
			}
		}
	}
	// The largest mixing weight lam of "treat" that keeps every cap:
	// lam·(treat - nothing) ≤ cap - (everything doing nothing).
	lam := 0.6
	limit := func(caps []float64, covers func(int) bool) {
		for t, cap := range caps {
			if math.IsInf(cap, 1) {
				continue
			}
			free, more := cap, 0.0
			for c := range p.Classes {
				if covers(c) {
					free -= idle[c][t]
				}
			}
			for _, c := range classes {
				if covers(c) {
					more += busy[c][t] - idle[c][t]
				}
			}
			if free < 0 {
				lam = -1 // doing nothing overspends: no least spend
			} else if more > 0 {
				lam = math.Min(lam, free/more)
			}
		}
	}
	if p.Budget != nil {
		limit(p.Budget, func(int) bool { return true })
	}
	for _, g := range p.GroupBudgets {
		limit(g.Yearly, func(c int) bool {
			for _, gc := range g.Classes {
				if gc == c {
					return true
				}
			}
			return false
		})
	}
	if lam < 0 {
		return
	}
	frac := 0.5 + 0.5*rng.Float64()
	m := MinSpend{Name: "ring-fenced", Classes: classes, Yearly: make([]float64, H)}
	for t := range m.Yearly {
		m.Yearly[t] = frac * (lam*treat[t] + (1-lam)*nothing[t])
	}
	p.MinSpends = append(p.MinSpends, m)
}

// checkMinSpend: every least spend holds in every year, to 1e-7 of the
// amount (money is held to about 1e-9 of the model's unit).
func checkMinSpend(t *testing.T, c int, p *Problem, plan *Plan) {
	t.Helper()
	for _, m := range p.MinSpends {
		for y, least := range m.Yearly {
			s := 0.0
			for _, k := range m.Classes {
				s += plan.Spend[k][y]
				if p.RoutineInBudget {
					s += plan.Routine[k][y]
				}
			}
			if s < least*(1-1e-7)-1e-6 {
				t.Errorf("case %d %s year %d: spend %g below the least spend %g", c, m.Name, y+1, s, least)
			}
		}
	}
}

// TestGuardrailsAgree: on 30 generated scenarios with a state-share target,
// a class hold and a least spend each (on top of the decomposition's
// agreement problems: carry-over, group budgets, routine costs, targets out
// of reach), the flat LP, the decomposition and GLPK 5.0's glpsol (Debian
// package glpk-utils, an independent simplex code) on the exported flat
// model agree: on the status (glpsol finds the primary model infeasible
// exactly when wearplan reports targets not met or an infeasible plan), on
// the primary optimum within 1e-6 relative and on the least total
// shortfall; and both wearplan plans keep every cap, every least spend and,
// when optimal, every target (TestPlanInvariants' checks).
func TestGuardrailsAgree(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	rng := rand.New(rand.NewPCG(14, 2027))
	const cases = 30
	var optimal, notMet, floorBinds, stateBinds int
	for c := 0; c < cases; c++ {
		p := agreementProblem(rng, c)
		addGuardrails(rng, p)
		t.Run(fmt.Sprintf("case%02d", c), func(t *testing.T) {
			flat, err := Solve(p)
			if err != nil {
				t.Fatalf("flat: %v", err)
			}
			dec, err := SolveWith(p, Options{Method: Decomposed})
			if err != nil {
				t.Fatalf("decomposed: %v", err)
			}
			if dec.Status != flat.Status {
				t.Fatalf("status %s, flat %s (shortfall %g vs %g)", dec.Status, flat.Status, totalShortfall(p, dec), totalShortfall(p, flat))
			}
			m, err := BuildModel(p)
			if err != nil {
				t.Fatal(err)
			}
			ref, refOptimal, refFeasible := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, m, "guard"))
			if m.Maximize {
				ref = -ref
			}
			switch flat.Status {
			case Infeasible:
				if refFeasible {
					t.Fatalf("wearplan infeasible, glpsol feasible (objective %g)", ref)
				}
				return
			case TargetsNotMet:
				notMet++
				if refFeasible {
					t.Fatalf("targets not met, but glpsol meets them all (objective %g)", ref)
				}
				if a, b := totalShortfall(p, dec), totalShortfall(p, flat); math.Abs(a-b) > 1e-6*math.Max(1, b) {
					t.Errorf("total shortfall %.10g, flat %.10g", a, b)
				}
			case Optimal:
				optimal++
				if !refOptimal {
					t.Fatalf("wearplan optimal, glpsol not (feasible %t)", refFeasible)
				}
				mu := newBuilder(p).moneyUnit
				got := [2]float64{flat.ConditionScore / 100, dec.ConditionScore / 100}
				if p.Objective == MinCost {
					got = [2]float64{(flat.PresentValue + flat.RoutinePresentValue) / mu, (dec.PresentValue + dec.RoutinePresentValue) / mu}
				}
				if !relClose(got[0], ref, 1e-6) || !relClose(got[1], ref, 1e-6) {
					t.Errorf("%s optimum: flat %.12g, decomposed %.12g, glpsol %.12g", p.Objective, got[0], got[1], ref)
				}
				checkTargets(t, c, p, flat)
				checkTargets(t, c, p, dec)
			}
			for _, plan := range []*Plan{flat, dec} {
				checkConservation(t, c, p, plan)
				checkBudget(t, c, p, plan)
				checkMinSpend(t, c, p, plan)
			}
			// Coverage: does a least spend or a state target bind the flat plan?
			floor, state := false, false
			for _, ms := range p.MinSpends {
				for y, least := range ms.Yearly {
					s := 0.0
					for _, k := range ms.Classes {
						s += flat.Spend[k][y]
						if p.RoutineInBudget {
							s += flat.Routine[k][y]
						}
					}
					floor = floor || (least > 0 && s < least*(1+1e-6))
				}
			}
			for _, tg := range p.Targets {
				if tg.States == nil {
					continue
				}
				for y := tg.From; y <= tg.To; y++ {
					state = state || math.Abs(tg.ShareOf(&p.Classes[tg.Class], flat.Condition[tg.Class][y])-tg.Value) < 1e-6
				}
			}
			if floor {
				floorBinds++
			}
			if state {
				stateBinds++
			}
		})
	}
	t.Logf("%d optimal, %d targets not met; a least spend binds in %d, a state target in %d", optimal, notMet, floorBinds, stateBinds)
	if optimal < 8 || notMet < 5 || floorBinds < 5 || stateBinds < 5 {
		t.Errorf("coverage: %d optimal, %d targets not met, %d with a binding least spend, %d with a binding state target; the generator no longer covers the cases", optimal, notMet, floorBinds, stateBinds)
	}
}

// TestLongRunGuardrailsAgreeWithGLPK: the steady-state LP with a state
// target, a class hold and a least spend (its first year's amount as an
// annual floor) reaches the optimum that GLPK 5.0's glpsol (Debian package
// glpk-utils) finds on the same model written as free MPS, within 1e-6
// relative; the policy keeps the least spend, and when optimal the state
// target (measured on its long-run distribution).
func TestLongRunGuardrailsAgreeWithGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	rng := rand.New(rand.NewPCG(15, 1982))
	optimal := 0
	for c := 0; c < 15; c++ {
		p := randomProblem(rng, randomSpec{classes: 1 + rng.IntN(4), states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 5, targets: c%2 == 0, budgetShare: 0.1 + 0.3*rng.Float64()})
		addGuardrails(rng, p)
		t.Run(fmt.Sprintf("case%02d", c), func(t *testing.T) {
			lr, err := SolveLongRun(p)
			if err != nil {
				t.Fatal(err)
			}
			// The same model as SolveLongRun builds, for glpsol.
			b := &longRunBuilder{p: p, weights: p.Weights(), pairs: newLayout(p).pairs, base: make([]int, len(p.Classes)), terms: make([]classTerms, len(p.Classes))}
			next := 0
			for k := range p.Classes {
				b.base[k] = next
				next += len(b.pairs[k])
				b.terms[k] = termsOf(&p.Classes[k], b.pairs[k])
			}
			b.moneyUnit = moneyUnit(p, b.terms)
			m := b.build()
			ref, refOptimal, refFeasible := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, m, "longrun"))
			if lr.Status != Optimal {
				if refFeasible {
					t.Fatalf("long run %s, glpsol feasible (objective %g)", lr.Status, ref)
				}
				return
			}
			optimal++
			if !refOptimal {
				t.Fatalf("long run optimal, glpsol not (feasible %t)", refFeasible)
			}
			got := lr.AnnualCost() / b.moneyUnit
			if p.Objective == MaxCondition {
				got, ref = lr.Score/100, -ref
			}
			if !relClose(got, ref, 1e-6) {
				t.Errorf("%s optimum %.12g, glpsol %.12g", p.Objective, got, ref)
			}
			for _, ms := range p.MinSpends {
				s := 0.0
				for _, k := range ms.Classes {
					s += lr.Treatment[k]
					if p.RoutineInBudget {
						s += lr.Routine[k]
					}
				}
				if s < ms.Yearly[0]*(1-1e-7)-1e-6 {
					t.Errorf("annual spend %g below the least spend %g", s, ms.Yearly[0])
				}
			}
			for _, tg := range p.Targets {
				if tg.States == nil {
					continue
				}
				v := tg.ShareOf(&p.Classes[tg.Class], lr.Distribution[tg.Class])
				if (tg.Kind == MaxShare && v > tg.Value+1e-7) || (tg.Kind == MinShare && v < tg.Value-1e-7) {
					t.Errorf("%s: long-run share %g against %g", tg.Label, v, tg.Value)
				}
			}
		})
	}
	if optimal < 5 {
		t.Errorf("only %d optimal long-run cases", optimal)
	}
}

// TestLevelBudgetHonoursGuardrails: the least level budget of a problem
// with guardrails, fed back as the network budget, gives a plan that meets
// every target and keeps every least spend (the definition of the least
// level budget; see TestLevelBudgetFedBackIsOptimal).
func TestLevelBudgetHonoursGuardrails(t *testing.T) {
	rng := rand.New(rand.NewPCG(16, 2027))
	checked := 0
	for c := 0; c < 20; c++ {
		p := randomProblem(rng, randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(3), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(6), targets: true, budgetShare: 0.2})
		addGuardrails(rng, p)
		level, err := LevelBudget(p)
		if errors.Is(err, ErrUnreachable) {
			continue
		}
		if err != nil {
			t.Fatalf("case %d: %v", c, err)
		}
		checked++
		q := *p
		q.Budget = constant(level, p.Horizon)
		plan, err := Solve(&q)
		if err != nil {
			t.Fatal(err)
		}
		if plan.Status != Optimal {
			t.Errorf("case %d: level budget %g fed back gives %s", c, level, plan.Status)
			continue
		}
		checkTargets(t, c, &q, plan)
		checkMinSpend(t, c, &q, plan)
	}
	if checked < 8 {
		t.Errorf("only %d reachable cases", checked)
	}
}
