package optimize

import (
	"testing"

	"wearplan/optimize/optimizetest"
)

// Test helpers for the external test package (optimize_test), whose tests
// load scenario files through package scenarios.

// GlpsolOptimum solves a model with GLPK's glpsol (simplex) and returns the
// optimum of the model as written (maximisations negated back).
func GlpsolOptimum(t *testing.T, m *Model) (float64, bool) {
	obj, optimal, _ := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, m, "ref"))
	if m.Maximize {
		obj = -obj
	}
	return obj, optimal
}

func RelClose(a, b, tol float64) bool { return relClose(a, b, tol) }
