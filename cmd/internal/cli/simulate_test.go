package cli

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

func TestSimulateDemoTable(t *testing.T) {
	code, out, errs := run(t, "simulate", demo, "--runs", "20")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"Simulation of the plan (status optimal), 2027-2046: 20 runs, seed 1",
		"Included in the bands:", "piece-level randomness", "Not included:", "matrix uncertainty: every run uses the transition matrices as given",
		"median [5th-95th percentile]", "PLAN POOR", "Spend per year", "Targets: share of runs", "network poor share at most 15%",
		"How runs follow the plan", "Hyndman and Fan (1996) type 7", "only 20 runs", "Planning estimate only"} {
		if !strings.Contains(out, want) {
			t.Errorf("simulate output lacks %q", want)
		}
	}
}

// Same seed, same bytes, on one core and on all of them, in every format.
func TestSimulateSameBytesOneCoreAndAll(t *testing.T) {
	for _, format := range []string{"table", "json", "csv"} {
		args := []string{"simulate", demo, "--runs", "30", "--seed", "7", "--lot-size", "0.5", "--lot-size", "bridge-decks=50", "--format", format}
		prev := runtime.GOMAXPROCS(1)
		_, one, _ := run(t, args...)
		runtime.GOMAXPROCS(prev)
		_, all, _ := run(t, args...)
		if one == "" || one != all {
			t.Errorf("%s: output differs between 1 core and %d cores", format, prev)
		}
	}
}

func TestSimulateJSONAndCSV(t *testing.T) {
	code, out, errs := run(t, "simulate", demo, "--runs", "20", "--policy", "do-nothing", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Kind        string `json:"kind"`
		Policy      string `json:"policy"`
		Runs        int    `json:"runs"`
		Uncertainty struct {
			Matrix string `json:"matrix"`
		} `json:"uncertainty"`
		Years   []json.RawMessage `json:"years"`
		Caution string            `json:"caution"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Kind != "simulation" || doc.Policy != "do-nothing" || doc.Runs != 20 || doc.Uncertainty.Matrix != "none" || len(doc.Years) != 20 || doc.Caution == "" {
		t.Errorf("JSON %+v", doc)
	}
	dir := t.TempDir()
	code, _, errs = run(t, "simulate", demo, "--runs", "10", "--format", "csv", "--out", dir)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for name, header := range map[string]string{"bands": "year,class,measure,p5,p50,p95,mean,plan", "targets": "target,met_by_plan,probability_all_years,year,probability"} {
		f, err := os.Open(filepath.Join(dir, name+".csv"))
		if err != nil {
			t.Fatal(err)
		}
		rows, err := csv.NewReader(f).ReadAll()
		f.Close()
		if err != nil || len(rows) < 2 || strings.Join(rows[0], ",") != header {
			t.Errorf("%s.csv: %d rows, header %v, %v", name, len(rows), rows[0], err)
		}
	}
}

func TestSimulateFlagErrors(t *testing.T) {
	tests := []struct {
		args []string
		want string
	}{
		{[]string{"--runs", "0"}, "--runs: 0 runs; give between 1 and"},
		{[]string{"--policy", "worst-first"}, `--policy: "worst-first"; choose plan or do-nothing`},
		{[]string{"--matrix-uncertainty", "dirichlet"}, "--matrix-uncertainty: dirichlet needs transition counts from a fit result"},
		{[]string{"--matrix-uncertainty", "bootstrap"}, "so use none"},
		{[]string{"--matrix-uncertainty", "jackknife"}, "choose none, dirichlet or bootstrap"},
		{[]string{"--dirichlet-prior", "-1"}, "--dirichlet-prior -1: give a positive number"},
		{[]string{"--dirichlet-prior", "0"}, "--dirichlet-prior 0: give a positive number"},
		{[]string{"--runs", "100000"}, "--runs: 100000 runs of 4 classes over 20 years would keep 381 MB of figures; use at most 80000 runs"},
		{[]string{"--lot-size", "big"}, `--lot-size "big": give a positive size`},
		{[]string{"--lot-size", "=3"}, "the class name before = is missing"},
		{[]string{"--lot-size", "trams=2"}, `--lot-size: unknown class "trams"; classes are arterial-asphalt`},
		{[]string{"--lot-size", "1", "--lot-size", "2"}, "a size for all classes is already given"},
		{[]string{"--lot-size", "culverts=1", "--lot-size", "culverts=2"}, `class "culverts" is given twice`},
		{[]string{"--lot-size", "bridge-decks=0.001"}, `--lot-size: class "bridge-decks": 14500 m2 in pieces of 0.001 would make 14500000 pieces`},
		{[]string{"--table", "work"}, `--table "work": choose one of bands, targets`},
		{[]string{"--seed", "-3"}, "invalid argument"},
	}
	for _, tc := range tests {
		dir := t.TempDir()
		out := filepath.Join(dir, "bands.json")
		args := append([]string{"simulate", demo, "--format", "json", "--out", out}, tc.args...)
		code, stdout, errs := run(t, args...)
		if code != exitInput || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d and %q", tc.args, code, errs, exitInput, tc.want)
		}
		if strings.Contains(errs, "goroutine ") || stdout != "" {
			t.Errorf("%v: unexpected output (stack trace or stdout)", tc.args)
		}
		if entries, _ := os.ReadDir(dir); len(entries) != 0 {
			t.Errorf("%v: files written despite the error: %v", tc.args, entries)
		}
	}
}
