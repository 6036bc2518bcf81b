package scenarios

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"testing/fstest"
)

func loadEditable(t *testing.T, name string) *Editable {
	t.Helper()
	e, err := LoadEditable(os.DirFS("examples"), name)
	if err != nil {
		t.Fatal(err)
	}
	return e
}

func ref[T any](v T) *T { return &v }

// planFigures is a plan result without the fields that name where the
// scenario came from, for comparing two runs of the same scenario.
func planFigures(t *testing.T, r *Result) string {
	t.Helper()
	c := *r
	c.Source, c.Scenario, c.Warnings = "", "", nil
	b, err := json.Marshal(&c)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func TestCurrentChangesChangeNothing(t *testing.T) {
	for _, name := range []string{"marrowby.yaml", "marrowby-reduced.yaml"} {
		e := loadEditable(t, name)
		ch := e.Current()
		if ch.BudgetLevel == nil || *ch.BudgetLevel != e.Scenario.Budget[0] {
			t.Errorf("%s: budget level %v, want %v", name, ch.BudgetLevel, e.Scenario.Budget[0])
		}
		want := []TargetSpec{{Class: "all", Group: "poor", MaxShare: ref(0.15), FromYear: ref(2035)}, {Hold: true}}
		if ch.Targets == nil || !reflect.DeepEqual(*ch.Targets, want) {
			t.Errorf("%s: targets %+v, want %+v", name, ch.Targets, want)
		}
		sc, err := e.Apply(ch)
		if err != nil {
			t.Fatal(err)
		}
		if len(sc.Notes) != len(e.Scenario.Notes) {
			t.Errorf("%s: unchanged settings gave notes %q", name, sc.Notes)
		}
		if !reflect.DeepEqual(sc.Budget, e.Scenario.Budget) || sc.Escalation != e.Scenario.Escalation || sc.Objective != e.Scenario.Objective || !sameTargets(sc.Targets, e.Scenario.Targets) {
			t.Errorf("%s: the scenario's own settings changed it", name)
		}
	}
}

func TestBudgetSteps(t *testing.T) {
	e := loadEditable(t, "marrowby.yaml") // 4.5 million a year, 2027-2046
	sc, err := e.Apply(Changes{BudgetSteps: []BudgetStep{
		{FromYear: 2029, Percent: ref(-15.0)},                  // 3,825,000 from 2029
		{FromYear: 2031, ToYear: 2032, Amount: ref(5000000.0)}, // set
		{FromYear: 2046, Percent: ref(10.0)},                   // 3,825,000 * 1.1
	}})
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range map[int]float64{0: 4.5e6, 1: 4.5e6, 2: 3825000, 3: 3825000, 4: 5e6, 5: 5e6, 6: 3825000, 18: 3825000, 19: 4207500} {
		if sc.Budget[i] != want {
			t.Errorf("budget of %d: %v, want %v", 2027+i, sc.Budget[i], want)
		}
	}
	if len(sc.Notes) == 0 || !strings.Contains(sc.Notes[len(sc.Notes)-1], "2029-2030: 3,825,000") {
		t.Errorf("notes %q do not describe the change", sc.Notes)
	}
	sc, err = e.Apply(Changes{BudgetLevel: ref(4e6), BudgetSteps: []BudgetStep{{FromYear: 2040, Percent: ref(-100.0)}}})
	if err != nil {
		t.Fatal(err)
	}
	if sc.Budget[0] != 4e6 || sc.Budget[12] != 4e6 || sc.Budget[13] != 0 || sc.Budget[19] != 0 {
		t.Errorf("level 4 million then nothing from 2040: %v", sc.Budget)
	}
}

// A change is checked by the same code as the file: the same value typed
// into a scenario file gives the same field and message.
func TestChangesCheckedLikeTheFile(t *testing.T) {
	e := loadEditable(t, "marrowby.yaml")
	demo, err := os.ReadFile("examples/marrowby.yaml")
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name    string
		ch      Changes
		file    [2]string // replace in the demo file
		field   string
		contain string
	}{
		{"negative level", Changes{BudgetLevel: ref(-5.0)}, [2]string{"yearly: 4500000", "yearly: -5"}, "budget.yearly", "zero or more"},
		{"escalation as percent", Changes{Escalation: ref(3.0)}, [2]string{"cost_escalation: 0.025", "cost_escalation: 3"}, "cost_escalation", "fractions"},
		{"share above 1", Changes{Targets: &[]TargetSpec{{Class: "all", Group: "poor", MaxShare: ref(1.5)}}},
			[2]string{"{class: all, group: poor, max_share: 0.15, from_year: 2035}", "{class: all, group: poor, max_share: 1.5}"}, "targets[0].max_share", "outside 0-1"},
		{"unknown class", Changes{Targets: &[]TargetSpec{{Class: "sidewalks", Group: "poor", MaxShare: ref(0.1)}}},
			[2]string{"{class: all, group: poor, max_share: 0.15, from_year: 2035}", "{class: sidewalks, group: poor, max_share: 0.1}"}, "targets[0].class", "unknown class"},
		{"year outside", Changes{Targets: &[]TargetSpec{{Group: "good", MinShare: ref(0.3), FromYear: ref(2050)}}},
			[2]string{"{class: all, group: poor, max_share: 0.15, from_year: 2035}", "{group: good, min_share: 0.3, from_year: 2050}"}, "targets[0].from_year", "outside the plan"},
		{"two kinds", Changes{Targets: &[]TargetSpec{{Group: "poor", MaxShare: ref(0.1), MinShare: ref(0.05)}}},
			[2]string{"{class: all, group: poor, max_share: 0.15, from_year: 2035}", "{group: poor, max_share: 0.1, min_share: 0.05}"}, "targets[0]", "exactly one"},
		{"index on mixed scales", Changes{Targets: &[]TargetSpec{{Class: "all", MinAverageIndex: ref(60.0)}}},
			[2]string{"{class: all, group: poor, max_share: 0.15, from_year: 2035}", "{class: all, min_average_index: 60}"}, "targets[0].min_average_index", "different scales"},
		{"objective", Changes{Objective: "max-score"}, [2]string{"objective: max-condition", "objective: max-score"}, "objective", "unknown objective"},
		{"confidence as percent", Changes{Targets: &[]TargetSpec{{Class: "all", Group: "poor", MaxShare: ref(0.15), FromYear: ref(2035), Confidence: ref(90.0)}}},
			[2]string{"{class: all, group: poor, max_share: 0.15, from_year: 2035}", "{class: all, group: poor, max_share: 0.15, from_year: 2035, confidence: 90}"}, "targets[0].confidence", "outside (0, 1)"},
		{"zero piece size", Changes{SegmentSizes: map[string]float64{"culverts": 0}}, [2]string{"    unit: each\n", "    unit: each\n    segment_size: 0\n"}, "classes[3] (culverts).segment_size", "give the size of the pieces"},
	}
	for _, c := range cases {
		_, err := e.Apply(c.ch)
		var ie *InputError
		if !errors.As(err, &ie) || len(ie.Issues) != 1 {
			t.Errorf("%s: want one problem, got %v", c.name, err)
			continue
		}
		got := ie.Issues[0]
		if got.File != ChangesFile || got.Field != c.field || !strings.Contains(got.Msg, c.contain) {
			t.Errorf("%s: got %+v, want %s in %s saying %q", c.name, got, c.field, ChangesFile, c.contain)
		}
		text := strings.Replace(string(demo), c.file[0], c.file[1], 1)
		if text == string(demo) {
			t.Fatalf("%s: %q not in the demo file", c.name, c.file[0])
		}
		_, ferr := Load(demoFS(t, "typed.yaml", text), "typed.yaml")
		if !errors.As(ferr, &ie) || len(ie.Issues) != 1 {
			t.Errorf("%s: the same value in the file gave %v", c.name, ferr)
			continue
		}
		if f := ie.Issues[0]; f.Field != got.Field || f.Msg != got.Msg {
			t.Errorf("%s: the page says %s: %s; the file says %s: %s", c.name, got.Field, got.Msg, f.Field, f.Msg)
		}
	}
}

func TestBadBudgetSteps(t *testing.T) {
	e := loadEditable(t, "marrowby.yaml")
	cases := []struct {
		steps []BudgetStep
		field string
	}{
		{[]BudgetStep{{FromYear: 2026, Percent: ref(-15.0)}}, "budget_steps[0].from_year"},
		{[]BudgetStep{{FromYear: 2030, ToYear: 2029, Percent: ref(-15.0)}}, "budget_steps[0].to_year"},
		{[]BudgetStep{{FromYear: 2030, ToYear: 2047, Percent: ref(-15.0)}}, "budget_steps[0].to_year"},
		{[]BudgetStep{{FromYear: 2030}}, "budget_steps[0]"},
		{[]BudgetStep{{FromYear: 2030, Percent: ref(5.0), Amount: ref(1.0)}}, "budget_steps[0]"},
		{[]BudgetStep{{FromYear: 2030, Percent: ref(-5.0)}, {FromYear: 2030, Percent: ref(-101.0)}}, "budget_steps[1].percent"},
		{[]BudgetStep{{FromYear: 2030, Amount: ref(-1.0)}}, "budget_steps[0].amount"},
		{make([]BudgetStep, maxBudgetSteps+1), "budget_steps"},
	}
	for _, c := range cases {
		_, err := e.Apply(Changes{BudgetSteps: c.steps})
		var ie *InputError
		if !errors.As(err, &ie) || ie.Issues[0].Field != c.field || ie.Issues[0].File != ChangesFile {
			t.Errorf("steps %+v: got %v, want a problem in %s", c.steps, err, c.field)
		}
	}
	// Without a network budget there is nothing to change by a percentage.
	fsys := demoFS(t, "s.yaml", strings.Replace(mustRead(t, "examples/marrowby.yaml"), "budget:\n  yearly: 4500000\n", "", 1))
	nb, err := LoadEditable(fsys, "s.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if nb.Scenario.Budget != nil || nb.Current().BudgetLevel != nil {
		t.Fatal("test file still has a budget")
	}
	if _, err := nb.Apply(Changes{BudgetSteps: []BudgetStep{{FromYear: 2030, Percent: ref(-10.0)}}}); err == nil || !strings.Contains(err.Error(), "no network budget") {
		t.Errorf("steps without a budget: %v", err)
	}
	sc, err := nb.Apply(Changes{BudgetLevel: ref(3e6)})
	if err != nil || sc.Budget == nil || sc.Budget[5] != 3e6 {
		t.Errorf("a level on a scenario without a budget: %v", err)
	}
}

// demoFS holds a scenario text beside the demo's data files (its segment
// list), as a saved scenario would sit in the demo's folder.
func demoFS(t *testing.T, name, text string) fstest.MapFS {
	t.Helper()
	fsys := fstest.MapFS{name: {Data: []byte(text)}}
	csvs, err := filepath.Glob("examples/*.csv")
	if err != nil || len(csvs) == 0 {
		t.Fatalf("demo data files: %v %v", csvs, err)
	}
	for _, f := range csvs {
		fsys[filepath.Base(f)] = &fstest.MapFile{Data: []byte(mustRead(t, f))}
	}
	return fsys
}

func mustRead(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// The scenario written out loads on its own and plans exactly as the
// changed scenario does.
func TestWrittenScenarioPlansTheSame(t *testing.T) {
	changes := Changes{
		Name:        "Marrowby, cut 15% from 2029 (invented example)",
		BudgetSteps: []BudgetStep{{FromYear: 2029, Percent: ref(-15.0)}},
		Escalation:  ref(0.03),
		Targets:     &[]TargetSpec{{Class: "all", Group: "poor", MaxShare: ref(0.2), FromYear: ref(2032)}, {Class: "culverts", MinAverageIndex: ref(55.0)}, {Hold: true}},
	}
	for _, c := range []struct {
		file string
		ch   Changes
		opt  Options
	}{
		{"marrowby.yaml", changes, Options{}},
		{"marrowby-reduced.yaml", Changes{Objective: "min-cost", BudgetLevel: ref(6e6)}, Options{SkipFunding: true}},
		{"marrowby-reduced.yaml", Changes{}, Options{SkipFunding: true}},
	} {
		e := loadEditable(t, c.file)
		var buf bytes.Buffer
		if err := e.WriteYAML(&buf, c.ch); err != nil {
			t.Fatal(err)
		}
		text := buf.String()
		if strings.Contains(text, "\nextends:") || !strings.Contains(text, "INVENTED EXAMPLE") || !strings.Contains(text, "sha256 ") {
			t.Errorf("%s: written file lacks its heading or keeps extends:\n%s", c.file, text)
		}
		written, err := Load(demoFS(t, "written.yaml", buf.String()), "written.yaml")
		if err != nil {
			t.Fatalf("%s: the written scenario does not load: %v\n%s", c.file, err, text)
		}
		changed, err := e.Apply(c.ch)
		if err != nil {
			t.Fatal(err)
		}
		if written.Name != changed.Name {
			t.Errorf("%s: name %q, want %q", c.file, written.Name, changed.Name)
		}
		a, err := Plan(changed, c.opt)
		if err != nil {
			t.Fatal(err)
		}
		b, err := Plan(written, c.opt)
		if err != nil {
			t.Fatal(err)
		}
		if planFigures(t, a) != planFigures(t, b) {
			t.Errorf("%s: the written scenario plans differently", c.file)
		}
		if c.file == "marrowby.yaml" && (a.Years[2].Budget == nil || *a.Years[2].Budget != 3825000) {
			t.Errorf("%s: 2029 budget %v, want 3,825,000", c.file, a.Years[2].Budget)
		}
	}
}

// A piece size set on the page reaches the class, is described, is written
// into a saved file, and a class the scenario lacks is refused.
func TestSegmentSizesChange(t *testing.T) {
	e := loadEditable(t, "marrowby.yaml")
	ch := Changes{SegmentSizes: map[string]float64{"bridge-decks": 450, "local-asphalt": 0.5}}
	sc, err := e.Apply(ch)
	if err != nil {
		t.Fatal(err)
	}
	if got := sc.Classes[2].SegmentSize; got != 450 || sc.Classes[1].SegmentSize != 0.5 || sc.Classes[0].SegmentSize != 0 {
		t.Errorf("segment sizes %v, %v, %v", sc.Classes[0].SegmentSize, sc.Classes[1].SegmentSize, got)
	}
	if note := sc.Notes[len(sc.Notes)-1]; !strings.Contains(note, "bridge-decks simulated in pieces of 450 m2 (file: its segment list)") {
		t.Errorf("note %q", note)
	}
	var buf bytes.Buffer
	if err := e.WriteYAML(&buf, ch); err != nil {
		t.Fatal(err)
	}
	written, err := Load(demoFS(t, "written.yaml", buf.String()), "written.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if written.Classes[2].SegmentSize != 450 || !reflect.DeepEqual(written.Classes[2].Initial, sc.Classes[2].Initial) {
		t.Errorf("the written file's decks: pieces of %v", written.Classes[2].SegmentSize)
	}
	_, err = e.Apply(Changes{SegmentSizes: map[string]float64{"sidewalks": 100}})
	var ie *InputError
	if !errors.As(err, &ie) || ie.Issues[0].Field != "segment_sizes.sidewalks" || !strings.Contains(ie.Issues[0].Msg, "unknown class") {
		t.Errorf("unknown class: %v", err)
	}
}

// Apply never changes the loaded scenario or its tree.
func TestApplyLeavesTheBaseAlone(t *testing.T) {
	e := loadEditable(t, "marrowby.yaml")
	var before bytes.Buffer
	if err := e.WriteYAML(&before, Changes{}); err != nil {
		t.Fatal(err)
	}
	budget := slices.Clone(e.Scenario.Budget)
	if _, err := e.Apply(Changes{BudgetLevel: ref(1.0), Targets: &[]TargetSpec{}, Objective: "min-cost", Escalation: ref(0.1)}); err != nil {
		t.Fatal(err)
	}
	var after bytes.Buffer
	if err := e.WriteYAML(&after, Changes{}); err != nil {
		t.Fatal(err)
	}
	if before.String() != after.String() || !slices.Equal(budget, e.Scenario.Budget) {
		t.Error("Apply changed the loaded scenario")
	}
}

// TargetSpec must know every key a target may have in the file, or the page
// would drop what it cannot show.
func TestTargetSpecHasTheFileKeys(t *testing.T) {
	keys := func(v any) []string {
		_, names := yamlFields(reflect.TypeOf(v))
		slices.Sort(names)
		return names
	}
	if f, s := keys(fileTarget{}), keys(TargetSpec{}); !slices.Equal(f, s) {
		t.Errorf("target keys of the file %v, of TargetSpec %v", f, s)
	}
}
