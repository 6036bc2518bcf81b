package scenariotest_test

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"wearplan/scenarios"
	"wearplan/scenarios/scenariotest"
)

// Every generated scenario is valid input, and together they use every
// option the generator promises.
func TestGeneratedScenariosAreValid(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	seen := map[string]int{}
	for n := 0; n < 300; n++ {
		data := scenariotest.Generate(rng, n, scenariotest.Spec{})
		sc, err := scenarios.Parse(fmt.Sprintf("gen%d.json", n), data)
		if err != nil {
			t.Fatalf("scenario %d: %v\n%s", n, err, data)
		}
		p, err := sc.Problem()
		if err != nil {
			t.Fatalf("scenario %d: %v", n, err)
		}
		seen["objective "+sc.Objective.String()]++
		if p.Budget != nil {
			seen["budget"]++
		}
		if p.CarryOver {
			seen["carry-over"]++
		}
		if p.RoutineInBudget {
			seen["routine in budget"]++
		}
		if len(p.GroupBudgets) > 0 {
			seen["groups"]++
		}
		if p.DiscountRate > 0 && p.Escalation > 0 {
			seen["discount and escalation"]++
		}
		for _, c := range sc.Classes {
			if c.Routine != nil {
				seen["routine costs"]++
			}
			if c.Scale.Best < c.Scale.Worst {
				seen["lower is better"]++
			}
		}
		for _, tg := range p.Targets {
			seen[fmt.Sprintf("target kind %d", tg.Kind)]++
		}
	}
	for _, want := range []string{"objective max-condition", "objective min-cost", "budget", "carry-over", "routine in budget", "groups", "discount and escalation", "routine costs", "lower is better", "target kind 0", "target kind 1", "target kind 2", "target kind 3"} {
		if seen[want] < 10 {
			t.Errorf("%q in only %d of 300 scenarios", want, seen[want])
		}
	}
	t.Log(seen)
}
