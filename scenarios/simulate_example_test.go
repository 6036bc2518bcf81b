package scenarios_test

import (
	"fmt"

	"wearplan/scenarios"
)

// How sure is the plan for the invented town of Marrowby's local roads and
// 160 culverts? Each half lane-km of road (the default piece for lane-km)
// and each culvert is simulated as one piece; the
// runs scatter around the plan's deterministic figures. Here the targets
// have room to spare and hold in every run; a target the plan just meets
// holds in about half of them (try the demo, scenarios/examples).
func ExampleSimulate() {
	sc, err := scenarios.LoadFile("../testdata/marrowby-small.yaml")
	if err != nil {
		fmt.Println(err)
		return
	}
	r, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 500, Seed: 2027})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, y := range r.Years {
		poor := y.Network.Shares.Poor
		fmt.Printf("%d network poor: plan %4.1f%%, runs %4.1f%% [%4.1f%% to %4.1f%%]\n", y.Year, 100*poor.Plan, 100*poor.P50, 100*poor.P5, 100*poor.P95)
	}
	for _, t := range r.Targets {
		fmt.Printf("%s: met by the plan %v, in every year in %.0f%% of runs\n", t.Target, t.MetByPlan, 100*t.AllYears)
	}
	fmt.Println(r.Uncertainty.Included[0])
	// Output:
	// 2027 network poor: plan 25.2%, runs 25.3% [24.3% to 26.2%]
	// 2028 network poor: plan 20.8%, runs 20.8% [19.5% to 22.0%]
	// 2029 network poor: plan 15.9%, runs 15.9% [14.8% to 17.0%]
	// 2030 network poor: plan 15.1%, runs 15.1% [13.9% to 16.1%]
	// 2031 network poor: plan 14.4%, runs 14.4% [13.2% to 15.6%]
	// network poor share at most 25% in 2029-2031: met by the plan true, in every year in 100% of runs
	// local-asphalt average index at least 50 in 2028-2031: met by the plan true, in every year in 100% of runs
	// network average condition in 2031 no worse than today: met by the plan true, in every year in 100% of runs
	// piece-level randomness: each of 934 pieces (segments of a list, or pieces cut from quantities) draws its treatment and its next state at random in every year, independently of the others
}
