package optimize

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"testing"

	"wearplan/optimize/optimizetest"
)

// denseCase is the tests' own copy of a small LP, max obj·x over rows
// a[i]·x (sense[i]) rhs[i] and x >= 0, held densely. Every answer of a
// denseLP is checked against it and against glpsol solving it from scratch,
// never against the denseLP's own data.
type denseCase struct {
	obj   []float64
	a     [][]float64 // per row, dense over columns
	sense []Sense
	rhs   []float64
}

func (c *denseCase) cols() int { return len(c.obj) }

// addColumn appends column col (dense over rows) with objective obj, to
// the case and, when d is not nil, to d as well.
func (c *denseCase) addColumn(d *denseLP, obj float64, col []float64) {
	c.obj = append(c.obj, obj)
	for i := range c.a {
		c.a[i] = append(c.a[i], col[i])
	}
	if d == nil {
		return
	}
	rows, vals := []int32{}, []float64{}
	if obj != 0 {
		rows, vals = append(rows, 0), append(vals, obj)
	}
	for i, v := range col {
		if v != 0 {
			rows, vals = append(rows, int32(i+1)), append(vals, v)
		}
	}
	d.addColumn(rows, vals)
}

// addRow appends a row (dense over columns) to the case and to d.
func (c *denseCase) addRow(d *denseLP, a []float64, s Sense, rhs float64) {
	c.a = append(c.a, append([]float64(nil), a...))
	c.sense = append(c.sense, s)
	c.rhs = append(c.rhs, rhs)
	if d == nil {
		return
	}
	cols, vals := []int32{}, []float64{}
	for j, v := range a {
		if v != 0 {
			cols, vals = append(cols, int32(j)), append(vals, v)
		}
	}
	d.addRow(cols, vals, s, rhs)
}

// column is column j of the case, dense over rows.
func (c *denseCase) column(j int) []float64 {
	col := make([]float64, len(c.a))
	for i := range c.a {
		col[i] = c.a[i][j]
	}
	return col
}

// load builds a fresh denseLP holding c: rows first and then the columns
// with their entries, or the columns (objective only) first and then the
// rows with theirs, so that both ways of adding entries are exercised.
func (c *denseCase) load(rowsFirst bool) *denseLP {
	d := newDenseLP()
	tmp := &denseCase{}
	if rowsFirst {
		for i := range c.a {
			tmp.addRow(d, make([]float64, 0), c.sense[i], c.rhs[i])
		}
		for j := range c.obj {
			tmp.addColumn(d, c.obj[j], c.column(j))
		}
		return d
	}
	for j := range c.obj {
		tmp.addColumn(d, c.obj[j], nil)
	}
	for i := range c.a {
		tmp.addRow(d, c.a[i], c.sense[i], c.rhs[i])
	}
	return d
}

// model is the case as a Model for the MPS writer.
func (c *denseCase) model() *Model {
	m := &Model{Name: "dense", Maximize: true}
	for j, v := range c.obj {
		m.addCol(fmt.Sprintf("x%d", j+1), v)
	}
	for i, a := range c.a {
		r := Row{Name: fmt.Sprintf("r%d", i+1), Sense: c.sense[i], RHS: c.rhs[i]}
		for j, v := range a {
			if v != 0 {
				r.Entries = append(r.Entries, Entry{Col: j, Val: v})
			}
		}
		m.addRow(r)
	}
	return m
}

// denseRef is glpsol's answer: its status and the maximum.
type denseRef struct {
	status denseStatus
	obj    float64
}

// glpsolDense solves c from scratch with GLPK's glpsol (5.0, Debian
// package glpk-utils; primal simplex) on a free MPS file, with
// --nopresol so that an infeasible or unbounded LP still gets a status, and
// reads the raw solution line "s bas ROWS COLS PRIMAL DUAL OBJ": PRIMAL
// and DUAL "f" is optimal, PRIMAL "f" with DUAL "n" (no dual feasible
// solution) is unbounded, PRIMAL "n" is infeasible. Anything else fails
// the test.
func glpsolDense(t *testing.T, c *denseCase) denseRef {
	t.Helper()
	glpsol := optimizetest.RequireTool(t, "glpsol")
	path := writeModel(t, c.model(), "dense")
	sol := path + ".sol"
	out, err := exec.Command(glpsol, "--freemps", path, "--nopresol", "-w", sol).CombinedOutput()
	if err != nil {
		t.Fatalf("glpsol: %v\n%s", err, out)
	}
	f, err := os.Open(sol)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fl := strings.Fields(sc.Text())
		if len(fl) != 7 || fl[0] != "s" || fl[1] != "bas" {
			continue
		}
		obj, err := strconv.ParseFloat(fl[6], 64)
		if err != nil {
			t.Fatalf("glpsol solution %s: %v", sol, err)
		}
		// The MPS file poses the maximisation as the minimisation of
		// its negation (WriteMPS).
		switch p, d := fl[4], fl[5]; {
		case p == "f" && d == "f":
			return denseRef{denseOptimal, -obj}
		case p == "f" && d == "n":
			return denseRef{denseUnbounded, 0}
		case p == "n":
			return denseRef{denseInfeasible, 0}
		}
		t.Fatalf("glpsol ended with primal status %s, dual status %s\n%s", fl[4], fl[5], out)
	}
	t.Fatalf("no solution line in %s\n%s", sol, out)
	return denseRef{}
}

// denseLimit is far more iterations than the simplex method needs on the
// tests' LPs; reaching it means a stall.
const denseLimit = 20000

// denseTol is the tolerance of every check, relative to the size of the
// quantities compared.
const denseTol = 1e-7

// checkDense compares d's answer st with glpsol's ref and, when both are
// optimal, checks the answer against c on its own: the same maximum as
// glpsol (1e-7 relative), x >= 0 and every row met (1e-7 relative to the
// row's terms), duals of lp_solve's signs for a maximisation (<= 0 on a >=
// row, >= 0 on a <= row), no column with a positive reduced cost
// c_j - y·a_j, and y·b == c·x (strong duality; Chvátal 1983, chapter 5).
// It reports false for an iteration-limit or singular status, which
// callers count.
func checkDense(t *testing.T, name string, c *denseCase, d *denseLP, st denseStatus, ref denseRef) bool {
	t.Helper()
	if st == denseIterationLimit || st == denseSingular {
		t.Logf("%s: %s (glpsol %s)", name, st, ref.status)
		return false
	}
	if st != ref.status {
		t.Errorf("%s: %s, glpsol %s (%d rows, %d columns)", name, st, ref.status, len(c.a), c.cols())
		return true
	}
	if st != denseOptimal {
		return true
	}
	x, y := d.variables(), d.duals()
	if len(x) != c.cols() || len(y) != len(c.a) {
		t.Fatalf("%s: %d values and %d duals for %d columns and %d rows", name, len(x), len(y), c.cols(), len(c.a))
	}
	cx, cxScale := 0.0, 1.0
	for j, v := range x {
		if v < -denseTol*math.Max(1, math.Abs(v)) {
			t.Errorf("%s: x%d = %g < 0", name, j+1, v)
		}
		cx += c.obj[j] * v
		cxScale = math.Max(cxScale, math.Abs(c.obj[j]*v))
	}
	// glpsol: the same maximum.
	if math.Abs(cx-ref.obj) > denseTol*math.Max(1, math.Abs(ref.obj)) {
		t.Errorf("%s: maximum %.12g, glpsol %.12g", name, cx, ref.obj)
	}
	yb, ybScale := 0.0, 1.0
	ymax := 1.0
	for _, v := range y {
		ymax = math.Max(ymax, math.Abs(v))
	}
	for i, a := range c.a {
		ax, scale := 0.0, math.Max(1, math.Abs(c.rhs[i]))
		for j, v := range a {
			ax += v * x[j]
			scale = math.Max(scale, math.Abs(v*x[j]))
		}
		tol := denseTol * scale
		dtol := denseTol * ymax
		switch c.sense[i] {
		case LessEq:
			if ax > c.rhs[i]+tol {
				t.Errorf("%s: row %d: %.12g > %.12g", name, i+1, ax, c.rhs[i])
			}
			if y[i] < -dtol {
				t.Errorf("%s: row %d (<=): dual %g < 0", name, i+1, y[i])
			}
		case GreaterEq:
			if ax < c.rhs[i]-tol {
				t.Errorf("%s: row %d: %.12g < %.12g", name, i+1, ax, c.rhs[i])
			}
			if y[i] > dtol {
				t.Errorf("%s: row %d (>=): dual %g > 0", name, i+1, y[i])
			}
		case Equal:
			if math.Abs(ax-c.rhs[i]) > tol {
				t.Errorf("%s: row %d: %.12g != %.12g", name, i+1, ax, c.rhs[i])
			}
		}
		yb += y[i] * c.rhs[i]
		ybScale = math.Max(ybScale, math.Abs(y[i]*c.rhs[i]))
	}
	// Dual feasibility: y·A >= c, column by column.
	for j := range c.obj {
		rc, scale := c.obj[j], math.Max(1, math.Abs(c.obj[j]))
		for i := range c.a {
			rc -= y[i] * c.a[i][j]
			scale = math.Max(scale, math.Abs(y[i]*c.a[i][j]))
		}
		if rc > denseTol*scale {
			t.Errorf("%s: column %d: reduced cost %g > 0", name, j+1, rc)
		}
	}
	if math.Abs(yb-cx) > denseTol*math.Max(cxScale, ybScale) {
		t.Errorf("%s: y·b = %.12g, c·x = %.12g", name, yb, cx)
	}
	return true
}

// TestDenseLPTextbookExamples solves worked examples whose optimum a
// textbook gives, and checks the same optimum with glpsol. The values are
// quoted from memory of the books, so glpsol confirms each one as well.
func TestDenseLPTextbookExamples(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	type row struct {
		a     []float64
		sense Sense
		rhs   float64
	}
	for _, tc := range []struct {
		name string
		obj  []float64 // maximised
		rows []row
		max  float64
		x    []float64 // the optimum, where the book gives it
	}{
		{
			// Chvátal, Linear Programming (1983), chapter 2, the first
			// worked example: the optimum 13 at x = (2, 0, 1), from
			// memory.
			name: "Chvatal chapter 2",
			obj:  []float64{5, 4, 3},
			rows: []row{
				{[]float64{2, 3, 1}, LessEq, 5},
				{[]float64{4, 1, 2}, LessEq, 11},
				{[]float64{3, 4, 2}, LessEq, 8},
			},
			max: 13,
			x:   []float64{2, 0, 1},
		},
		{
			// Beale (1955), "Cycling in the dual simplex algorithm",
			// Naval Research Logistics Quarterly 2: the example on which
			// Dantzig's largest-coefficient rule with the first-row
			// tie-break cycles. From memory: min -3/4 x4 + 150 x5 -
			// 1/50 x6 + 6 x7, optimum -1/20 at x4 = 1/25, x6 = 1. Here
			// maximised with the objective negated.
			name: "Beale 1955 cycling",
			obj:  []float64{3.0 / 4, -150, 1.0 / 50, -6},
			rows: []row{
				{[]float64{1.0 / 4, -60, -1.0 / 25, 9}, LessEq, 0},
				{[]float64{1.0 / 2, -90, -1.0 / 50, 3}, LessEq, 0},
				{[]float64{0, 0, 1, 0}, LessEq, 1},
			},
			max: 1.0 / 20,
			x:   []float64{1.0 / 25, 0, 1, 0},
		},
		{
			// Chvátal (1983), chapter 3, the cycling example (built on
			// the same pattern): max 10x1 - 57x2 - 9x3 - 24x4 with two
			// degenerate rows and x1 <= 1; optimum 1 at x = (1, 0, 1, 0),
			// from memory.
			name: "Chvatal chapter 3 cycling",
			obj:  []float64{10, -57, -9, -24},
			rows: []row{
				{[]float64{0.5, -5.5, -2.5, 9}, LessEq, 0},
				{[]float64{0.5, -1.5, -0.5, 1}, LessEq, 0},
				{[]float64{1, 0, 0, 0}, LessEq, 1},
			},
			max: 1,
			x:   []float64{1, 0, 1, 0},
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := &denseCase{}
			c.a = [][]float64{}
			c.obj = append(c.obj, tc.obj...)
			for _, r := range tc.rows {
				c.a = append(c.a, r.a)
				c.sense = append(c.sense, r.sense)
				c.rhs = append(c.rhs, r.rhs)
			}
			ref := glpsolDense(t, c)
			// glpsol confirms the book's optimum.
			if ref.status != denseOptimal || math.Abs(ref.obj-tc.max) > 1e-9 {
				t.Fatalf("glpsol: %s %.12g, the book %.12g", ref.status, ref.obj, tc.max)
			}
			for _, rowsFirst := range []bool{true, false} {
				d := c.load(rowsFirst)
				st := d.solve(denseLimit)
				if !checkDense(t, fmt.Sprintf("rows first %t", rowsFirst), c, d, st, ref) {
					t.Fatalf("rows first %t: %s", rowsFirst, st)
				}
				// The book's optimum (unique in these examples).
				for j, v := range d.variables() {
					if math.Abs(v-tc.x[j]) > 1e-9 {
						t.Errorf("rows first %t: x%d = %.12g, the book %g", rowsFirst, j+1, v, tc.x[j])
					}
				}
			}
		})
	}
}

// denseSpec shapes a random case.
type denseSpec struct {
	maxRows, maxCols int
	convexity        float64 // chance of a row Σ x = 1, as the masters have
	feasible         float64 // chance that the right-hand sides come from a point x0 >= 0
}

// randomDenseCase draws a small LP that is often degenerate: integer
// coefficients in half the cases (ties in both ratio test and pricing),
// many zero right-hand sides tight at the point x0, repeated columns, and
// a convexity row in many cases.
func randomDenseCase(rng *rand.Rand, spec denseSpec) *denseCase {
	m := 1 + rng.IntN(spec.maxRows)
	n := 1 + rng.IntN(spec.maxCols)
	density := 0.1 + 0.7*rng.Float64()
	integer := rng.IntN(2) == 0
	coef := func() float64 {
		if integer {
			return float64(rng.IntN(9) - 3)
		}
		// Dyadic, a few significant bits: x0's rows below are then exact
		// in floating point, so that an equality system met by x0 is met
		// exactly and the LP is well posed (rounded right-hand sides made
		// some random equality systems infeasible but for 1e-16, where
		// floating-point solvers differ by 1e-7).
		return math.Round((rng.Float64()*6-1.5)*256) / 256 * math.Ldexp(1, 2*rng.IntN(3)-2)
	}
	c := &denseCase{a: make([][]float64, m)}
	for i := range c.a {
		c.a[i] = make([]float64, n)
	}
	for j := 0; j < n; j++ {
		c.obj = append(c.obj, 0)
		if j > 0 && rng.Float64() < 0.15 {
			k := rng.IntN(j)
			for i := range c.a {
				c.a[i][j] = c.a[i][k]
			}
			c.obj[j] = c.obj[k]
			if rng.IntN(2) == 0 {
				c.obj[j] = coef()
			}
			continue
		}
		if rng.Float64() < 0.85 {
			c.obj[j] = coef()
		}
		for i := range c.a {
			if rng.Float64() < density {
				c.a[i][j] = coef()
			}
		}
	}
	convex := rng.Float64() < spec.convexity
	// x0 >= 0 in eighths, on about 30% of the columns; summing to 1 under
	// a convexity row.
	x0 := make([]float64, n)
	support := []int{}
	for j := range x0 {
		if rng.Float64() < 0.3 {
			support = append(support, j)
		}
	}
	if len(support) == 0 {
		support = append(support, rng.IntN(n))
	}
	if convex {
		for k := 0; k < 8; k++ {
			x0[support[rng.IntN(len(support))]] += 1.0 / 8
		}
	} else {
		for _, j := range support {
			x0[j] = float64(1+rng.IntN(24)) / 8
		}
	}
	feasible := rng.Float64() < spec.feasible
	for _, a := range c.a {
		var s Sense
		switch u := rng.Float64(); {
		case u < 0.45:
			s = LessEq
		case u < 0.8:
			s = GreaterEq
		default:
			s = Equal
		}
		c.sense = append(c.sense, s)
		rhs := 0.0
		switch {
		case rng.Float64() < 0.35:
			if feasible {
				// Tight at x0: a degenerate vertex nearby.
				for j := range a {
					if x0[j] != 0 {
						a[j] = 0
					}
				}
			}
		case feasible:
			for j, v := range a {
				rhs += v * x0[j]
			}
			if rng.IntN(2) == 0 {
				slack := float64(1+rng.IntN(16)) / 8
				switch s {
				case LessEq:
					rhs += slack
				case GreaterEq:
					rhs -= slack
				}
			}
		default:
			rhs = coef() * 2
		}
		c.rhs = append(c.rhs, rhs)
	}
	if convex {
		ones := make([]float64, n)
		for j := range ones {
			ones[j] = 1
		}
		p := rng.IntN(m + 1)
		c.a = append(c.a[:p], append([][]float64{ones}, c.a[p:]...)...)
		c.sense = append(c.sense[:p], append([]Sense{Equal}, c.sense[p:]...)...)
		c.rhs = append(c.rhs[:p], append([]float64{1}, c.rhs[p:]...)...)
	}
	return c
}

// TestDenseLPAgreesWithGLPKOnRandomLPs solves 200 random small LPs from
// scratch and compares each with glpsol (status, maximum) and with the
// optimality conditions (checkDense).
func TestDenseLPAgreesWithGLPKOnRandomLPs(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	const cases = 200
	byStatus := map[denseStatus]int{}
	odd := 0
	for seed := 0; seed < cases; seed++ {
		rng := rand.New(rand.NewPCG(20261205, uint64(seed)))
		c := randomDenseCase(rng, denseSpec{maxRows: 40, maxCols: 80, convexity: 0.5, feasible: 0.7})
		ref := glpsolDense(t, c)
		d := c.load(seed%2 == 0)
		st := d.solve(denseLimit)
		if !checkDense(t, fmt.Sprintf("seed %d", seed), c, d, st, ref) {
			odd++
		}
		byStatus[ref.status]++
	}
	t.Logf("%d cases: glpsol %d optimal, %d infeasible, %d unbounded; denseLP stopped short on %d",
		cases, byStatus[denseOptimal], byStatus[denseInfeasible], byStatus[denseUnbounded], odd)
	if odd > cases/100 {
		t.Errorf("denseLP stopped at an iteration limit or a singular basis on %d of %d cases", odd, cases)
	}
	// The generator must keep reaching every status, or the comparison
	// no longer tests them.
	for _, s := range []denseStatus{denseOptimal, denseInfeasible, denseUnbounded} {
		if byStatus[s] < cases/20 {
			t.Errorf("only %d of %d cases %s", byStatus[s], cases, s)
		}
	}
}

// TestDenseLPWarmStartAgreesWithGLPK grows an LP as column generation
// does and solves it from the last basis after each change: columns added
// (some priced to improve on the last duals), a row added that cuts off
// the last optimum, more columns, then nonbasic columns dropped. After
// each solve the answer is checked against glpsol solving the whole LP
// from scratch.
func TestDenseLPWarmStartAgreesWithGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	const cases = 80
	odd, solves, cuts, infeasibleAfterCut, dropped := 0, 0, 0, 0, 0
	for seed := 0; seed < cases; seed++ {
		rng := rand.New(rand.NewPCG(7041, uint64(seed)))
		full := randomDenseCase(rng, denseSpec{maxRows: 30, maxCols: 60, convexity: 0.8, feasible: 0.9})
		// Start from the first few columns of full; the rest come later.
		start := 1 + rng.IntN(full.cols())
		c := &denseCase{a: make([][]float64, len(full.a)), sense: full.sense, rhs: full.rhs}
		d := newDenseLP()
		for i := range full.a {
			c.a[i] = []float64{}
			d.addRow(nil, nil, full.sense[i], full.rhs[i])
		}
		// fullColumn is column j of full over c's rows: zero in the cuts
		// added so far, which a new column escapes.
		fullColumn := func(j int) []float64 {
			col := full.column(j)
			return append(col, make([]float64, len(c.a)-len(col))...)
		}
		next := 0
		addFromFull := func(k int) {
			for ; k > 0 && next < full.cols(); k-- {
				c.addColumn(d, full.obj[next], fullColumn(next))
				next++
			}
		}
		addFromFull(start)
		st := d.solve(denseLimit)
		step := func(what string) bool {
			solves++
			ok := checkDense(t, fmt.Sprintf("seed %d, %s", seed, what), c, d, st, glpsolDense(t, c))
			if !ok {
				odd++
			}
			return ok
		}
		if !step("first solve") {
			continue
		}
		for round := 1; round <= 3; round++ {
			// Columns priced out on the last duals with a positive
			// reduced cost, as a pricing problem would return them, and
			// further columns of full.
			if st == denseOptimal {
				y := d.duals()
				for k := rng.IntN(3); k >= 0; k-- {
					col := fullColumn(rng.IntN(full.cols()))
					obj := 0.0
					for i, v := range col {
						obj += y[i] * v
					}
					c.addColumn(d, obj+0.1+rng.Float64(), col)
				}
			}
			addFromFull(rng.IntN(full.cols()/2 + 1))
			st = d.solve(denseLimit)
			if !step(fmt.Sprintf("columns round %d", round)) {
				break
			}
			if st != denseOptimal {
				continue
			}
			// A row that cuts off the optimum x*: w·x <= w·x* - δ over
			// a random w >= 0 on x*'s support, written as either sense.
			x := d.variables()
			w := make([]float64, c.cols())
			wx := 0.0
			for j, v := range x {
				if v > 1e-9 && rng.IntN(3) > 0 {
					w[j] = float64(1 + rng.IntN(3))
					wx += w[j] * v
				}
			}
			if wx == 0 {
				continue
			}
			cut := wx * (0.3 + 0.5*rng.Float64())
			if rng.IntN(2) == 0 {
				c.addRow(d, w, LessEq, cut)
			} else {
				for j := range w {
					w[j] = -w[j]
				}
				c.addRow(d, w, GreaterEq, -cut)
			}
			cuts++
			st = d.solve(denseLimit)
			if st == denseInfeasible {
				infeasibleAfterCut++
			}
			if !step(fmt.Sprintf("cut %d", round)) {
				break
			}
		}
		if st != denseOptimal {
			continue
		}
		// A solve with nothing changed stays where it is.
		before := d.variables()
		if st = d.solve(denseLimit); st != denseOptimal || d.iters != 0 {
			t.Errorf("seed %d: re-solve without a change: %s after %d iterations", seed, st, d.iters)
		}
		// keepColumns: drop about half the columns; the basic ones stay
		// whatever keep says, so the basis and its optimum stay.
		keep := make([]bool, c.cols())
		basic := make([]bool, c.cols())
		for j := range keep {
			keep[j] = rng.IntN(2) == 0
			basic[j] = d.colPos[j] >= 0
		}
		index := d.keepColumns(keep)
		kept := &denseCase{a: make([][]float64, len(c.a)), sense: c.sense, rhs: c.rhs}
		for i := range kept.a {
			kept.a[i] = []float64{}
		}
		n := 0
		for j, k := range index {
			switch {
			case k < 0 && (keep[j] || basic[j]):
				t.Errorf("seed %d: column %d dropped (kept %t, basic %t)", seed, j, keep[j], basic[j])
			case k >= 0 && !keep[j] && !basic[j]:
				t.Errorf("seed %d: nonbasic column %d kept against keep", seed, j)
			case k >= 0 && k != n:
				t.Errorf("seed %d: column %d renumbered %d, want %d", seed, j, k, n)
			}
			if k >= 0 {
				kept.addColumn(nil, c.obj[j], c.column(j))
				n++
			} else if before[j] != 0 {
				t.Errorf("seed %d: dropped column %d has value %g", seed, j, before[j])
			}
		}
		dropped += len(index) - n
		st = d.solve(denseLimit)
		if st != denseOptimal || d.iters != 0 {
			t.Errorf("seed %d: after keepColumns: %s after %d iterations, want optimal at once", seed, st, d.iters)
		}
		solves++
		if !checkDense(t, fmt.Sprintf("seed %d, keepColumns", seed), kept, d, st, glpsolDense(t, kept)) {
			odd++
			continue
		}
		x := d.variables()
		for j, k := range index {
			if k >= 0 && math.Abs(x[k]-before[j]) > 1e-9*math.Max(1, math.Abs(before[j])) {
				t.Errorf("seed %d: after keepColumns column %d moved from %g to %g", seed, j, before[j], x[k])
			}
		}
		// And it goes on growing: one more column of full.
		c = kept
		addFromFull(1)
		st = d.solve(denseLimit)
		step("column after keepColumns")
	}
	t.Logf("%d cases, %d solves compared with glpsol, %d cuts (%d made the LP infeasible), %d columns dropped; stopped short %d times",
		cases, solves, cuts, infeasibleAfterCut, dropped, odd)
	if odd > solves/100 {
		t.Errorf("denseLP stopped at an iteration limit or a singular basis on %d of %d solves", odd, solves)
	}
	if cuts < cases || infeasibleAfterCut == 0 || dropped == 0 {
		t.Errorf("the cases no longer exercise the warm start: %d cuts, %d infeasible after a cut, %d columns dropped", cuts, infeasibleAfterCut, dropped)
	}
}
