package scenarios_test

import (
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// trialBase is the shape of a scenario a new user writes (invented town of
// Kestrel Vale): no scales: section, the class names a preset directly,
// and the matrix comes from a fit file that does not exist yet.
const trialBase = `name: Kestrel Vale roads (invented)
start_year: 2027
horizon: 10
classes:
  - name: roads
    scale: preset:pci-astm-d6433
    unit: lane-km
    inventory: {Good: 10, Fair: 5}
    deterioration: {fit: kestrel-fit.yaml}
    treatments: [overlay]
  - name: paths
    scale: preset:five-state
    unit: m2
    inventory: {Good: 100}
    deterioration: {fit: kestrel-fit.yaml}
    treatments: [overlay]
treatments:
  - {name: overlay, applies_to: [Poor], cost: 100, effect: {improve: 2}}
budget: {yearly: 1000}
`

// The fit reads scales exactly as check does: a scenario that extends a
// base whose classes name presets directly gives every class its preset,
// through the same loader (extends chain, scale building) as a plan. Before,
// the fit's loader knew only scales: and stopped on "unknown scale
// preset:pci-astm-d6433", and a scenario with extends: had "scales:
// missing".
func TestScaleSetFollowsPresetsAndExtends(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	write("kestrel-base.yaml", trialBase)
	trial := write("kestrel.yaml", "extends: kestrel-base.yaml\nname: Kestrel Vale, more money (invented)\nbudget: {yearly: 2000}\n")
	set, err := scenarios.LoadScaleSet(trial)
	if err != nil {
		t.Fatal(err)
	}
	for class, preset := range map[string]string{"roads": "pci-astm-d6433", "paths": "five-state"} {
		s := set.ForClass(class)
		if s == nil || s.Preset != preset {
			t.Fatalf("class %s: scale %+v, want the preset %s", class, s, preset)
		}
	}
	// The same scales as a plan loads: with the fit swapped for a matrix
	// (the fit file does not exist), LoadFile gives identical states.
	write("kestrel-check.yaml", "extends: kestrel-base.yaml\nclasses:\n  - {name: roads, deterioration: {fit: \"\", years_in_state: [5, 5, 5, 5, 5, 5]}}\n  - {name: paths, deterioration: {fit: \"\", years_in_state: [5, 5, 5, 5]}}\n")
	sc, err := scenarios.LoadFile(filepath.Join(dir, "kestrel-check.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range sc.Classes {
		if !slices.Equal(c.Scale.States, set.ForClass(c.Name).States) {
			t.Errorf("class %s: check reads %v, fit reads %v", c.Name, c.Scale.States, set.ForClass(c.Name).States)
		}
	}
	// And the export fits with no scales file: PCI values through the
	// ASTM D6433 classes, five-state values through its bands.
	var b strings.Builder
	b.WriteString("asset,class,inspected,condition\n")
	r := rand.New(rand.NewPCG(8, 8))
	for a := range 300 {
		pci, idx := 10+90*r.Float64(), 10+90*r.Float64()
		for y := range 6 {
			b.WriteString(strings.Join([]string{"R" + itoa(a), "roads", itoa(2018 + y), ftoa(pci)}, ",") + "\n")
			b.WriteString(strings.Join([]string{"P" + itoa(a), "paths", itoa(2018 + y), ftoa(idx)}, ",") + "\n")
			pci = max(0, pci-8*r.Float64())
			idx = max(0, idx-10*r.Float64())
		}
	}
	ins, err := scenarios.ReadInspections(strings.NewReader(b.String()), "kestrel-inspections.csv", scenarios.InspectionOptions{ScaleFor: set.ForClass})
	if err != nil {
		t.Fatal(err)
	}
	res, err := scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Classes) != 2 || len(res.Classes[0].States) != 7 || len(res.Classes[1].States) != 5 {
		t.Errorf("fitted %d classes: %+v", len(res.Classes), res.Classes)
	}
}

func itoa(v int) string     { return strconv.Itoa(v) }
func ftoa(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }
