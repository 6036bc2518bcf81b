package optimize

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// catalogueSpecs are small catalogue-shaped models (GenSpec.Catalogue)
// that glpsol solves in well under a second each.
var catalogueSpecs = []GenSpec{
	{Classes: 3, States: 4, Treatments: 3, Years: 6, Catalogue: true},
	{Classes: 5, States: 5, Treatments: 4, Years: 10, Catalogue: true},
	{Classes: 8, States: 7, Treatments: 6, Years: 12, Catalogue: true},
}

// TestCatalogueAgreesWithGLPK checks the catalogue generator's models
// against GLPK's glpsol (Debian glpk-utils, simplex) on the exported flat
// model: wearplan's flat optimum is glpsol's within 1e-6 (relative), and
// both the network poor-share target and the yearly budget bind, as
// generateCatalogue promises: glpsol's optimum of the same model without
// the target is higher, and with 10% more money a year it is higher too.
func TestCatalogueAgreesWithGLPK(t *testing.T) {
	for _, spec := range catalogueSpecs {
		for seed := uint64(1); seed <= 3; seed++ {
			t.Run(fmt.Sprintf("%s/seed%d", spec, seed), func(t *testing.T) {
				p := Generate(rand.New(rand.NewPCG(seed, 1)), spec)
				plan, err := SolveWith(p, Options{Method: Flat})
				if err != nil {
					t.Fatal(err)
				}
				if plan.Status != Optimal {
					t.Fatalf("status %v, want optimal: the target is set from a plan the budget pays for", plan.Status)
				}
				glpk := glpsolOf(t, p)
				if got := plan.ConditionScore / 100; !relClose(got, glpk, 1e-6) {
					t.Errorf("flat optimum %.12g, glpsol %.12g", got, glpk)
				}
				free := *p
				free.Targets = nil
				if untargeted := glpsolOf(t, &free); !(untargeted > glpk*(1+1e-6)) {
					t.Errorf("without the poor-share target glpsol's optimum is %.12g, with it %.12g: the target does not bind", untargeted, glpk)
				}
				richer := *p
				richer.Budget = make([]float64, len(p.Budget))
				for y, b := range p.Budget {
					richer.Budget[y] = 1.1 * b
				}
				if more := glpsolOf(t, &richer); !(more > glpk*(1+1e-6)) {
					t.Errorf("with 10%% more money glpsol's optimum is %.12g, with the budget %.12g: the budget does not bind", more, glpk)
				}
			})
		}
	}
}

// glpsolOf returns glpsol's optimum of p's flat model (mean score on 0-1).
func glpsolOf(t *testing.T, p *Problem) float64 {
	t.Helper()
	m, err := BuildModel(p)
	if err != nil {
		t.Fatal(err)
	}
	obj, optimal := GlpsolOptimum(t, m)
	if !optimal {
		t.Fatal("glpsol found no optimum")
	}
	return obj
}
