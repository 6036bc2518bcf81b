package cli

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"wearplan/cmd/internal/report"
)

// lowBudgetDemo writes the demo with a tenth of its money, a funding
// alternative whose targets cannot be met.
func lowBudgetDemo(t *testing.T) string {
	t.Helper()
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	low := strings.Replace(string(data), "yearly: 4500000", "yearly: 450000", 1)
	low = strings.Replace(low, "name: Marrowby roads and structures, current funding", "name: Marrowby roads and structures, a tenth of current funding", 1)
	if low == string(data) {
		t.Fatal("demo budget line not found; update the test")
	}
	return demoCopy(t, "marrowby-low.yaml", low)
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// TestReportSameBytes: the same scenario and --date give byte-identical
// HTML and Markdown reports.
func TestReportSameBytes(t *testing.T) {
	dir := t.TempDir()
	for _, format := range []string{"html", "md"} {
		var outs []string
		for i := range 2 {
			out := filepath.Join(dir, fmt.Sprintf("r%d.%s", i, format))
			if code, _, errs := run(t, "report", demo, "--format", format, "--date", "2027-01-15", "--out", out); code != 0 {
				t.Fatalf("%s: exit %d: %s", format, code, errs)
			}
			outs = append(outs, readFile(t, out))
		}
		if outs[0] != outs[1] {
			t.Errorf("%s report differs between two runs", format)
		}
		_, stdout, _ := run(t, "report", demo, "--format", format, "--date", "2027-01-15")
		if stdout != outs[0] {
			t.Errorf("%s report on standard output differs from the file", format)
		}
	}
}

// TestReportRunDetails: the report names the version, the date and the
// SHA-256 of the input file as sha256sum would print it (computed here
// with crypto/sha256), and carries the caution.
func TestReportRunDetails(t *testing.T) {
	sum := sha256.Sum256([]byte(readFile(t, demo)))
	digest := hex.EncodeToString(sum[:])
	for _, format := range []string{"html", "md"} {
		code, out, errs := run(t, "report", demo, "--format", format, "--date", "2031-06-30")
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		for _, want := range []string{digest, "2031-06-30", Version, "Planning estimate only", "marrowby.yaml"} {
			if !strings.Contains(out, want) {
				t.Errorf("%s report lacks %q", format, want)
			}
		}
	}
}

func TestReportComparison(t *testing.T) {
	low := lowBudgetDemo(t)
	out := filepath.Join(t.TempDir(), "compare.md")
	code, _, errs := run(t, "report", demo, low, "--format", "md", "--date", "2027-01-15", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(errs, "marrowby-low.yaml") || !strings.Contains(errs, "cannot all be met") {
		t.Errorf("no warning about the unmet targets of the low-budget scenario:\n%s", errs)
	}
	md := readFile(t, out)
	for _, want := range []string{"## Comparison", "**Level of service side by side**", "| Marrowby roads and structures, current funding (invented example) | every target met |",
		"| Marrowby roads and structures, a tenth of current funding (invented example) | targets not met |", "**Spend and network budget cap side by side"} {
		if !strings.Contains(md, want) {
			t.Errorf("comparison lacks %q", want)
		}
	}
}

func TestReportUsageErrorsWriteNothing(t *testing.T) {
	dir := t.TempDir()
	cases := [][]string{
		{"report", demo, "--format", "pdf", "--out", filepath.Join(dir, "r.pdf")},
		{"report", demo, "--format", "xlsx"},
		{"report", demo, "--date", "15/01/2027", "--out", filepath.Join(dir, "r.html")},
		{"report", "--out", filepath.Join(dir, "r.html")},
		{"report", demo, "no/such/file.yaml", "--out", filepath.Join(dir, "r.html")},
	}
	for _, args := range cases {
		code, out, errs := run(t, args...)
		if code != exitInput {
			t.Errorf("%v: exit %d, want %d (%s)", args, code, exitInput, errs)
		}
		if out != "" {
			t.Errorf("%v: wrote to standard output", args)
		}
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("files written: %v", entries)
	}
}

// planJSON is the part of the JSON contract the workbook is checked
// against, decoded on its own (not through scenarios.Result) so that the
// check does not share code with the renderer.
type planJSON struct {
	Scenario string `json:"scenario"`
	Initial  struct {
		Classes []classJSON `json:"classes"`
		Network networkJSON `json:"network"`
	} `json:"initial"`
	Years []struct {
		Year    int         `json:"year"`
		Spend   float64     `json:"spend"`
		Budget  *float64    `json:"budget"`
		Classes []classJSON `json:"classes"`
		Network networkJSON `json:"network"`
	} `json:"years"`
}

type sharesJSON struct{ Good, Fair, Poor float64 }

type classJSON struct {
	Class        string             `json:"class"`
	States       map[string]float64 `json:"states"`
	AverageIndex float64            `json:"average_index"`
	Score        float64            `json:"score"`
	Shares       sharesJSON         `json:"shares"`
	Work         []struct {
		Treatment string  `json:"treatment"`
		State     string  `json:"state"`
		Quantity  float64 `json:"quantity"`
		Cost      float64 `json:"cost"`
	} `json:"work"`
}

type networkJSON struct {
	Score  float64    `json:"score"`
	Shares sharesJSON `json:"shares"`
}

// TestWorkbookHoldsTheJSONNumbers opens the workbook with excelize (an
// independent reader of the Office Open XML format) and checks that every
// work, condition, level-of-service and spend figure is a number cell
// equal to the figure of `plan --format json`, that no figure is missing
// or extra, and that header rows are frozen.
func TestWorkbookHoldsTheJSONNumbers(t *testing.T) {
	var plan planJSON
	f := planAndWorkbook(t, demo, &plan)
	defer f.Close()
	wantSheets := []string{report.SheetAbout, report.SheetSummary, report.SheetWork, report.SheetCondition, report.SheetService, report.SheetSpend, report.SheetClassSpend,
		report.SheetFunding, report.SheetTargets, report.SheetIndicators, report.SheetRatios, report.SheetLife, report.SheetInputs}
	if got := f.GetSheetList(); strings.Join(got, "|") != strings.Join(wantSheets, "|") {
		t.Fatalf("sheets %v, want %v", got, wantSheets)
	}

	// rows returns a sheet's data rows as raw values; num reads a cell that
	// must be a number cell.
	rows := func(sheet string) [][]string {
		rs, err := f.GetRows(sheet, excelize.Options{RawCellValue: true})
		if err != nil {
			t.Fatal(err)
		}
		panes, err := f.GetPanes(sheet)
		if err != nil || !panes.Freeze || panes.YSplit != 1 {
			t.Errorf("%s: header row not frozen (%+v, %v)", sheet, panes, err)
		}
		return rs[1:]
	}
	num := func(sheet string, r, c int, raw []string) float64 {
		t.Helper()
		cellName, _ := excelize.CoordinatesToCellName(c+1, r+2)
		typ, err := f.GetCellType(sheet, cellName)
		if err != nil || (typ != excelize.CellTypeNumber && typ != excelize.CellTypeUnset) {
			t.Errorf("%s!%s: cell type %v, want a number", sheet, cellName, typ)
		}
		if c >= len(raw) {
			t.Errorf("%s!%s: empty", sheet, cellName)
			return 0
		}
		v, err := strconv.ParseFloat(raw[c], 64)
		if err != nil {
			t.Errorf("%s!%s: %q is not a number", sheet, cellName, raw[c])
		}
		return v
	}
	same := func(what string, got, want float64) {
		t.Helper()
		if got != want {
			t.Errorf("%s: workbook %v, JSON %v", what, got, want)
		}
	}

	// Work program: one row per work item, in JSON order.
	work := rows(report.SheetWork)
	n := 0
	for _, y := range plan.Years {
		for _, c := range y.Classes {
			for _, w := range c.Work {
				if n >= len(work) {
					t.Fatalf("workbook has %d work rows, JSON more", len(work))
				}
				r := work[n]
				if r[0] != plan.Scenario || r[1] != strconv.Itoa(y.Year) || r[2] != c.Class || r[3] != w.Treatment || r[4] != w.State {
					t.Fatalf("work row %d: %v, JSON %d %s %s %s", n+2, r, y.Year, c.Class, w.Treatment, w.State)
				}
				same(fmt.Sprintf("work row %d quantity", n+2), num(report.SheetWork, n, 5, r), w.Quantity)
				same(fmt.Sprintf("work row %d cost", n+2), num(report.SheetWork, n, 7, r), w.Cost)
				n++
			}
		}
	}
	if n != len(work) || n == 0 {
		t.Errorf("%d work rows in the workbook, %d in JSON", len(work), n)
	}

	// Condition by year and level of service: today, then each year.
	type snap struct {
		year    int
		point   string
		classes []classJSON
		network networkJSON
	}
	snaps := []snap{{plan.Years[0].Year, "start (today)", plan.Initial.Classes, plan.Initial.Network}}
	for _, y := range plan.Years {
		snaps = append(snaps, snap{y.Year, "end", y.Classes, y.Network})
	}
	cond := rows(report.SheetCondition)
	n = 0
	for _, s := range snaps {
		for _, c := range s.classes {
			for range c.States {
				r := cond[n]
				if r[1] != strconv.Itoa(s.year) || r[2] != s.point || r[3] != c.Class {
					t.Fatalf("condition row %d: %v", n+2, r)
				}
				q, ok := c.States[r[4]]
				if !ok {
					t.Fatalf("condition row %d: state %q not in JSON", n+2, r[4])
				}
				same(fmt.Sprintf("condition row %d quantity", n+2), num(report.SheetCondition, n, 6, r), q)
				n++
			}
		}
	}
	if n != len(cond) {
		t.Errorf("%d condition rows in the workbook, %d in JSON", len(cond), n)
	}
	service := rows(report.SheetService)
	n = 0
	check := func(s snap, class string, sh sharesJSON, avg *float64, score float64) {
		r := service[n]
		if r[1] != strconv.Itoa(s.year) || r[2] != s.point || r[3] != class {
			t.Fatalf("service row %d: %v, want %d %s %s", n+2, r, s.year, s.point, class)
		}
		same(fmt.Sprintf("service row %d good", n+2), num(report.SheetService, n, 4, r), sh.Good)
		same(fmt.Sprintf("service row %d fair", n+2), num(report.SheetService, n, 5, r), sh.Fair)
		same(fmt.Sprintf("service row %d poor", n+2), num(report.SheetService, n, 6, r), sh.Poor)
		if avg != nil {
			same(fmt.Sprintf("service row %d average index", n+2), num(report.SheetService, n, 7, r), *avg)
		}
		same(fmt.Sprintf("service row %d score", n+2), num(report.SheetService, n, 8, r), score)
		n++
	}
	for _, s := range snaps {
		for _, c := range s.classes {
			avg := c.AverageIndex
			check(s, c.Class, c.Shares, &avg, c.Score)
		}
		check(s, "network", s.network.Shares, nil, s.network.Score)
	}
	if n != len(service) {
		t.Errorf("%d service rows in the workbook, %d in JSON", len(service), n)
	}

	spend := rows(report.SheetSpend)
	if len(spend) != len(plan.Years) {
		t.Fatalf("%d spend rows, %d years", len(spend), len(plan.Years))
	}
	for i, y := range plan.Years {
		same(fmt.Sprintf("spend %d", y.Year), num(report.SheetSpend, i, 2, spend[i]), y.Spend)
		same(fmt.Sprintf("budget %d", y.Year), num(report.SheetSpend, i, 3, spend[i]), *y.Budget)
	}
}

// TestOutputFilesAreReadable: files written with --out can be read by
// others (reports are handed on); the temporary file they are written
// through is private until it is complete.
func TestOutputFilesAreReadable(t *testing.T) {
	dir := t.TempDir()
	for _, args := range [][]string{
		{"report", demo, "--format", "md", "--out", filepath.Join(dir, "r.md")},
		{"plan", demo, "--format", "json", "--out", filepath.Join(dir, "p.json")},
	} {
		if code, _, errs := run(t, args...); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
		st, err := os.Stat(args[len(args)-1])
		if err != nil {
			t.Fatal(err)
		}
		if st.Mode().Perm() != 0o644 {
			t.Errorf("%s: mode %v, want -rw-r--r--", args[len(args)-1], st.Mode().Perm())
		}
	}
}

// planAndWorkbook decodes `plan --format json` of the scenario into plan
// and opens the workbook `report --format xlsx` writes for it.
func planAndWorkbook(t *testing.T, scenario string, plan any) *excelize.File {
	t.Helper()
	code, js, errs := run(t, "plan", scenario, "--format", "json")
	if code != 0 {
		t.Fatalf("plan: exit %d: %s", code, errs)
	}
	if err := json.Unmarshal([]byte(js), plan); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "plan.xlsx")
	if code, _, errs := run(t, "report", scenario, "--format", "xlsx", "--date", "2027-01-15", "--out", path); code != 0 {
		t.Fatalf("report: exit %d: %s", code, errs)
	}
	f, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return f
}
