package scenarios_test

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"

	"wearplan/optimize"
	"wearplan/scenarios"
)

// Small inline scenarios for parsing and building. All data is invented
// (the town of Marrowby is invented); only the layout follows the scenario
// file format of docs/scenario-format.md.

const fiveStateScale = `scales:
  five:
    states:
      - {name: Very good, min: 80, max: 100, value: 90}
      - {name: Good,      min: 60, max: 80,  value: 70}
      - {name: Fair,      min: 40, max: 60,  value: 50}
      - {name: Poor,      min: 20, max: 40,  value: 30}
      - {name: Very poor, min: 0,  max: 20,  value: 10}
    groups: {good: [Very good, Good], fair: [Fair], poor: [Poor, Very poor]}
`

const defaultTreatments = `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {improve: 1}}
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {to: Very good}}
`

const yearsDet = "years_in_state: [5, 4, 4, 2]"

// classYAML writes one class on the five-state scale; det is the body of
// deterioration (one line, or several already indented by 6 spaces after the
// first), extra lines are class keys.
func classYAML(name, inventory, det string, extra ...string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "  - name: %s\n    scale: five\n    unit: each\n    inventory: %s\n    deterioration:\n      %s\n    treatments: [seal, overlay]\n", name, inventory, det)
	for _, e := range extra {
		fmt.Fprintf(&b, "    %s\n", e)
	}
	return b.String()
}

const roadsInventory = "{Very good: 10, Good: 20, Fair: 30, Poor: 25, Very poor: 15}" // total 100
const culvertInventory = "{Very good: 5, Good: 10, Fair: 15, Poor: 12, Very poor: 8}" // total 50

// scenarioYAML assembles a scenario: head holds extra top-level keys, tail
// budget/targets/objective. Empty treatments means the default catalogue.
func scenarioYAML(head string, classes []string, treatments, tail string) string {
	if treatments == "" {
		treatments = defaultTreatments
	}
	if len(classes) == 0 {
		classes = []string{classYAML("roads", roadsInventory, yearsDet)}
	}
	return "name: Marrowby parse test (invented example)\nstart_year: 2030\nhorizon: 4\n" + head +
		fiveStateScale + "classes:\n" + strings.Join(classes, "") + treatments + tail
}

func mustParse(t *testing.T, text string) *scenarios.Scenario {
	t.Helper()
	sc, err := scenarios.Parse("inline.yaml", []byte(text))
	if err != nil {
		t.Fatalf("parse: %v\n--- scenario ---\n%s", err, text)
	}
	return sc
}

// wantInputError asserts that text fails with an issue whose field and
// message contain the given substrings.
func wantInputError(t *testing.T, text, field, msg string) {
	t.Helper()
	sc, err := scenarios.Parse("inline.yaml", []byte(text))
	if err == nil {
		t.Fatalf("parsed without error (%d classes); want a problem at %q", len(sc.Classes), field)
	}
	var ie *scenarios.InputError
	if !errors.As(err, &ie) {
		t.Fatalf("error %T, want *scenarios.InputError: %v", err, err)
	}
	for _, is := range ie.Issues {
		if strings.Contains(is.Field, field) && strings.Contains(is.Msg, msg) {
			return
		}
	}
	t.Fatalf("no issue with field %q and message %q in:\n%v", field, msg, err)
}

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

func wantRow(t *testing.T, what string, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %v, want %v", what, got, want)
	}
	for i := range want {
		if !near(got[i], want[i], 1e-12) {
			t.Fatalf("%s: %v, want %v", what, got, want)
		}
	}
}

func findTreatment(t *testing.T, c *scenarios.Class, name string) int {
	t.Helper()
	for i := range c.Treatments {
		if c.Treatments[i].Name == name {
			return i
		}
	}
	t.Fatalf("class %s has no treatment %q", c.Name, name)
	return -1
}

func TestParseAndBuild(t *testing.T) {
	// The transition the default class's years_in_state [5, 4, 4, 2] stands
	// for: p_ii = 1 - 1/d_i, p_i,i+1 = 1/d_i (docs/model.md, Deterioration), the
	// worst state absorbing (no healing without work, same section).
	yearsMatrix := [][]float64{
		{0.8, 0.2, 0, 0, 0},
		{0, 0.75, 0.25, 0, 0},
		{0, 0, 0.75, 0.25, 0},
		{0, 0, 0, 0.5, 0.5},
		{0, 0, 0, 0, 1},
	}
	matrixDet := "matrix:\n" +
		"        - [0.8, 0.2, 0, 0, 0]\n" +
		"        - [0, 0.75, 0.25, 0, 0]\n" +
		"        - [0, 0, 0.75, 0.25, 0]\n" +
		"        - [0, 0, 0, 0.5, 0.5]\n" +
		"        - [0, 0, 0, 0, 1]"
	improvingDet := "matrix:\n" +
		"        - [0.8, 0.2, 0, 0, 0]\n" +
		"        - [0.1, 0.7, 0.2, 0, 0]\n" +
		"        - [0, 0, 0.75, 0.25, 0]\n" +
		"        - [0, 0, 0, 0.5, 0.5]\n" +
		"        - [0, 0, 0, 0, 1]\n" +
		"      allow_improvement: true"
	twoClasses := func(roadsExtra, culvertExtra []string) []string {
		return []string{
			classYAML("roads", roadsInventory, yearsDet, roadsExtra...),
			classYAML("culverts", culvertInventory, yearsDet, culvertExtra...),
		}
	}

	tests := []struct {
		name  string
		text  string
		check func(t *testing.T, sc *scenarios.Scenario)
	}{
		{
			// Defaults (docs/model.md, Objectives; docs/scenario-format.md):
			// min-cost when there is no budget; rates absent mean 0; years
			// count from start_year.
			name: "defaults without budget",
			text: scenarioYAML("", nil, "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if sc.Objective != optimize.MinCost {
					t.Errorf("objective %v, want min-cost when no budget is given", sc.Objective)
				}
				if sc.Budget != nil || len(sc.BudgetGroups) != 0 || sc.CarryOver {
					t.Errorf("budget %v, groups %v, carry-over %v; want none", sc.Budget, sc.BudgetGroups, sc.CarryOver)
				}
				if sc.DiscountRate != 0 || sc.Escalation != 0 {
					t.Errorf("discount %g, escalation %g; want 0 and 0", sc.DiscountRate, sc.Escalation)
				}
				if sc.StartYear != 2030 || sc.Horizon != 4 || sc.Year(1) != 2030 || sc.Year(4) != 2033 {
					t.Errorf("start %d horizon %d, Year(1)=%d Year(4)=%d; want 2030, 4, 2030, 2033", sc.StartYear, sc.Horizon, sc.Year(1), sc.Year(4))
				}
				if len(sc.Targets) != 0 {
					t.Errorf("targets %v, want none", sc.Targets)
				}
				c := &sc.Classes[0]
				wantRow(t, "initial quantities", c.Initial, []float64{10, 20, 30, 25, 15})
				if c.Total() != 100 || c.Unit != "each" || c.Scale.Name != "five" {
					t.Errorf("class total %g unit %q scale %q", c.Total(), c.Unit, c.Scale.Name)
				}
				wantGroups := []optimize.Group{optimize.Good, optimize.Good, optimize.Fair, optimize.Poor, optimize.Poor}
				for i, g := range wantGroups {
					if c.Scale.Group[i] != g {
						t.Errorf("state %s in group %v, want %v", c.Scale.States[i].Name, c.Scale.Group[i], g)
					}
				}
			},
		},
		{
			name: "budget makes max-condition the default; rates are read",
			text: scenarioYAML("discount_rate: 0.03\ncost_escalation: 0.02\n", nil, "", "budget:\n  yearly: 250\n"),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if sc.Objective != optimize.MaxCondition {
					t.Errorf("objective %v, want max-condition when a budget is given", sc.Objective)
				}
				if sc.DiscountRate != 0.03 || sc.Escalation != 0.02 {
					t.Errorf("discount %g escalation %g, want 0.03 and 0.02", sc.DiscountRate, sc.Escalation)
				}
			},
		},
		{
			name: "explicit objective wins over the default",
			text: scenarioYAML("", nil, "", "budget:\n  yearly: 250\nobjective: min-cost\n"),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if sc.Objective != optimize.MinCost {
					t.Errorf("objective %v, want min-cost as written", sc.Objective)
				}
			},
		},
		{
			name: "budget: one number for every year",
			text: scenarioYAML("", nil, "", "budget:\n  yearly: 250\n"),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				wantRow(t, "budget", sc.Budget, []float64{250, 250, 250, 250})
			},
		},
		{
			name: "budget: one number per year",
			text: scenarioYAML("", nil, "", "budget:\n  yearly: [100, 200, 300, 400]\n  carry_over: true\n"),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				wantRow(t, "budget", sc.Budget, []float64{100, 200, 300, 400})
				if !sc.CarryOver {
					t.Errorf("carry_over: true was not read")
				}
			},
		},
		{
			name: "years_in_state gives p_ii = 1 - 1/d_i, p_i,i+1 = 1/d_i",
			text: scenarioYAML("", nil, "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				wantRow(t, "rows", flatten(sc.Classes[0].Transition.Rows()), flatten(yearsMatrix))
			},
		},
		{
			name: "matrix is taken as written",
			text: scenarioYAML("", []string{classYAML("roads", roadsInventory, matrixDet)}, "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				wantRow(t, "rows", flatten(sc.Classes[0].Transition.Rows()), flatten(yearsMatrix))
			},
		},
		{
			name: "matrix may improve without work when the class allows it",
			text: scenarioYAML("", []string{classYAML("roads", roadsInventory, improvingDet)}, "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if got := sc.Classes[0].Transition.At(1, 0); got != 0.1 {
					t.Errorf("P[Good][Very good] = %g, want 0.1", got)
				}
			},
		},
		{
			name: "cost: one number, or one per state",
			text: scenarioYAML("", nil, `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {improve: 1}}
  - {name: overlay, applies_to: [Fair, Poor], cost: {Fair: 100, Poor: 120}, effect: {to: Very good}}
`, ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				c := &sc.Classes[0]
				seal := c.Treatments[findTreatment(t, c, "seal")]
				overlay := c.Treatments[findTreatment(t, c, "overlay")]
				wantRow(t, "seal cost", seal.Cost, []float64{10, 10, 0, 0, 0})
				wantRow(t, "overlay cost", overlay.Cost, []float64{0, 0, 100, 120, 0})
				if fmt.Sprint(seal.Applies) != "[0 1]" || fmt.Sprint(overlay.Applies) != "[2 3]" {
					t.Errorf("applies: seal %v overlay %v, want [0 1] and [2 3]", seal.Applies, overlay.Applies)
				}
			},
		},
		{
			name: "effect: improve and to",
			text: scenarioYAML("", nil, "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				c := &sc.Classes[0]
				seal := c.Treatments[findTreatment(t, c, "seal")]
				overlay := c.Treatments[findTreatment(t, c, "overlay")]
				// improve by 1 is clipped at the best state (docs/model.md, Treatments).
				r0, err0 := seal.EffectRow(0, 5)
				r1, err1 := seal.EffectRow(1, 5)
				r3, err3 := overlay.EffectRow(3, 5)
				if err := errors.Join(err0, err1, err3); err != nil {
					t.Fatal(err)
				}
				wantRow(t, "seal from Very good", r0, []float64{1, 0, 0, 0, 0})
				wantRow(t, "seal from Good", r1, []float64{1, 0, 0, 0, 0})
				wantRow(t, "overlay from Poor", r3, []float64{1, 0, 0, 0, 0})
			},
		},
		{
			name: "distribution: the same for every state treated",
			text: scenarioYAML("", nil, `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {improve: 1}}
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {distribution: {Very good: 0.7, Good: 0.3}}}
`, ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				c := &sc.Classes[0]
				overlay := c.Treatments[findTreatment(t, c, "overlay")]
				for _, i := range []int{2, 3} {
					r, err := overlay.EffectRow(i, 5)
					if err != nil {
						t.Fatal(err)
					}
					wantRow(t, fmt.Sprintf("overlay from state %d", i), r, []float64{0.7, 0.3, 0, 0, 0})
				}
			},
		},
		{
			name: "distribution: one per state treated",
			text: scenarioYAML("", nil, `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {improve: 1}}
  - name: overlay
    applies_to: [Fair, Poor]
    cost: 100
    effect:
      distribution:
        Fair: {Very good: 1}
        Poor: {Good: 0.6, Fair: 0.4}
`, ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				c := &sc.Classes[0]
				overlay := c.Treatments[findTreatment(t, c, "overlay")]
				rf, errf := overlay.EffectRow(2, 5)
				rp, errp := overlay.EffectRow(3, 5)
				if err := errors.Join(errf, errp); err != nil {
					t.Fatal(err)
				}
				wantRow(t, "overlay from Fair", rf, []float64{1, 0, 0, 0, 0})
				wantRow(t, "overlay from Poor", rp, []float64{0, 0.6, 0.4, 0, 0})
			},
		},
		{
			// The year's transition after treatment is row i of E·P, or of E
			// when the treatment does not age in its year (docs/model.md, Treatments).
			name: "ages_same_year defaults to true",
			text: scenarioYAML("", nil, `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {improve: 1}}
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {to: Very good}, ages_same_year: false}
`, ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				c := &sc.Classes[0]
				seal := c.Treatments[findTreatment(t, c, "seal")]
				overlay := c.Treatments[findTreatment(t, c, "overlay")]
				if seal.SkipsAging {
					t.Errorf("seal skips ageing, but ages_same_year was not written (default true)")
				}
				if !overlay.SkipsAging {
					t.Errorf("overlay ages in its year, but ages_same_year: false was written")
				}
				p, err := sc.Problem()
				if err != nil {
					t.Fatal(err)
				}
				acts := p.Classes[0].Actions
				if acts[0].Name != "do nothing" {
					t.Fatalf("first action %q, want do nothing", acts[0].Name)
				}
				wantRow(t, "do nothing from Fair", acts[0].Rows[2], yearsMatrix[2])
				for _, a := range acts {
					switch a.Name {
					case "seal": // to Very good, then a year of ageing: P row 0
						wantRow(t, "seal from Good", a.Rows[1], yearsMatrix[0])
					case "overlay": // to Very good, no ageing this year
						wantRow(t, "overlay from Fair", a.Rows[2], []float64{1, 0, 0, 0, 0})
					}
				}
			},
		},
		{
			// Network weights: replacement value (quantity x unit replacement
			// cost) when every class gives one (docs/model.md, Network figures).
			name: "weighting by replacement value",
			text: scenarioYAML("", twoClasses([]string{"replacement_cost: 1000"}, []string{"replacement_cost: 4000"}), "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if sc.Weighting != scenarios.WeightByValue {
					t.Errorf("weighting %q, want %q", sc.Weighting, scenarios.WeightByValue)
				}
				// roads 100 x 1000 = 100,000; culverts 50 x 4000 = 200,000.
				if !near(sc.Classes[0].Weight, 1.0/3, 1e-12) || !near(sc.Classes[1].Weight, 2.0/3, 1e-12) {
					t.Errorf("weights %g, %g; want 1/3, 2/3", sc.Classes[0].Weight, sc.Classes[1].Weight)
				}
			},
		},
		{
			name: "weighting by the weights given",
			text: scenarioYAML("", twoClasses([]string{"weight: 3"}, []string{"weight: 1"}), "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if sc.Weighting != scenarios.WeightGiven {
					t.Errorf("weighting %q, want %q", sc.Weighting, scenarios.WeightGiven)
				}
				if !near(sc.Classes[0].Weight, 0.75, 1e-12) || !near(sc.Classes[1].Weight, 0.25, 1e-12) {
					t.Errorf("weights %g, %g; want 0.75, 0.25 (normalised)", sc.Classes[0].Weight, sc.Classes[1].Weight)
				}
			},
		},
		{
			// build.go prefers given weights over replacement values when a
			// scenario has both; doc.go lists both rules without an order.
			name: "given weights win over replacement values",
			text: scenarioYAML("", twoClasses([]string{"replacement_cost: 1000", "weight: 1"}, []string{"replacement_cost: 4000", "weight: 1"}), "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if sc.Weighting != scenarios.WeightGiven || !near(sc.Classes[0].Weight, 0.5, 1e-12) {
					t.Errorf("weighting %q, roads weight %g; want given weights 0.5", sc.Weighting, sc.Classes[0].Weight)
				}
			},
		},
		{
			name: "equal weights when only some classes give a replacement cost",
			text: scenarioYAML("", twoClasses([]string{"replacement_cost: 1000"}, nil), "", ""),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if sc.Weighting != scenarios.WeightEqual {
					t.Errorf("weighting %q, want %q", sc.Weighting, scenarios.WeightEqual)
				}
				if sc.Classes[0].Weight != 0.5 || sc.Classes[1].Weight != 0.5 {
					t.Errorf("weights %g, %g; want 0.5 each", sc.Classes[0].Weight, sc.Classes[1].Weight)
				}
			},
		},
		{
			// Targets are written in calendar years and mean end-of-year
			// condition; the optimizer counts plan years from 1 (docs/model.md,
			// Notation and conventions; optimize.Target).
			name: "targets: labels and plan years",
			text: scenarioYAML("", nil, "", `budget: {yearly: 250}
targets:
  - {class: all, group: poor, max_share: 0.15, from_year: 2031, to_year: 2032}
  - {class: roads, group: good, min_share: 0.4}
  - {class: roads, min_average_index: 55, from_year: 2033}
  - {hold: true}
  - {class: roads, hold: true}
`),
			check: func(t *testing.T, sc *scenarios.Scenario) {
				if len(sc.Targets) != 5 {
					t.Fatalf("%d targets, want 5", len(sc.Targets))
				}
				type want struct {
					class      string
					spec       optimize.Target
					from, to   int
					labelParts []string
				}
				wants := []want{
					{"", optimize.Target{Class: optimize.Network, Kind: optimize.MaxShare, Group: optimize.Poor, Value: 0.15, From: 2, To: 3}, 2031, 2032,
						[]string{"network", "poor", "at most 15%", "2031-2032"}},
					{"roads", optimize.Target{Class: 0, Kind: optimize.MinShare, Group: optimize.Good, Value: 0.4, From: 1, To: 4}, 2030, 2033,
						[]string{"roads", "good", "at least 40%", "2030-2033"}},
					// On a 0-100 scale the score of index 55 is 55.
					{"roads", optimize.Target{Class: 0, Kind: optimize.MinScore, Value: 55, From: 4, To: 4}, 2033, 2033,
						[]string{"roads", "at least 55", "in 2033"}},
					{"", optimize.Target{Class: optimize.Network, Kind: optimize.Hold}, 2033, 2033,
						[]string{"network", "2033", "no worse than today"}},
					{"roads", optimize.Target{Class: 0, Kind: optimize.Hold}, 2033, 2033,
						[]string{"roads", "no worse than today"}},
				}
				for n, w := range wants {
					got := sc.Targets[n]
					spec := got.Spec
					spec.Label = ""
					if got.Class != w.class || !reflect.DeepEqual(spec, w.spec) || got.FromYear != w.from || got.ToYear != w.to {
						t.Errorf("target %d: class %q spec %+v years %d-%d; want class %q spec %+v years %d-%d",
							n, got.Class, spec, got.FromYear, got.ToYear, w.class, w.spec, w.from, w.to)
					}
					if got.Spec.Label != got.Label {
						t.Errorf("target %d: optimizer label %q differs from %q", n, got.Spec.Label, got.Label)
					}
					for _, part := range w.labelParts {
						if !strings.Contains(got.Label, part) {
							t.Errorf("target %d: label %q lacks %q", n, got.Label, part)
						}
					}
				}
			},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tc.check(t, mustParse(t, tc.text))
		})
	}
}

func flatten(rows [][]float64) []float64 {
	var out []float64
	for _, r := range rows {
		out = append(out, r...)
	}
	return out
}

func TestParseRejects(t *testing.T) {
	twoClasses := func(roadsExtra, culvertExtra []string) []string {
		return []string{
			classYAML("roads", roadsInventory, yearsDet, roadsExtra...),
			classYAML("culverts", culvertInventory, yearsDet, culvertExtra...),
		}
	}
	tests := []struct {
		name, text, field, msg string
	}{
		{"weight on only some classes", scenarioYAML("", twoClasses([]string{"weight: 2"}, nil), "", ""),
			"classes", "give weight for every class or for none"},
		{"target after the horizon", scenarioYAML("", nil, "", "targets:\n  - {class: all, group: poor, max_share: 0.2, to_year: 2034}\n"),
			"targets[0]", "outside the plan 2030-2033"},
		{"target before the start", scenarioYAML("", nil, "", "targets:\n  - {class: all, group: poor, max_share: 0.2, from_year: 2029}\n"),
			"targets[0]", "outside the plan 2030-2033"},
		{"target with two kinds", scenarioYAML("", nil, "", "targets:\n  - {group: poor, max_share: 0.2, min_share: 0.1}\n"),
			"targets[0]", "give exactly one of"},
		{"share target without a group", scenarioYAML("", nil, "", "targets:\n  - {class: all, max_share: 0.2}\n"),
			"targets[0].group", "want good, fair or poor"},
		{"average index off the scale", scenarioYAML("", nil, "", "targets:\n  - {class: roads, min_average_index: 120}\n"),
			"targets[0].min_average_index", "outside scale"},
		{"matrix improving without permission", scenarioYAML("", []string{classYAML("roads", roadsInventory, "matrix: [[0.8, 0.2, 0, 0, 0], [0.1, 0.7, 0.2, 0, 0], [0, 0, 0.75, 0.25, 0], [0, 0, 0, 0.5, 0.5], [0, 0, 0, 0, 1]]")}, "", ""),
			"deterioration.matrix[1]", "better state without work"},
		{"matrix and years_in_state both", scenarioYAML("", []string{classYAML("roads", roadsInventory, "matrix: [[1, 0], [0, 1]]\n      years_in_state: [5, 4, 4, 2]")}, "", ""),
			"deterioration", "not both"},
		{"years in state below 1", scenarioYAML("", []string{classYAML("roads", roadsInventory, "years_in_state: [5, 0.5, 4, 2]")}, "", ""),
			"years_in_state[1]", "at least 1"},
		{"distribution not summing to 1", scenarioYAML("", nil, `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {improve: 1}}
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {distribution: {Very good: 0.7, Good: 0.2}}}
`, ""), "effect.distribution", "sum to 1"},
		{"two effect forms", scenarioYAML("", nil, `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {improve: 1, to: Very good}}
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {to: Very good}}
`, ""), "treatments[0].effect", "exactly one of to, improve or distribution"},
		{"unknown objective", scenarioYAML("", nil, "", "objective: cheapest\n"), "objective", "unknown objective"},
		{"class named all", scenarioYAML("", []string{classYAML("all", roadsInventory, yearsDet)}, "", ""), "name", "reserved"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			wantInputError(t, tc.text, tc.field, tc.msg)
		})
	}
}

// An IRI-like scale: lower index is better. The good/poor limits are those
// of US 23 CFR 490.313 (good < 95 in/mi, poor > 170 in/mi; from memory, as in
// the preset iri-23cfr490-in-mi); the representative values and the 400
// upper end are invented.
const iriScenario = `name: Marrowby ride quality (invented example)
start_year: 2030
horizon: 3
scales:
  iri:
    states:
      - {name: Good, min: 0,   max: 95,  value: 60}
      - {name: Fair, min: 95,  max: 170, value: 130}
      - {name: Poor, min: 170, max: 400, value: 220}
    groups: {good: [Good], fair: [Fair], poor: [Poor]}
classes:
  - name: arterials
    scale: iri
    unit: lane-km
    inventory: {Good: 50, Fair: 30, Poor: 20}
    deterioration:
      years_in_state: [6, 8]
    treatments: [overlay]
treatments:
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {to: Good}}
targets:
  - {class: arterials, min_average_index: 100}
`

func TestLowerIsBetterScale(t *testing.T) {
	sc := mustParse(t, iriScenario)
	s := sc.Classes[0].Scale
	if s.Best != 0 || s.Worst != 400 {
		t.Fatalf("best %g worst %g; want 0 (best end, lowest roughness) and 400", s.Best, s.Worst)
	}
	// The score runs the other way: low roughness scores high.
	if s.Score(0) != 100 || s.Score(400) != 0 {
		t.Errorf("Score(0)=%g Score(400)=%g, want 100 and 0", s.Score(0), s.Score(400))
	}
	p, err := sc.Problem()
	if err != nil {
		t.Fatal(err)
	}
	// (400-60)/4 = 85, (400-130)/4 = 67.5, (400-220)/4 = 45.
	wantRow(t, "state scores", p.Classes[0].Score, []float64{85, 67.5, 45})

	// min_average_index 100 on a lower-is-better scale means "average IRI no
	// worse than 100", i.e. at most 100 (doc.go).
	tg := sc.Targets[0]
	if tg.Spec.Kind != optimize.MinScore || !near(tg.Spec.Value, s.Score(100), 1e-12) || !near(tg.Spec.Value, 75, 1e-12) {
		t.Fatalf("target spec %+v, want MinScore with value Score(100) = 75", tg.Spec)
	}
	if !strings.Contains(tg.Label, "at most 100") {
		t.Errorf("label %q should say the average index must be at most 100", tg.Label)
	}
	for _, c := range []struct {
		avg  float64
		meet bool
	}{{90, true}, {100, true}, {110, false}, {60, true}, {220, false}} {
		if got := s.Score(c.avg) >= tg.Spec.Value-1e-12; got != c.meet {
			t.Errorf("average IRI %g: target met %v, want %v", c.avg, got, c.meet)
		}
	}
	// The class's average index of today: (50*60 + 30*130 + 20*220)/100 = 113.
	r, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	if !near(r.Initial.Classes[0].AverageIndex, 113, 1e-9) {
		t.Errorf("initial average IRI %g, want 113", r.Initial.Classes[0].AverageIndex)
	}
	if r.Targets[0].Met {
		t.Errorf("today's average IRI is 113 > 100 and doing nothing only worsens it, yet the target is reported met: %+v", r.Targets[0])
	}
	wantInputError(t, strings.Replace(iriScenario, "min_average_index: 100", "min_average_index: 500", 1),
		"targets[0].min_average_index", "outside scale")
}

func TestScaleScoreIndexRoundTrip(t *testing.T) {
	// Score is a linear map of the index onto 0 (worst end) - 100 (best end)
	// and Index its inverse (doc.go); the checks follow from that definition.
	scales := []scenarios.Scale{
		{Name: "pci", Best: 100, Worst: 0},
		{Name: "deck", Best: 9, Worst: 0},
		{Name: "iri", Best: 0, Worst: 400},
		{Name: "offset", Best: 86, Worst: 11},
	}
	for _, s := range scales {
		if !near(s.Score(s.Best), 100, 1e-12) || !near(s.Score(s.Worst), 0, 1e-12) {
			t.Errorf("%s: Score(best)=%g Score(worst)=%g, want 100 and 0", s.Name, s.Score(s.Best), s.Score(s.Worst))
		}
		lo, hi := math.Min(s.Best, s.Worst), math.Max(s.Best, s.Worst)
		prev := math.NaN()
		for k := 0; k <= 20; k++ {
			v := lo + (hi-lo)*float64(k)/20
			if got := s.Index(s.Score(v)); !near(got, v, 1e-9*math.Max(1, math.Abs(v))) {
				t.Errorf("%s: Index(Score(%g)) = %g", s.Name, v, got)
			}
			score := float64(k) * 5
			if got := s.Score(s.Index(score)); !near(got, score, 1e-9) {
				t.Errorf("%s: Score(Index(%g)) = %g", s.Name, score, got)
			}
			// Moving toward the best end raises the score.
			sc := s.Score(v)
			if !math.IsNaN(prev) && (sc > prev) != (s.Best > s.Worst) {
				t.Errorf("%s: score %g at index %g does not move toward the best end", s.Name, sc, v)
			}
			prev = sc
		}
	}
}

func TestAliases(t *testing.T) {
	// Reusing a part of the file through an anchor is ordinary YAML and works.
	culverts := strings.Replace(classYAML("culverts", culvertInventory, yearsDet), "    deterioration:\n      "+yearsDet+"\n", "    deterioration: *det\n", 1)
	roads := strings.Replace(classYAML("roads", roadsInventory, yearsDet), "    deterioration:\n", "    deterioration: &det\n", 1)
	text := scenarioYAML("", []string{roads, culverts}, "", "")
	if !strings.Contains(text, "deterioration: *det") || !strings.Contains(text, "deterioration: &det") {
		t.Fatalf("test scenario not built as intended:\n%s", text)
	}
	sc := mustParse(t, text)
	if len(sc.Classes) != 2 || sc.Classes[1].Transition.At(3, 4) != 0.5 {
		t.Fatalf("aliased deterioration not read: %d classes", len(sc.Classes))
	}

	// An alias inside its own anchor, and a file whose aliases multiply
	// (classes x rows x entries) into a million values, are refused before
	// the decoder walks them.
	wantInputError(t, strings.Replace(scenarioYAML("", nil, "", ""), "name: Marrowby parse test (invented example)", "name: &n [Marrowby, *n]", 1),
		"", "alias refers to itself")
	row := "[" + strings.Repeat("0, ", 99) + "0]"
	rows := "[&row " + row + strings.Repeat(", *row", 99) + "]"
	bomb := "name: Marrowby (invented)\nstart_year: 2030\nhorizon: 4\nclasses:\n  - &c {name: a, scale: five, unit: each, deterioration: {matrix: " + rows + "}}\n" +
		strings.Repeat("  - *c\n", 99)
	wantInputError(t, bomb, "", "anchors and aliases")
}
