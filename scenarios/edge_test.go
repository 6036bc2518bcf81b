package scenarios

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"
	"testing/fstest"

	"wearplan/optimize"
	"wearplan/scenarios/scenariotest"
)

// generatedScenario is scenario n of the generated set (package
// scenariotest), drawn from its own seed as the optimizer's agreement test
// draws it.
func generatedScenario(t *testing.T, n int) *Scenario {
	t.Helper()
	data := scenariotest.Generate(rand.New(rand.NewPCG(2027, uint64(n))), n, scenariotest.Spec{})
	sc, err := Parse(fmt.Sprintf("generated%03d.json", n), data)
	if err != nil {
		t.Fatalf("generated scenario %d: %v", n, err)
	}
	return sc
}

// edgeBudgets are the budgets every planner tries sooner or later, for a
// scenario: zero; half the cheapest unit of any treatment (nothing whole
// is affordable); zero in every other year; a millionth of and a trillion
// times the network's replacement value.
func edgeBudgets(t *testing.T, sc *Scenario) map[string][]float64 {
	t.Helper()
	p, err := sc.Problem()
	if err != nil {
		t.Fatal(err)
	}
	cheapest := math.Inf(1)
	for k := range p.Classes {
		for _, a := range p.Classes[k].Actions[1:] {
			for i, ok := range a.Applies {
				if ok && a.Cost[i] > 0 {
					cheapest = math.Min(cheapest, a.Cost[i])
				}
			}
		}
	}
	r, err := Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	if r.Initial.Network.ReplacementValue == nil {
		t.Fatal("no replacement value to scale budgets by")
	}
	value := *r.Initial.Network.ReplacementValue
	level := func(v float64) []float64 {
		out := make([]float64, sc.Horizon)
		for y := range out {
			out[y] = v
		}
		return out
	}
	alternate := level(0)
	for y := 1; y < sc.Horizon; y += 2 {
		alternate[y] = value * 1e-3
	}
	return map[string][]float64{
		"zero":                 level(0),
		"below one unit":       level(cheapest / 2),
		"zero every other":     alternate,
		"1e-6 of the value":    level(value * 1e-6),
		"1e12 times the value": level(value * 1e12),
	}
}

// checkReportedPlan checks what a plan reports against its caps and the
// solver's tolerance: no year spends more than its network cap or any
// group's once rounded to cents (with carry-over: no spend to a year more
// than the caps to that year); a year with nothing to spend lists no work
// that costs money (lp_solve's tolerance once showed as a few hundredths
// of a lane-km under a zero budget); and no work row is below the
// tolerance the plan is cleaned of (a billionth of the class).
func checkReportedPlan(t *testing.T, sc *Scenario, r *Result) {
	t.Helper()
	cents := func(v float64) float64 { return math.Round(v*100) / 100 }
	spent, capped := 0.0, 0.0
	groupSpent, groupCapped := map[string]float64{}, map[string]float64{}
	for _, y := range r.Years {
		spend, limit := y.Spend, math.Inf(1)
		if y.Budget != nil {
			limit = *y.Budget
		}
		if sc.CarryOver {
			spent += spend
			capped += limit
			spend, limit = spent, capped
		}
		if cents(spend) > limit {
			t.Errorf("%d: spend %.2f above the budget %v", y.Year, cents(spend), limit)
		}
		if limit == 0 {
			for _, c := range y.Classes {
				for _, w := range c.Work {
					if w.Cost > 0 {
						t.Errorf("%d: nothing to spend, yet %s %s on %g %s of %s", y.Year, c.Class, w.Treatment, w.Quantity, w.State, c.Class)
					}
				}
			}
		}
		for _, g := range y.Groups {
			spend, limit := g.Spend, g.Budget
			if sc.CarryOver {
				groupSpent[g.Name] += spend
				groupCapped[g.Name] += limit
				spend, limit = groupSpent[g.Name], groupCapped[g.Name]
			}
			if cents(spend) > limit {
				t.Errorf("%d: group %s spends %.2f above its cap %v", y.Year, g.Name, cents(spend), limit)
			}
		}
		for k, c := range y.Classes {
			for _, w := range c.Work {
				if w.Quantity < 1e-9*sc.Classes[k].Total() {
					t.Errorf("%d: %s %s on %s: %g, below a billionth of the class", y.Year, c.Class, w.Treatment, w.State, w.Quantity)
				}
			}
		}
	}
}

// TestEdgeBudgetsGiveAPlan: zero, below one unit, zero in alternate years,
// a millionth and a trillion times the network's replacement value, on
// the demo and on 30 generated scenarios, with each solver setting: every
// one plans; no year spends more than a cap once rounded to cents; no
// reported work is below the solver's tolerance; and the flat model and
// the decomposition agree on the condition score within 1e-6 relative
// (the reference tests' tolerance).
func TestEdgeBudgetsGiveAPlan(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: plans 31 scenarios 15 times")
	}
	var scs []*Scenario
	scs = append(scs, loadDemo(t, "marrowby.yaml"))
	for n := 0; len(scs) < 31; n++ {
		sc := generatedScenario(t, n)
		if sc.RoutineInBudget {
			continue // a zero budget cannot pay routine costs counted against it
		}
		scs = append(scs, sc)
	}
	for n, base := range scs {
		budgets := edgeBudgets(t, base)
		for _, name := range []string{"zero", "below one unit", "zero every other", "1e-6 of the value", "1e12 times the value"} {
			t.Run(fmt.Sprintf("%d %s", n, name), func(t *testing.T) {
				sc := *base
				sc.Budget = budgets[name]
				if sc.Objective == optimize.MinCost && len(sc.Targets) == 0 {
					sc.Objective = optimize.MaxCondition
				}
				score := map[optimize.Method]float64{}
				for _, m := range []optimize.Method{optimize.Auto, optimize.Flat, optimize.Decomposed} {
					r, err := Plan(&sc, Options{Solver: m, SkipFunding: n > 0})
					if err != nil {
						t.Fatalf("%s: %v", m, err)
					}
					checkReportedPlan(t, &sc, r)
					score[m] = r.ConditionScore
				}
				if a, b := score[optimize.Flat], score[optimize.Decomposed]; math.Abs(a-b) > 1e-6*math.Max(math.Abs(a), math.Abs(b)) {
					t.Errorf("condition score: flat %.10g, decomposed %.10g", a, b)
				}
			})
		}
	}
}

// TestSweepPointIsThePlan: a sweep at one budget gives exactly what plan
// gives for the scenario with that level budget and max-condition, on 40
// generated scenarios: the same figures to the last bit (the sweep solves
// each point as plan would, from scratch, by the same method).
func TestSweepPointIsThePlan(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: plans 40 scenarios twice")
	}
	for n := 0; n < 40; n++ {
		sc := generatedScenario(t, n)
		budget := 0.0
		for _, b := range sc.Budget {
			budget = math.Max(budget, b)
		}
		if budget == 0 {
			budget = 1e4
		}
		sw, err := Sweep(sc, []float64{budget}, Options{})
		if err != nil {
			t.Fatalf("scenario %d: %v", n, err)
		}
		pt := sw.Points[0]
		r, err := Plan(SweepScenario(sc, budget), Options{SkipFunding: true})
		if err != nil {
			if pt.Status != "infeasible" || !strings.Contains(pt.Problem, "routine") {
				t.Errorf("scenario %d: plan fails (%v), the sweep point says %s %q", n, err, pt.Status, pt.Problem)
			}
			continue
		}
		last := r.Years[len(r.Years)-1].Network
		want := SweepPoint{Budget: budget, Status: r.Status, ConditionScore: r.ConditionScore, EndPoorShare: last.Shares.Poor, EndAverageIndex: last.AverageIndex,
			EndScore: last.Score, TotalCost: r.TotalCost, PresentValue: r.PresentValue, RoutineCost: r.RoutineCost, Targets: len(r.Targets)}
		for _, o := range r.Targets {
			if o.Met {
				want.TargetsMet++
			}
		}
		a, _ := json.Marshal(pt)
		b, _ := json.Marshal(want)
		if string(a) != string(b) {
			t.Errorf("scenario %d: sweep point\n%s\nplan\n%s", n, a, b)
		}
	}
}

// TestSweepMarksABudgetWithoutAPlan: routine costs counted against the
// budget and a budget below them: that point is marked infeasible, with
// the reason, and the sweep goes on to the budgets that work.
func TestSweepMarksABudgetWithoutAPlan(t *testing.T) {
	sc := loadMachine(t, "budget: {yearly: 1, includes_routine: true}\nobjective: max-condition", 3)
	r, err := Sweep(sc, []float64{10, 1e6}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Points[0].Status != "infeasible" || !strings.Contains(r.Points[0].Problem, "routine") {
		t.Errorf("budget 10: %+v", r.Points[0])
	}
	if r.Points[1].Status != "optimal" || r.Points[1].ConditionScore <= 0 {
		t.Errorf("budget 1e6: %+v", r.Points[1])
	}
	if !strings.Contains(strings.Join(r.Warnings, " "), "budget 10: no plan") {
		t.Errorf("warnings %q do not name the budget", r.Warnings)
	}
}

// loadMachine is the machine-maintenance scenario (testdata) with its
// objective line replaced by text and the horizon set.
func loadMachine(t *testing.T, text string, horizon int) *Scenario {
	t.Helper()
	data, err := os.ReadFile("../testdata/machine-maintenance.yaml")
	if err != nil {
		t.Fatal(err)
	}
	s := strings.Replace(string(data), "objective: min-cost", text, 1)
	s = strings.Replace(s, "horizon: 1", fmt.Sprintf("horizon: %d", horizon), 1)
	sc, err := Load(fstest.MapFS{"m.yaml": {Data: []byte(s)}}, "m.yaml")
	if err != nil {
		t.Fatal(err)
	}
	return sc
}
