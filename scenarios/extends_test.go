package scenarios

import (
	"strings"
	"testing"
	"testing/fstest"
)

const baseYAML = `name: Base
start_year: 2027
horizon: 5
currency: USD
scales:
  s:
    states:
      - {name: A, min: 50, max: 100, value: 75}
      - {name: B, min: 0, max: 50, value: 25}
    groups: {good: [A], fair: [], poor: [B]}
classes:
  - name: roads
    scale: s
    unit: lane-km
    inventory: {A: 10, B: 5}
    deterioration: {years_in_state: [4]}
    treatments: [fix]
  - name: paths
    scale: s
    unit: m
    inventory: {A: 3, B: 1}
    deterioration: {years_in_state: [6]}
    treatments: [fix]
treatments:
  - {name: fix, applies_to: [B], cost: 100, effect: {to: A}}
budget:
  yearly: 500
  carry_over: true
targets:
  - {class: all, group: poor, max_share: 0.5}
`

func TestExtendsMergesNodes(t *testing.T) {
	fsys := fstest.MapFS{
		"base.yaml": {Data: []byte(baseYAML)},
		"alt.yaml": {Data: []byte(`extends: base.yaml
name: Alternative
budget: {yearly: 300}
classes:
  - {name: paths, inventory: {A: 1, B: 3}}
  - name: lanes
    scale: s
    unit: lane-km
    inventory: {A: 2}
    deterioration: {years_in_state: [5]}
treatments:
  - {name: fix, cost: 120}
targets: []
`)},
	}
	sc, err := Load(fsys, "alt.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if sc.Name != "Alternative" || sc.Horizon != 5 || sc.Budget[0] != 300 || !sc.CarryOver {
		t.Errorf("scalars: name %q horizon %d budget %v carry-over %v (mapping merge keeps carry_over)", sc.Name, sc.Horizon, sc.Budget, sc.CarryOver)
	}
	if len(sc.Classes) != 3 || sc.Classes[0].Name != "roads" || sc.Classes[1].Name != "paths" || sc.Classes[2].Name != "lanes" {
		t.Fatalf("classes merge by name, new ones last: %v", sc.Classes)
	}
	if sc.Classes[1].Initial[1] != 3 || sc.Classes[1].Unit != "m" {
		t.Errorf("paths: inventory %v unit %q", sc.Classes[1].Initial, sc.Classes[1].Unit)
	}
	if c := sc.Classes[0].Treatments[0].Cost[1]; c != 120 {
		t.Errorf("treatment fix merged by name: cost %g, want 120", c)
	}
	if len(sc.Targets) != 0 {
		t.Errorf("lists replace: %d targets", len(sc.Targets))
	}
}

func TestExtendsErrors(t *testing.T) {
	cases := []struct {
		name  string
		files map[string]string
		want  []string
	}{
		{"unknown base", map[string]string{"a.yaml": "name: A\nextends: nope.yaml\n"}, []string{"a.yaml:2", "extends", `"nope.yaml" not found`}},
		{"cycle", map[string]string{"a.yaml": "extends: b.yaml\n", "b.yaml": "name: B\nextends: a.yaml\n"}, []string{"b.yaml:2", "cycle", "a.yaml -> b.yaml -> a.yaml"}},
		{"self", map[string]string{"a.yaml": "extends: a.yaml\n"}, []string{"a.yaml:1", "cycle"}},
		{"outside folder", map[string]string{"a.yaml": "extends: ../x.yaml\n"}, []string{"a.yaml:1", "outside"}},
		// A mistake in the base is reported in the base, at its own line;
		// one in the override in the override.
		{"error lines", map[string]string{"base.yaml": baseYAML + "objective: cheapest\n", "alt.yaml": "extends: base.yaml\nhorizon: 500\n"}, []string{"base.yaml:31", "objective", "alt.yaml:2", "horizon"}},
		{"base syntax", map[string]string{"base.yaml": "name: [\n", "alt.yaml": "extends: base.yaml\n"}, []string{"base.yaml", "syntax"}},
	}
	for _, c := range cases {
		fsys := fstest.MapFS{}
		for n, d := range c.files {
			fsys[n] = &fstest.MapFile{Data: []byte(d)}
		}
		first := "a.yaml"
		if _, ok := c.files["alt.yaml"]; ok {
			first = "alt.yaml"
		}
		_, err := Load(fsys, first)
		if err == nil {
			t.Errorf("%s: no error", c.name)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: error lacks %q:\n%v", c.name, w, err)
			}
		}
	}
}
