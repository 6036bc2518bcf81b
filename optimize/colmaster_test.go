package optimize

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"wearplan/optimize/optimizetest"
)

// TestLiveMasterAgreesWithGLPKAtBenchmarkSize: on the benchmark's
// 20x7x6x30 network (12,900 flat columns, past liveMasterMinWork, so the
// decomposition keeps its master alive in lp_solve and prunes its working
// set), with and without targets, the plan's primary objective equals the
// optimum GLPK 5.0's glpsol (Debian glpk-utils, an independent simplex
// code) finds on the exported flat model, within 1e-6 relative (a thousand
// times the decomposition's stopping gap). The generated targets are met
// (glpsol's hard model has an optimum), so the flat model's optimum is the
// primary objective's.
func TestLiveMasterAgreesWithGLPKAtBenchmarkSize(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	for _, targets := range []bool{false, true} {
		t.Run(fmt.Sprintf("targets=%v", targets), func(t *testing.T) {
			p := Generate(rand.New(rand.NewPCG(1, 1)), GenSpec{Classes: 20, States: 7, Treatments: 6, Years: 30, Targets: targets, BudgetShare: 0.15})
			dw := newDecomposer(p, Options{})
			if !dw.live {
				t.Fatalf("pricing work %d: the live master is not used at this size", dw.pricingWork)
			}
			plan, err := SolveWith(p, Options{Method: Decomposed})
			if err != nil {
				t.Fatal(err)
			}
			if plan.Status != Optimal {
				t.Fatalf("status %s", plan.Status)
			}
			m, err := BuildModel(p)
			if err != nil {
				t.Fatal(err)
			}
			want, ok := GlpsolOptimum(t, m)
			if !ok {
				t.Fatal("glpsol found no optimum")
			}
			got, _, _ := ModelObjectives(p, plan)
			if !relClose(got, want, 1e-6) {
				t.Errorf("primary objective %.12g, glpsol %.12g", got, want)
			}
			t.Logf("%s: primary %.12g, glpsol %.12g; %d master solves, %d restarts", p.Objective, got, want, plan.Stats.Solves, plan.Stats.Restarts)
		})
	}
}

// TestHoldBudgetAgreesWithGLPKAtBenchmarkSize: the least level budget that
// holds today's condition on the 20x7x6x30 network (past
// fundingFlatColumns, so LevelBudget answers through the decomposition)
// equals, to the currency unit it is rounded up to, the optimum GLPK's
// glpsol finds on the same flat funding model (within 1e-6 relative
// before rounding, and the rounding adds at most one unit).
func TestHoldBudgetAgreesWithGLPKAtBenchmarkSize(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	p := Generate(rand.New(rand.NewPCG(1, 1)), GenSpec{Classes: 20, States: 7, Treatments: 6, Years: 30, BudgetShare: 0.15})
	p.Targets = []Target{{Label: "hold", Class: Network, Kind: Hold}}
	if flatColumns(p) <= fundingFlatColumns {
		t.Fatalf("%d flat columns: LevelBudget would not use the decomposition", flatColumns(p))
	}
	got, err := LevelBudget(p)
	if err != nil {
		t.Fatal(err)
	}
	q := uncapped(p, true)
	b := newBuilder(q)
	m := b.build()
	level := addLevelRows(b, m)
	m.Obj, m.Maximize = make([]float64, len(m.Cols)), false
	m.Obj[level] = 1
	want, ok := GlpsolOptimum(t, m)
	if !ok {
		t.Fatal("glpsol found no optimum")
	}
	want *= b.moneyUnit
	if !(got >= want*(1-1e-6) && got <= want*(1+1e-6)+1) {
		t.Errorf("hold budget %.0f, glpsol %.3f", got, want)
	}
	t.Logf("hold budget %.0f, glpsol %.3f", got, want)
}
