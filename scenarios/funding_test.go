package scenarios

import (
	"errors"
	"math"
	"os"
	"strings"
	"testing"
	"testing/fstest"
)

const demoDir = "examples"

func loadDemo(t *testing.T, name string) *Scenario {
	t.Helper()
	sc, err := Load(os.DirFS(demoDir), name)
	if err != nil {
		t.Fatal(err)
	}
	return sc
}

// The reduced-funding alternative misses the poor-share target; the extra
// money the diagnosis reports, added to the budget, must make the plan
// optimal (docs/model.md, Funding questions: the extra money that closes the shortfall).
func TestExtraMoneyClosesTheDemoShortfall(t *testing.T) {
	sc := loadDemo(t, "marrowby-reduced.yaml")
	r, err := Plan(sc, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != "targets-not-met" || r.Funding == nil || len(r.Funding.ExtraMoney) == 0 {
		t.Fatalf("status %s, funding %+v: the reduced demo should miss its target and report extra money", r.Status, r.Funding)
	}
	more := *sc
	more.Budget = append([]float64(nil), sc.Budget...)
	for _, ym := range r.Funding.ExtraMoney {
		more.Budget[ym.Year-sc.StartYear] += ym.Amount
	}
	r2, err := Plan(&more, Options{SkipFunding: true})
	if err != nil {
		t.Fatal(err)
	}
	if r2.Status != "optimal" {
		t.Errorf("with the extra money the plan is %s", r2.Status)
	}
}

// min-cost with targets reports the least level budget; fed back as the
// budget (max-condition under it) the targets hold.
func TestLevelBudgetFedBackToTheDemo(t *testing.T) {
	sc := loadDemo(t, "marrowby.yaml")
	sc.Budget, sc.Objective = nil, 1 // min-cost, no cap
	r, err := Plan(sc, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Funding == nil || r.Funding.LevelBudget == nil {
		t.Fatalf("min-cost plan without a level budget: %+v", r.Funding)
	}
	level := *r.Funding.LevelBudget
	fed := *sc
	fed.Budget = make([]float64, sc.Horizon)
	for y := range fed.Budget {
		fed.Budget[y] = level
	}
	fed.Objective = 0 // max-condition
	r2, err := Plan(&fed, Options{SkipFunding: true})
	if err != nil {
		t.Fatal(err)
	}
	if r2.Status != "optimal" {
		t.Errorf("level budget %g fed back gives %s", level, r2.Status)
	}
	for y := range fed.Budget {
		fed.Budget[y] = 0.97 * level
	}
	r3, err := Plan(&fed, Options{SkipFunding: true})
	if err != nil {
		t.Fatal(err)
	}
	if r3.Status == "optimal" {
		t.Errorf("97%% of the least level budget %g still meets the targets", level)
	}
}

// Routine costs counted against a budget smaller than they are: a clear
// input error naming budget.yearly, how much more is needed, and the fix.
func TestRoutineOverBudgetIsAClearError(t *testing.T) {
	data, err := os.ReadFile("../testdata/machine-maintenance.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(data), "objective: min-cost", "budget: {yearly: 10, includes_routine: true}\nobjective: max-condition", 1)
	text = strings.Replace(text, "inventory: {good as new: 1}", "inventory: {inoperable: 1}", 1)
	text = strings.Replace(text, "horizon: 1", "horizon: 3", 1)
	sc, err := Load(fstest.MapFS{"m.yaml": {Data: []byte(text)}}, "m.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, err = Plan(sc, Options{})
	var ie *InputError
	if !errors.As(err, &ie) {
		t.Fatalf("want an input error, got %v", err)
	}
	msg := err.Error()
	for _, want := range []string{"m.yaml", "budget.yearly", "includes_routine", "2027: "} {
		if !strings.Contains(msg, want) {
			t.Errorf("message lacks %q:\n%s", want, msg)
		}
	}
}

func TestWorstFirstForecast(t *testing.T) {
	sc := loadDemo(t, "marrowby.yaml")
	r, err := ForecastRule(sc, WorstFirst)
	if err != nil {
		t.Fatal(err)
	}
	for _, y := range r.Years {
		if y.Spend > *y.Budget*(1+1e-12) {
			t.Errorf("%d: spend %g above budget %g", y.Year, y.Spend, *y.Budget)
		}
	}
	nothing, err := Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	// Spending money on improving treatments must beat doing nothing
	// (common practice, no source: any repair beats none).
	if r.ConditionScore <= nothing.ConditionScore {
		t.Errorf("worst-first score %g not above do-nothing %g", r.ConditionScore, nothing.ConditionScore)
	}
	plan, err := Plan(sc, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// The same rule computed twice, summed in a different order: 1e-9.
	if plan.Baseline == nil || math.Abs(plan.Baseline.ConditionScore-r.ConditionScore) > 1e-9 {
		t.Errorf("plan baseline %+v, worst-first forecast score %g", plan.Baseline, r.ConditionScore)
	}
}
