package optimize_test

import (
	"fmt"

	"wearplan/markov"
	"wearplan/optimize"
	"wearplan/treatments"
)

// A two-state class (numbers invented for the example): 100 units, a tenth
// of the good ones fail each year, a repair costs 50 a unit. The long-run
// policy that keeps at most 20% poor repairs just enough failed units; the
// least level budget holds 20% poor over a five-year plan.
func ExampleSolveLongRun() {
	P, _ := markov.NewTransition([][]float64{{0.9, 0.1}, {0, 1}}, markov.Options{})
	acts, _ := treatments.Actions(P, []treatments.Treatment{{Name: "repair", Applies: []int{1}, Cost: []float64{0, 50}, Effect: treatments.Effect{Kind: treatments.ToState, State: 0}, SkipsAging: true}})
	p := &optimize.Problem{
		Horizon: 5, Objective: optimize.MinCost,
		Classes: []optimize.Class{{Name: "pipes", Initial: []float64{80, 20}, Score: []float64{100, 0}, Group: []optimize.Group{optimize.Good, optimize.Poor}, Weight: 1, Actions: acts}},
		Targets: []optimize.Target{{Label: "poor at most 20%", Class: optimize.Network, Kind: optimize.MaxShare, Group: optimize.Poor, Value: 0.2, From: 1, To: 5}},
	}
	lr, _ := optimize.SolveLongRun(p)
	fmt.Printf("long run: %.0f good, %.0f poor, %.0f a year\n", lr.Distribution[0][0], lr.Distribution[0][1], lr.AnnualCost())
	level, _ := optimize.LevelBudget(p)
	fmt.Printf("least level budget: %.0f a year\n", level)
	// Output:
	// long run: 80 good, 20 poor, 400 a year
	// least level budget: 400 a year
}
