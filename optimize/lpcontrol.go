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
