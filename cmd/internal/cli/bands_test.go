package cli

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"wearplan/cmd/internal/report"
)

// bandsArgs set up the small simulations of the report tests: the figures
// are rough with 30 runs, but the tests compare them, not judge them.
var bandsArgs = []string{"--bands", "--runs", "30", "--seed", "3"}

// TestReportBandsSameBytes: the demo reported with bands twice, with the
// same seed and date, gives the same HTML and Markdown bytes; the HTML has
// a band chart after the network's and each class's stacked chart.
func TestReportBandsSameBytes(t *testing.T) {
	dir := t.TempDir()
	for _, format := range []string{"html", "md"} {
		var outs []string
		for i := range 2 {
			out := filepath.Join(dir, fmt.Sprintf("bands%d.%s", i, format))
			args := append([]string{"report", demo, "--format", format, "--date", "2027-01-15", "--out", out}, bandsArgs...)
			if code, _, errs := run(t, args...); code != 0 {
				t.Fatalf("%s: exit %d: %s", format, code, errs)
			}
			outs = append(outs, readFile(t, out))
		}
		if outs[0] != outs[1] {
			t.Errorf("%s report with bands differs between two runs", format)
		}
		if format == "md" && !strings.Contains(outs[0], "| Poor, 5th-95th percentile of 30 runs | - |") {
			t.Error("Markdown lacks the poor share's range")
		}
		if format != "html" {
			continue
		}
		var ids []string
		for _, m := range regexp.MustCompile(`<figure id="([^"]+)"`).FindAllStringSubmatch(outs[0], -1) {
			ids = append(ids, m[1])
		}
		want := []string{"summary-chart-network", "run-1-chart-network", "run-1-chart-bands-network"}
		for k := 1; k <= 4; k++ {
			want = append(want, fmt.Sprintf("run-1-chart-class-%d", k), fmt.Sprintf("run-1-chart-bands-class-%d", k))
		}
		want = append(want, "run-1-chart-spend", "run-1-chart-class-spend")
		if strings.Join(ids, " ") != strings.Join(want, " ") {
			t.Errorf("charts %v, want %v", ids, want)
		}
		if n := strings.Count(outs[0], "<svg "); n != len(want) {
			t.Errorf("%d SVGs, want %d", n, len(want))
		}
	}
}

// simJSON is the part of `simulate --format json` the workbook is checked
// against, decoded here rather than through scenarios.SimulationResult so
// that the check shares no code with the workbook writer.
type simJSON struct {
	Runs  int `json:"runs"`
	Years []struct {
		Year    int `json:"year"`
		Classes []struct {
			Class  string         `json:"class"`
			Shares map[string]any `json:"shares"`
		} `json:"classes"`
		Network struct {
			Shares map[string]any `json:"shares"`
		} `json:"network"`
	} `json:"years"`
	Targets []struct {
		Target    string  `json:"target"`
		MetByPlan bool    `json:"met_by_plan"`
		AllYears  float64 `json:"probability_all_years"`
		Years     []struct {
			Year        int     `json:"year"`
			Probability float64 `json:"probability"`
		} `json:"years"`
	} `json:"targets"`
}

// TestWorkbookBandsHoldTheSimulationNumbers: the Bands and Target
// probabilities sheets, read back with excelize, hold as number cells
// exactly the figures `simulate --format json` gives for the same seed.
func TestWorkbookBandsHoldTheSimulationNumbers(t *testing.T) {
	code, js, errs := run(t, "simulate", demo, "--runs", "30", "--seed", "3", "--format", "json")
	if code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errs)
	}
	var sim simJSON
	if err := json.Unmarshal([]byte(js), &sim); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "bands.xlsx")
	if code, _, errs := run(t, append([]string{"report", demo, "--format", "xlsx", "--date", "2027-01-15", "--out", path}, bandsArgs...)...); code != 0 {
		t.Fatalf("report: exit %d: %s", code, errs)
	}
	f, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	wantSheets := []string{report.SheetAbout, report.SheetSummary, report.SheetWork, report.SheetCondition, report.SheetService, report.SheetSpend, report.SheetClassSpend,
		report.SheetFunding, report.SheetTargets, report.SheetBands, report.SheetTargetChances, report.SheetIndicators, report.SheetRatios, report.SheetLife, report.SheetInputs}
	if got := f.GetSheetList(); strings.Join(got, "|") != strings.Join(wantSheets, "|") {
		t.Fatalf("sheets %v, want %v", got, wantSheets)
	}
	rows := func(sheet string) [][]string {
		rs, err := f.GetRows(sheet, excelize.Options{RawCellValue: true})
		if err != nil || len(rs) < 2 {
			t.Fatalf("%s: %d rows, %v", sheet, len(rs), err)
		}
		return rs[1:]
	}
	num := func(sheet string, r, c int, raw []string) float64 {
		t.Helper()
		name, _ := excelize.CoordinatesToCellName(c+1, r+2)
		if typ, err := f.GetCellType(sheet, name); err != nil || (typ != excelize.CellTypeNumber && typ != excelize.CellTypeUnset) {
			t.Errorf("%s!%s: cell type %v, want a number", sheet, name, typ)
		}
		v, err := strconv.ParseFloat(raw[c], 64)
		if err != nil {
			t.Errorf("%s!%s: %q is not a number", sheet, name, raw[c])
		}
		return v
	}
	band := func(m map[string]any, group, key string) float64 {
		g, _ := m[group].(map[string]any)
		v, ok := g[key].(float64)
		if !ok {
			t.Fatalf("JSON has no %s.%s", group, key)
		}
		return v
	}

	bands := rows(report.SheetBands)
	n := 0
	check := func(year int, class string, shares map[string]any) {
		for _, group := range []string{"good", "fair", "poor"} {
			if n >= len(bands) {
				t.Fatalf("the Bands sheet has %d rows, the JSON more", len(bands))
			}
			r := bands[n]
			if r[1] != strconv.Itoa(year) || r[2] != class || r[3] != group {
				t.Fatalf("Bands row %d: %v, want %d %s %s", n+2, r[:4], year, class, group)
			}
			for c, key := range []string{"p5", "p50", "p95", "plan"} {
				if got, want := num(report.SheetBands, n, 4+c, r), band(shares, group, key); got != want {
					t.Errorf("Bands row %d %s: workbook %v, JSON %v", n+2, key, got, want)
				}
			}
			if got := num(report.SheetBands, n, 8, r); got != float64(sim.Runs) {
				t.Errorf("Bands row %d: %v runs", n+2, got)
			}
			n++
		}
	}
	for _, y := range sim.Years {
		for _, c := range y.Classes {
			check(y.Year, c.Class, c.Shares)
		}
		check(y.Year, "network", y.Network.Shares)
	}
	if n != len(bands) || n != 20*5*3 {
		t.Errorf("%d rows in the Bands sheet, %d from the JSON (want 20 years x 5 x 3)", len(bands), n)
	}

	chances := rows(report.SheetTargetChances)
	n = 0
	for _, tc := range sim.Targets {
		for _, y := range tc.Years {
			r := chances[n]
			if r[1] != tc.Target || r[2] != map[bool]string{true: "yes", false: "no"}[tc.MetByPlan] || r[4] != strconv.Itoa(y.Year) {
				t.Fatalf("Target probabilities row %d: %v, want %s %d", n+2, r, tc.Target, y.Year)
			}
			if got := num(report.SheetTargetChances, n, 3, r); got != tc.AllYears {
				t.Errorf("row %d every-year probability: workbook %v, JSON %v", n+2, got, tc.AllYears)
			}
			if got := num(report.SheetTargetChances, n, 5, r); got != y.Probability {
				t.Errorf("row %d probability: workbook %v, JSON %v", n+2, got, y.Probability)
			}
			n++
		}
	}
	if n != len(chances) || n == 0 {
		t.Errorf("%d rows in the Target probabilities sheet, %d from the JSON", len(chances), n)
	}
	about, err := f.GetRows(report.SheetAbout)
	if err != nil {
		t.Fatal(err)
	}
	var text strings.Builder
	for _, r := range about {
		text.WriteString(strings.Join(r, " ") + "\n")
	}
	for _, want := range []string{"30 simulated runs of the plan, seed 3", "piece-level randomness", "matrix uncertainty: every run uses the transition matrices as given", "The bands show how far"} {
		if !strings.Contains(text.String(), want) {
			t.Errorf("About sheet lacks %q", want)
		}
	}
}

// TestReportBandsFlagErrors: simulation flags without --bands, and options
// the simulation refuses, are usage errors naming the flag, and nothing is
// written.
func TestReportBandsFlagErrors(t *testing.T) {
	low := lowBudgetDemo(t)
	tests := []struct {
		args []string
		want string
	}{
		{[]string{demo, "--runs", "50"}, "--runs sets up the uncertainty bands: add --bands"},
		{[]string{demo, "--lot-size", "0.5"}, "--lot-size sets up the uncertainty bands: add --bands"},
		{[]string{demo, "--bands", "--runs", "0"}, "--runs: 0 runs; give between 1 and"},
		{[]string{demo, "--bands", "--matrix-uncertainty", "bootstrap"}, "--matrix-uncertainty: "},
		{[]string{demo, "--bands", "--lot-size", "big"}, `--lot-size "big": give a positive size`},
		{[]string{demo, "--bands", "--dirichlet-prior", "0"}, "--dirichlet-prior 0: give a positive number"},
		{[]string{demo, low, "--bands", "--lot-size", "trams=2"}, `marrowby.yaml: --lot-size: unknown class "trams"`},
		{[]string{demo, "--bands", "--policy", "do-nothing"}, "unknown flag: --policy"},
	}
	for _, tc := range tests {
		dir := t.TempDir()
		args := append([]string{"report", "--date", "2027-01-15", "--out", filepath.Join(dir, "r.html")}, tc.args...)
		code, stdout, errs := run(t, args...)
		if code != exitInput || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d and %q", tc.args, code, errs, exitInput, tc.want)
		}
		if stdout != "" {
			t.Errorf("%v: wrote to standard output", tc.args)
		}
		if entries, _ := os.ReadDir(dir); len(entries) != 0 {
			t.Errorf("%v: files written despite the error: %v", tc.args, entries)
		}
	}
}
