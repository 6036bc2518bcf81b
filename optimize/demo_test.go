package optimize_test

import (
	"path/filepath"
	"testing"

	"wearplan/optimize"
	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

// TestDemoDecomposedMatchesGLPK: on the demo town's scenario, the
// decomposition's optimum equals GLPK 5.0's glpsol (Debian package
// glpk-utils, simplex) on the exported flat model within 1e-6 relative.
func TestDemoDecomposedMatchesGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	p := demoProblem(t)
	m, err := optimize.BuildModel(p)
	if err != nil {
		t.Fatal(err)
	}
	want, ok := optimize.GlpsolOptimum(t, m)
	if !ok {
		t.Fatal("glpsol found no optimum of the demo's flat model")
	}
	plan, err := optimize.SolveWith(p, optimize.Options{Method: optimize.Decomposed})
	if err != nil {
		t.Fatal(err)
	}
	if plan.Status != optimize.Optimal {
		t.Fatalf("status %s", plan.Status)
	}
	got := plan.ConditionScore / 100 // the demo maximises condition: the model's objective is the mean score on 0-1
	if p.Objective != optimize.MaxCondition {
		t.Fatalf("the demo's objective changed to %s; update this check", p.Objective)
	}
	if !optimize.RelClose(got, want, 1e-6) {
		t.Errorf("decomposed optimum %.12g, glpsol %.12g", got, want)
	}
	t.Logf("decomposed %.12g, glpsol %.12g: %d rounds, %d policies", got, want, plan.Stats.Iterations, plan.Stats.Columns)
}

// TestDemoWarmResolveStartsFromItsPolicies: solving the demo again from the
// Warm its own solve left gives the same optimum within two pricing rounds
// (the what-if page answers its first request that way). The demo's
// targets are met, so its first stage ends at once; the Warm's policies
// must still reach the stages after it.
func TestDemoWarmResolveStartsFromItsPolicies(t *testing.T) {
	p := demoProblem(t)
	var warm optimize.Warm
	cold, err := optimize.SolveWith(p, optimize.Options{Method: optimize.Decomposed, Warm: &warm})
	if err != nil {
		t.Fatal(err)
	}
	hot, err := optimize.SolveWith(p, optimize.Options{Method: optimize.Decomposed, Warm: warm.Clone()})
	if err != nil {
		t.Fatal(err)
	}
	if !optimize.RelClose(hot.ConditionScore, cold.ConditionScore, 1e-6) {
		t.Errorf("warm score %.12g, cold %.12g", hot.ConditionScore, cold.ConditionScore)
	}
	if hot.Stats.Iterations > 2 {
		t.Errorf("the warm re-solve took %d pricing rounds (%d master solves); its own policies should prove the optimum within 2", hot.Stats.Iterations, hot.Stats.Solves)
	}
}

// demoProblem is the demo town's scenario as an optimize.Problem.
func demoProblem(t *testing.T) *optimize.Problem {
	t.Helper()
	sc, err := scenarios.LoadFile(filepath.Join("..", "scenarios", "examples", "marrowby.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	p, err := sc.Problem()
	if err != nil {
		t.Fatal(err)
	}
	return p
}
