package cli

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const (
	demoInspections = "../../../scenarios/examples/marrowby-inspections.csv"
	fittedScenario  = "../../../scenarios/examples/marrowby-fitted.yaml"
)

func TestFitDemoTable(t *testing.T) {
	code, out, errs := run(t, "fit", demoInspections, "--scenario", demo, "--bootstrap", "50")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"Data preparation", "One-year transition matrix", "95% percentile intervals from 50 bootstrap",
		"Goodness of fit: chi-square", "Mean condition index", "deterioration:\n      matrix:", "Statistical estimate only"} {
		if !strings.Contains(out, want) {
			t.Errorf("fit output lacks %q", want)
		}
	}
}

// The walk-through of docs/guide.md: fit, save the fit file next to a scenario that
// names it, plan that scenario.
func TestFitSaveThenPlan(t *testing.T) {
	dir := t.TempDir()
	scen, err := os.ReadFile(fittedScenario)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "marrowby-fitted.yaml"), scen, 0o644); err != nil {
		t.Fatal(err)
	}
	// Before the fit file exists, the plan names it and says how to make it.
	code, _, errs := run(t, "plan", filepath.Join(dir, "marrowby-fitted.yaml"))
	if code != exitInput || !strings.Contains(errs, "marrowby-fit.yaml: fit file not found; write it with wearplan fit") {
		t.Fatalf("plan without the fit file: exit %d:\n%s", code, errs)
	}
	save := filepath.Join(dir, "marrowby-fit.yaml")
	code, _, errs = run(t, "fit", demoInspections, "--scenario", fittedScenario, "--bootstrap", "20", "--save", save, "--format", "json", "--out", filepath.Join(dir, "fit.json"))
	if code != 0 {
		t.Fatalf("fit: exit %d: %s", code, errs)
	}
	if !strings.Contains(errs, "wrote the fit file") || !strings.Contains(errs, "warning: ") {
		t.Errorf("stderr does not report the saved file and the warnings:\n%s", errs)
	}
	code, out, errs := run(t, "plan", filepath.Join(dir, "marrowby-fitted.yaml"), "--format", "json")
	if code != 0 {
		t.Fatalf("plan: exit %d: %s", code, errs)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(out), &doc); err != nil || doc["status"] != "optimal" {
		t.Errorf("plan status %v (%v)", doc["status"], err)
	}
	var fit map[string]any
	data, _ := os.ReadFile(filepath.Join(dir, "fit.json"))
	if err := json.Unmarshal(data, &fit); err != nil || fit["caution"] == "" || len(fit["classes"].([]any)) != 2 {
		t.Errorf("fit JSON: %v", err)
	}
}

func TestFitSameInputSameBytes(t *testing.T) {
	dir := t.TempDir()
	for _, format := range []string{"table", "json", "md", "csv"} {
		_, a, _ := run(t, "fit", demoInspections, "--scenario", demo, "--bootstrap", "30", "--format", format)
		_, b, _ := run(t, "fit", demoInspections, "--scenario", demo, "--bootstrap", "30", "--format", format)
		if a != b || a == "" {
			t.Errorf("%s output differs between two runs (or is empty)", format)
		}
	}
	for _, name := range []string{"a.yaml", "b.yaml"} {
		if code, _, errs := run(t, "fit", demoInspections, "--scenario", demo, "--bootstrap", "30", "--seed", "7", "--save", filepath.Join(dir, name)); code != 0 {
			t.Fatal(errs)
		}
	}
	a, _ := os.ReadFile(filepath.Join(dir, "a.yaml"))
	b, _ := os.ReadFile(filepath.Join(dir, "b.yaml"))
	if string(a) != string(b) {
		t.Error("fit files differ between two runs with the same seed")
	}
}

func TestFitCSVTables(t *testing.T) {
	dir := t.TempDir()
	code, _, errs := run(t, "fit", demoInspections, "--scenario", demo, "--bootstrap", "10", "--format", "csv", "--out", dir)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, name := range []string{"matrix", "states", "fit", "condition", "data", "counts"} {
		f, err := os.Open(filepath.Join(dir, "fit-"+name+".csv"))
		if err != nil {
			t.Fatal(err)
		}
		rows, err := csv.NewReader(f).ReadAll()
		f.Close()
		if err != nil || len(rows) < 3 {
			t.Errorf("fit-%s.csv: %d rows, %v", name, len(rows), err)
		}
	}
}

// Every malformed export of the corpus: exit 2 for errors with the file
// and line named, no stack trace, and nothing written (neither --save nor
// --out); exit 0 with the warning on standard error for warnings.
func TestFitCorpus(t *testing.T) {
	files, err := filepath.Glob("../../../testdata/bad-inspections/*.csv")
	if err != nil || len(files) < 10 {
		t.Fatalf("corpus: %d files, %v", len(files), err)
	}
	exp, err := os.ReadFile("../../../testdata/bad-inspections/expectations.txt")
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range files {
		base := filepath.Base(f)
		kind, line := "", ""
		for _, l := range strings.Split(string(exp), "\n") {
			if parts := strings.Split(l, " | "); len(parts) == 4 && parts[0] == base {
				kind, line = parts[1], parts[2]
				break
			}
		}
		dir := t.TempDir()
		code, stdout, errs := run(t, "fit", f, "--scenario", demo, "--bootstrap", "0", "--save", filepath.Join(dir, "fit.yaml"), "--out", filepath.Join(dir, "report.txt"))
		if strings.Contains(errs, "goroutine ") || strings.Contains(errs, "panic") {
			t.Errorf("%s: stack trace:\n%s", base, errs)
		}
		switch kind {
		case "error":
			named := base
			if line != "0" {
				named += ":" + line
			}
			if code != exitInput || !strings.Contains(errs, named) || stdout != "" {
				t.Errorf("%s: exit %d, want %d naming %s:\n%s", base, code, exitInput, named, errs)
			}
			if entries, _ := os.ReadDir(dir); len(entries) != 0 {
				t.Errorf("%s: files written despite bad input: %v", base, entries)
			}
		case "warning":
			if code != 0 || !strings.Contains(errs, "wrote") {
				t.Errorf("%s: exit %d, want 0:\n%s", base, code, errs)
			}
			report, _ := os.ReadFile(filepath.Join(dir, "report.txt"))
			if !strings.Contains(string(report), "Warning: ") {
				t.Errorf("%s: the report carries no warning", base)
			}
		default:
			t.Errorf("%s: not in expectations.txt", base)
		}
	}
}

func TestFitUsageErrors(t *testing.T) {
	cases := [][]string{
		{"fit", demoInspections}, // no scales
		{"fit", demoInspections, "--scenario", demo, "--scales", demo}, // both
		{"fit", demoInspections, "--scales", demo},                     // --scales without --scale
		{"fit", demoInspections, "--scenario", demo, "--scale", "nope"},
		{"fit", demoInspections, "--scenario", demo, "--method", "guess"},
		{"fit", demoInspections, "--scenario", demo, "--format", "xlsx"},
		{"fit", demoInspections, "--scenario", demo, "--column", "asset"},
		{"fit", demoInspections, "--scenario", demo, "--column", "colour=X"},
		{"fit", demoInspections, "--scenario", demo, "--separator", ";;"},
		{"fit", demoInspections, "--scenario", demo, "--bootstrap", "-1"},
		{"fit", "--scenario", demo}, // no export, not judgement
		{"fit", "--scenario", demo, "--method", "years-in-state", "--years-in-state", "sidewalks=5,5"},
		{"fit", "--scenario", demo, "--method", "years-in-state", "--years-in-state", "culverts=5,x"},
		{"fit", demoInspections, "--scenario", demo, "--class", "bridge-decks"}, // no such rows
		{"fit", "no/such.csv", "--scenario", demo},
	}
	for _, args := range cases {
		code, _, errs := run(t, args...)
		if code != exitInput {
			t.Errorf("%v: exit %d, want %d (%s)", args, code, exitInput, errs)
		}
	}
}

func TestFitJudgementOnly(t *testing.T) {
	code, out, errs := run(t, "fit", "--scenario", demo, "--method", "years-in-state", "--years-in-state", "culverts=10,8,7,5")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	// 1 - 1/10 = 0.9: the first row of the matrix, and 10+8+7+5 = 30 years
	// from the best state to the worst (sum of the sojourns).
	if !strings.Contains(out, "- [0.9, 0.1, 0, 0, 0]") || !strings.Contains(out, "30.0") {
		t.Errorf("judgement output:\n%s", out)
	}
}

func TestFitHelpShowsExamples(t *testing.T) {
	code, out, _ := run(t, "fit", "--help")
	if code != 0 || !strings.Contains(out, "Examples:") || !strings.Contains(out, "marrowby-inspections.csv") {
		t.Errorf("fit --help: exit %d:\n%s", code, out)
	}
}
