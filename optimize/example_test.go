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

// A robust plan for an invented class of 100 pipes in three states: the
// same renewals must keep at most 20% poor under the point estimate of the
// do-nothing matrix and under a harsher sample, at the least cost.
func ExampleSolveRobust() {
	nothing := [][]float64{{0.8, 0.2, 0}, {0, 0.7, 0.3}, {0, 0, 1}}
	harsh := [][]float64{{0.7, 0.3, 0}, {0, 0.6, 0.4}, {0, 0, 1}}
	renew := []treatments.Treatment{{Name: "renew", Applies: []int{1, 2}, Cost: []float64{10, 10, 10}, Effect: treatments.Effect{Kind: treatments.ToState, State: 0}, SkipsAging: true}}
	actions := func(rows [][]float64) []treatments.Action {
		m, err := markov.NewTransition(rows, markov.Options{})
		if err != nil {
			panic(err)
		}
		acts, err := treatments.Actions(m, renew)
		if err != nil {
			panic(err)
		}
		return acts
	}
	p := &optimize.Problem{Horizon: 3, Budget: []float64{200, 200, 200}, Objective: optimize.MinCost,
		Classes: []optimize.Class{{Name: "pipes", Initial: []float64{50, 30, 20}, Score: []float64{100, 50, 0},
			Group: []optimize.Group{optimize.Good, optimize.Fair, optimize.Poor}, Weight: 1, Actions: actions(nothing)}},
		Targets: []optimize.Target{{Label: "poor at most 20%", Class: optimize.Network, Kind: optimize.MaxShare, Group: optimize.Poor, Value: 0.2, From: 1, To: 3}}}
	var rows [][][]float64 // the harsher sample's year transitions, per action
	for _, a := range actions(harsh) {
		rows = append(rows, a.Rows)
	}
	sample := optimize.MatrixSample{Rows: [][][][]float64{rows}}
	point, err := optimize.Solve(p)
	if err != nil {
		fmt.Println(err)
		return
	}
	robust, err := optimize.SolveRobust(p, []optimize.MatrixSample{sample})
	if err != nil {
		fmt.Println(err)
		return
	}
	// 100 pipes in all, so the quantity poor is the poor share in percent.
	cond, _ := optimize.RollWork(p, point.Work, &sample)
	fmt.Printf("point-estimate plan: cost %.0f, poor in year 3 under the harsher sample %.1f%%\n", point.TotalCost, cond[0][3][2])
	cond, _ = optimize.RollWork(p, robust.Work, &sample)
	fmt.Printf("robust plan: cost %.0f, poor in year 3 under the harsher sample %.1f%%\n", robust.TotalCost, cond[0][3][2])
	// Output:
	// point-estimate plan: cost 278, poor in year 3 under the harsher sample 30.6%
	// robust plan: cost 392, poor in year 3 under the harsher sample 20.0%
}
