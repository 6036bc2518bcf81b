package optimize

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"wearplan/optimize/optimizetest"
)

// writeLPFile writes m in LP format in a temporary folder.
func writeLPFile(t *testing.T, m *Model, name string) string {
	t.Helper()
	return writeModelAs(t, m, name+".lp", WriteLP)
}

// TestLPFormatSmallModelByHand: the two-product example of Hillier and
// Lieberman, "Introduction to Operations Research" (max 3x + 5y subject to
// x <= 4, 2y <= 12, 3x + 2y <= 18; optimum 36 at x = 2, y = 6; numbers from
// memory, checked by hand at the vertex). GLPK's glpsol reads the LP file
// and must find 36, which shows that the sense, the row operators and the
// right-hand sides are written the way readers understand them. A column in
// no row and an empty row must not change it.
func TestLPFormatSmallModelByHand(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	m := &Model{
		Name:     "byhand",
		Cols:     []string{"x", "y", "unused"},
		Obj:      []float64{3, 5, 0},
		Maximize: true,
		Notes:    []string{"two products\nsecond line kept on one comment line"},
		Rows: []Row{
			{Name: "plant1", Entries: []Entry{{0, 1}}, Sense: LessEq, RHS: 4},
			{Name: "plant2", Entries: []Entry{{1, 2}}, Sense: LessEq, RHS: 12},
			{Name: "plant3", Entries: []Entry{{0, 3}, {1, 2}}, Sense: LessEq, RHS: 18},
			{Name: "nothing", Sense: GreaterEq, RHS: -1},
			{Name: "floor", Entries: []Entry{{0, -1}, {1, -1}}, Sense: GreaterEq, RHS: -100},
		},
	}
	path := writeLPFile(t, m, "byhand")
	if obj, optimal, _ := optimizetest.GlpsolObjective(t, "--lp", path); !optimal || math.Abs(obj-36) > 1e-9 {
		t.Fatalf("glpsol: objective %g (optimal %t), want optimal 36", obj, optimal)
	}
	text, _ := os.ReadFile(path)
	if !strings.Contains(string(text), "\\ two products second line") {
		t.Errorf("note not written as one comment line:\n%s", text)
	}
	if !strings.Contains(string(text), "unused >= 0") {
		t.Errorf("unused column not declared:\n%s", text)
	}
	// The same model as a minimisation of -3x - 5y: the optimum is -36.
	m.Maximize = false
	m.Obj = []float64{-3, -5, 0}
	if obj, optimal, _ := optimizetest.GlpsolObjective(t, "--lp", writeLPFile(t, m, "min")); !optimal || math.Abs(obj+36) > 1e-9 {
		t.Fatalf("glpsol on the minimisation: objective %g (optimal %t), want optimal -36", obj, optimal)
	}
}

// TestLPFormatAgreesWithGLPK: GLPK's glpsol (glpk-utils), an independent
// simplex code, solves the CPLEX LP export of random plans to the primary
// optimum that lp_solve found, within 1e-6 relative, and agrees on which
// plans cannot meet their targets.
func TestLPFormatAgreesWithGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	rng := rand.New(rand.NewPCG(6, 2027))
	const cases = 12
	optimal := 0
	for c := 0; c < cases; c++ {
		spec := randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(6), targets: c%3 == 2, budgetShare: 0.05 + 0.25*rng.Float64()}
		p := randomProblem(rng, spec)
		if c%4 == 1 {
			p.Objective = MinCost
		}
		t.Run(fmt.Sprintf("case%02d", c), func(t *testing.T) {
			m, err := BuildModel(p)
			if err != nil {
				t.Fatal(err)
			}
			refObj, refOptimal, refFeasible := optimizetest.GlpsolObjective(t, "--lp", writeLPFile(t, m, "plan"))
			r, err := solveFlat(p)
			if err != nil {
				t.Fatal(err)
			}
			if r.status != Optimal {
				if refFeasible {
					t.Fatalf("lp_solve: %s; glpsol found a feasible solution (objective %g)", r.status, refObj)
				}
				return
			}
			if !refOptimal {
				t.Fatalf("lp_solve optimal, glpsol not (feasible %t, objective %g)", refFeasible, refObj)
			}
			optimal++
			got := m.Value(r.x[:len(m.Cols)])
			if !relClose(got, refObj, 1e-6) {
				t.Errorf("primary objective %.12g, glpsol on the LP file %.12g", got, refObj)
			}
		})
	}
	if optimal < cases/2 {
		t.Errorf("only %d of %d cases optimal; the generator no longer exercises the optimum", optimal, cases)
	}
}

// TestLPFormatRejectsUnreadableNames: names that LP readers would take for
// numbers or operators are refused instead of written.
func TestLPFormatRejectsUnreadableNames(t *testing.T) {
	for _, name := range []string{"", "1x", ".x", "e1", "a b", "a+b", "a:b", "x<1"} {
		m := &Model{Cols: []string{name}, Obj: []float64{1}}
		if err := WriteLP(&bytes.Buffer{}, m); err == nil {
			t.Errorf("column %q accepted", name)
		}
	}
	for _, name := range []string{"x1_2_3_0", "flow1_1_1", "target2_2031", "energy"} {
		m := &Model{Cols: []string{name}, Obj: []float64{1}}
		if err := WriteLP(&bytes.Buffer{}, m); err != nil {
			t.Errorf("column %q refused: %v", name, err)
		}
	}
}

// TestLPFormatLongRowsWrap: rows with many terms are split over lines that
// stay under the width limit.
func TestLPFormatLongRowsWrap(t *testing.T) {
	m := &Model{}
	var row Row
	for j := 0; j < 300; j++ {
		m.Cols = append(m.Cols, fmt.Sprintf("x%d_1_1_0", j+1))
		m.Obj = append(m.Obj, 1.0/3)
		row.Entries = append(row.Entries, Entry{j, -2.0 / 7})
	}
	row.Name, row.Sense, row.RHS = "long", LessEq, 1
	m.Rows = []Row{row}
	var buf bytes.Buffer
	if err := WriteLP(&buf, m); err != nil {
		t.Fatal(err)
	}
	for i, line := range strings.Split(buf.String(), "\n") {
		if len(line) > lpLineWidth {
			t.Errorf("line %d is %d characters", i+1, len(line))
		}
	}
}
