package scenarios

import (
	"fmt"
	"math"
	"testing"

	"wearplan/optimize"
)

// TwoStateYAML is a one-class network (invented numbers), worked by hand
// in indicators_test.go, which uses it too: holding today's condition
// needs 15 km replaced each year at 500 a km, 7,500 a year.
const TwoStateYAML = `name: Two-state indicators (invented example)
start_year: 2030
horizon: 2
currency: USD
discount_rate: 0.05
cost_escalation: 0
scales:
  two:
    states:
      - {name: Sound, min: 50, max: 100, value: 100}
      - {name: Failed, min: 0, max: 50, value: 0}
    groups: {good: [Sound], poor: [Failed]}
classes:
  - name: pipes
    scale: two
    unit: km
    inventory: {Sound: 60, Failed: 40}
    replacement_cost: 1000
    deterioration: {matrix: [[0.8, 0.2], [0, 1]]}
    treatments: [replace]
treatments:
  - {name: replace, applies_to: [Failed], cost: 500, effect: {to: Sound}}
budget: {yearly: 5000}
objective: max-condition
`

// TestRequiredRenewalEitherMaster: the renewal a class needs is the same
// whichever master the decomposition keeps (the live one is what classes
// of large networks get): 7,500 a year, worked by hand in
// indicators_test.go.
func TestRequiredRenewalEitherMaster(t *testing.T) {
	sc, err := Parse("two.yaml", []byte(TwoStateYAML))
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range []optimize.MasterForm{optimize.MasterDual, optimize.MasterLive} {
		req, notes, err := requiredRenewal(sc, Options{Solver: optimize.Decomposed, master: m})
		if err != nil || len(notes) > 0 {
			t.Fatalf("master %d: %v %q", m, err, notes)
		}
		for y, v := range req[0] {
			if math.Abs(v-7500) > 1e-6*7500 {
				t.Errorf("master %d: year %d needs %.6f, want 7500 (by hand)", m, y+1, v)
			}
		}
	}
}

// TestRenewalLeftOutPastItsSize: past RenewalDetailClasses classes the
// renewal funding ratios are left out with a note saying why, before any
// class is planned.
func TestRenewalLeftOutPastItsSize(t *testing.T) {
	sc, err := Parse("two.yaml", []byte(TwoStateYAML))
	if err != nil {
		t.Fatal(err)
	}
	c := sc.Classes[0]
	sc.Classes = nil
	for k := 0; k <= RenewalDetailClasses; k++ {
		d := c
		d.Name = fmt.Sprintf("pipes%d", k+1)
		sc.Classes = append(sc.Classes, d)
	}
	req, notes, err := requiredRenewal(sc, Options{})
	if err != nil || req != nil || len(notes) != 1 {
		t.Fatalf("%d classes: renewal %v, notes %q, error %v; want none, one note", len(sc.Classes), req != nil, notes, err)
	}
}
