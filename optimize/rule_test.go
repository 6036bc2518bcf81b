package optimize

import (
	"math"
	"math/rand/v2"
	"testing"

	"wearplan/markov"
	"wearplan/treatments"
)

// A case small enough to follow by hand (numbers invented for the check):
// three states scored 100/50/0, 10 units in each, 500 to spend. Worst
// first: the worst state's cheapest improving treatment is rebuild at 100 a
// unit (rebuild-deluxe at 150 is dearer), so 5 units are rebuilt and the
// money is gone. End of year, by hand: state 1 gets 10·0.8 + 5 = 13,
// state 2 gets 10·0.2 + 10·0.7 = 9, state 3 gets 10·0.3 + 5 = 8.
func TestWorstFirstByHand(t *testing.T) {
	P, err := markov.NewTransition([][]float64{{0.8, 0.2, 0}, {0, 0.7, 0.3}, {0, 0, 1}}, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	to0 := treatments.Effect{Kind: treatments.ToState, State: 0}
	acts, err := treatments.Actions(P, []treatments.Treatment{
		{Name: "patch", Applies: []int{1}, Cost: []float64{0, 10, 0}, Effect: to0, SkipsAging: true},
		{Name: "rebuild-deluxe", Applies: []int{2}, Cost: []float64{0, 0, 150}, Effect: to0, SkipsAging: true},
		{Name: "rebuild", Applies: []int{2}, Cost: []float64{0, 0, 100}, Effect: to0, SkipsAging: true},
	})
	if err != nil {
		t.Fatal(err)
	}
	p := &Problem{Horizon: 1, Budget: []float64{500}, Classes: []Class{{Name: "c", Initial: []float64{10, 10, 10}, Score: []float64{100, 50, 0}, Group: []Group{Good, Fair, Poor}, Weight: 1, Actions: acts}}}
	plan, err := WorstFirst(p)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{13, 9, 8}
	for i, w := range want {
		if math.Abs(plan.Condition[0][1][i]-w) > 1e-12 {
			t.Errorf("state %d: %g, want %g", i+1, plan.Condition[0][1][i], w)
		}
	}
	if plan.Work[0][0][2][3] != 5 || plan.Work[0][0][2][2] != 0 || plan.Work[0][0][1][1] != 0 {
		t.Errorf("work %v, want 5 units of rebuild only", plan.Work[0][0])
	}
	if plan.TotalCost != 500 {
		t.Errorf("spend %g, want 500", plan.TotalCost)
	}
}

// The rule's plan is one of the plans the LP may choose (it keeps every
// cap), so with no targets the optimised condition score can never be
// lower: what optimization buys is never negative. Also: the rule never
// spends more than the year's money, and it conserves quantities.
func TestWorstFirstNeverBeatsTheOptimum(t *testing.T) {
	rng := rand.New(rand.NewPCG(43, 2027))
	for c := 0; c < 30; c++ {
		p := randomProblem(rng, randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(6), budgetShare: 0.05 + 0.3*rng.Float64()})
		p.Objective = MaxCondition
		// Caps in whole cents: a reported plan keeps a cap that would round
		// up to the next cent to the cent below it (readPlan), which the
		// rule does not.
		for y := range p.Budget {
			p.Budget[y] = math.Floor(p.Budget[y]/cent) * cent
		}
		rule, err := WorstFirst(p)
		if err != nil {
			t.Fatal(err)
		}
		checkConservation(t, c, p, rule)
		checkBudget(t, c, p, rule)
		plan, err := Solve(p)
		if err != nil || plan.Status != Optimal {
			t.Fatalf("case %d: %v %v", c, plan.Status, err)
		}
		// 1e-7 score points: the LP's optimality tolerance on a 0-1
		// objective is 1e-9, times 100.
		if plan.ConditionScore < rule.ConditionScore-1e-7 {
			t.Errorf("case %d: optimised score %.9g below the worst-first rule's %.9g", c, plan.ConditionScore, rule.ConditionScore)
		}
	}
}
