package cli

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const demo = "../../../scenarios/examples/marrowby.yaml"

func run(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := Main(args, &out, &errb)
	return code, out.String(), errb.String()
}

func TestPlanDemoTable(t *testing.T) {
	code, out, errs := run(t, "plan", demo)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"Work program", "Spend against budget", "Condition at the end of each year", "network", "Asset value and backlog", "Targets", "Planning estimate only"} {
		if !strings.Contains(out, want) {
			t.Errorf("plan output lacks %q", want)
		}
	}
}

func TestPlanJSONContract(t *testing.T) {
	code, out, errs := run(t, "plan", demo, "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"status", "total_cost", "condition_score", "years", "initial"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
	if doc["status"] != "optimal" {
		t.Errorf("status %v", doc["status"])
	}
}

func TestSameInputSameBytes(t *testing.T) {
	for _, format := range []string{"table", "json", "csv"} {
		_, a, _ := run(t, "plan", demo, "--format", format)
		_, b, _ := run(t, "plan", demo, "--format", format)
		if a != b {
			t.Errorf("%s output differs between two runs", format)
		}
	}
}

func TestCSVDirectoryWritesEveryTable(t *testing.T) {
	dir := t.TempDir()
	code, _, errs := run(t, "plan", demo, "--format", "csv", "--out", dir)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, name := range []string{"work", "condition", "service", "spend", "targets", "value"} {
		f, err := os.Open(filepath.Join(dir, name+".csv"))
		if err != nil {
			t.Fatal(err)
		}
		rows, err := csv.NewReader(f).ReadAll()
		f.Close()
		if err != nil || len(rows) < 2 {
			t.Errorf("%s.csv: %d rows, %v", name, len(rows), err)
		}
	}
	leftovers, _ := filepath.Glob(filepath.Join(dir, ".*tmp*"))
	if len(leftovers) > 0 {
		t.Errorf("temporary files left behind: %v", leftovers)
	}
}

func TestBadInputExitsTwoAndWritesNothing(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.yaml")
	if err := os.WriteFile(bad, []byte("name: x\nstart_year: 2027\nhorizn: 5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "plan.json")
	code, _, errs := run(t, "plan", bad, "--format", "json", "--out", out)
	if code != exitInput {
		t.Fatalf("exit %d, want %d", code, exitInput)
	}
	if !strings.Contains(errs, "bad.yaml:3") || !strings.Contains(errs, `did you mean "horizon"`) {
		t.Errorf("error does not name the line and the fix:\n%s", errs)
	}
	if strings.Contains(errs, "goroutine") || strings.Contains(errs, "panic") {
		t.Errorf("stack trace in error output:\n%s", errs)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("output file written despite bad input")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("stray files: %v", entries)
	}
}

// TestSolverFlag: --solver decomposed plans the demo with the
// decomposition, says so in the JSON, gives the same bytes on every run and
// the same condition score as the flat LP within 1e-6 relative (the
// optimum; the work may differ where several plans are optimal).
func TestSolverFlag(t *testing.T) {
	score := map[string]float64{}
	for _, solver := range []string{"flat", "decomposed"} {
		code, out, errs := run(t, "plan", demo, "--format", "json", "--solver", solver)
		if code != 0 {
			t.Fatalf("--solver %s: exit %d: %s", solver, code, errs)
		}
		_, again, _ := run(t, "plan", demo, "--format", "json", "--solver", solver)
		if again != out {
			t.Errorf("--solver %s: output differs between two runs", solver)
		}
		var r struct {
			ConditionScore float64 `json:"condition_score"`
			Model          struct {
				Solver string `json:"solver"`
			} `json:"model"`
		}
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatal(err)
		}
		if r.Model.Solver != solver {
			t.Errorf("--solver %s: model.solver is %q", solver, r.Model.Solver)
		}
		score[solver] = r.ConditionScore
	}
	if d := math.Abs(score["flat"] - score["decomposed"]); d > 1e-6*score["flat"] {
		t.Errorf("condition score flat %.10g, decomposed %.10g", score["flat"], score["decomposed"])
	}
}

func TestUsageErrors(t *testing.T) {
	cases := [][]string{
		{"plan", demo, "--format", "docx"},
		{"plan"},
		{"plan", demo, "--no-such-flag"},
		{"nonsense"},
		{"forecast", demo, "--table", "nope"},
		{"plan", demo, "--solver", "simplex"},
	}
	for _, args := range cases {
		code, _, errs := run(t, args...)
		if code != exitInput {
			t.Errorf("%v: exit %d, want %d (%s)", args, code, exitInput, errs)
		}
	}
}

func TestMissingFile(t *testing.T) {
	code, _, errs := run(t, "check", "no/such/file.yaml")
	if code != exitInput || !strings.Contains(errs, "file.yaml") || !strings.Contains(errs, "not found") {
		t.Errorf("exit %d: %s", code, errs)
	}
}

// TestCheckSaysWhatItAssumedOfHistory: check names each class's
// intervals and after-work wear and says what it took for segments that
// give no last treatment (the demo's segment list leaves some out).
func TestCheckSaysWhatItAssumedOfHistory(t *testing.T) {
	code, out, errs := run(t, "check", demo)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{
		"treatment history of arterial-asphalt: crack-seal at least 6 years after any work, micro-surface at least 5 years after any work, its own wear for 3 years after work; ",
		"note: 802 of 2,893 segments (of arterial-asphalt, local-asphalt, bridge-decks, culverts) give no last_treated year and are taken as treated long ago",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("check output lacks %q:\n%s", want, out)
		}
	}
}

func TestHelpShowsExamples(t *testing.T) {
	for _, c := range []string{"check", "forecast", "plan", "longrun", "sweep", "compare", "report", "fit", "worklist", "simulate"} {
		code, out, _ := run(t, c, "--help")
		if code != 0 || !strings.Contains(out, "Examples:") || !strings.Contains(out, "scenarios/examples/marrowby") {
			t.Errorf("%s --help: exit %d, no worked example:\n%s", c, code, out)
		}
	}
}

func TestStrictTargetsNotMet(t *testing.T) {
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	// One tenth of the demo's money cannot hold 15% poor from 2035.
	low := strings.Replace(string(data), "yearly: 4500000", "yearly: 450000", 1)
	if low == string(data) {
		t.Fatal("demo budget line not found; update the test")
	}
	path := demoCopy(t, "low.yaml", low)
	code, _, errs := run(t, "plan", path)
	if code != 0 || !strings.Contains(errs, "network poor share at most 15%") {
		t.Errorf("without --strict: exit %d, warning:\n%s", code, errs)
	}
	code, _, _ = run(t, "plan", path, "--strict")
	if code != exitTargets {
		t.Errorf("--strict: exit %d, want %d", code, exitTargets)
	}
}

// TestCorpusExitsTwoWithoutOutput runs every malformed scenario in
// testdata/bad-scenarios through `plan --out`: each must exit 2 with an
// error naming the file and a line, and leave no output file behind.
func TestCorpusExitsTwoWithoutOutput(t *testing.T) {
	files, err := filepath.Glob("../../../testdata/bad-scenarios/*.yaml")
	if err != nil || len(files) < 15 {
		t.Fatalf("corpus: %d files, %v", len(files), err)
	}
	for _, f := range files {
		dir := t.TempDir()
		out := filepath.Join(dir, "plan.json")
		code, stdout, errs := run(t, "plan", f, "--format", "json", "--out", out)
		base := filepath.Base(f)
		if code != exitInput {
			t.Errorf("%s: exit %d, want %d", base, code, exitInput)
		}
		if !strings.Contains(errs, base) {
			t.Errorf("%s: error does not name the file:\n%s", base, errs)
		}
		if strings.Contains(errs, "goroutine ") || stdout != "" {
			t.Errorf("%s: unexpected output (stack trace or stdout)", base)
		}
		if entries, _ := os.ReadDir(dir); len(entries) != 0 {
			t.Errorf("%s: files written despite bad input: %v", base, entries)
		}
	}
}

func TestReportSweep(t *testing.T) {
	code, out, errs := run(t, "report", demo, "--format", "md", "--date", "2027-01-15", "--sweep", "3e6,4.5e6,6e6")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "Condition score against budget") || !strings.Contains(out, "| 4,500,000 |") {
		t.Errorf("report --sweep lacks the budget trade-off table")
	}
	if code, _, _ := run(t, "report", demo, demo, "--sweep", "3e6,4e6"); code != exitInput {
		t.Errorf("--sweep with two files: exit %d, want %d", code, exitInput)
	}
}

// demoCopy writes an edited copy of the demo into a temporary folder, with
// the demo's segment list beside it, and returns its path.
func demoCopy(t *testing.T, name, text string) string {
	t.Helper()
	dir := t.TempDir()
	csvs, err := filepath.Glob(filepath.Join(filepath.Dir(demo), "*.csv"))
	if err != nil || len(csvs) == 0 {
		t.Fatalf("demo segment list: %v %v", csvs, err)
	}
	for _, f := range csvs {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, filepath.Base(f)), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}
