package optimize

import "testing"

// Test helpers for the external test package (optimize_test), whose tests
// load scenario files through package scenarios.

func RequireTool(t *testing.T, name string) string { return requireTool(t, name) }

// GlpsolOptimum solves a model with GLPK's glpsol (simplex) and returns the
// optimum of the model as written (maximisations negated back).
func GlpsolOptimum(t *testing.T, glpsol string, m *Model) (float64, bool) {
	r := runGlpsol(t, glpsol, writeModel(t, m, "ref"))
	obj := r.obj
	if m.Maximize {
		obj = -obj
	}
	return obj, r.optimal
}

func RelClose(a, b, tol float64) bool { return relClose(a, b, tol) }
