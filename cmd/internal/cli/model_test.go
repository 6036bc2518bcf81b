package cli

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// requireTool finds an external reference program. CI sets
// WEARPLAN_REQUIRE_REFERENCE=1 so that a missing one fails the run instead
// of skipping the check (the same rule as optimize's reference tests).
func requireTool(t *testing.T, name string) string {
	t.Helper()
	path, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("WEARPLAN_REQUIRE_REFERENCE") != "" {
			t.Fatalf("%s not found; install it (make deps-test) to run the reference checks", name)
		}
		t.Skipf("%s not found; run `make deps-test` to install it", name)
	}
	return path
}

// glpsolObjective solves a model file with GLPK's glpsol and returns the
// objective of an optimal basic solution from its raw solution file.
func glpsolObjective(t *testing.T, glpsol, format, path string) float64 {
	t.Helper()
	sol := path + ".sol"
	out, err := exec.Command(glpsol, format, path, "-w", sol).CombinedOutput()
	if err != nil {
		t.Fatalf("glpsol %s: %v\n%s", format, err, out)
	}
	f, err := os.Open(sol)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		// "s bas ROWS COLS PRIMAL DUAL OBJECTIVE"; f = feasible.
		if fl := strings.Fields(sc.Text()); len(fl) == 7 && fl[0] == "s" && fl[1] == "bas" {
			if fl[4] != "f" || fl[5] != "f" {
				t.Fatalf("glpsol found no optimal solution: %s\n%s", sc.Text(), out)
			}
			v, err := strconv.ParseFloat(fl[6], 64)
			if err != nil {
				t.Fatal(err)
			}
			return v
		}
	}
	t.Fatalf("no solution line from glpsol:\n%s", out)
	return 0
}

// TestWriteModelDemoAgreesWithGLPK: the model that `plan --write-model`
// exports for the demo, solved by GLPK's glpsol (glpk-utils; an independent
// simplex code), reaches the condition score of the plan's JSON output within
// 1e-6 relative, in both formats. The objective of the exported
// max-condition model is the mean network score on 0-1; the MPS file poses
// it as a minimisation of the negated score.
func TestWriteModelDemoAgreesWithGLPK(t *testing.T) {
	glpsol := requireTool(t, "glpsol")
	dir := t.TempDir()
	for _, c := range []struct {
		file, flag string
		sign       float64
	}{{"demo.lp", "--lp", 1}, {"demo.mps", "--freemps", -1}} {
		model := filepath.Join(dir, c.file)
		code, out, errs := run(t, "plan", demo, "--format", "json", "--write-model", model)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		var doc struct {
			Status         string  `json:"status"`
			ConditionScore float64 `json:"condition_score"`
		}
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatal(err)
		}
		if doc.Status != "optimal" {
			t.Fatalf("demo status %q; the check needs an optimal plan", doc.Status)
		}
		got := c.sign * glpsolObjective(t, glpsol, c.flag, model)
		want := doc.ConditionScore / 100
		if math.Abs(got-want) > 1e-6*math.Abs(want) {
			t.Errorf("%s: glpsol objective %.12g, plan condition score / 100 = %.12g", c.file, got, want)
		}
	}
}

func TestWriteModelBadExtensionWritesNothing(t *testing.T) {
	dir := t.TempDir()
	code, _, errs := run(t, "plan", demo, "--write-model", filepath.Join(dir, "model.txt"))
	if code != exitInput || !strings.Contains(errs, ".lp") || !strings.Contains(errs, ".mps") {
		t.Errorf("exit %d: %s", code, errs)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("files written: %v", entries)
	}
}
