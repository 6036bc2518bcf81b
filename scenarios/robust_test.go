package scenarios_test

import (
	"errors"
	"os"
	"strings"
	"testing"
	"testing/fstest"

	"wearplan/scenarios"
)

// fittedScenario is the invented fitted demo (local roads and culverts
// with matrices from a fit of the invented inspections) with the yearly
// budget given.
func fittedScenario(t *testing.T, budget string) *scenarios.Scenario {
	t.Helper()
	scen, err := os.ReadFile("examples/marrowby-fitted.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(scen), "yearly: 2600000", "yearly: "+budget, 1)
	sc, err := scenarios.Load(fstest.MapFS{"s.yaml": {Data: []byte(text)}, "marrowby-fit.yaml": {Data: fitDemo(t)}}, "s.yaml")
	if err != nil {
		t.Fatal(err)
	}
	return sc
}

// With room in the budget the robust plan exists: every target holds
// under every sample (the reported counts come from forecasting its work
// under each sample, optimize.RollWork), its work can be done as written
// in every sample, and planning robustly costs condition under the point
// estimate and money: the least level budget of a robust plan is at least
// the ordinary one. Same seed, same bytes.
func TestPlanRobustFitted(t *testing.T) {
	sc := fittedScenario(t, "4000000")
	ro := scenarios.RobustOptions{Samples: 8, Seed: 3}
	r, err := scenarios.PlanRobust(sc, ro, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	rb := r.Robust
	if rb == nil || !rb.HoldsUnderSamples || len(rb.Plans) != 2 || strings.Join(rb.Drawn, ",") != "local-asphalt,culverts" {
		t.Fatalf("robust %+v", rb)
	}
	robust, point := rb.Plans[0], rb.Plans[1]
	if robust.SamplesMeetingAll != 8 || robust.SamplesShortOfWork != 0 {
		t.Errorf("robust plan under its samples: %d meet every target, %d short of work", robust.SamplesMeetingAll, robust.SamplesShortOfWork)
	}
	if robust.ConditionScore > point.ConditionScore+1e-9 || rb.PriceScore < -1e-9 || r.ConditionScore != robust.ConditionScore {
		t.Errorf("robust score %.4f, point %.4f, price %.4f, result %.4f", robust.ConditionScore, point.ConditionScore, rb.PriceScore, r.ConditionScore)
	}
	if rb.LevelBudget == nil || rb.PointLevelBudget == nil || *rb.LevelBudget < *rb.PointLevelBudget {
		t.Errorf("level budgets: robust %v, point %v", rb.LevelBudget, rb.PointLevelBudget)
	}
	again, err := scenarios.PlanRobust(sc, ro, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if string(jsonOf(t, r)) != string(jsonOf(t, again)) {
		t.Error("the same robust plan twice gave different results")
	}
}

// Robust samples need fitted matrices; bad counts and a confidence target
// are refused with the option named.
func TestPlanRobustRefused(t *testing.T) {
	typed, err := scenarios.LoadFile("../testdata/trial-network.yaml")
	if err != nil {
		t.Fatal(err)
	}
	confident := fittedScenario(t, "4000000")
	confident.Targets[0].Confidence = 0.9
	for _, c := range []struct {
		sc     *scenarios.Scenario
		ro     scenarios.RobustOptions
		option string
		msg    string
	}{
		{typed, scenarios.RobustOptions{Samples: 10}, "robust samples", "a matrix typed into the scenario has no sampling distribution"},
		{typed, scenarios.RobustOptions{Samples: 1}, "robust samples", "between 2 and 200"},
		{typed, scenarios.RobustOptions{Samples: 10, From: "jackknife"}, "robust matrices", "choose bootstrap or dirichlet"},
		{confident, scenarios.RobustOptions{Samples: 10}, "robust samples", "states a confidence"},
	} {
		_, err := scenarios.PlanRobust(c.sc, c.ro, scenarios.Options{})
		var re *scenarios.OptionError
		if !errors.As(err, &re) || re.Option != c.option || !strings.Contains(re.Msg, c.msg) {
			t.Errorf("%+v: %v", c.ro, err)
		}
	}
}
