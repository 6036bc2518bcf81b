package scenarios

import (
	"math"
	"testing"
)

// The machine-maintenance example of Hillier and Lieberman, Introduction to
// Operations Research (Markov decision process chapter, solved there by
// linear programming), written as a scenario file: numbers from memory,
// re-derived by policy enumeration in optimize/longrun_test.go. Optimal
// policy: do nothing in states 0 and 1, overhaul in 2, replace in 3;
// long-run cost 35000/21 ≈ 1666.67 a period.
func TestLongRunTextbookScenario(t *testing.T) {
	sc, err := LoadFile("../testdata/machine-maintenance.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r, err := LongRun(sc, Options{})
	if err != nil {
		t.Fatal(err)
	}
	const book = 35000.0 / 21
	// 1e-7 relative: the tie-break stage's allowance (optimize/longrun_test.go).
	if r.Status != "optimal" || math.Abs(r.AnnualCost-book) > 1e-7*book {
		t.Fatalf("status %s, annual cost %.9g, want %.9g", r.Status, r.AnnualCost, book)
	}
	want := map[string]string{"good as new": "do nothing", "minor deterioration": "do nothing", "major deterioration": "overhaul", "inoperable": "replace"}
	for _, e := range r.Classes[0].Policy {
		if want[e.State] != e.Treatment || math.Abs(e.Share-1) > 1e-6 {
			t.Errorf("state %s: %s for %.6g of it; the book's policy is %s for all of it", e.State, e.Treatment, e.Share, want[e.State])
		}
	}
	if len(r.Classes[0].Policy) != 4 {
		t.Errorf("policy has %d entries, want one per state: %+v", len(r.Classes[0].Policy), r.Classes[0].Policy)
	}
	// Routine (defective output) 1000·5/7, treatments (4000 + 6000)·2/21.
	if math.Abs(r.AnnualRoutine-5000.0/7) > 1e-4 || math.Abs(r.AnnualTreatment-20000.0/21) > 1e-4 {
		t.Errorf("routine %g, treatment %g", r.AnnualRoutine, r.AnnualTreatment)
	}
	if r.Caution != Caution {
		t.Error("long-run result lacks the caution")
	}
}
