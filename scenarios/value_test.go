package scenarios_test

import (
	"math"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// valueScenario: one class of 100 units (invented numbers) on the
// five-state scale with poor = Poor and Very poor. For Poor, skim is the
// cheapest treatment but leaves half in Poor, so Poor calls for patch (40,
// lifts it to Fair); nothing lifts Very poor, so it calls for replacement
// (1000 a unit).
const valueScenario = `name: Marrowby value test (invented example)
start_year: 2030
horizon: 3
cost_escalation: 0.1
` + fiveStateScale + `classes:
  - name: roads
    scale: five
    unit: each
    replacement_cost: 1000
    inventory: {Very good: 10, Good: 20, Fair: 30, Poor: 25, Very poor: 15}
    deterioration: {years_in_state: [5, 4, 4, 2]}
    treatments: [overlay, patch, skim]
treatments:
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {to: Very good}}
  - {name: patch, applies_to: [Poor], cost: 40, effect: {improve: 1}}
  - name: skim
    applies_to: [Poor, Very poor]
    cost: 5
    effect: {distribution: {Poor: {Fair: 0.5, Poor: 0.5}, Very poor: {Poor: 1}}}
`

func TestValueAndBacklogByDefinition(t *testing.T) {
	sc := mustParse(t, valueScenario)
	r, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	// Current replacement value = quantity x replacement unit cost, and the
	// backlog = cost of the work that brings poor assets out of poor
	// (asset management plan reporting; common practice, no source).
	c := r.Initial.Classes[0]
	if c.ReplacementValue == nil || *c.ReplacementValue != 100*1000 {
		t.Fatalf("today's replacement value %v, want 100,000", c.ReplacementValue)
	}
	if want := 25*40 + 15*1000.0; c.Backlog == nil || *c.Backlog != want {
		t.Fatalf("today's backlog %v, want %v (Poor by patch, Very poor by replacement)", c.Backlog, want)
	}
	if *r.Initial.Network.Backlog != *c.Backlog || *r.Initial.Network.ReplacementValue != *c.ReplacementValue {
		t.Error("one class: network figures differ from the class's")
	}
	// Each year at its own prices: year t escalated (1.1)^(t-1), the prices
	// its work is costed at (docs/model.md, Money; Asset value and backlog).
	for t0, y := range r.Years {
		price := math.Pow(1.1, float64(t0))
		cy := y.Classes[0]
		if want := 100 * 1000 * price; math.Abs(*cy.ReplacementValue-want) > 1e-6 {
			t.Errorf("%d: value %v, want %v", y.Year, *cy.ReplacementValue, want)
		}
		want := (cy.States[3].Quantity*40 + cy.States[4].Quantity*1000) * price
		if math.Abs(*cy.Backlog-want) > 1e-6 {
			t.Errorf("%d: backlog %v, want %v", y.Year, *cy.Backlog, want)
		}
	}
	// Doing nothing lets the backlog grow.
	if last := r.Years[len(r.Years)-1].Network.Backlog; *last <= *r.Initial.Network.Backlog {
		t.Errorf("do-nothing backlog falls from %v to %v", *r.Initial.Network.Backlog, *last)
	}
	rules := map[string]string{}
	for _, br := range r.BacklogRules {
		rules[br.State] = br.Treatment
	}
	if rules["Poor"] != "patch" || rules["Very poor"] != scenarios.Replacement || len(rules) != 2 {
		t.Errorf("backlog rules %v", rules)
	}
}

func TestValueUnknown(t *testing.T) {
	// Without a replacement cost, the value is unknown, and so is the
	// backlog of a poor state no treatment lifts; the network figure is
	// unknown as soon as one class's is.
	text := strings.Replace(valueScenario, "    replacement_cost: 1000\n", "", 1)
	sc := mustParse(t, text)
	r, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Initial.Classes[0]
	if c.ReplacementValue != nil || c.Backlog != nil || r.Initial.Network.Backlog != nil || r.Initial.Network.ReplacementValue != nil {
		t.Errorf("value %v, backlog %v; want both unknown", c.ReplacementValue, c.Backlog)
	}
	// With a treatment that lifts Very poor, the backlog is known again.
	text = strings.Replace(text, "applies_to: [Fair, Poor], cost: 100", "applies_to: [Fair, Poor, Very poor], cost: 100", 1)
	r, err = scenarios.Forecast(mustParse(t, text))
	if err != nil {
		t.Fatal(err)
	}
	if b := r.Initial.Classes[0].Backlog; b == nil || *b != 25*40+15*100 {
		t.Errorf("backlog %v, want 2,500", b)
	}
}

func TestPlanReducesDemoBacklog(t *testing.T) {
	// The demo's plan spends 4.5 million a year against a target of at most
	// 15% poor: its backlog at the end must be below doing nothing's, in
	// the same year's prices (a plan that treats poor assets shrinks the
	// backlog; common practice, no source).
	sc := loadDemo(t)
	plan, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	fc, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	last := len(plan.Years) - 1
	if *plan.Years[last].Network.Backlog >= *fc.Years[last].Network.Backlog {
		t.Errorf("plan backlog %v not below do-nothing %v", *plan.Years[last].Network.Backlog, *fc.Years[last].Network.Backlog)
	}
	if *plan.Years[last].Network.ReplacementValue != *fc.Years[last].Network.ReplacementValue {
		t.Error("the replacement value depends on the work done; it must not")
	}
}
