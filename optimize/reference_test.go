package optimize

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"

	"wearplan/optimize/optimizetest"
)

// writeModel writes m as a free MPS file in a temporary folder.
func writeModel(t *testing.T, m *Model, name string) string {
	t.Helper()
	return writeModelAs(t, m, name+".mps", WriteMPS)
}

// writeModelAs writes m with write (WriteMPS, WriteLP) to a file named
// name in a temporary folder and returns its path.
func writeModelAs(t *testing.T, m *Model, name string, write func(io.Writer, *Model) error) string {
	t.Helper()
	var buf bytes.Buffer
	if err := write(&buf, m); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func relClose(a, b, tol float64) bool {
	return math.Abs(a-b) <= tol*math.Max(1, math.Max(math.Abs(a), math.Abs(b)))
}

// TestAgreesWithGLPK solves random scenarios through golp/lp_solve and
// compares the primary optimum with GLPK 5.0's glpsol (Debian package
// glpk-utils), an independent simplex code, solving the exported MPS model.
// The plan's final (tie-broken) solution must still attain glpsol's optimum
// of the primary objective within 1e-6 relative.
func TestAgreesWithGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	rng := rand.New(rand.NewPCG(20270101, 7))
	const cases = 24
	optimal, notMet := 0, 0
	for c := 0; c < cases; c++ {
		spec := randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(6), targets: c%2 == 1, budgetShare: 0.05 + 0.25*rng.Float64()}
		p := randomProblem(rng, spec)
		t.Run(fmt.Sprintf("case%02d", c), func(t *testing.T) {
			m, err := BuildModel(p)
			if err != nil {
				t.Fatal(err)
			}
			refObj, refOptimal, refFeasible := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, m, "plan"))
			r, err := solveFlat(p)
			if err != nil {
				t.Fatal(err)
			}
			if r.status == TargetsNotMet {
				notMet++
				if refFeasible {
					t.Fatalf("lp_solve says infeasible, glpsol found a feasible solution (objective %g)", refObj)
				}
				return
			}
			if !refOptimal {
				t.Fatalf("lp_solve optimal, glpsol not (feasible %t, objective %g)", refFeasible, refObj)
			}
			optimal++
			got := m.Value(r.x[:len(m.Cols)])
			want := refObj
			if m.Maximize {
				want = -want // written as a minimisation
			}
			if !relClose(got, want, 1e-6) {
				t.Errorf("primary objective %.12g, glpsol %.12g (rel diff %.2g)", got, want, math.Abs(got-want)/math.Abs(want))
			}
			t.Logf("%d classes, %d cols, %d rows: objective %.10g", len(p.Classes), len(m.Cols), len(m.Rows), got)
		})
	}
	if optimal < cases/2 {
		t.Errorf("only %d of %d random cases were optimal; the generator no longer exercises the optimum", optimal, cases)
	}
	if notMet == 0 {
		t.Errorf("no random case had unmet targets; the generator no longer exercises the elastic model")
	}
}

// simplexReference solves a small model with gonum's dense simplex
// (gonum.org/v1/gonum/optimize/convex/lp), after turning inequality rows
// into equalities with slack columns. Dense simplex is reliable only on tiny
// models, so tests keep it under about 100 columns.
func simplexReference(m *Model) (float64, error) {
	n := len(m.Cols)
	nslack := 0
	for _, r := range m.Rows {
		if r.Sense != Equal {
			nslack++
		}
	}
	cols := n + nslack
	A := mat.NewDense(len(m.Rows), cols, nil)
	b := make([]float64, len(m.Rows))
	c := make([]float64, cols)
	for j, v := range m.Obj {
		c[j] = v
		if m.Maximize {
			c[j] = -v
		}
	}
	s := n
	for i, r := range m.Rows {
		for _, e := range r.Entries {
			A.Set(i, e.Col, A.At(i, e.Col)+e.Val)
		}
		switch r.Sense {
		case LessEq:
			A.Set(i, s, 1)
			s++
		case GreaterEq:
			A.Set(i, s, -1)
			s++
		}
		b[i] = r.RHS
	}
	opt, _, err := lp.Simplex(c, A, b, 1e-10, nil)
	if m.Maximize {
		opt = -opt
	}
	return opt, err
}

// TestAgreesWithGonumSimplex checks tiny plans against gonum's dense simplex.
func TestAgreesWithGonumSimplex(t *testing.T) {
	rng := rand.New(rand.NewPCG(42, 1))
	checked := 0
	for c := 0; c < 40 && checked < 12; c++ {
		spec := randomSpec{classes: 1 + rng.IntN(2), states: 3, treatments: 2, years: 2 + rng.IntN(2), targets: c%3 == 0, budgetShare: 0.1 + 0.2*rng.Float64()}
		p := randomProblem(rng, spec)
		m, err := BuildModel(p)
		if err != nil {
			t.Fatal(err)
		}
		if len(m.Cols) > 100 {
			continue
		}
		r, err := solveFlat(p)
		if err != nil {
			t.Fatal(err)
		}
		ref, refErr := simplexReference(m)
		if r.status != Optimal {
			if refErr == nil {
				t.Errorf("case %d: lp_solve %s, gonum simplex optimal %g", c, r.status, ref)
			}
			continue
		}
		if refErr != nil {
			t.Errorf("case %d: gonum simplex: %v", c, refErr)
			continue
		}
		got := m.Value(r.x[:len(m.Cols)])
		if !relClose(got, ref, 1e-6) {
			t.Errorf("case %d (%d cols): objective %.12g, gonum simplex %.12g", c, len(m.Cols), got, ref)
		}
		checked++
	}
	if checked < 8 {
		t.Fatalf("only %d tiny cases compared", checked)
	}
}

// TestCLPReadsTheExportedModel: COIN-OR CLP (Debian package coinor-clp), a
// third independent simplex code, solves the exported free MPS model to
// the same optimum. CLP prints the objective with about nine significant
// digits, well inside the 1e-6 relative tolerance.
func TestCLPReadsTheExportedModel(t *testing.T) {
	clp := optimizetest.RequireTool(t, "clp")
	rng := rand.New(rand.NewPCG(11, 5))
	for c := 0; c < 6; c++ {
		p := randomProblem(rng, randomSpec{classes: 1 + rng.IntN(3), states: 3 + rng.IntN(4), treatments: 2 + rng.IntN(3), years: 3 + rng.IntN(6), budgetShare: 0.1 + 0.2*rng.Float64()})
		m, err := BuildModel(p)
		if err != nil {
			t.Fatal(err)
		}
		path := writeModel(t, m, "clp")
		out, err := exec.Command(clp, path, "-solve").CombinedOutput()
		if err != nil {
			t.Fatalf("clp: %v\n%s", err, out)
		}
		var ref float64
		found := false
		for _, line := range strings.Split(string(out), "\n") {
			// "Optimal objective -0.949546915 - 11836 iterations time 2.332"
			if f := strings.Fields(line); len(f) >= 3 && f[0] == "Optimal" && f[1] == "objective" {
				ref, err = strconv.ParseFloat(f[2], 64)
				found = err == nil
			}
		}
		if !found {
			t.Fatalf("case %d: no optimal objective in clp output:\n%s", c, out)
		}
		r, err := solveFlat(p)
		if err != nil || r.status != Optimal {
			t.Fatalf("case %d: %v %v", c, err, r)
		}
		got := m.Value(r.x[:len(m.Cols)])
		if m.Maximize {
			ref = -ref
		}
		if !relClose(got, ref, 1e-6) {
			t.Errorf("case %d: objective %.12g, clp %.12g", c, got, ref)
		}
	}
}
