package markov_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"wearplan/markov"
)

// A five-state scale for the local asphalt roads of the invented town of
// Marrowby: the expected years in each state come from the road crew's
// judgement, the inventory from the last survey (all numbers invented).
// Left untreated, the network drifts down the scale year by year. (The
// figures below were checked independently in exact rational arithmetic.)
func Example_forecast() {
	states := []string{"Very good", "Good", "Fair", "Poor", "Very poor"}
	p, err := markov.FromYearsInState([]float64{6, 5, 5, 6})
	if err != nil {
		fmt.Println(err)
		return
	}
	lanekm := []float64{60, 85, 70, 30, 12}
	years, err := p.Roll(lanekm, 10)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%-10s %8s %8s %8s\n", "state", "today", "year 5", "year 10")
	for i, name := range states {
		fmt.Printf("%-10s %8.1f %8.1f %8.1f\n", name, years[0][i], years[5][i], years[10][i])
	}
	// Output:
	// state         today   year 5  year 10
	// Very good      60.0     24.1      9.7
	// Good           85.0     50.1     25.4
	// Fair           70.0     68.4     47.2
	// Poor           30.0     64.0     68.0
	// Very poor      12.0     50.3    106.7
}

// Every problem in a matrix is reported at once, with 1-based row and column
// numbers that point at the input.
func ExampleNewTransition() {
	_, err := markov.NewTransition([][]float64{
		{0.85, 0.15, 0.00},
		{0.05, 0.80, 0.10}, // improves without work, and sums to 0.95
		{0.00, 0.00, 1.00},
	}, markov.Options{})
	fmt.Println(err)
	// Output:
	// row 2, column 1: probability 0.05 of moving to a better state without work; set it to 0 or allow improvement for this class
	// row 2: sums to 0.95, want 1
}

// Four years on average in the best state and two and a half in the next:
// the chance of staying is 1 - 1/d, of dropping one state 1/d; the worst
// state keeps what it gets.
func ExampleFromYearsInState() {
	p, err := markov.FromYearsInState([]float64{4, 2.5})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, row := range p.Rows() {
		fmt.Printf("%.2f\n", row)
	}
	// Output:
	// [0.75 0.25 0.00]
	// [0.00 0.60 0.40]
	// [0.00 0.00 1.00]
}

// Roll carries quantities forward: row t is the condition at the end of
// year t. Worked by hand for the first year: 100 lane-km in the best state
// keep 0.9 of it (90) and pass 10 on; the 50 in the middle keep 40 and pass
// 10 to the worst state.
func ExampleTransition_Roll() {
	p, err := markov.NewTransition([][]float64{
		{0.9, 0.1, 0.0},
		{0.0, 0.8, 0.2},
		{0.0, 0.0, 1.0},
	}, markov.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	years, _ := p.Roll([]float64{100, 50, 0}, 3)
	for t, q := range years {
		fmt.Printf("year %d: %.2f\n", t, q)
	}
	// Output:
	// year 0: [100.00 50.00 0.00]
	// year 1: [90.00 50.00 10.00]
	// year 2: [81.00 49.00 20.00]
	// year 3: [72.90 47.30 29.80]
}

// The n-step matrix answers "of what is in the best state today, how much is
// in each state in ten years?". The first entry is (5/6)^10 = 0.1615; the
// whole row was checked independently in exact rational arithmetic.
func ExampleTransition_Power() {
	p, err := markov.FromYearsInState([]float64{6, 5, 5, 6})
	if err != nil {
		fmt.Println(err)
		return
	}
	p10, _ := p.Power(10)
	fmt.Printf("from Very good, after 10 years: %.3f\n", p10.RawRowView(0))
	// Output:
	// from Very good, after 10 years: [0.162 0.271 0.282 0.194 0.092]
}

// Expected years until a road first reaches the worst state, and the spread
// of that time. For a chain built from years in state the mean is the sum of
// the remaining years in state (6+5+5+6 = 22 from new) and the variance the
// sum of d(d-1) (30+20+20+30 = 100, a standard deviation of 10 years).
func ExampleTransition_YearsToWorst() {
	p, err := markov.FromYearsInState([]float64{6, 5, 5, 6})
	if err != nil {
		fmt.Println(err)
		return
	}
	abs, err := p.YearsToWorst()
	if err != nil {
		fmt.Println(err)
		return
	}
	for i := range abs.Mean {
		fmt.Printf("state %d: %4.1f years, sd %4.1f\n", i+1, abs.Mean[i], math.Sqrt(abs.Variance[i]))
	}
	// Output:
	// state 1: 22.0 years, sd 10.0
	// state 2: 16.0 years, sd  8.4
	// state 3: 11.0 years, sd  7.1
	// state 4:  6.0 years, sd  5.5
	// state 5:  0.0 years, sd  0.0
}

// A class whose recorded condition can rise without work (invented seasonal
// readings) settles into a steady state. By hand: this chain only moves one
// state at a time, so the flows between neighbours balance:
// 0.2·π1 = 0.1·π2 and 0.2·π2 = 0.3·π3, giving π ∝ (1, 2, 4/3) and
// π = (3/13, 6/13, 4/13).
func ExampleTransition_SteadyState() {
	p, err := markov.NewTransition([][]float64{
		{0.8, 0.2, 0.0},
		{0.1, 0.7, 0.2},
		{0.0, 0.3, 0.7},
	}, markov.Options{AllowImprovement: true})
	if err != nil {
		fmt.Println(err)
		return
	}
	pi, err := p.SteadyState()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f\n", pi)
	fmt.Printf("%.4f\n", []float64{3.0 / 13, 6.0 / 13, 4.0 / 13})
	// Output:
	// [0.2308 0.4615 0.3077]
	// [0.2308 0.4615 0.3077]
}

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
