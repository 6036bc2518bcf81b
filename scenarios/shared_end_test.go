package scenarios_test

import (
	"os"
	"regexp"
	"strings"
	"testing"
	"testing/fstest"

	"wearplan/scenarios"
)

// fiveBands is a written five-state scale on 0-100 whose ranges share
// their ends, indented to sit under a scale's name.
const fiveBands = `    states:
      - {name: Very good, min: 80, max: 100, value: 90}
      - {name: Good, min: 60, max: 80, value: 70}
      - {name: Fair, min: 40, max: 60, value: 50}
      - {name: Poor, min: 20, max: 40, value: 30}
      - {name: Very poor, min: 0, max: 20, value: 10}
    groups: {good: [Very good, Good], fair: [Fair], poor: [Poor, Very poor]}
`

// sharedEndScenario has a written five-state scale whose ranges share
// their ends (80-100, 60-80, ...) and a segment list with a row on each
// shared end (invented Marrowby footpaths).
const sharedEndScenario = `name: Shared ends (invented)
start_year: 2027
horizon: 5
scales:
  bands:
` + fiveBands + `classes:
  - name: footpaths
    scale: bands
    unit: m2
    inventory_csv: segments.csv
    deterioration: {years_in_state: [5, 5, 5, 5]}
    treatments: [relay]
  - name: roads
    scale: preset:iri-23cfr490-in-mi
    unit: lane-km
    inventory_csv: roads.csv
    deterioration: {years_in_state: [5, 5]}
    treatments: [relay]
treatments:
  - {name: relay, applies_to: [Poor], cost: 10, effect: {improve: 1}}
`

// One rule for an index value on an end two states share, whatever reads
// it: the segment list (inventory_csv) and the inspection export (fit)
// place 80, 60, 40 and 20 on the written scale in the worse state, and the
// IRI preset follows 23 CFR 490.313 (from memory: good below 95 in/mi,
// poor above 170, so 95 and 170 are fair). The documents state the rule
// once, in the scenario format, and nowhere the opposite (the guide used
// to send a shared end to the better state).
func TestSharedEndOneRule(t *testing.T) {
	fsys := fstest.MapFS{
		"s.yaml":       {Data: []byte(sharedEndScenario)},
		"segments.csv": {Data: []byte("id,quantity,condition\nA,1,80\nB,1,60\nC,1,40\nD,1,20\n")},
		"roads.csv":    {Data: []byte("id,quantity,condition\nR1,1,95\nR2,1,170\n")},
	}
	sc, err := scenarios.Load(fsys, "s.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// id -> class, value, the state both readers must give.
	type row struct{ class, value, want string }
	rows := map[string]row{
		"A": {"footpaths", "80", "Good"}, "B": {"footpaths", "60", "Fair"}, "C": {"footpaths", "40", "Poor"}, "D": {"footpaths", "20", "Very poor"},
		"R1": {"roads", "95", "Fair"}, "R2": {"roads", "170", "Fair"},
	}
	export := "asset,class,inspected,condition\n"
	byClass := map[string]*scenarios.Scale{}
	for _, c := range sc.Classes {
		byClass[c.Name] = c.Scale
		for _, seg := range c.Segments {
			r := rows[seg.ID]
			if got := c.Scale.States[seg.State].Name; got != r.want {
				t.Errorf("segment list, %s %s: %s, want %s", c.Name, r.value, got, r.want)
			}
			export += seg.ID + "," + c.Name + ",2024," + r.value + "\n"
		}
	}
	ins, err := scenarios.ReadInspections(strings.NewReader(export), "export.csv", scenarios.InspectionOptions{ScaleFor: func(c string) *scenarios.Scale { return byClass[c] }})
	if err != nil {
		t.Fatal(err)
	}
	seen := 0
	for _, c := range ins.Classes {
		for a, h := range c.Histories {
			r := rows[c.Assets[a]]
			if got := c.Scale.States[h[0].State].Name; got != r.want {
				t.Errorf("inspection export, %s %s: %s, want %s", c.Name, r.value, got, r.want)
			}
			seen++
		}
	}
	if seen != len(rows) {
		t.Errorf("read %d inspections, want %d", seen, len(rows))
	}

	rule := regexp.MustCompile(`counts in the \*\*worse\*\* state`)
	contrary := regexp.MustCompile(`(?is)shared end[^.]{0,80}(goes\s+to|counts\s+in)\s+the\s+better`)
	stated := 0
	for _, doc := range []string{"../README.md", "../docs/guide.md", "../docs/scenario-format.md", "../docs/benchmarks.md", "../DEVELOPERS.md"} {
		b, err := os.ReadFile(doc)
		if err != nil {
			t.Fatal(err)
		}
		stated += len(rule.FindAll(b, -1))
		if m := contrary.Find(b); m != nil {
			t.Errorf("%s says %q, against the rule", doc, m)
		}
	}
	if stated != 1 {
		t.Errorf("the shared-end rule is stated %d times in the documents, want once", stated)
	}
}
