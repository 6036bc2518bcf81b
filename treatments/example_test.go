package treatments_test

import (
	"fmt"

	"wearplan/markov"
	"wearplan/treatments"
)

// The three ways of writing an effect, on a five-state scale (state 1 best).
func ExampleTreatment_EffectRow() {
	rebuild := treatments.Treatment{Name: "rebuild",
		Effect: treatments.Effect{Kind: treatments.ToState, State: 0}}
	overlay := treatments.Treatment{Name: "overlay",
		Effect: treatments.Effect{Kind: treatments.Improve, Steps: 2}}
	thin := treatments.Treatment{Name: "thin overlay",
		Effect: treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{
			3: {0, 0.3, 0.5, 0.2, 0}, // outcome varies on a weak base
		}}}

	r, _ := rebuild.EffectRow(4, 5)
	fmt.Println("rebuild from state 5:     ", r)
	o, _ := overlay.EffectRow(3, 5)
	fmt.Println("overlay from state 4:     ", o)
	o, _ = overlay.EffectRow(1, 5)
	fmt.Println("overlay from state 2:     ", o, "(clipped at the best state)")
	d, _ := thin.EffectRow(3, 5)
	fmt.Println("thin overlay from state 4:", d)
	// Output:
	// rebuild from state 5:      [1 0 0 0 0]
	// overlay from state 4:      [0 1 0 0 0]
	// overlay from state 2:      [1 0 0 0 0] (clipped at the best state)
	// thin overlay from state 4: [0 0.3 0.5 0.2 0]
}

// Validate reports every problem with a catalogue entry at once.
func ExampleTreatment_Validate() {
	t := treatments.Treatment{
		Name:    "crack seal",
		Applies: []int{0, 1, 1, 6},
		Cost:    []float64{-900, 1100, 0, 0, 0},
		Effect:  treatments.Effect{Kind: treatments.Improve, Steps: 1},
	}
	fmt.Println(t.Validate(5))
	// Output:
	// treatment "crack seal": unit cost -900 in state 1 must be a finite number of zero or more
	// treatment "crack seal" lists state 2 twice in applies_to
	// treatment "crack seal" applies to state 7, outside the 5-state scale
}

// The actions available to the local roads of the invented town of Marrowby,
// with the year's transition each causes. A seal in state 2 puts the road
// back in state 1 and it then ages through the rest of the year (row 1 of P:
// 5/6 stays, 1/6 drops); a rebuild takes the season and does not age.
func ExampleActions() {
	p, err := markov.FromYearsInState([]float64{6, 5, 5, 6})
	if err != nil {
		fmt.Println(err)
		return
	}
	acts, err := treatments.Actions(p, []treatments.Treatment{
		{Name: "seal", Applies: []int{0, 1}, Cost: []float64{28000, 28000, 0, 0, 0},
			Effect: treatments.Effect{Kind: treatments.ToState, State: 0}},
		{Name: "overlay", Applies: []int{2, 3}, Cost: []float64{0, 0, 160000, 190000, 0},
			Effect: treatments.Effect{Kind: treatments.Improve, Steps: 2}},
		{Name: "rebuild", Applies: []int{3, 4}, Cost: []float64{0, 0, 0, 450000, 450000},
			Effect: treatments.Effect{Kind: treatments.ToState, State: 0}, SkipsAging: true},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, a := range acts {
		for i, ok := range a.Applies {
			if ok && i >= 1 && i <= 3 { // states 2-4 keep the listing short
				fmt.Printf("%-10s state %d  cost %6.0f  -> %.3f\n", a.Name, i+1, a.Cost[i], a.Rows[i])
			}
		}
	}
	// Output:
	// do nothing state 2  cost      0  -> [0.000 0.800 0.200 0.000 0.000]
	// do nothing state 3  cost      0  -> [0.000 0.000 0.800 0.200 0.000]
	// do nothing state 4  cost      0  -> [0.000 0.000 0.000 0.833 0.167]
	// seal       state 2  cost  28000  -> [0.833 0.167 0.000 0.000 0.000]
	// overlay    state 3  cost 160000  -> [0.833 0.167 0.000 0.000 0.000]
	// overlay    state 4  cost 190000  -> [0.000 0.800 0.200 0.000 0.000]
	// rebuild    state 4  cost 450000  -> [1.000 0.000 0.000 0.000 0.000]
}

// A seal that must wait three years after any work, on a three-state scale:
// the class's states are widened with the years since the last work, and
// the seal applies only where three or more years have passed.
func ExampleHistory() {
	p, _ := markov.NewTransition([][]float64{{0.8, 0.2, 0}, {0, 0.7, 0.3}, {0, 0, 1}}, markov.Options{})
	seal := treatments.Treatment{Name: "seal", Applies: []int{0}, Cost: []float64{40, 0, 0}, MinInterval: 3, SkipsAging: true,
		Effect: treatments.Effect{Kind: treatments.ToState, State: 0}}
	ts := []treatments.Treatment{seal}
	h := treatments.NewHistory(3, ts, nil)
	acts, _ := h.Actions(p, nil, ts)
	names := []string{"Good", "Fair", "Poor"}
	for y := 1; y <= h.Span; y++ {
		w := h.State(0, y)
		fmt.Printf("%-36s seal allowed: %t\n", h.Label(names, w), acts[1].Applies[w])
	}
	// A year untreated from Good worked last year, summed back to
	// condition states.
	fmt.Println(h.Fold(acts[0].Rows[h.State(0, 1)]))
	// Output:
	// Good, worked last year               seal allowed: false
	// Good, 2 years since work             seal allowed: false
	// Good, 3 or more years since work     seal allowed: true
	// [0.8 0.2 0]
}
