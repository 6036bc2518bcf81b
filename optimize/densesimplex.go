package optimize

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"
)

// denseLP is a small linear program, max c·x over rows a·x (>=, <=, =) b
// and x >= 0, solved by the bounded primal simplex method on a dense
// explicit basis inverse. It serves the live master of a decomposition
// with few rows (denseMasterRows): a class planned alone under a yearly
// score target has about 40. lp_solve spends most of its time on such a
// master setting up each solve (about 0.1 ms; see BenchmarkMasterForm),
// while a warm-started pivot on a 40-row dense inverse costs a few
// microseconds.
//
// The method is the textbook one (Chvátal, Linear Programming, 1983,
// chapters 8 and 10; Maros, Computational Techniques of the Simplex
// Method, 2003, chapter 9 for phase 1): every row i has a logical
// variable r_i = a_i·x, bounded by its sense ([b, inf) for >=, (-inf, b]
// for <=, [b, b] for =), so that the constraints read A x - r = 0 and a
// basis is R of the n+R variables. Phase 1 maximises minus the sum of the
// basic variables' bound violations; phase 2 maximises c·x. Pricing is
// Dantzig's largest reduced cost, switching to Bland's smallest index
// after a run of degenerate pivots so that it cannot cycle; the ratio
// test is Harris's two-pass test. The inverse is updated by elementary
// row operations and computed afresh every refactorEvery pivots and
// before an answer is reported.
//
// Columns and rows can be added between solves and the next solve goes on
// from the last basis: a new column enters at zero, a new row's logical
// is basic. Nothing here is trusted on its own: the live master checks
// every answer (colMaster.read) and turns to lp_solve when one fails.
type denseLP struct {
	rows  int
	sense []Sense
	rhs   []float64
	obj   []float64   // per column
	cols  [][]float64 // per column, dense over rows
	// basis[i] is the variable basic in position i: j >= 0 for column j,
	// -1-i for row i's logical. atUpper marks a nonbasic logical at its
	// upper bound (a <= row's, or an = row's); others sit at their lower
	// bound (columns at zero).
	basis   []int
	colPos  []int  // per column: its basis position, -1 when nonbasic
	rowPos  []int  // per row logical: likewise
	atUpper []bool // per row logical
	inv     [][]float64
	xB      []float64
	pivots  int
	iters   int
	degRun  int
	valid   bool // inv and xB describe basis
}

type denseStatus int

const (
	denseOptimal denseStatus = iota
	denseInfeasible
	denseUnbounded
	denseIterationLimit
	denseSingular
)

func (s denseStatus) String() string {
	switch s {
	case denseOptimal:
		return "optimal"
	case denseInfeasible:
		return "infeasible"
	case denseUnbounded:
		return "unbounded"
	case denseIterationLimit:
		return "iteration limit"
	}
	return "singular basis"
}

const (
	denseFeasTol   = 1e-9  // bound violation a basic variable may show
	denseOptTol    = 1e-9  // reduced cost that counts as improving, relative
	densePivotTol  = 1e-9  // smallest pivot element the ratio test accepts
	refactorEvery  = 50    // pivots between fresh inverses
	blandAfter     = 50    // degenerate pivots in a row before Bland's rule
	denseHugeBound = 1e300 // a bound this large is no bound
)

func newDenseLP() *denseLP { return &denseLP{} }

// addRow adds a row over the given 0-based columns; its logical becomes
// basic.
func (d *denseLP) addRow(cols []int32, vals []float64, sense Sense, rhs float64) {
	i := d.rows
	d.rows++
	d.sense = append(d.sense, sense)
	d.rhs = append(d.rhs, rhs)
	d.atUpper = append(d.atUpper, false)
	for j := range d.cols {
		d.cols[j] = append(d.cols[j], 0)
	}
	for k, c := range cols {
		d.cols[c][i] += vals[k]
	}
	if d.valid {
		// The bordered inverse: with the new logical basic, B' is
		// [[B, 0], [r, -1]] (r the row over the basic columns), whose
		// inverse is [[B^-1, 0], [r B^-1, -1]]; the logical's value is
		// the row's activity.
		newRow := make([]float64, i+1)
		x := 0.0
		for p, v := range d.basis {
			if v < 0 {
				continue
			}
			if r := d.cols[v][i]; r != 0 {
				x += r * d.xB[p]
				for k, w := range d.inv[p] {
					newRow[k] += r * w
				}
			}
		}
		newRow[i] = -1
		for p := range d.inv {
			d.inv[p] = append(d.inv[p], 0)
		}
		d.inv = append(d.inv, newRow)
		d.xB = append(d.xB, x)
	}
	d.rowPos = append(d.rowPos, len(d.basis))
	d.basis = append(d.basis, -1-i)
}

// addColumn adds a column: rows are 0 for the objective and i for row i
// (1-based), as lp_solve's add_columnex takes them. It enters nonbasic at
// zero.
func (d *denseLP) addColumn(rows []int32, vals []float64) {
	col := make([]float64, d.rows)
	c := 0.0
	for k, r := range rows {
		if r == 0 {
			c += vals[k]
		} else {
			col[r-1] += vals[k]
		}
	}
	d.obj = append(d.obj, c)
	d.cols = append(d.cols, col)
	d.colPos = append(d.colPos, -1)
}

func (d *denseLP) setPos(v, p int) {
	if v >= 0 {
		d.colPos[v] = p
	} else {
		d.rowPos[-1-v] = p
	}
}

// order is variable v's place in Bland's rule: columns, then logicals.
func (d *denseLP) order(v int) int {
	if v >= 0 {
		return v
	}
	return len(d.cols) - 1 - v
}

// bounds are variable v's lower and upper bounds.
func (d *denseLP) bounds(v int) (float64, float64) {
	if v >= 0 {
		return 0, math.Inf(1)
	}
	i := -1 - v
	switch d.sense[i] {
	case GreaterEq:
		return d.rhs[i], math.Inf(1)
	case LessEq:
		return math.Inf(-1), d.rhs[i]
	}
	return d.rhs[i], d.rhs[i]
}

// nonbasicValue is where nonbasic variable v sits.
func (d *denseLP) nonbasicValue(v int) float64 {
	if v >= 0 {
		return 0
	}
	lo, hi := d.bounds(v)
	if d.atUpper[-1-v] || math.IsInf(lo, -1) {
		return hi
	}
	return lo
}

// column writes variable v's column of [A | -I] into out.
func (d *denseLP) column(v int, out []float64) {
	if v >= 0 {
		copy(out, d.cols[v])
		return
	}
	clear(out)
	out[-1-v] = -1
}

// refactor computes the basis inverse afresh (gonum's LU with partial
// pivoting), and the basic variables' values from it. A basis gonum
// finds singular is no basis; one it finds ill-conditioned is kept, its
// answers being refined and checked by their reader.
func (d *denseLP) refactor() bool {
	R := d.rows
	b := mat.NewDense(R, R, nil)
	col := make([]float64, R)
	for p, v := range d.basis {
		d.column(v, col)
		b.SetCol(p, col)
	}
	var inv mat.Dense
	if err := inv.Inverse(b); err != nil {
		var c mat.Condition
		if !errors.As(err, &c) || math.IsInf(float64(c), 1) {
			return false
		}
	}
	if len(d.inv) != R {
		d.inv = make([][]float64, R)
	}
	for p := range d.inv {
		// A full slice: a row added later appends to each row on its own.
		d.inv[p] = inv.RawRowView(p)[:R:R]
	}
	d.computeXB()
	d.pivots = 0
	d.valid = true
	return true
}

// computeXB sets the basic values: B xB = -N xN.
func (d *denseLP) computeXB() {
	R := d.rows
	// Columns nonbasic sit at zero and add nothing; a nonbasic logical's
	// column is -e_i.
	rhs := make([]float64, R)
	for i := 0; i < R; i++ {
		if v := -1 - i; d.rowPos[i] < 0 {
			rhs[i] = d.nonbasicValue(v)
		}
	}
	d.xB = make([]float64, R)
	for p := 0; p < R; p++ {
		s := 0.0
		row := d.inv[p]
		for i, r := range rhs {
			if r != 0 {
				s += row[i] * r
			}
		}
		d.xB[p] = s
	}
}

// infeasibility is how far basic position p is outside its bounds:
// negative below, positive above, zero within.
func (d *denseLP) infeasibility(p int) float64 {
	x := d.xB[p]
	if d.basis[p] >= 0 && x >= -denseFeasTol {
		return 0 // a column: at least zero, no upper bound
	}
	lo, hi := d.bounds(d.basis[p])
	tol := denseFeasTol * max(1, math.Abs(x))
	switch {
	case x < lo-tol:
		return x - lo
	case x > hi+tol:
		return x - hi
	}
	return 0
}

// solve runs the simplex method from the current basis, at most limit
// iterations.
func (d *denseLP) solve(limit int) denseStatus {
	R := d.rows
	if !d.valid && !d.refactor() {
		if !d.resetBasis() {
			return denseSingular
		}
	}
	d.iters = 0
	cB := make([]float64, R)
	y := make([]float64, R)
	alpha := make([]float64, R)
	var col []float64
	for {
		if d.pivots >= refactorEvery && !d.refactor() {
			return denseSingular
		}
		// The costs: phase 1 while any basic variable is out of bounds.
		phase1 := false
		for p := 0; p < R; p++ {
			cB[p] = 0
			if f := d.infeasibility(p); f < 0 {
				cB[p], phase1 = 1, true
			} else if f > 0 {
				cB[p], phase1 = -1, true
			}
		}
		if !phase1 {
			for p, v := range d.basis {
				if v >= 0 {
					cB[p] = d.obj[v]
				}
			}
		}
		clear(y)
		for p, c := range cB {
			if c == 0 {
				continue
			}
			for i, w := range d.inv[p] {
				y[i] += c * w
			}
		}
		// Pricing: a column at zero may rise (reduced cost > 0); a
		// logical may leave a finite bound in the direction its reduced
		// cost favours.
		enter, dir, best := 0, 0.0, 0.0
		bland := d.degRun >= blandAfter
		consider := func(v int, rc, scale float64) {
			tol := denseOptTol * max(1, scale)
			if rc <= tol && rc >= -tol {
				return
			}
			lo, hi := d.bounds(v)
			at := d.nonbasicValue(v)
			var dd float64
			switch {
			case rc > tol && at < hi:
				dd = 1
			case rc < -tol && at > lo:
				dd = -1
			default:
				return
			}
			if dir == 0 || (!bland && math.Abs(rc) > best) {
				enter, dir, best = v, dd, math.Abs(rc)
			}
		}
		for j, a := range d.cols {
			if d.colPos[j] >= 0 {
				continue
			}
			c := 0.0
			if !phase1 {
				c = d.obj[j]
			}
			rc, scale := c, math.Abs(c)
			for i, v := range a {
				if v != 0 {
					t := y[i] * v
					rc -= t
					if t > scale {
						scale = t
					} else if -t > scale {
						scale = -t
					}
				}
			}
			consider(j, rc, scale)
			if bland && dir != 0 {
				break
			}
		}
		if !(bland && dir != 0) {
			for i := 0; i < R; i++ {
				v := -1 - i
				if d.rowPos[i] >= 0 || d.sense[i] == Equal {
					continue
				}
				consider(v, y[i], math.Abs(y[i]))
				if bland && dir != 0 {
					break
				}
			}
		}
		if dir == 0 {
			if phase1 {
				return d.finish(denseInfeasible)
			}
			return d.finish(denseOptimal)
		}
		if d.iters >= limit {
			return denseIterationLimit
		}
		d.iters++
		// alpha = B^-1 a_q; basic values move by -t·dir·alpha.
		if enter >= 0 {
			col = d.cols[enter]
			for p, row := range d.inv {
				s := 0.0
				for i, v := range col {
					s += row[i] * v
				}
				alpha[p] = s
			}
		} else {
			i := -1 - enter // the logical's column is -e_i
			for p, row := range d.inv {
				alpha[p] = -row[i]
			}
		}
		leave, step, flip := d.ratio(enter, dir, alpha, phase1, bland)
		if leave < 0 && !flip {
			if phase1 {
				// A phase-1 direction always meets a bound of the
				// variables it is repairing; reaching here is rounding.
				return denseSingular
			}
			return d.finish(denseUnbounded)
		}
		if step <= denseFeasTol {
			d.degRun++
		} else {
			d.degRun = 0
		}
		for p := 0; p < R; p++ {
			d.xB[p] -= step * dir * alpha[p]
		}
		if flip {
			// The entering logical crossed to its other bound; the basis
			// stays.
			d.atUpper[-1-enter] = !d.atUpper[-1-enter]
			continue
		}
		enterValue := d.nonbasicValue(enter) + step*dir
		out := d.basis[leave]
		// The leaving variable stops at the bound it reached.
		if out < 0 {
			lo, hi := d.bounds(out)
			moved := d.xB[leave]
			d.atUpper[-1-out] = !math.IsInf(hi, 1) && math.Abs(moved-hi) <= math.Abs(moved-lo)
		}
		d.pivot(leave, alpha)
		d.setPos(out, -1)
		d.basis[leave] = enter
		d.setPos(enter, leave)
		d.xB[leave] = enterValue
	}
}

// ratio is Harris's two-pass ratio test: the largest step the entering
// variable can take with every basic variable within its bounds widened
// by the tolerance, then among the rows that block within that step the
// one with the largest pivot. In phase 1 an infeasible basic variable
// blocks where it reaches the bound it violates. flip reports that the
// entering variable's own other bound comes first.
func (d *denseLP) ratio(enter int, dir float64, alpha []float64, phase1, bland bool) (leave int, step float64, flip bool) {
	limitOf := func(p int, tol float64) float64 {
		a := dir * alpha[p] // xB[p] changes by -t·a
		if math.Abs(a) < densePivotTol {
			return math.Inf(1)
		}
		lo, hi := d.bounds(d.basis[p])
		x := d.xB[p]
		if phase1 {
			switch f := d.infeasibility(p); {
			case f < 0: // below lo: blocks only when rising to lo
				if a < 0 {
					return (lo - x + tol) / -a
				}
				return math.Inf(1)
			case f > 0:
				if a > 0 {
					return (x - hi + tol) / a
				}
				return math.Inf(1)
			}
		}
		if a > 0 { // falling
			if math.IsInf(lo, -1) {
				return math.Inf(1)
			}
			return math.Max(x-lo+tol, 0) / a
		}
		if math.IsInf(hi, 1) {
			return math.Inf(1)
		}
		return math.Max(hi-x+tol, 0) / -a
	}
	R := d.rows
	bound := math.Inf(1)
	for p := 0; p < R; p++ {
		tol := denseFeasTol * math.Max(1, math.Abs(d.xB[p]))
		bound = math.Min(bound, limitOf(p, tol))
	}
	lo, hi := d.bounds(enter)
	own := hi - lo
	if own < bound && !math.IsInf(own, 1) {
		return -1, own, true
	}
	if math.IsInf(bound, 1) {
		return -1, 0, false
	}
	// Under Bland's rule, the tie goes to the smallest variable.
	leave, big := -1, 0.0
	for p := 0; p < R; p++ {
		if limitOf(p, 0) > bound || math.Abs(alpha[p]) < densePivotTol {
			continue
		}
		switch {
		case leave < 0,
			bland && d.order(d.basis[p]) < d.order(d.basis[leave]),
			!bland && math.Abs(alpha[p]) > big:
			leave, big = p, math.Abs(alpha[p])
		}
	}
	if leave < 0 {
		return -1, 0, false
	}
	return leave, math.Max(limitOf(leave, 0), 0), false
}

// pivot updates the inverse for column alpha entering at position r.
func (d *denseLP) pivot(r int, alpha []float64) {
	R := d.rows
	pr := d.inv[r]
	inv := 1 / alpha[r]
	for i := 0; i < R; i++ {
		pr[i] *= inv
	}
	for p := 0; p < R; p++ {
		if p == r || alpha[p] == 0 {
			continue
		}
		f := alpha[p]
		row := d.inv[p]
		for i := 0; i < R; i++ {
			row[i] -= f * pr[i]
		}
	}
	d.pivots++
}

// finish refactors before an answer is read when the inverse has been
// updated as many times as the solve loop allows. The answer is refined
// when read (variables, duals) and checked by its reader, which solves
// again from a fresh inverse when the check fails.
func (d *denseLP) finish(st denseStatus) denseStatus {
	if d.pivots >= refactorEvery && !d.refactor() {
		return denseSingular
	}
	return st
}

// resetBasis makes every logical basic: the slack basis, always
// nonsingular.
func (d *denseLP) resetBasis() bool {
	d.basis = d.basis[:0]
	for j := range d.colPos {
		d.colPos[j] = -1
	}
	for i := 0; i < d.rows; i++ {
		d.rowPos[i] = i
		d.basis = append(d.basis, -1-i)
		d.atUpper[i] = false
	}
	return d.refactor()
}

// variables are the columns' values, refined once against the
// residual of B xB = -N xN (iterative refinement: Wilkinson; Golub and
// Van Loan, Matrix Computations, section 3.5.3), which takes the rounding
// of an inverse near singularity (policies much alike) out of the answer.
func (d *denseLP) variables() []float64 {
	R := d.rows
	res := make([]float64, R)
	for i := 0; i < R; i++ {
		if d.rowPos[i] < 0 {
			res[i] = d.nonbasicValue(-1 - i)
		}
	}
	col := make([]float64, R)
	for p, v := range d.basis {
		d.column(v, col)
		for i, a := range col {
			res[i] -= a * d.xB[p]
		}
	}
	for p := range d.xB {
		s := 0.0
		for i, w := range d.inv[p] {
			s += w * res[i]
		}
		d.xB[p] += s
	}
	x := make([]float64, len(d.cols))
	for p, v := range d.basis {
		if v >= 0 {
			x[v] = d.xB[p]
		}
	}
	return x
}

// duals are the rows' prices y = c_B B^-1 (for a maximisation: <= 0 on a
// >= row, >= 0 on a <= row), lp_solve's sign convention, refined once
// against the residual of y B = c_B as the variables are.
func (d *denseLP) duals() []float64 {
	R := d.rows
	y := make([]float64, R)
	cB := make([]float64, R)
	for p, v := range d.basis {
		if v >= 0 {
			cB[p] = d.obj[v]
		}
	}
	mul := func(r []float64) {
		for p, c := range r {
			if c == 0 {
				continue
			}
			for i, w := range d.inv[p] {
				y[i] += c * w
			}
		}
	}
	mul(cB)
	res := make([]float64, R)
	col := make([]float64, R)
	for p, v := range d.basis {
		d.column(v, col)
		s := cB[p]
		for i, a := range col {
			s -= y[i] * a
		}
		res[p] = s
	}
	mul(res)
	return y
}

// keepColumns drops the nonbasic columns not kept, renumbering the rest
// in order; basic columns are always kept. It returns the new index of
// every old column (-1: dropped).
func (d *denseLP) keepColumns(keep []bool) []int {
	newIndex := make([]int, len(d.cols))
	n := 0
	for j := range d.cols {
		if d.colPos[j] >= 0 || keep[j] {
			newIndex[j] = n
			d.cols[n], d.obj[n], d.colPos[n] = d.cols[j], d.obj[j], d.colPos[j]
			n++
		} else {
			newIndex[j] = -1
		}
	}
	d.cols, d.obj, d.colPos = d.cols[:n], d.obj[:n], d.colPos[:n]
	for p, v := range d.basis {
		if v >= 0 {
			d.basis[p] = newIndex[v]
		}
	}
	return newIndex
}
