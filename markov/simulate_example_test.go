package markov_test

import (
	"fmt"
	"math/rand/v2"
	"slices"

	"wearplan/markov"
)

// Forty culverts of the invented town of Marrowby, left alone for ten
// years. The deterministic forecast says how many are poor on average; a
// town of forty culverts sees whole culverts, and the simulation says how
// far a real decade may stray from that average.
func ExampleSimulate() {
	p, err := markov.FromYearsInState([]float64{10, 8, 7, 5})
	if err != nil {
		fmt.Println(err)
		return
	}
	start := []float64{20, 12, 8, 0, 0} // Very good, Good, Fair, Poor, Very poor
	var lots []markov.Lot
	for state, n := range start {
		for range int(n) {
			lots = append(lots, markov.Lot{Class: 0, State: state, Quantity: 1})
		}
	}
	const years, runs = 10, 1000
	policy := make([][][]float64, years) // do nothing: action 0 with probability 1
	for t := range policy {
		policy[t] = make([][]float64, 5)
		for i := range policy[t] {
			policy[t][i] = []float64{1}
		}
	}
	class := markov.SimClass{Policy: policy, Rows: [][][]float64{p.Rows()}}
	poor := make([]float64, runs)
	err = markov.Simulate([]markov.SimClass{class}, lots, markov.SimOptions{Years: years, Runs: runs, Seed: 2027},
		func(run int, o *markov.RunOutcome) error {
			poor[run] = o.Quantity[0][years][3] + o.Quantity[0][years][4]
			return nil
		})
	if err != nil {
		fmt.Println(err)
		return
	}
	q, _ := p.Roll(start, years)
	fmt.Printf("deterministic forecast: %.1f poor culverts in year 10\n", q[years][3]+q[years][4])
	slices.Sort(poor)
	fmt.Printf("simulated: median %.0f, 90%% of runs between %.0f and %.0f\n", poor[runs/2], poor[runs/20], poor[runs-runs/20-1])
	// Output:
	// deterministic forecast: 13.2 poor culverts in year 10
	// simulated: median 13, 90% of runs between 9 and 17
}

// The posterior of a row of counts: 30 bridge decks stayed in state 1 and
// 5 dropped to state 2 in a year of inspections (invented). With Jeffreys'
// prior on the three entries a deck in state 1 can reach, the posterior
// mean of the drop is (5 + 1/2)/(35 + 3/2) = 0.1507; the never-observed
// skip to state 3 keeps a little weight (1/2)/(36.5) = 0.0137. Draws
// scatter around the mean; moves to a better state never appear.
func ExampleNewDirichletRows() {
	d, err := markov.NewDirichletRows([][]float64{
		{30, 5, 0},
		{0, 12, 3},
		{0, 0, 6},
	}, markov.JeffreysPrior, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(d.Method())
	fmt.Printf("posterior mean of row 1: %.4f\n", d.Mean()[0])
	rng := rand.New(rand.NewPCG(1, 2))
	for range 3 {
		m, _ := d.Draw(rng)
		fmt.Printf("draw: row 1 %.3f, row 2 %.3f\n", m.Row(0), m.Row(1))
	}
	// Output:
	// Dirichlet posterior of each row's transition counts, Jeffreys prior Dirichlet(1/2) on the allowed entries
	// posterior mean of row 1: [0.8356 0.1507 0.0137]
	// draw: row 1 [0.845 0.147 0.007], row 2 [0.000 0.736 0.264]
	// draw: row 1 [0.684 0.290 0.026], row 2 [0.000 0.758 0.242]
	// draw: row 1 [0.863 0.134 0.003], row 2 [0.000 0.849 0.151]
}
