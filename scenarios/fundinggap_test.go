package scenarios

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"wearplan/optimize"
)

// The hold budget is the least level budget under which today's network
// condition holds to the last year: fed back as the budget with the hold
// target alone, the plan holds it; 3% less does not.
func TestHoldBudgetFedBackToTheDemo(t *testing.T) {
	sc := loadDemo(t, "marrowby-reduced.yaml")
	r, err := Plan(sc, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Funding == nil || r.Funding.HoldBudget == nil {
		t.Fatalf("no hold budget: %+v", r.Funding)
	}
	hold := *r.Funding.HoldBudget
	last := sc.Year(sc.Horizon)
	holdOnly := *sc
	holdOnly.Targets = []Target{{Label: "hold", FromYear: last, ToYear: last, Spec: optimize.Target{Label: "hold", Class: optimize.Network, Kind: optimize.Hold}}}
	for _, factor := range []float64{1, 0.97} {
		fed := holdOnly
		fed.Budget = make([]float64, sc.Horizon)
		for y := range fed.Budget {
			fed.Budget[y] = factor * hold
		}
		r2, err := Plan(&fed, Options{SkipFunding: true})
		if err != nil {
			t.Fatal(err)
		}
		if held := r2.Status == "optimal"; held != (factor == 1) {
			t.Errorf("%.0f%% of the hold budget %g: status %s", 100*factor, hold, r2.Status)
		}
	}
}

// Each missed target's money closes that target alone (with the targets
// the plan meets), a relaxation of closing them all: its present value is
// positive and at most that of the money that closes every shortfall.
func TestMoneyPerMissedTarget(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("..", "testdata", "keswold-utility.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	sc, err := Parse("keswold-utility.yaml", data)
	if err != nil {
		t.Fatal(err)
	}
	r, err := Plan(sc, Options{})
	if err != nil {
		t.Fatal(err)
	}
	f := r.Funding
	missed := 0
	for _, o := range r.Targets {
		if !o.Met {
			missed++
		}
	}
	if f == nil || f.ExtraPresentValue == nil || missed < 2 || len(f.Targets) != missed {
		t.Fatalf("%d targets missed, funding %+v", missed, f)
	}
	for _, tm := range f.Targets {
		if tm.Total == nil || tm.PresentValue == nil {
			t.Errorf("%s: no money closes it, though money closes every shortfall", tm.Target)
			continue
		}
		// Amounts are whole currency units rounded up: allow one unit a
		// year of the horizon for the rounding.
		if *tm.PresentValue <= 0 || *tm.PresentValue > *f.ExtraPresentValue+float64(sc.Horizon) {
			t.Errorf("%s: present value %g, every shortfall's %g", tm.Target, *tm.PresentValue, *f.ExtraPresentValue)
		}
		if math.Abs(*tm.Total-math.Round(*tm.Total)) > 0 {
			t.Errorf("%s: total %g is not whole currency units", tm.Target, *tm.Total)
		}
	}
}
