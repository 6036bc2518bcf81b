package optimize

/*
#include <stdint.h>
#include "lp_lib.h"

// wp_over_limit is lp_solve's abort callback: it stops the solve once the
// simplex has taken more iterations than the limit held in the handle.
// lp_solve calls it between iterations, so where it stops depends on the
// model alone, never on the clock.
static int __WINAPI wp_over_limit(lprec *lp, void *limit) {
	return get_total_iter(lp) > (COUNTER)(intptr_t)limit;
}

static void wp_set_iteration_limit(lprec *lp, long long limit) {
	if (limit <= 0) {
		put_abortfunc(lp, NULL, NULL);
		return;
	}
	put_abortfunc(lp, wp_over_limit, (void *)(intptr_t)limit);
}

static void wp_set_settings(lprec *lp, int scaling, int simplex, int pricing, int improve) {
	set_scaling(lp, scaling);
	set_simplextype(lp, simplex);
	set_pivoting(lp, pricing);
	set_improve(lp, improve);
}

static long long wp_total_iter(lprec *lp) { return (long long)get_total_iter(lp); }
static int wp_get_scaling(lprec *lp) { return get_scaling(lp); }
static int wp_rows(lprec *lp) { return get_Nrows(lp); }
static int wp_columns(lprec *lp) { return get_Ncolumns(lp); }

// The live master (colmaster.go) grows its model between solves: rows and
// columns added to a solved model keep lp_solve's basis, so the next solve
// goes on from it. count may be zero (an empty row).
static int wp_add_row(lprec *lp, int count, double *vals, int *cols, int sense, double rhs) {
	double zero = 0;
	int first = 1;
	if (count == 0) {
		// lp_solve reads the arrays even for an empty row.
		return add_constraintex(lp, 0, &zero, &first, sense, rhs);
	}
	return add_constraintex(lp, count, vals, cols, sense, rhs);
}
static int wp_add_column(lprec *lp, int count, double *vals, int *rows) {
	return add_columnex(lp, count, vals, rows);
}
static int wp_set_rh(lprec *lp, int row, double v) { return set_rh(lp, row, v); }
static int wp_get_basis(lprec *lp, int *basis) { return get_basis(lp, basis, TRUE); }
static int wp_set_basis(lprec *lp, int *basis) { return set_basis(lp, basis, TRUE); }
*/
import "C"

import (
	"unsafe"

	"github.com/draffensperger/golp"
)

// lprecOf returns the lp_solve model behind a golp LP. golp keeps it as
// the only field of its LP type and offers no way to reach the settings
// below, nor an abort callback; TestLprecOf checks the layout against
// golp's own calls, so that a golp release that changes it fails a test
// instead of corrupting memory.
func lprecOf(lp *golp.LP) *C.lprec {
	return *(**C.lprec)(unsafe.Pointer(lp))
}

// setIterationLimit makes lp_solve stop (status USERABORT) once a solve
// has taken more than limit simplex iterations; zero or less removes the
// limit. Stall detection counts iterations rather than seconds so that
// the answer does not depend on how busy the machine is.
func setIterationLimit(lp *golp.LP, limit int64) {
	C.wp_set_iteration_limit(lprecOf(lp), C.longlong(limit))
}

// iterations is the simplex iteration count of the last solve.
func iterations(lp *golp.LP) int64 { return int64(C.wp_total_iter(lprecOf(lp))) }

// lpSettings is one choice of lp_solve's scaling, simplex type, pricing
// and improvement flags (lp_lib.h's SCALE_*, SIMPLEX_*, PRICER_* and
// PRICE_*, IMPROVE_* values).
type lpSettings struct {
	name                               string
	scaling, simplex, pricing, improve int
}

// settingsPaths are the lp_solve settings a solve tries in turn when an
// answer fails its status or its check. The first is lp_solve's default
// (geometric scaling with equilibration, dual simplex in phase 1 and
// primal in phase 2, Devex pricing that switches rule when it sees
// cycling). The others change what went wrong on the models lp_solve
// failed on: the scaling (the arithmetic mean without equilibration;
// Curtis and Reid's least-squares scaling), the pricing rule (Dantzig's
// largest coefficient), and the simplex in phase 2 (dual throughout, with
// steepest-edge pricing). Mean scaling solved all three models collected
// for this (a flat plan the default called unbounded, an extra-money model
// it failed on, a tie-break master whose answer it could not make
// accurate), the others two of them. Settings with the primal
// simplex in phase 1 are left out: on those models they lost accuracy,
// called a feasible model infeasible, returned a wrong optimum or crashed
// lp_solve 5.5; so are logarithmic scaling and no scaling, which lost
// accuracy (lp_solve's own check failed).
var settingsPaths = []lpSettings{
	{name: "default", scaling: 4 + 64 + 128, simplex: 6, pricing: 2 + 32, improve: 6},
	{name: "mean scaling", scaling: 3 + 128, simplex: 6, pricing: 2 + 32, improve: 6},
	{name: "Dantzig pricing", scaling: 4 + 64 + 128, simplex: 6, pricing: 1, improve: 6},
	{name: "Curtis-Reid scaling", scaling: 7 + 64, simplex: 6, pricing: 2 + 32, improve: 6},
	{name: "dual simplex throughout, Curtis-Reid scaling, steepest edge", scaling: 7 + 64, simplex: 10, pricing: 3 + 4 + 32, improve: 7},
}

// incremental reports whether lp_solve may go on from a solved model's
// last basis under these settings, after rows were added. Only its
// defaults may: under other settings (the primal simplex in phase 1) it
// crashed in its primal simplex loop on a master re-solved that way, so
// models under other settings are rebuilt before every solve.
func (s lpSettings) incremental() bool { return s.name == settingsPaths[0].name }

func (s lpSettings) apply(lp *golp.LP) {
	C.wp_set_settings(lprecOf(lp), C.int(s.scaling), C.int(s.simplex), C.int(s.pricing), C.int(s.improve))
}

// scalingOf and rowsOf read lp_solve's own view of the model, for
// TestLprecOf.
func scalingOf(lp *golp.LP) int { return int(C.wp_get_scaling(lprecOf(lp))) }
func rowsOf(lp *golp.LP) int    { return int(C.wp_rows(lprecOf(lp))) }

// addRow adds a row over the given 0-based columns; it may be empty.
func addRow(lp *golp.LP, cols []int32, vals []float64, sense golp.ConstraintType, rhs float64) bool {
	var vp *C.double
	var cp *C.int
	if len(cols) > 0 {
		cc := make([]C.int, len(cols))
		for i, c := range cols {
			cc[i] = C.int(c + 1)
		}
		vp, cp = (*C.double)(unsafe.Pointer(&vals[0])), &cc[0]
	}
	return C.wp_add_row(lprecOf(lp), C.int(len(cols)), vp, cp, C.int(sense), C.double(rhs)) != 0
}

// addColumn adds a column with the given entries; rows are lp_solve's
// (0 is the objective, 1 the first row).
func addColumn(lp *golp.LP, rows []int32, vals []float64) bool {
	if len(rows) == 0 {
		return C.wp_add_column(lprecOf(lp), 0, nil, nil) != 0
	}
	rr := make([]C.int, len(rows))
	for i, r := range rows {
		rr[i] = C.int(r)
	}
	return C.wp_add_column(lprecOf(lp), C.int(len(rows)), (*C.double)(unsafe.Pointer(&vals[0])), &rr[0]) != 0
}

// setRHS sets the right-hand side of 0-based row r.
func setRHS(lp *golp.LP, r int, v float64) { C.wp_set_rh(lprecOf(lp), C.int(r+1), C.double(v)) }

// columnsOf is lp_solve's column count.
func columnsOf(lp *golp.LP) int { return int(C.wp_columns(lprecOf(lp))) }

// basisOf returns lp_solve's last basis in its own layout (element 0
// unused; then the basic variables, then the others; variable i is row i
// for 1 <= i <= rows and column i-rows after; negative: at its lower
// bound).
func basisOf(lp *golp.LP) []int32 {
	b := make([]int32, 1+rowsOf(lp)+columnsOf(lp))
	if C.wp_get_basis(lprecOf(lp), (*C.int)(unsafe.Pointer(&b[0]))) == 0 {
		return nil
	}
	return b
}

// setBasis hands lp_solve a starting basis in basisOf's layout; it
// reports whether lp_solve accepted it.
func setBasis(lp *golp.LP, b []int32) bool {
	return C.wp_set_basis(lprecOf(lp), (*C.int)(unsafe.Pointer(&b[0]))) != 0
}
