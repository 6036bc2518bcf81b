package cli

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const quillhaven = "../../../testdata/quillhaven.yaml"

// TestPlanWarnsOfAnAbandonedClass: whatever the output, the plan of the
// invented town of Quillhaven names the class it gives no work: at the
// end of the tables, in the JSON contract's warnings and class_warnings,
// and on standard error when the tables go elsewhere.
func TestPlanWarnsOfAnAbandonedClass(t *testing.T) {
	code, out, errs := run(t, "plan", quillhaven)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "Note: footpaths: the plan meets its targets, but gives it no work in any year") || strings.Contains(errs, "footpaths") {
		t.Errorf("table: the warning belongs at the end of the tables, once:\n%s\n--- stderr ---\n%s", out, errs)
	}
	code, out, errs = run(t, "plan", quillhaven, "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Warnings      []string `json:"warnings"`
		ClassWarnings []struct {
			Class     string `json:"class"`
			NoWork    bool   `json:"no_work"`
			PoorShare *struct {
				Today, Value float64
				Year         int
			} `json:"poor_share"`
			Suggested []map[string]any `json:"suggested_targets"`
			Text      string           `json:"text"`
		} `json:"class_warnings"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, w := range doc.ClassWarnings {
		if w.Class != "footpaths" {
			continue
		}
		found = true
		if !w.NoWork || w.PoorShare == nil || w.PoorShare.Year != 2041 || len(w.Suggested) != 2 || w.Suggested[0]["group"] != "poor" || w.Suggested[1]["state"] != "Grade 5" {
			t.Errorf("footpaths warning in JSON: %+v", w)
		}
		if !strings.Contains(strings.Join(doc.Warnings, "\n"), w.Text) {
			t.Errorf("warnings lack the footpaths text")
		}
	}
	if !found {
		t.Errorf("class_warnings has no footpaths entry")
	}
	if !strings.Contains(errs, "warning: footpaths: the plan meets its targets") {
		t.Errorf("standard error lacks the warning:\n%s", errs)
	}
}

// TestCheckListsGuardrails: check lists every target, ring-fenced amount
// and treatment note of a valid file; a malformed guardrail is refused
// with file, line and field (the corpus in testdata/bad-scenarios has one
// file per mistake, scenarios/corpus_test.go checks each).
func TestCheckListsGuardrails(t *testing.T) {
	dir := t.TempDir()
	base, err := os.ReadFile(quillhaven)
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(base), "budget:\n  yearly: 4000000\n", `budget:
  yearly: 4000000
  groups:
    - {name: water fund, classes: [water-mains], yearly: 1500000}
  min_yearly: {water fund: 1200000, footpaths: [100000, 100000, 100000, 100000, 100000, 120000, 120000, 120000, 120000, 120000, 150000, 150000, 150000, 150000, 150000]}
`, 1)
	text = strings.Replace(text, "  - {hold: true}\n", "  - {hold: true}\n  - {class: footpaths, hold: true}\n  - {class: roads, state: Failed, max_share: 0.06}\n", 1)
	text = strings.Replace(text, "effect: {to: Working}", "effect: {to: Out}", 1)
	path := filepath.Join(dir, "quillhaven-guarded.yaml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := run(t, "check", path)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{
		"target: footpaths average condition in 2041 no worse than today",
		"target: roads share in state Failed at most 6% in 2027-2041",
		"ring-fenced: budget group water fund (water-mains) at least 1,200,000 CAD a year",
		"ring-fenced: class footpaths at least 100,000 to 150,000 CAD a year (by year)",
		`note: quillhaven-guarded.yaml:`, `treatments[6].effect: treatment "lamp-replace" leaves state "Dim" of class streetlights worse than doing nothing`,
	} {
		if !strings.Contains(out, want) {
			t.Errorf("check output lacks %q:\n%s", want, out)
		}
	}
	bad := strings.Replace(text, "{water fund: 1200000,", "{water-fund: 1200000,", 1)
	if err := os.WriteFile(path, []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs = run(t, "check", path)
	if code != 2 || !strings.Contains(errs, "quillhaven-guarded.yaml:") || !strings.Contains(errs, "budget.min_yearly.water-fund: unknown class or budget group") {
		t.Errorf("exit %d, want 2 with file, line and field:\n%s", code, errs)
	}
}
