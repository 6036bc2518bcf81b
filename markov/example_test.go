package markov_test

import (
	"fmt"
	"math"

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

// Inspections of three invented Marrowby culverts, a year apart: the
// counting estimate is the share of each state's pairs that stayed or
// moved. Two of the four pairs from Good stayed; the Fair culvert moved.
func ExampleCountingMLE() {
	histories := [][]markov.Inspection{
		{{Time: 2021, State: 0}, {Time: 2022, State: 0}, {Time: 2023, State: 1}},
		{{Time: 2021, State: 0}, {Time: 2022, State: 0}, {Time: 2023, State: 1}},
		{{Time: 2022, State: 1}, {Time: 2023, State: 2}},
	}
	sample, _, prep, err := markov.Prepare(histories, 3, markov.Structure{})
	if err != nil {
		fmt.Println(err)
		return
	}
	p, err := markov.CountingMLE(sample.Counts(), markov.Structure{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d pairs used\n", prep.Used)
	for _, row := range p.Rows() {
		fmt.Printf("%.2f\n", row)
	}
	// Output:
	// 5 pairs used
	// [0.50 0.50 0.00]
	// [0.00 0.00 1.00]
	// [0.00 0.00 1.00]
}

// Assets inspected every second year still identify the one-year matrix:
// here the pairs are the exact two-year counts of 1,000 assets per state
// under P = [[0.9 0.1 0] [0 0.8 0.2] [0 0 1]], so P² = [[0.81 0.17 0.02]
// [0 0.64 0.36] [0 0 1]], and maximum likelihood recovers P.
func ExampleIntervalMLE() {
	c := markov.NewCounts(3)
	for i, row := range [][]float64{{810, 170, 20}, {0, 640, 360}, {0, 0, 1000}} {
		for j, v := range row {
			if v > 0 {
				c.Add(2, i, j, v)
			}
		}
	}
	p, _, err := markov.IntervalMLE(c, markov.Structure{}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, row := range p.Rounded(4).Rows() {
		fmt.Printf("%.4f\n", row)
	}
	// Output:
	// [0.9000 0.1000 0.0000]
	// [0.0000 0.8000 0.2000]
	// [0.0000 0.0000 1.0000]
}

// Two families of a Fair/Poor chain (invented counts): do they share one
// matrix? Both tests say no at the 1% level.
func ExampleTestHomogeneity() {
	light, heavy := markov.NewCounts(2), markov.NewCounts(2)
	light.Add(1, 0, 0, 80) // 80 of 100 light-traffic segments stayed Fair
	light.Add(1, 0, 1, 20)
	heavy.Add(1, 0, 0, 60) // 60 of 100 heavy-traffic ones
	heavy.Add(1, 0, 1, 40)
	var lls []float64
	for _, c := range []*markov.Counts{light, heavy} {
		p, _ := markov.CountingMLE(c, markov.Structure{})
		lls = append(lls, markov.LogLikelihood(c, p))
	}
	all := markov.Pooled(light, heavy)
	pooled, _ := markov.CountingMLE(all, markov.Structure{})
	h := markov.TestHomogeneity([]*markov.Counts{light, heavy}, lls, pooled, markov.LogLikelihood(all, pooled), markov.Structure{}, true)
	fmt.Printf("likelihood ratio %.2f, Anderson-Goodman %.2f, %d degree of freedom, p %.4f and %.4f\n", h.LR, h.Pearson, h.DF, h.LRPValue, h.PearsonPValue)
	// Output:
	// likelihood ratio 9.66, Anderson-Goodman 9.52, 1 degree of freedom, p 0.0019 and 0.0020
}
