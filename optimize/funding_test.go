package optimize

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

// The funding questions are answered by LPs whose answers can be checked by
// feeding them back into the plan: the least level budget must make the
// targets feasible (status Optimal) and, when positive, a budget 2% lower
// must not; the extra money of ClosingMoney must turn a targets-not-met plan
// into an optimal one. These follow from the definitions (docs/model.md,
// Funding questions), not from any number the optimizer produced.

func TestLevelBudgetFedBackIsOptimal(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 2027))
	checked := 0
	for c := 0; c < 30; c++ {
		spec := randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(3), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(6), targets: true, budgetShare: 0.2}
		p := randomProblem(rng, spec)
		p.CarryOver = rng.IntN(4) == 0
		level, err := LevelBudget(p)
		if errors.Is(err, ErrUnreachable) {
			continue
		}
		if err != nil {
			t.Fatalf("case %d: %v", c, err)
		}
		checked++
		q := *p
		q.Budget = constant(level, p.Horizon)
		plan, err := Solve(&q)
		if err != nil {
			t.Fatal(err)
		}
		if plan.Status != Optimal {
			t.Errorf("case %d: level budget %g fed back gives %s (shortfalls %v)", c, level, plan.Status, plan.Shortfalls)
		}
		// Least: 2% less money must miss a target (when the level is not
		// just the rounding to a whole unit). 2% is far above the 1e-7
		// rounding margin.
		if level > 100 {
			q.Budget = constant(level*0.98, p.Horizon)
			plan, err = Solve(&q)
			if err != nil {
				t.Fatal(err)
			}
			if plan.Status == Optimal {
				t.Errorf("case %d: 98%% of the level budget %g still meets every target", c, level)
			}
		}
	}
	if checked < 10 {
		t.Errorf("only %d reachable cases; the generator no longer exercises LevelBudget", checked)
	}
}

func TestClosingMoneyMakesTargetsFeasible(t *testing.T) {
	rng := rand.New(rand.NewPCG(37, 2027))
	closed := 0
	for c := 0; c < 40 && closed < 12; c++ {
		spec := randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(3), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(6), targets: true, budgetShare: 0.03 + 0.05*rng.Float64()}
		p := randomProblem(rng, spec)
		p.CarryOver = rng.IntN(4) == 0
		plan, err := Solve(p)
		if err != nil {
			t.Fatal(err)
		}
		if plan.Status != TargetsNotMet {
			continue
		}
		gap, err := ClosingMoney(p)
		if errors.Is(err, ErrUnreachable) {
			continue
		}
		if err != nil {
			t.Fatalf("case %d: %v", c, err)
		}
		closed++
		if gap.Total() <= 0 {
			t.Errorf("case %d: targets not met, yet no extra money needed", c)
		}
		q := *p
		q.Budget = make([]float64, p.Horizon)
		for y := range q.Budget {
			q.Budget[y] = p.Budget[y] + gap.Network[y]
		}
		plan, err = Solve(&q)
		if err != nil {
			t.Fatal(err)
		}
		if plan.Status != Optimal {
			t.Errorf("case %d: with the extra money %v the plan is still %s (%v)", c, gap.Network, plan.Status, plan.Shortfalls)
		}
	}
	if closed < 5 {
		t.Errorf("only %d closable cases; the generator no longer exercises ClosingMoney", closed)
	}
}

// With routine costs counted against a budget smaller than the routine cost
// of doing nothing, even the plan without targets cannot hold: ClosingMoney
// must say how much more money makes it hold, and that amount must work.
func TestClosingMoneyCoversRoutineOverBudget(t *testing.T) {
	p := machineProblem()
	p.Horizon = 4
	p.RoutineInBudget = true
	p.Budget = constant(100, p.Horizon) // far below the routine cost
	plan, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	if plan.Status != Infeasible {
		t.Fatalf("status %s, want infeasible", plan.Status)
	}
	gap, err := ClosingMoney(p)
	if err != nil {
		t.Fatal(err)
	}
	q := *p
	q.Budget = make([]float64, p.Horizon)
	for y := range q.Budget {
		q.Budget[y] = p.Budget[y] + gap.Network[y]
	}
	plan, err = Solve(&q)
	if err != nil || plan.Status != Optimal {
		t.Fatalf("with the extra money %v: %v %v", gap.Network, plan.Status, err)
	}
}

func constant(v float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = v
	}
	return out
}

var _ = math.Inf
