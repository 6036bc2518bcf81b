package optimize

import (
	"testing"

	"github.com/draffensperger/golp"
)

// TestLprecOf: the lp_solve model reached behind golp's LP is the one golp
// builds: lp_solve's own row count agrees with golp's, its default scaling
// (196: geometric, equilibrate, integers, from lp_solve 5.5's reference
// guide, set_scaling) reads back, and a setting made through it sticks.
func TestLprecOf(t *testing.T) {
	lp := golp.NewLP(0, 2)
	for i := 0; i < 3; i++ {
		if err := lp.AddConstraint([]float64{1, float64(i)}, golp.LE, 4); err != nil {
			t.Fatal(err)
		}
	}
	if got := rowsOf(lp); got != lp.NumRows() || got != 3 {
		t.Fatalf("lp_solve sees %d rows, golp %d, want 3", got, lp.NumRows())
	}
	if got := scalingOf(lp); got != 196 {
		t.Fatalf("default scaling %d, want 196", got)
	}
	settingsPaths[3].apply(lp)
	if got := scalingOf(lp); got != settingsPaths[3].scaling {
		t.Fatalf("scaling %d after setting %d", got, settingsPaths[3].scaling)
	}
}

// TestIterationLimitStopsByCount: a solve that needs more iterations than
// the limit stops with lp_solve's USERABORT after limit+1 iterations, the
// same count every time (the limit counts, it does not time).
func TestIterationLimitStopsByCount(t *testing.T) {
	// An assignment-like LP of 12 x 12 columns needs well over 5 pivots.
	const n = 12
	build := func() *golp.LP {
		lp := golp.NewLP(0, n*n)
		lp.SetVerboseLevel(golp.NEUTRAL)
		for i := 0; i < n; i++ {
			row, col := make([]float64, n*n), make([]float64, n*n)
			for j := 0; j < n; j++ {
				row[i*n+j], col[j*n+i] = 1, 1
			}
			lp.AddConstraint(row, golp.EQ, 1)
			lp.AddConstraint(col, golp.EQ, 1)
		}
		obj := make([]float64, n*n)
		for j := range obj {
			obj[j] = float64((j*7919)%97) + 1
		}
		lp.SetObjFn(obj)
		return lp
	}
	free := build()
	if st := free.Solve(); st != golp.OPTIMAL {
		t.Fatalf("status %v without a limit", st)
	}
	need := iterations(free)
	if need < 10 {
		t.Fatalf("the test model takes only %d iterations", need)
	}
	for run := 0; run < 3; run++ {
		lp := build()
		setIterationLimit(lp, 5)
		if st := lp.Solve(); st != golp.USERABORT {
			t.Fatalf("status %v with a limit of 5 (the model needs %d)", st, need)
		}
		if got := iterations(lp); got != 6 {
			t.Fatalf("stopped after %d iterations, want 6", got)
		}
	}
}
