package optimize

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"strings"
	"testing"

	"wearplan/optimize/optimizetest"
)

// agreementProblem draws a random scenario for the decomposition checks:
// up to 6 classes, budgets that bind, some with years without a cap,
// carry-over, group budgets, no budget at all, targets that can and cannot
// be met, both objectives.
func agreementProblem(rng *rand.Rand, c int) *Problem {
	spec := randomSpec{classes: 1 + rng.IntN(6), states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(10), targets: c%2 == 1, budgetShare: 0.03 + 0.3*rng.Float64()}
	if c%7 == 3 {
		spec.budgetShare = 0 // min-cost with no cap (targets or nothing)
	}
	p := randomProblem(rng, spec)
	switch c % 5 {
	case 1:
		p.CarryOver = true
	case 2:
		if p.Budget != nil {
			p.Budget[rng.IntN(len(p.Budget))] = math.Inf(1)
		}
	case 3:
		if len(p.Classes) > 1 && p.Budget != nil {
			g := GroupBudget{Name: "g", Classes: []int{0, len(p.Classes) - 1}, Yearly: make([]float64, p.Horizon)}
			for t := range g.Yearly {
				g.Yearly[t] = p.Budget[t] * 0.3
			}
			p.GroupBudgets = append(p.GroupBudgets, g)
		}
	case 4:
		if len(p.Targets) > 0 {
			// Out of reach: almost nothing poor from the first year.
			p.Targets = append(p.Targets, Target{Label: "strict poor", Class: Network, Kind: MaxShare, Group: Poor, Value: 0.01 * rng.Float64(), From: 1, To: p.Horizon})
		}
	}
	if c%11 == 5 {
		// Max-condition with money for everything: bounded only by the
		// scale's best state.
		p.Budget, p.GroupBudgets, p.Objective = nil, nil, MaxCondition
	}
	if c%4 == 0 {
		// Routine costs rising with wear, counted against the budget in
		// every other such case; the caps grow by the most that doing
		// nothing could cost, so that the budgets alone always hold, except
		// in every other of those, where they grow by a part of it only:
		// doing nothing overspends, and either some work keeps the
		// budgets or nothing does (an infeasible plan).
		p.RoutineInBudget = c%8 == 0
		most := 0.0
		for k := range p.Classes {
			cl := &p.Classes[k]
			cl.Routine = make([]float64, len(cl.Initial))
			for i := range cl.Routine {
				cl.Routine[i] = 3 * float64(i)
			}
			most += cl.Routine[len(cl.Routine)-1] * cl.Total()
		}
		if c%16 == 8 {
			most *= 0.2 * float64(c/16)
		}
		if p.RoutineInBudget {
			for t := range p.Budget {
				p.Budget[t] += most * p.escalation(t)
			}
			for g := range p.GroupBudgets {
				for t := range p.GroupBudgets[g].Yearly {
					p.GroupBudgets[g].Yearly[t] += most * p.escalation(t)
				}
			}
		}
	}
	return p
}

// totalShortfall sums a plan's shortfalls on the model's 0-1 scale.
func totalShortfall(p *Problem, plan *Plan) float64 {
	s := 0.0
	for _, sf := range plan.Shortfalls {
		v := sf.Amount
		if k := p.Targets[sf.Target].Kind; k == MinScore || k == Hold {
			v /= 100
		}
		s += v
	}
	return s
}

// TestDecomposedAgreesWithFlat: on 60 random scenarios (a quarter with
// routine costs, half of those counted against the budget, some of those
// with budgets that doing nothing overspends: kept by some work, or by
// none), the decomposition and the flat LP solved by lp_solve (the
// reference path, itself checked against GLPK's glpsol in
// TestAgreesWithGLPK) agree on the status (optimal, targets not met,
// infeasible), the
// least total shortfall, the primary optimum within 1e-6 relative and the
// tie-broken secondary objective within 1e-5 relative; the decomposed
// plan keeps every invariant of TestPlanInvariants.
func TestDecomposedAgreesWithFlat(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 2027))
	const cases = 60
	var optimal, notMet, infeasible, carry, groups, multi int
	for c := 0; c < cases; c++ {
		p := agreementProblem(rng, c)
		if p.CarryOver {
			carry++
		}
		if len(p.GroupBudgets) > 0 {
			groups++
		}
		if len(p.Classes) > 3 {
			multi++
		}
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
			switch dec.Status {
			case Infeasible:
				infeasible++
				return // no plan to compare
			case Optimal:
				optimal++
			case TargetsNotMet:
				notMet++
				if a, b := totalShortfall(p, dec), totalShortfall(p, flat); math.Abs(a-b) > 1e-6*math.Max(1, b) {
					t.Errorf("total shortfall %.10g, flat %.10g", a, b)
				}
			}
			// Objectives as the model measures them (score on 0-1, money
			// in the model's unit), so that "relative" means relative to
			// the model's scale even where an optimum is near zero.
			mu := newBuilder(p).moneyUnit
			prim := [2]float64{dec.ConditionScore / 100, flat.ConditionScore / 100}
			// Life-cycle cost: treatments and routine cost.
			sec := [2]float64{(dec.PresentValue + dec.RoutinePresentValue) / mu, (flat.PresentValue + flat.RoutinePresentValue) / mu}
			if p.Objective == MinCost {
				prim, sec = sec, prim
			}
			if !relClose(prim[0], prim[1], 1e-6) {
				t.Errorf("%s optimum %.12g, flat %.12g", p.Objective, prim[0], prim[1])
			}
			if !relClose(sec[0], sec[1], 1e-5) {
				t.Errorf("tie-break objective %.12g, flat %.12g", sec[0], sec[1])
			}
			checkConservation(t, c, p, dec)
			checkBudget(t, c, p, dec)
			if dec.Status == Optimal {
				checkTargets(t, c, p, dec)
			}
			t.Logf("%d classes, %d years: %s, %d rounds, %d policies, gap %.2g", len(p.Classes), p.Horizon, dec.Status, dec.Stats.Iterations, dec.Stats.Columns, dec.Stats.Gap)
		})
	}
	if optimal < 20 || notMet < 8 || infeasible < 1 || carry < 5 || groups < 3 || multi < 15 {
		t.Errorf("coverage: %d optimal, %d targets-not-met, %d infeasible, %d carry-over, %d group budgets, %d with 4-6 classes; the generator no longer covers the cases", optimal, notMet, infeasible, carry, groups, multi)
	}
}

// TestWarmStartSameOptimumFewerRounds: a budget sweep solved with a Warm
// reaches the same optima (within 1e-6 relative, against cold solves) with
// fewer master solves in total (a cold solve of a small model also runs
// the cheap pricing rounds of the Lagrangian warm-up, so master solves, the
// dear part, are what a warm start must save). The model has targets, the
// case the what-if page warm-starts most: without them a cold solve's
// warm-up already proves most points in a few master solves (6 classes,
// 12 years: 67 cold, 71 warm).
func TestWarmStartSameOptimumFewerRounds(t *testing.T) {
	base := Generate(rand.New(rand.NewPCG(5, 5)), GenSpec{Classes: 12, States: 6, Treatments: 4, Years: 20, Targets: true, BudgetShare: 0.1})
	var warm Warm
	coldRounds, warmRounds := 0, 0
	for step := 0; step < 6; step++ {
		p := *base
		p.Budget = make([]float64, len(base.Budget))
		for y := range p.Budget {
			p.Budget[y] = base.Budget[y] * (0.5 + 0.25*float64(step))
		}
		cold, err := SolveWith(&p, Options{Method: Decomposed})
		if err != nil {
			t.Fatal(err)
		}
		hot, err := SolveWith(&p, Options{Method: Decomposed, Warm: &warm})
		if err != nil {
			t.Fatal(err)
		}
		if !relClose(hot.ConditionScore, cold.ConditionScore, 1e-6) {
			t.Errorf("step %d: warm score %.12g, cold %.12g", step, hot.ConditionScore, cold.ConditionScore)
		}
		coldRounds += cold.Stats.Solves
		if step > 0 {
			warmRounds += hot.Stats.Solves
		} else {
			coldRounds -= cold.Stats.Solves
		}
	}
	if warm.Policies() == 0 {
		t.Fatal("the Warm kept no policies")
	}
	if warmRounds >= coldRounds {
		t.Errorf("warm sweep took %d master solves, cold %d", warmRounds, coldRounds)
	}
	t.Logf("master solves after the first point: warm %d, cold %d", warmRounds, coldRounds)
}

// TestDecomposedIsDeterministic: the same problem gives the same plan bit
// for bit, whatever the number of cores pricing runs on: a small model
// (priced on one core, with the Lagrangian warm-up) and one large enough
// to be priced on all cores.
func TestDecomposedIsDeterministic(t *testing.T) {
	for _, spec := range []GenSpec{
		{Classes: 7, States: 5, Treatments: 3, Years: 10, Targets: true, BudgetShare: 0.1},
		{Classes: 40, States: 7, Treatments: 5, Years: 30, Targets: true, BudgetShare: 0.1},
	} {
		p := Generate(rand.New(rand.NewPCG(3, 1)), spec)
		parallel := newDecomposer(p, Options{}).pricingWork >= parallelPricingWork
		if big := spec.Classes > 10; big != parallel {
			t.Fatalf("%v: priced in parallel %v; the test wants one model each way", spec, parallel)
		}
		first, err := SolveWith(p, Options{Method: Decomposed})
		if err != nil {
			t.Fatal(err)
		}
		for _, procs := range []int{1, 2, 5} {
			prev := setProcs(procs)
			again, err := SolveWith(p, Options{Method: Decomposed})
			setProcs(prev)
			if err != nil {
				t.Fatal(err)
			}
			if fmt.Sprint(again.Work, again.Condition, again.Spend, again.Shortfalls) != fmt.Sprint(first.Work, first.Condition, first.Spend, first.Shortfalls) {
				t.Fatalf("%v, GOMAXPROCS=%d: a different plan", spec, procs)
			}
		}
	}
}

// TestIterationCapFallsBack: a cap too small to prove the gap stops the
// decomposition with an error that names the cap and the gap reached,
// beside a plan that keeps every budget; SolveWith then answers with the
// flat model (the same optimum as an uncapped decomposition, within 1e-6),
// and says so in Stats.Path.
func TestIterationCapFallsBack(t *testing.T) {
	p := Generate(rand.New(rand.NewPCG(1, 1)), GenSpec{Classes: 4, States: 5, Treatments: 4, Years: 20, BudgetShare: 0.15})
	capped, err := solveDecomposed(p, Options{Method: Decomposed, MaxIterations: 2})
	if !errors.Is(err, ErrIterationCap) || capped == nil {
		t.Fatalf("error %v, plan %v: want the iteration cap and its plan", err, capped != nil)
	}
	if strings.Contains(err.Error(), "--") || strings.Contains(err.Error(), "Options") {
		t.Errorf("a domain error names a flag or an option field: %v", err)
	}
	checkBudget(t, 0, p, capped)
	plan, err := SolveWith(p, Options{Method: Decomposed, MaxIterations: 2})
	if err != nil {
		t.Fatal(err)
	}
	if plan.Stats.Method != Flat.String() || !strings.Contains(plan.Stats.Path, "decomposed") {
		t.Errorf("method %q, path %q: want the flat model after the decomposition", plan.Stats.Method, plan.Stats.Path)
	}
	full, err := SolveWith(p, Options{Method: Decomposed})
	if err != nil {
		t.Fatal(err)
	}
	if !relClose(plan.ConditionScore, full.ConditionScore, 1e-6) || capped.ConditionScore > full.ConditionScore*(1+1e-9) {
		t.Errorf("scores: fallback %.10g, capped %.10g, uncapped decomposition %.10g", plan.ConditionScore, capped.ConditionScore, full.ConditionScore)
	}
	t.Log(capped.Stats.Gap, plan.Stats.Path)
}

func setProcs(n int) int { return runtime.GOMAXPROCS(n) }

// TestDecomposedMatchesGLPKOnLargeModel: on a generated 60 x 10 x 8 x 40
// network (70,720 flat columns, 24,040 rows), the decomposition's optimum
// equals GLPK 5.0's glpsol (Debian package glpk-utils) on the exported flat
// model within 1e-6 relative. glpsol's interior-point method takes about 5 s
// here (its simplex 26-38 s on this machine): the interior point is the
// default, WEARPLAN_LARGE_REFERENCE=simplex asks for the simplex. Skipped
// with -short.
func TestDecomposedMatchesGLPKOnLargeModel(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: skipping the 60 x 10 x 8 x 40 reference solve")
	}
	optimizetest.RequireTool(t, "glpsol")
	p := Generate(rand.New(rand.NewPCG(1, 1)), GenSpec{Classes: 60, States: 10, Treatments: 8, Years: 40, BudgetShare: 0.15})
	m, err := BuildModel(p)
	if err != nil {
		t.Fatal(err)
	}
	options, kind := []string{"--interior"}, "ipt"
	if os.Getenv("WEARPLAN_LARGE_REFERENCE") == "simplex" {
		options, kind = nil, "bas"
	}
	want, optimal, _ := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, m, "large"), options...)
	if !optimal {
		t.Fatalf("glpsol (%s) did not reach an optimum: objective %g", kind, want)
	}
	want = -want // a maximisation is written as the minimisation of its negation
	plan, err := SolveWith(p, Options{Method: Decomposed})
	if err != nil {
		t.Fatal(err)
	}
	got := plan.ConditionScore / 100
	if !relClose(got, want, 1e-6) {
		t.Errorf("decomposed optimum %.12g, glpsol (%s) %.12g", got, kind, want)
	}
	t.Logf("decomposed %.12g, glpsol (%s) %.12g: %d rounds, %d policies", got, kind, want, plan.Stats.Iterations, plan.Stats.Columns)
}

// TestNoFlatFallbackPastItsSize: a decomposition stopped by its iteration
// cap on a network whose flat model lp_solve cannot finish in a minute
// (60x10x8x40, 70,720 columns; docs/benchmarks.md) returns its own plan
// with a warning of the gap it proved, without trying the flat model (a
// flat try would take minutes; this test would time out).
func TestNoFlatFallbackPastItsSize(t *testing.T) {
	p := Generate(rand.New(rand.NewPCG(1, 1)), GenSpec{Classes: 60, States: 10, Treatments: 8, Years: 40, BudgetShare: 0.15})
	if flatColumns(p) <= flatFallbackColumns {
		t.Fatalf("%d flat columns: the flat model would be tried", flatColumns(p))
	}
	plan, err := SolveWith(p, Options{Method: Decomposed, MaxIterations: 3})
	if err != nil {
		t.Fatal(err)
	}
	if plan.Stats.Method != Decomposed.String() || !(plan.Stats.Gap > RelativeGap) || len(plan.Warnings) != 1 {
		t.Fatalf("method %s, gap %.2g, warnings %q: want the decomposition's capped plan with one warning", plan.Stats.Method, plan.Stats.Gap, plan.Warnings)
	}
	t.Log(plan.Warnings[0])
}
