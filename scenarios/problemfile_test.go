package scenarios_test

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"wearplan/optimize"
	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

// TestWriteProblemRoundTrip writes generated problems of both generators
// (optimize.Generate, with targets, and its catalogue shape) as scenario
// files, reads them back as the commands do, and plans them: the plan of
// the file has the status and objectives of the problem's own plan, and
// where the objective is the mean condition, GLPK's glpsol (Debian
// glpk-utils, simplex) on the problem's exported flat model agrees with
// it within 1e-6 (relative; glpsol's simplex and lp_solve's each stop
// at their own feasibility tolerances, about 1e-9): the file poses the problem, not a copy of
// wearplan's answer. The same bytes come out for the same problem.
func TestWriteProblemRoundTrip(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	specs := []optimize.GenSpec{
		{Classes: 3, States: 5, Treatments: 3, Years: 8, BudgetShare: 0.15, Targets: true},
		{Classes: 4, States: 6, Treatments: 4, Years: 10, BudgetShare: 0.3},
		{Classes: 4, States: 6, Treatments: 4, Years: 10, Targets: true},
		{Classes: 5, States: 5, Treatments: 4, Years: 10, Catalogue: true},
		// Past 21 classes Generate's names run into control characters,
		// and the classes are written as class1, class2, ...
		{Classes: 25, States: 4, Treatments: 3, Years: 5, BudgetShare: 0.2},
	}
	for _, spec := range specs {
		for seed := uint64(1); seed <= 3; seed++ {
			t.Run(fmt.Sprintf("%s/seed%d", spec, seed), func(t *testing.T) {
				p := optimize.Generate(rand.New(rand.NewPCG(seed, 1)), spec)
				var buf bytes.Buffer
				if err := scenarios.WriteProblem(&buf, p, "generated"); err != nil {
					t.Fatal(err)
				}
				var again bytes.Buffer
				if err := scenarios.WriteProblem(&again, p, "generated"); err != nil || !bytes.Equal(buf.Bytes(), again.Bytes()) {
					t.Fatalf("the same problem written twice gives different bytes (%v)", err)
				}
				path := filepath.Join(t.TempDir(), "generated.yaml")
				if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
					t.Fatal(err)
				}
				sc, err := scenarios.LoadFile(path)
				if err != nil {
					t.Fatalf("the written scenario does not load: %v", err)
				}
				q, err := sc.Problem()
				if err != nil {
					t.Fatal(err)
				}
				want, err := optimize.SolveWith(p, optimize.Options{Method: optimize.Flat})
				if err != nil {
					t.Fatal(err)
				}
				got, err := optimize.SolveWith(q, optimize.Options{Method: optimize.Flat})
				if err != nil {
					t.Fatal(err)
				}
				if got.Status != want.Status {
					t.Fatalf("status %s read back, %s as generated", got.Status, want.Status)
				}
				close := func(a, b float64) bool { return math.Abs(a-b) <= 1e-6*math.Max(1, math.Max(math.Abs(a), math.Abs(b))) }
				if !close(got.ConditionScore, want.ConditionScore) || !close(got.PresentValue, want.PresentValue) {
					t.Errorf("read back: score %.10g, present value %.10g; as generated: %.10g, %.10g", got.ConditionScore, got.PresentValue, want.ConditionScore, want.PresentValue)
				}
				if p.Objective != optimize.MaxCondition || want.Status != optimize.Optimal {
					return
				}
				m, err := optimize.BuildModel(p)
				if err != nil {
					t.Fatal(err)
				}
				mps := filepath.Join(t.TempDir(), "generated.mps")
				var mb bytes.Buffer
				if err := optimize.WriteMPS(&mb, m); err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(mps, mb.Bytes(), 0o644); err != nil {
					t.Fatal(err)
				}
				obj, optimal, _ := optimizetest.GlpsolObjective(t, "--freemps", mps)
				if !optimal {
					t.Fatal("glpsol found no optimum of the generated problem")
				}
				if ref := -obj; !close(got.ConditionScore/100, ref) { // the file minimises the negated score
					t.Errorf("read back: mean score %.10g, glpsol on the generated problem %.10g", got.ConditionScore/100, ref)
				}
			})
		}
	}
}

// TestWriteProblemRefusesWidenedClasses: classes widened with the years
// since work (several states with one score) have no scenario form as a
// plain class; writing one is an error that names the class, not a file
// that poses another problem.
func TestWriteProblemRefusesWidenedClasses(t *testing.T) {
	p := optimize.Generate(rand.New(rand.NewPCG(1, 1)), optimize.GenSpec{Classes: 2, States: 4, Treatments: 3, Years: 5, BudgetShare: 0.2, Interval: 3})
	err := scenarios.WriteProblem(&bytes.Buffer{}, p, "widened")
	if err == nil || !strings.Contains(err.Error(), `class "k"`) {
		t.Fatalf("got %v, want an error naming class k", err)
	}
}
