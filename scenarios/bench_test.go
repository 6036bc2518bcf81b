package scenarios

import (
	"testing"

	"wearplan/optimize"
)

// demoBudgets are the 20 sweep points of docs/benchmarks.md: 2 to 6.75
// million in steps of 250,000.
func demoBudgets(b *testing.B) []float64 {
	v, err := BudgetRange(2e6, 6.75e6, 2.5e5)
	if err != nil || len(v) != 20 {
		b.Fatalf("%d budgets, %v", len(v), err)
	}
	return v
}

// BenchmarkSweep20 is `wearplan sweep` of the demo over 20 budgets: the
// points in parallel plus the two least-level-budget LPs.
func BenchmarkSweep20(b *testing.B) {
	sc, err := LoadFile("examples/marrowby.yaml")
	if err != nil {
		b.Fatal(err)
	}
	budgets := demoBudgets(b)
	for b.Loop() {
		if _, err := Sweep(sc, budgets, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkPlan20Sequential is the same 20 budgets planned one after the
// other, as 20 `wearplan plan` runs would (without process start-up).
func BenchmarkPlan20Sequential(b *testing.B) {
	sc, err := LoadFile("examples/marrowby.yaml")
	if err != nil {
		b.Fatal(err)
	}
	budgets := demoBudgets(b)
	for b.Loop() {
		for _, v := range budgets {
			s := *sc
			s.Budget = make([]float64, sc.Horizon)
			for t := range s.Budget {
				s.Budget[t] = v
			}
			s.Objective = optimize.MaxCondition
			if _, err := Plan(&s, Options{}); err != nil {
				b.Fatal(err)
			}
		}
	}
}
