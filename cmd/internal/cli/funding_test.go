package cli

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const (
	reduced   = "../../../scenarios/examples/marrowby-reduced.yaml"
	increased = "../../../scenarios/examples/marrowby-increased.yaml"
)

func TestSweepBadRangesExitTwoWriteNothing(t *testing.T) {
	for _, r := range []string{"5e6:3e6:1e5", "-1:3e6:1e5", "1e6:3e6:0", "1e6:3e6", "3e6,-4e6", "", "a:b:c", "0:1e9:1"} {
		dir := t.TempDir()
		out := filepath.Join(dir, "sweep.csv")
		code, stdout, errs := run(t, "sweep", demo, "--budget", r, "--format", "csv", "--out", out)
		if code != exitInput || stdout != "" || !strings.Contains(errs, "--budget") {
			t.Errorf("--budget %q: exit %d, stderr %q", r, code, errs)
		}
		if entries, _ := os.ReadDir(dir); len(entries) != 0 {
			t.Errorf("--budget %q: files written: %v", r, entries)
		}
	}
}

func TestSweepCSVInBudgetOrder(t *testing.T) {
	code, out, errs := run(t, "sweep", demo, "--budget", "5e6,3e6,4e6", "--format", "csv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 4 || !strings.HasPrefix(lines[1], "5000000,") || !strings.HasPrefix(lines[2], "3000000,") {
		t.Errorf("rows not in the order given:\n%s", out)
	}
}

func TestCompareDemoAlternatives(t *testing.T) {
	code, out, errs := run(t, "compare", demo, reduced, increased)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"[3]", "targets-not-met", "extra money to meet them", "2046", "network", "Planning estimate only"} {
		if !strings.Contains(out, want) {
			t.Errorf("compare output lacks %q", want)
		}
	}
	code, _, errs = run(t, "compare", demo, reduced, "--years", "1,40")
	if code != exitInput || !strings.Contains(errs, "outside the plan") {
		t.Errorf("year beyond the horizon: exit %d: %s", code, errs)
	}
}

func TestPlanReportsFundingAndBaseline(t *testing.T) {
	code, out, errs := run(t, "plan", reduced, "--format", "json")
	if code != 0 || !strings.Contains(errs, "warning") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Status  string
		Funding struct {
			ExtraMoney []struct{ Year int } `json:"extra_money"`
		}
		Baseline struct{ Rule string }
		Caution  string
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Status != "targets-not-met" || len(doc.Funding.ExtraMoney) == 0 || doc.Baseline.Rule != "worst-first" || doc.Caution == "" {
		t.Errorf("%+v", doc)
	}
	code, _, _ = run(t, "plan", reduced, "--strict")
	if code != exitTargets {
		t.Errorf("--strict: exit %d", code)
	}
}

func TestLongRunAndRuleCommands(t *testing.T) {
	for _, args := range [][]string{
		{"longrun", demo},
		{"longrun", demo, "--format", "csv"},
		{"forecast", demo, "--rule", "worst-first"},
	} {
		code, out, errs := run(t, args...)
		if code != 0 || out == "" {
			t.Errorf("%v: exit %d: %s", args, code, errs)
		}
		if args[len(args)-1] != "csv" && !strings.Contains(out, "Planning estimate only") {
			t.Errorf("%v: no caution", args)
		}
	}
	code, _, _ := run(t, "forecast", demo, "--rule", "best-first")
	if code != exitInput {
		t.Errorf("unknown rule: exit %d", code)
	}
}
