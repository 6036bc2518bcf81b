package cli

import (
	"flag"
	"path/filepath"
	"strings"
	"testing"

	"wearplan/cmd/internal/goldentest"
)

var update = flag.Bool("update", false, "rewrite the golden files of testdata/no-confidence from this build")

const small = "../../../testdata/marrowby-small.yaml"

// TestNoConfidenceSameBytes: a scenario without a confident target gives,
// byte for byte, what wearplan gave before targets could state a
// confidence (the files in testdata/no-confidence were written by the
// build of main without it, commit fdc9849), and the confidence flags change
// nothing. When another change alters these outputs on purpose, rewrite
// the files with go test ./cmd/internal/cli -run NoConfidence -update and
// check the diff.
func TestNoConfidenceSameBytes(t *testing.T) {
	cases := []struct {
		file string
		args []string
	}{
		{"plan.txt", []string{"plan", small}},
		{"plan.json", []string{"plan", small, "--format", "json"}},
		{"sweep.txt", []string{"sweep", small, "--budget", "2e6,3e6,4e6"}},
		{"report.md", []string{"report", small, "--format", "md", "--date", "2027-01-15"}},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			code, out, errs := run(t, c.args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			goldentest.Compare(t, filepath.Join("testdata", "no-confidence", c.file), []byte(out), *update, "go test ./cmd/internal/cli -run NoConfidence -update")
			_, again, _ := run(t, append(c.args, "--confidence-runs", "250", "--confidence-seed", "9")...)
			if again != out {
				t.Errorf("the confidence flags changed the output of a scenario without a confident target")
			}
		})
	}
}

// TestConfidenceFlagErrors: the flags are checked whether or not a target
// states a confidence.
func TestConfidenceFlagErrors(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"plan", small, "--confidence-runs", "20"}, "--confidence-runs 20: give between 100 and"},
		{[]string{"sweep", small, "--budget", "3e6", "--confidence-seed", "0"}, "--confidence-seed 0"},
	} {
		code, _, errs := run(t, c.args...)
		if code != 2 || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, %q; want exit 2 and %q", c.args, code, errs, c.want)
		}
	}
}

// TestRobustFlagErrors: robust samples of typed-in matrices, too few
// samples and robust flags without --robust are refused, naming the flag
// (and the file).
func TestRobustFlagErrors(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"plan", small, "--robust", "10"}, "--robust: marrowby-small.yaml: no class takes its matrix from a fit file"},
		{[]string{"plan", small, "--robust", "1"}, "--robust: 1 samples; give between 2 and 200"},
		{[]string{"plan", small, "--robust-seed", "3"}, "--robust-matrices and --robust-seed need --robust N"},
		{[]string{"plan", small, "--robust", "5", "--robust-matrices", "jackknife"}, `--robust-matrices: "jackknife"; choose bootstrap or dirichlet`},
	} {
		code, _, errs := run(t, c.args...)
		if code != 2 || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, %q; want exit 2 and %q", c.args, code, errs, c.want)
		}
	}
}
