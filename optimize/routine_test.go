package optimize

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"wearplan/optimize/optimizetest"
)

// addRoutine gives every class a routine cost rising down the scale, of
// the order of the cheapest treatment, so that it changes plans.
func addRoutine(rng *rand.Rand, p *Problem) {
	for k := range p.Classes {
		c := &p.Classes[k]
		c.Routine = make([]float64, len(c.Initial))
		for i := range c.Routine {
			c.Routine[i] = float64(i) * (1 + 4*rng.Float64())
		}
	}
}

// With routine costs the model is checked the same way as without: GLPK's
// glpsol (an independent simplex code) solves the exported model and must
// find the same primary optimum, within 1e-6 relative as in
// TestAgreesWithGLPK. The plan's routine figures are recomputed here from
// the untreated quantities (the definition: routine cost per unit left
// untreated, escalated like treatment prices).
func TestRoutineCostAgreesWithGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	rng := rand.New(rand.NewPCG(47, 2027))
	for c := 0; c < 12; c++ {
		p := randomProblem(rng, randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(3), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(5), targets: c%2 == 1, budgetShare: 0.1 + 0.3*rng.Float64()})
		addRoutine(rng, p)
		p.RoutineInBudget = c%3 == 0
		if p.RoutineInBudget {
			for y := range p.Budget {
				p.Budget[y] *= 3 // room for the routine cost
			}
		}
		t.Run(fmt.Sprintf("case%02d", c), func(t *testing.T) {
			m, err := BuildModel(p)
			if err != nil {
				t.Fatal(err)
			}
			refObj, _, refFeasible := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, m, "routine"))
			r, err := solveFlat(p)
			if err != nil {
				t.Fatal(err)
			}
			if r.status != Optimal {
				if refFeasible {
					t.Fatalf("lp_solve: %s; glpsol found a feasible solution", r.status)
				}
				return
			}
			got, want := m.Value(r.x[:len(m.Cols)]), refObj
			if m.Maximize {
				want = -want
			}
			if !relClose(got, want, 1e-6) {
				t.Errorf("primary objective %.12g, glpsol %.12g", got, want)
			}
			plan := r.b.readPlan(r.x, nil)
			total := 0.0
			for k := range p.Classes {
				for y := 0; y < p.Horizon; y++ {
					for i, byAction := range plan.Work[k][y] {
						total += byAction[0] * p.Classes[k].Routine[i] * math.Pow(1+p.Escalation, float64(y))
					}
				}
			}
			if !relClose(plan.RoutineCost, total, 1e-12) {
				t.Errorf("routine cost %g, recomputed %g", plan.RoutineCost, total)
			}
		})
	}
}
