package cli

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"wearplan/optimize/optimizetest"
)

// TestWriteModelDemoAgreesWithGLPK: the model that `plan --write-model`
// exports for the demo, solved by GLPK's glpsol (glpk-utils; an independent
// simplex code), reaches the condition score of the plan's JSON output within
// 1e-6 relative, in both formats. The objective of the exported
// max-condition model is the mean network score on 0-1; the MPS file poses
// it as a minimisation of the negated score.
func TestWriteModelDemoAgreesWithGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
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
		obj, optimal, _ := optimizetest.GlpsolObjective(t, c.flag, model)
		if !optimal {
			t.Fatalf("%s: glpsol found no optimal solution (objective %g)", c.file, obj)
		}
		got := c.sign * obj
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
