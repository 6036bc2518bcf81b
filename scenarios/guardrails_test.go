package scenarios_test

import (
	"errors"
	"reflect"
	"strings"
	"testing"
	"testing/fstest"

	"gopkg.in/yaml.v3"

	"wearplan/optimize"
	"wearplan/scenarios"
)

// Class guardrails as the scenario file writes them: targets on one named
// state, holds per class, money ring-fenced for a class or a budget group.
// The inline scenarios are invented (scenarios_test.go).

func TestGuardrailsBuild(t *testing.T) {
	two := []string{classYAML("roads", roadsInventory, yearsDet), classYAML("culverts", culvertInventory, yearsDet)}
	tail := `budget:
  yearly: 5000
  groups:
    - {name: drainage, classes: [culverts], yearly: 2000}
  min_yearly: {roads: 100, drainage: [50, 60, 70, 80]}
targets:
  - {class: roads, state: Very poor, max_share: 0.2, from_year: 2031}
  - {class: culverts, state: Very good, min_share: 0.2}
  - {class: culverts, hold: true}
`
	sc := mustParse(t, scenarioYAML("", two, "", tail))
	wantTargets := []struct {
		state string
		spec  optimize.Target
		label string
	}{
		{"Very poor", optimize.Target{Class: 0, Kind: optimize.MaxShare, States: []bool{false, false, false, false, true}, Value: 0.2, From: 2, To: 4},
			"roads share in state Very poor at most 20% in 2031-2033"},
		{"Very good", optimize.Target{Class: 1, Kind: optimize.MinShare, States: []bool{true, false, false, false, false}, Value: 0.2, From: 1, To: 4},
			"culverts share in state Very good at least 20% in 2030-2033"},
		{"", optimize.Target{Class: 1, Kind: optimize.Hold},
			"culverts average condition in 2033 no worse than today"},
	}
	if len(sc.Targets) != len(wantTargets) {
		t.Fatalf("%d targets", len(sc.Targets))
	}
	for n, w := range wantTargets {
		got := sc.Targets[n]
		spec := got.Spec
		spec.Label = ""
		if got.State != w.state || !reflect.DeepEqual(spec, w.spec) || got.Label != w.label {
			t.Errorf("target %d: state %q spec %+v label %q; want %q %+v %q", n, got.State, spec, got.Label, w.state, w.spec, w.label)
		}
	}
	wantSpends := []scenarios.MinSpend{
		{Name: "roads", Classes: []string{"roads"}, Yearly: []float64{100, 100, 100, 100}},
		{Name: "drainage", Group: true, Classes: []string{"culverts"}, Yearly: []float64{50, 60, 70, 80}},
	}
	if len(sc.MinSpends) != len(wantSpends) {
		t.Fatalf("min spends %+v", sc.MinSpends)
	}
	for i, w := range wantSpends {
		g := sc.MinSpends[i]
		if g.Name != w.Name || g.Group != w.Group || !reflect.DeepEqual(g.Classes, w.Classes) || !reflect.DeepEqual(g.Yearly, w.Yearly) {
			t.Errorf("min spend %d: %+v, want %+v", i, g, w)
		}
	}
	p, err := sc.Problem()
	if err != nil {
		t.Fatal(err)
	}
	want := []optimize.MinSpend{{Name: "roads", Classes: []int{0}, Yearly: []float64{100, 100, 100, 100}}, {Name: "drainage", Classes: []int{1}, Yearly: []float64{50, 60, 70, 80}}}
	if !reflect.DeepEqual(p.MinSpends, want) {
		t.Errorf("problem's min spends %+v, want %+v", p.MinSpends, want)
	}
	// The plan keeps them: it spends at least the ring-fenced amounts
	// each year and holds the state targets.
	r, err := scenarios.Plan(sc, scenarios.Options{SkipFunding: true})
	if err != nil {
		t.Fatal(err)
	}
	for y, yr := range r.Years {
		if s := *yr.Classes[0].Spend; s < 100*(1-1e-7) {
			t.Errorf("%d: roads spend %g below 100", yr.Year, s)
		}
		if s := *yr.Classes[1].Spend; s < wantSpends[1].Yearly[y]*(1-1e-7) {
			t.Errorf("%d: culverts spend %g below %g", yr.Year, s, wantSpends[1].Yearly[y])
		}
		// The result says what is ring-fenced, beside the spend.
		if m := yr.Classes[0].MinYearly; m == nil || *m != 100 || yr.Classes[1].MinYearly != nil {
			t.Errorf("%d: ring-fenced for roads %v, culverts %v", yr.Year, yr.Classes[0].MinYearly, yr.Classes[1].MinYearly)
		}
		if m := yr.Groups[0].MinYearly; m == nil || *m != wantSpends[1].Yearly[y] {
			t.Errorf("%d: ring-fenced for drainage %v", yr.Year, m)
		}
	}
	for _, o := range r.Targets {
		if !o.Met {
			t.Errorf("%s not met (status %s)", o.Target, r.Status)
		}
	}
}

// TestGuardrailsMergeThroughExtends: min_yearly merges key by key like the
// rest of budget, so a file that extends another adds to its ring-fenced
// money; targets replace as a list.
func TestGuardrailsMergeThroughExtends(t *testing.T) {
	two := []string{classYAML("roads", roadsInventory, yearsDet), classYAML("culverts", culvertInventory, yearsDet)}
	base := scenarioYAML("", two, "", "budget:\n  yearly: 1000\n  min_yearly: {roads: 100}\n")
	fsys := fstest.MapFS{
		"base.yaml":  {Data: []byte(base)},
		"child.yaml": {Data: []byte("extends: base.yaml\nbudget:\n  min_yearly: {culverts: 40}\ntargets:\n  - {class: roads, state: Poor, max_share: 0.3}\n")},
	}
	sc, err := scenarios.Load(fsys, "child.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if len(sc.MinSpends) != 2 || sc.MinSpends[0].Name != "roads" || sc.MinSpends[1].Name != "culverts" {
		t.Errorf("min spends %+v, want roads then culverts", sc.MinSpends)
	}
	if len(sc.Targets) != 1 || sc.Targets[0].State != "Poor" {
		t.Errorf("targets %+v", sc.Targets)
	}
}

// TestMinYearlyNoPlanCanSpend: a ring-fenced amount under every cap and
// under what the class could spend on paper, but that no plan can spend
// (its one treatment applies to a state the class has almost nothing in),
// is refused when planning with the field that holds it.
func TestMinYearlyNoPlanCanSpend(t *testing.T) {
	treatments := `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {improve: 1}}
  - {name: overlay, applies_to: [Very poor], cost: 100, effect: {to: Very good}}
`
	cls := classYAML("roads", "{Very good: 90, Good: 9, Very poor: 1}", yearsDet)
	cls = strings.Replace(cls, "[seal, overlay]", "[overlay]", 1)
	sc := mustParse(t, scenarioYAML("", []string{cls}, treatments, "budget:\n  yearly: 100000\n  min_yearly: {roads: 5000}\n"))
	_, err := scenarios.Plan(sc, scenarios.Options{SkipFunding: true})
	var ie *scenarios.InputError
	if !errors.As(err, &ie) {
		t.Fatalf("error %v, want an InputError", err)
	}
	if len(ie.Issues) != 1 || ie.Issues[0].Field != "budget.min_yearly.roads" || ie.Issues[0].Line == 0 || !strings.Contains(ie.Issues[0].Msg, "no plan can spend this on roads") {
		t.Errorf("issues: %v", err)
	}
	if _, err := scenarios.LongRun(sc, scenarios.Options{}); !errors.As(err, &ie) || ie.Issues[0].Field != "budget.min_yearly.roads" {
		t.Errorf("long run: %v", err)
	}
}

func TestGuardrailsRejected(t *testing.T) {
	two := []string{classYAML("roads", roadsInventory, yearsDet), classYAML("culverts", culvertInventory, yearsDet)}
	tests := []struct{ name, tail, field, msg string }{
		{"state with hold", "targets:\n  - {class: roads, state: Poor, hold: true}\n", "targets[0]", "hold: true takes only class"},
		{"state with an average index", "targets:\n  - {class: roads, state: Poor, min_average_index: 50}\n", "targets[0].state", "not min_average_index"},
		{"min_yearly not a mapping", "budget:\n  yearly: 1000\n  min_yearly: 100\n", "budget.min_yearly", "want class or budget group names"},
		{"min_yearly negative", "budget:\n  yearly: 1000\n  min_yearly: {roads: -5}\n", "budget.min_yearly.roads", "must be zero or more"},
		{"min_yearly wrong length", "budget:\n  yearly: 1000\n  min_yearly: {roads: [1, 2]}\n", "budget.min_yearly.roads", "2 amounts for a 4-year horizon"},
		{"class and group of one name", "budget:\n  yearly: 1000\n  groups:\n    - {name: roads, classes: [culverts], yearly: 300}\n  min_yearly: {roads: 10}\n", "budget.min_yearly.roads", "both a class and a budget group"},
		{"carry-over sums", "budget:\n  yearly: [100, 100, 100, 100]\n  carry_over: true\n  min_yearly: {roads: [150, 100, 100, 100]}\n", "budget.min_yearly.roads", "summed from the first year"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			wantInputError(t, scenarioYAML("", two, "", tc.tail), tc.field, tc.msg)
		})
	}
	// With carry-over a year may take more than its own cap, as long as
	// the sums hold.
	mustParse(t, scenarioYAML("", two, "", "budget:\n  yearly: [100, 100, 100, 100]\n  carry_over: true\n  min_yearly: {roads: [50, 150, 100, 100]}\n"))
}

// TestTreatmentSanityNotes: a treatment that sends a state down the scale
// is noted, by check and in every result, with the file, line and field
// where its effect is written and the state it harms; one that improves
// nothing is noted once; a sound catalogue has no note.
func TestTreatmentSanityNotes(t *testing.T) {
	good := mustParse(t, scenarioYAML("", nil, "", ""))
	if len(good.Notes) != 0 {
		t.Errorf("notes on a sound catalogue: %q", good.Notes)
	}
	bad := `treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 10, effect: {to: Fair}}
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {to: Very good}}
`
	sc := mustParse(t, scenarioYAML("", nil, bad, ""))
	if len(sc.Notes) != 1 {
		t.Fatalf("notes %q, want one", sc.Notes)
	}
	for _, part := range []string{"inline.yaml:", "treatments[0].effect", `"seal"`, `states "Very good", "Good"`, "worse than doing nothing"} {
		if !strings.Contains(sc.Notes[0], part) {
			t.Errorf("note lacks %q: %s", part, sc.Notes[0])
		}
	}
	r, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Warnings) == 0 || r.Warnings[0] != sc.Notes[0] {
		t.Errorf("result warnings %q do not repeat the note", r.Warnings)
	}
	// A seal that holds the best state where it is, where doing nothing
	// lets a fifth of it drop a state: an improvement. The same seal
	// on a scale that ages nothing from the best state improves nothing.
	noop := `treatments:
  - {name: seal, applies_to: [Very good], cost: 10, effect: {improve: 1}}
  - {name: overlay, applies_to: [Fair, Poor], cost: 100, effect: {to: Very good}}
`
	sc = mustParse(t, scenarioYAML("", []string{classYAML("roads", roadsInventory, "matrix: [[1, 0, 0, 0, 0], [0, 0.8, 0.2, 0, 0], [0, 0, 0.8, 0.2, 0], [0, 0, 0, 0.8, 0.2], [0, 0, 0, 0, 1]]")}, noop, ""))
	if len(sc.Notes) != 1 || !strings.Contains(sc.Notes[0], `treatment "seal" improves nothing`) || !strings.Contains(sc.Notes[0], `state "Very good"`) {
		t.Errorf("notes %q, want one saying seal improves nothing", sc.Notes)
	}
}

// TestSuggestedTargetReadsBack: a suggested target written for pasting
// reads back, through YAML, as the same keys and values, whatever the
// class and state names hold (flow indicators, colons, words YAML reads as
// numbers or booleans).
func TestSuggestedTargetReadsBack(t *testing.T) {
	share := 0.052
	for _, names := range [][2]string{{"local-asphalt", "Failed"}, {"roads: arterial", "Very poor"}, {"paths, lanes", "{5}"}, {"2024", "yes"}, {"#1", "Critical (0-2)"}} {
		spec := scenarios.TargetSpec{Class: names[0], State: names[1], MaxShare: &share}
		var back map[string]any
		if err := yaml.Unmarshal([]byte(spec.YAML()), &back); err != nil {
			t.Fatalf("%s: %v", spec.YAML(), err)
		}
		if back["class"] != names[0] || back["state"] != names[1] || back["max_share"] != share || len(back) != 3 {
			t.Errorf("%s reads back as %v", spec.YAML(), back)
		}
	}
}
