package scenarios_test

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// twoStateYAML is a one-class network worked by hand below (invented
// numbers): 100 km of pipe, 60 sound and 40 failed; a sound km fails with
// probability 0.2 a year; replacement (to sound, 500 a km) is the only
// treatment, with 5,000 a year to spend; replacement cost 1,000 a km; no
// escalation; two years.
const twoStateYAML = scenarios.TwoStateYAML

// The two-state network by hand.
//
// Remaining life: from Sound the years to Failed are geometric with
// success probability 0.2, mean 1/0.2 = 5; Failed has 0. Remaining shares
// (Sound as new): 1 and 0.
//
// Today: depreciated replacement cost 60 km x 1 x 1,000 = 60,000 of a
// current replacement cost of 100,000: consumption ratio 0.6; mean
// remaining life (60 x 5 + 40 x 0) / 100 = 3 years.
//
// Year 1: the budget replaces 10 km (5,000 / 500; replacing is the only
// way to raise the condition, so the max-condition plan spends it all).
// With no work, 60 sound km would keep 48 sound: consumption
// (60 - 48) x 1,000 = 12,000. The replaced 10 km are sound and then age in
// the year: the year ends with 0.8 x (60 + 10) = 56 sound km, so the
// depreciated cost is 56,000 (ratio 0.56) and the mean remaining life 2.8.
//
// Year 2: consumption (56 - 44.8) x 1,000 = 11,200; 0.8 x 66 = 52.8 sound
// km at the end: 52,800 (ratio 0.528).
//
// Asset sustainability ratio over the two years: renewal 10,000 /
// consumption 23,200 = 0.431034...
//
// Renewal the condition needs: today's score is 60 (60% sound on a 0-100
// score); keeping it every year needs 0.8 x (60 + x) >= 60, x = 15 km in
// year 1, and again 15 in year 2 (the year starts from 60 sound km again;
// replacing more in year 1 to need less in year 2 costs 500 to save at
// most 0.8 x 500 = 400): 7,500 a year. The renewal funding ratio compares
// present values, 5,000 (1 + 1/1.05) / (7,500 (1 + 1/1.05)) = 2/3, whatever
// the rate, since both spend the same each year.
func TestIndicatorsTwoStateByHand(t *testing.T) {
	sc, err := scenarios.Parse("two.yaml", []byte(twoStateYAML))
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	in := r.Indicators
	if in == nil || len(in.Classes) != 1 || in.RatioYears != 2 {
		t.Fatalf("indicators %+v", in)
	}
	c := in.Classes[0]
	// The solver holds rows to about 1e-9 relative; the figures are sums of
	// a few products of such quantities: 1e-6 of a 1,000-unit figure.
	const tol = 1e-6
	near := func(what string, got *float64, want float64) {
		t.Helper()
		if got == nil {
			t.Errorf("%s: unknown, want %g", what, want)
			return
		}
		if math.Abs(*got-want) > tol*math.Max(1, math.Abs(want)) {
			t.Errorf("%s = %.10g, want %g", what, *got, want)
		}
	}
	lifeSound, lifeFailed := c.RemainingLife[0].Years, c.RemainingLife[1].Years
	near("remaining life of Sound", &lifeSound, 5)
	near("remaining life of Failed", &lifeFailed, 0)
	if len(c.RenewalTreatments) != 1 || c.RenewalTreatments[0] != "replace" {
		t.Errorf("renewal treatments %v, want [replace]", c.RenewalTreatments)
	}
	near("depreciated cost today", c.Today.DepreciatedCost, 60000)
	near("consumption ratio today", c.Today.ConsumptionRatio, 0.6)
	near("mean remaining life today", c.Today.MeanRemainingLife, 3)
	wantDep, wantRatio, wantLife, wantUse := []float64{56000, 52800}, []float64{0.56, 0.528}, []float64{2.8, 2.64}, []float64{12000, 11200}
	for y := range 2 {
		iy := c.Years[y]
		year := fmt.Sprintf(", year %d", y+1)
		near("depreciated cost"+year, iy.DepreciatedCost, wantDep[y])
		near("consumption ratio"+year, iy.ConsumptionRatio, wantRatio[y])
		near("mean remaining life"+year, iy.MeanRemainingLife, wantLife[y])
		near("consumption"+year, iy.Consumption, wantUse[y])
		spend := iy.RenewalSpend
		near("renewal spend"+year, &spend, 5000)
		near("required renewal"+year, iy.RequiredRenewal, 7500)
	}
	near("asset sustainability ratio", c.SustainabilityRatio, 10000.0/23200)
	near("renewal funding ratio", c.RenewalFundingRatio, 2.0/3)
	// One class: the network's figures are the class's.
	near("network sustainability ratio", in.Network.SustainabilityRatio, 10000.0/23200)
	near("network renewal funding ratio", in.Network.RenewalFundingRatio, 2.0/3)
	near("network consumption ratio today", in.Network.Today.ConsumptionRatio, 0.6)
	near("network depreciated cost, year 2", in.Network.Years[1].DepreciatedCost, 52800)
}

// For a chain built from expected years in each state (one state down at
// a time, worst absorbing), the years to the worst state from state i are
// the sum of the years in states i..n-2: a sum of independent geometric
// sojourns, whose means add (basic probability). The remaining life the
// indicators report must be that sum.
func TestRemainingLifeIsTheSumOfYearsInState(t *testing.T) {
	sc, err := scenarios.Parse("years.yaml", []byte(`name: Years in state (invented example)
start_year: 2030
horizon: 3
scales:
  four:
    states:
      - {name: A, min: 75, max: 100, value: 90}
      - {name: B, min: 50, max: 75, value: 60}
      - {name: C, min: 25, max: 50, value: 40}
      - {name: D, min: 0, max: 25, value: 10}
    groups: {good: [A], fair: [B, C], poor: [D]}
classes:
  - name: kerbs
    scale: four
    unit: m
    inventory: {A: 10, B: 10, C: 10, D: 10}
    replacement_cost: 80
    deterioration: {years_in_state: [7.5, 4, 2.5]}
    treatments: [renew]
treatments:
  - {name: renew, applies_to: [C, D], cost: 60, effect: {to: A}}
`))
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{7.5 + 4 + 2.5, 4 + 2.5, 2.5, 0}
	got := r.Indicators.Classes[0].RemainingLife
	for i, w := range want {
		// A 3x3 bidiagonal inverse; lives are rounded to 1e-9 years.
		if math.Abs(got[i].Years-w) > 2e-9 {
			t.Errorf("state %s: remaining life %.12g, want %g", got[i].State, got[i].Years, w)
		}
	}
	// Straight-line depreciation: every unit not in the worst state loses
	// 1/14 of its replacement cost a year (see indicators.go), so the first
	// year's consumption is 30 m x 80 / 14.
	if c := r.Indicators.Classes[0].Years[0].Consumption; c == nil || math.Abs(*c-30*80/14.0) > 1e-9 {
		t.Errorf("consumption %v, want %g", c, 30*80/14.0)
	}
	// A forecast does no work: no renewal spend, and no plan to compare with.
	if in := r.Indicators; in.Network.SustainabilityRatio == nil || *in.Network.SustainabilityRatio != 0 || in.Network.RenewalFundingRatio != nil {
		t.Errorf("forecast ratios %+v", in.Network.IndicatorRatios)
	}
}

// Money ring-fenced for one class is no part of what holding another
// class's condition costs: with a second class whose spend is held to a
// floor, the hand-worked class keeps its required renewal of 7,500 a year
// (worked above) and the plan still answers.
func TestRequiredRenewalIgnoresOtherClassesFloors(t *testing.T) {
	text := strings.Replace(twoStateYAML, "budget: {yearly: 5000}", "budget: {yearly: 12000, min_yearly: {hydrants: 8000}}", 1)
	text = strings.Replace(text, "treatments:\n  - {name: replace", `  - name: hydrants
    scale: two
    unit: each
    inventory: {Sound: 60, Failed: 40}
    replacement_cost: 400
    deterioration: {matrix: [[0.9, 0.1], [0, 1]]}
    treatments: [replace]
treatments:
  - {name: replace`, 1)
	sc, err := scenarios.Parse("floors.yaml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatalf("plan with a floor on another class: %v", err)
	}
	req := r.Indicators.Classes[0].Years[0].RequiredRenewal
	if req == nil || math.Abs(*req-7500) > 1e-6*7500 {
		t.Errorf("pipes' required renewal in year 1 = %v, want 7500 (worked by hand above)", req)
	}
}
