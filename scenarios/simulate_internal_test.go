package scenarios

import (
	"math"
	"slices"
	"testing"

	"wearplan/markov"
)

// planPolicy follows PolicyRule: shares are work over the state's quantity;
// a (year, state) without quantity borrows the nearest year's shares, the
// earlier on a tie; a state never held is left untreated.
func TestPlanPolicy(t *testing.T) {
	// work[t][i][a] for 4 years, 3 states, 2 actions; class total 100.
	work := [][][]float64{
		{{30, 10}, {0, 0}, {5, 0}},
		{{20, 20}, {0, 0}, {0, 0}},
		{{0, 0}, {6, 2}, {0, 0}},
		{{40, 0}, {1e-10, 0}, {0, 0}},
	}
	pol, borrowed, untreated := planPolicy(work, 100, 2)
	want := [][][]float64{
		{{0.75, 0.25}, {0.75, 0.25}, {1, 0}}, // state 2 borrows year 3 (the only year with quantity)
		{{0.5, 0.5}, {0.75, 0.25}, {1, 0}},   // state 3 borrows year 1 (earlier of the nearest)
		{{0.5, 0.5}, {0.75, 0.25}, {1, 0}},   // state 1 ties years 2 and 4: earlier, year 2
		{{1, 0}, {0.75, 0.25}, {1, 0}},       // 1e-10 of 100 is below the 1e-9 floor: borrowed
	}
	for y := range want {
		for i := range want[y] {
			if !slices.Equal(pol[y][i], want[y][i]) {
				t.Errorf("year %d state %d: %v, want %v", y+1, i+1, pol[y][i], want[y][i])
			}
		}
	}
	// Borrowed: state 2 in years 1, 2, 4; state 3 in years 2, 3, 4;
	// state 1 in year 3.
	if borrowed != 7 || untreated != 0 {
		t.Errorf("borrowed %d, untreated %d; want 7, 0", borrowed, untreated)
	}

	// A state the plan never holds is left untreated; work below the
	// floor is dropped from the shares unless nothing else is left.
	pol, borrowed, untreated = planPolicy([][][]float64{
		{{10, 1e-12}, {0, 0}},
		{{3e-10, 2e-10}, {0, 0}},
	}, 10, 2)
	if !slices.Equal(pol[0][0], []float64{1, 0}) || !slices.Equal(pol[0][1], []float64{1, 0}) || !slices.Equal(pol[1][1], []float64{1, 0}) {
		t.Errorf("policy %v", pol)
	}
	// 5e-10 of 10 is below the floor (1e-8): year 2 borrows year 1.
	if !slices.Equal(pol[1][0], []float64{1, 0}) || borrowed != 1 || untreated != 2 {
		t.Errorf("year 2 state 1 %v, borrowed %d, untreated %d; want [1 0], 1, 2", pol[1][0], borrowed, untreated)
	}
}

// record turns one run's quantities into shares, scores and spend, worked
// by hand for a two-year, one-class network.
func TestFiguresRecordByHand(t *testing.T) {
	sc, err := Parse("inline.yaml", []byte(`name: record check (invented)
start_year: 2030
horizon: 2
cost_escalation: 0.1
scales:
  three:
    states:
      - {name: A, min: 60, max: 100, value: 80}
      - {name: B, min: 30, max: 60, value: 45}
      - {name: C, min: 0, max: 30, value: 15}
    groups: {good: [A], fair: [B], poor: [C]}
classes:
  - name: pipes
    scale: three
    unit: m
    inventory: {A: 4, B: 4, C: 2}
    deterioration: {years_in_state: [3, 3]}
    treatments: [reline]
treatments:
  - {name: reline, applies_to: [B, C], cost: {B: 100, C: 250}, effect: {to: A}}
`))
	if err != nil {
		t.Fatal(err)
	}
	p, err := sc.Problem()
	if err != nil {
		t.Fatal(err)
	}
	f := newFigures(sc, p, 1, true)
	o := &markov.RunOutcome{
		Quantity: [][][]float64{{{4, 4, 2}, {5, 3, 2}, {2, 2, 6}}},
		Treated: [][][][]float64{{
			{{4, 0}, {3, 1}, {0, 2}}, // year 1: reline 1 m of B, 2 m of C
			{{5, 0}, {3, 0}, {1.5, 0.5}},
		}},
	}
	f.record(0, o)
	get := func(t, m int) float64 { return f.vals[f.series(0, t, m)][0] }
	// Year 1 ends at (5, 3, 2): shares 0.5, 0.3, 0.2; score: index values
	// 80, 45, 15 on a 0-100 scale are scores 80, 45, 15, so
	// (5·80 + 3·45 + 2·15)/10 = 56.5. Spend 1·100 + 2·250 = 600 at year-1
	// prices. Year 2 ends at (2, 2, 6): score (160 + 90 + 90)/10 = 34;
	// spend 0.5·250·1.1 = 137.5.
	checks := []struct {
		what string
		got  float64
		want float64
	}{
		{"year 1 good", get(0, figGood), 0.5}, {"year 1 fair", get(0, figFair), 0.3}, {"year 1 poor", get(0, figPoor), 0.2},
		{"year 1 score", get(0, figScore), 56.5}, {"year 1 spend", get(0, figSpend), 600},
		{"year 2 poor", get(1, figPoor), 0.6}, {"year 2 score", get(1, figScore), 34}, {"year 2 spend", get(1, figSpend), 137.5},
		{"network year 2 spend", f.vals[f.series(1, 1, figSpend)][0], 137.5},
		{"network year 2 score", f.vals[f.series(1, 1, figScore)][0], 34},
	}
	for _, c := range checks {
		if math.Abs(c.got-c.want) > 1e-9 {
			t.Errorf("%s = %g, want %g", c.what, c.got, c.want)
		}
	}
}
