package scenarios_test

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"wearplan/optimize"
	"wearplan/scenarios"
)

// presetScenario is a one-class scenario (invented numbers) whose class
// uses the named scale; extra holds more top-level keys (e.g. scales:).
func presetScenario(scale string, states int, firstState, extra string) string {
	years := make([]string, states-1)
	for i := range years {
		years[i] = "4"
	}
	return fmt.Sprintf(`name: Marrowby preset test (invented example)
start_year: 2030
horizon: 2
%sclasses:
  - name: test-class
    scale: %s
    unit: each
    inventory: {%q: 10}
    deterioration: {years_in_state: [%s]}
    treatments: []
`, extra, scale, firstState, strings.Join(years, ", "))
}

func presetScale(t *testing.T, name string, states int, first string) *scenarios.Scale {
	t.Helper()
	sc, err := scenarios.Parse("preset.yaml", []byte(presetScenario(scenarios.PresetPrefix+name, states, first, "")))
	if err != nil {
		t.Fatalf("preset %s: %v", name, err)
	}
	return sc.Classes[0].Scale
}

// stateCase is an index value and the state (and group) a standard puts it in.
type stateCase struct {
	index float64
	state string
	group optimize.Group
}

func checkStates(t *testing.T, s *scenarios.Scale, cases []stateCase) {
	t.Helper()
	for _, c := range cases {
		i := s.StateOf(c.index)
		if i < 0 {
			t.Errorf("%s: index %g falls outside the scale, want %s", s.Name, c.index, c.state)
			continue
		}
		if s.States[i].Name != c.state || s.Group[i] != c.group {
			t.Errorf("%s: index %g is %s (%s), want %s (%s)", s.Name, c.index, s.States[i].Name, s.Group[i], c.state, c.group)
		}
	}
}

func TestPresetPCI(t *testing.T) {
	s := presetScale(t, "pci-astm-d6433", 7, "Good")
	// The seven rating classes of ASTM D6433 and their PCI ranges (from
	// memory): Good 86-100, Satisfactory 71-85, Fair 56-70, Poor 41-55,
	// Very Poor 26-40, Serious 11-25, Failed 0-10. Good/fair/poor grouping:
	// Good and Satisfactory good, Fair fair, the rest poor (a common choice,
	// no source).
	checkStates(t, s, []stateCase{
		{100, "Good", optimize.Good}, {86, "Good", optimize.Good},
		{85, "Satisfactory", optimize.Good}, {71, "Satisfactory", optimize.Good},
		{70, "Fair", optimize.Fair}, {56, "Fair", optimize.Fair},
		{55, "Poor", optimize.Poor}, {41, "Poor", optimize.Poor},
		{40, "Very Poor", optimize.Poor}, {26, "Very Poor", optimize.Poor},
		{25, "Serious", optimize.Poor}, {11, "Serious", optimize.Poor},
		{10, "Failed", optimize.Poor}, {0, "Failed", optimize.Poor},
		// A fractional PCI between two classes has not reached the better
		// class's lower limit (a class's range is "86 and above").
		{85.9, "Satisfactory", optimize.Good}, {55.5, "Poor", optimize.Poor},
	})
	for _, v := range []float64{-1, 100.5, math.NaN()} {
		if i := s.StateOf(v); i >= 0 {
			t.Errorf("PCI %g is outside 0-100 but falls in %s", v, s.States[i].Name)
		}
	}
	if s.Best != 100 || s.Worst != 0 {
		t.Errorf("PCI ends %g-%g, want 100 (best) to 0 (worst), ASTM D6433 (from memory)", s.Best, s.Worst)
	}
	if !strings.Contains(s.Source, "ASTM D6433") {
		t.Errorf("source %q does not cite ASTM D6433", s.Source)
	}
}

func TestPresetIRI(t *testing.T) {
	// 23 CFR 490.313 (from memory): IRI < 95 in/mi good, 95-170 fair,
	// > 170 poor; lower is better.
	in := presetScale(t, "iri-23cfr490-in-mi", 3, "Good")
	checkStates(t, in, []stateCase{
		{0, "Good", optimize.Good}, {94.9, "Good", optimize.Good},
		{95, "Fair", optimize.Fair}, {120, "Fair", optimize.Fair}, {170, "Fair", optimize.Fair},
		{170.1, "Poor", optimize.Poor}, {250, "Poor", optimize.Poor},
	})
	if !(in.Best < in.Worst) {
		t.Errorf("IRI runs best %g to worst %g; lower must be better", in.Best, in.Worst)
	}
	// The same thresholds in m/km: 1 m/km = 63.36 in/mi (unit conversion:
	// 1000 mm / 25.4 mm per in = 39.370 in per km, 1.609344 km per mi).
	if got := 1000 / 25.4 * 1.609344; math.Abs(got-63.36) > 0.001 {
		t.Fatalf("conversion %g in/mi per m/km, want 63.36", got)
	}
	m := presetScale(t, "iri-23cfr490-m-km", 3, "Good")
	checkStates(t, m, []stateCase{
		{94.9 / 63.36, "Good", optimize.Good}, {1.49, "Good", optimize.Good},
		{95 / 63.36, "Fair", optimize.Fair}, {1.5, "Fair", optimize.Fair},
		{170 / 63.36, "Fair", optimize.Fair}, {2.68, "Fair", optimize.Fair},
		{170.1 / 63.36, "Poor", optimize.Poor}, {2.7, "Poor", optimize.Poor},
	})
	for i := range in.States {
		if math.Abs(m.States[i].Min*63.36-in.States[i].Min) > 1e-9 || math.Abs(m.States[i].Max*63.36-in.States[i].Max) > 1e-9 {
			t.Errorf("state %s: %g-%g m/km is not %g-%g in/mi at 63.36 in/mi per m/km", m.States[i].Name, m.States[i].Min, m.States[i].Max, in.States[i].Min, in.States[i].Max)
		}
	}
	if !strings.Contains(in.Source, "23 CFR 490") {
		t.Errorf("source %q does not cite 23 CFR 490", in.Source)
	}
}

func TestPresetBridgeRatings(t *testing.T) {
	s := presetScale(t, "bridge-nbi-0-9", 10, "Excellent (9)")
	// US National Bridge Inventory condition ratings 0-9; 23 CFR 490.409
	// (from memory): good when 7 or more, poor when 4 or less, fair 5-6.
	want := map[int]optimize.Group{9: optimize.Good, 8: optimize.Good, 7: optimize.Good, 6: optimize.Fair, 5: optimize.Fair,
		4: optimize.Poor, 3: optimize.Poor, 2: optimize.Poor, 1: optimize.Poor, 0: optimize.Poor}
	if len(s.States) != 10 {
		t.Fatalf("%d states, want the 10 ratings 9 to 0", len(s.States))
	}
	for r := 9; r >= 0; r-- {
		i := s.StateOf(float64(r))
		if i != 9-r {
			t.Errorf("rating %d falls in state %d, want %d (ratings run 9 best to 0 worst)", r, i+1, 10-r)
			continue
		}
		if s.Group[i] != want[r] {
			t.Errorf("rating %d is %s, want %s", r, s.Group[i], want[r])
		}
		if !strings.Contains(s.States[i].Name, fmt.Sprintf("(%d)", r)) {
			t.Errorf("state %q does not show its rating %d", s.States[i].Name, r)
		}
	}
	if i := s.StateOf(10); i >= 0 {
		t.Errorf("rating 10 is not an NBI rating but falls in %s", s.States[i].Name)
	}
}

func TestPresetFiveState(t *testing.T) {
	s := presetScale(t, "five-state", 5, "Very good")
	// Generic five-state grading in equal bands (common practice, no
	// source); a shared end counts in the worse state.
	checkStates(t, s, []stateCase{
		{100, "Very good", optimize.Good}, {80, "Good", optimize.Good}, {79.9, "Good", optimize.Good},
		{60, "Fair", optimize.Fair}, {40, "Poor", optimize.Poor}, {20, "Very poor", optimize.Poor}, {0, "Very poor", optimize.Poor},
	})
}

func TestPresetForms(t *testing.T) {
	// Two classes naming the same preset share one scale, so network
	// averages have one unit.
	text := strings.Replace(presetScenario("preset:five-state", 5, "Good", ""), "    treatments: []\n",
		"    treatments: []\n  - name: second\n    scale: preset:five-state\n    unit: each\n    inventory: {Fair: 4}\n    deterioration: {years_in_state: [4, 4, 4, 4]}\n", 1)
	sc, err := scenarios.Parse("two.yaml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if sc.Classes[0].Scale != sc.Classes[1].Scale || sc.SharedScale() == nil {
		t.Error("two classes naming one preset do not share a scale")
	}

	// A scale written {preset: NAME} may regroup the states.
	regroup := "scales:\n  pci:\n    preset: pci-astm-d6433\n    groups: {good: [Good], fair: [Satisfactory, Fair], poor: [Poor, Very Poor, Serious, Failed]}\n"
	sc, err = scenarios.Parse("regroup.yaml", []byte(presetScenario("pci", 7, "Good", regroup)))
	if err != nil {
		t.Fatal(err)
	}
	s := sc.Classes[0].Scale
	if g := s.Group[s.StateIndex("Satisfactory")]; g != optimize.Fair {
		t.Errorf("regrouped Satisfactory is %s, want fair", g)
	}
	if s.Preset != "pci-astm-d6433" {
		t.Errorf("preset %q", s.Preset)
	}

	for _, c := range []struct {
		name, text, field, msg string
		line                   int
	}{
		{"unknown preset", presetScenario("preset:pci", 7, "Good", ""), "classes[0].scale", "unknown preset \"pci\"", 6},
		{"unknown in scales", presetScenario("x", 7, "Good", "scales:\n  x: {preset: iri}\n"), "scales.x.preset", "presets are", 5},
		{"preset with states", presetScenario("x", 2, "A", "scales:\n  x:\n    preset: five-state\n    states: [{name: A, min: 0, max: 1, value: 0}]\n"), "scales.x.states", "takes no states", 7},
		{"regroup leaves a state out", presetScenario("x", 5, "Good", "scales:\n  x: {preset: five-state, groups: {good: [Very good], poor: [Poor, Very poor]}}\n"), "scales.x", "is in no group", 5},
	} {
		_, err := scenarios.Parse("bad.yaml", []byte(c.text))
		var ie *scenarios.InputError
		if !errors.As(err, &ie) {
			t.Errorf("%s: want an input error, got %v", c.name, err)
			continue
		}
		found := false
		for _, is := range ie.Issues {
			if strings.Contains(is.Field, c.field) && strings.Contains(is.Msg, c.msg) && is.Line == c.line {
				found = true
			}
		}
		if !found {
			t.Errorf("%s: no issue at line %d on %s containing %q in:\n%v", c.name, c.line, c.field, c.msg, err)
		}
	}
}

func TestPresetsListed(t *testing.T) {
	// Every preset cites its source, and builds (through the same tiling
	// and grouping checks as a written scale).
	for _, p := range scenarios.Presets() {
		if p.Source == "" || p.Title == "" {
			t.Errorf("preset %s lacks a title or source", p.Name)
		}
	}
	if len(scenarios.Presets()) < 5 {
		t.Errorf("%d presets, want PCI, IRI in/mi and m/km, bridge ratings and five-state", len(scenarios.Presets()))
	}
}
