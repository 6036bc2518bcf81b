package cli

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"wearplan/cmd/internal/render"
	"wearplan/cmd/internal/report"
	"wearplan/scenarios"
)

// keswold is an invented water utility: two budget groups, counted
// assets, routine costs and targets the budget cannot meet.
const keswold = "../../../testdata/keswold-utility.yaml"

// fundingJSON is the funding part of the JSON contract, decoded on its own.
type fundingJSON struct {
	Currency string `json:"currency"`
	Funding  struct {
		LevelBudget *float64 `json:"level_budget"`
		HoldBudget  *float64 `json:"hold_budget"`
		ExtraMoney  []struct {
			Year   int     `json:"year"`
			Amount float64 `json:"amount"`
		} `json:"extra_money"`
		ExtraTotal        *float64 `json:"extra_total"`
		ExtraPresentValue *float64 `json:"extra_present_value"`
		TargetMoney       []struct {
			Target       string   `json:"target"`
			Total        *float64 `json:"total"`
			PresentValue *float64 `json:"present_value"`
		} `json:"target_money"`
	} `json:"funding"`
	RoutineCost *float64 `json:"routine_cost"`
}

// TestEveryFormatCarriesTheFunding: for the demo's reduced-funding
// alternative, the terminal, HTML, Markdown, workbook and CSV carry the
// least level budget and the extra money of `plan --format json`, to the
// cent: the amounts are whole currency units (the funding LPs round them
// up), so their whole-unit display is exact, and the machine formats hold
// the same numbers.
func TestEveryFormatCarriesTheFunding(t *testing.T) {
	code, js, errs := run(t, "plan", reduced, "--format", "json")
	if code != 0 {
		t.Fatalf("plan: exit %d: %s", code, errs)
	}
	var plan fundingJSON
	if err := json.Unmarshal([]byte(js), &plan); err != nil {
		t.Fatal(err)
	}
	f := plan.Funding
	if f.LevelBudget == nil || f.HoldBudget == nil || len(f.ExtraMoney) == 0 || f.ExtraTotal == nil || f.ExtraPresentValue == nil {
		t.Fatalf("the reduced demo's JSON lacks funding figures: %s", js[strings.Index(js, `"funding"`):])
	}
	whole := []float64{*f.LevelBudget, *f.HoldBudget, *f.ExtraTotal}
	for _, ym := range f.ExtraMoney {
		whole = append(whole, ym.Amount)
	}
	for _, v := range whole {
		if v != math.Trunc(v) {
			t.Fatalf("%v is not a whole amount; the whole-unit displays would not be exact", v)
		}
	}
	words := map[string]string{}
	_, words["terminal"], _ = run(t, "plan", reduced)
	dir := t.TempDir()
	for _, format := range []string{"html", "md"} {
		path := filepath.Join(dir, "reduced."+format)
		if code, _, errs := run(t, "report", reduced, "--format", format, "--date", "2027-01-15", "--out", path); code != 0 {
			t.Fatalf("report %s: exit %d: %s", format, code, errs)
		}
		words[format] = readFile(t, path)
	}
	for name, out := range words {
		out = strings.Join(strings.Fields(out), " ") // the terminal wraps lines
		for _, want := range []string{
			"USD " + render.Money(*f.LevelBudget) + " a year",
			"USD " + render.Money(*f.HoldBudget) + " a year",
			render.Money(*f.ExtraTotal),
		} {
			if !strings.Contains(out, want) {
				t.Errorf("%s lacks %q", name, want)
			}
		}
		for _, ym := range f.ExtraMoney {
			if !regexp.MustCompile(fmt.Sprintf(`%d\W.{0,60}%s|%s in %d`, ym.Year, regexp.QuoteMeta(render.Money(ym.Amount)), regexp.QuoteMeta(render.Money(ym.Amount)), ym.Year)).MatchString(out) {
				t.Errorf("%s lacks the extra money of %d, %s", name, ym.Year, render.Money(ym.Amount))
			}
		}
	}

	// CSV: the funding table's amounts are the JSON numbers.
	code, out, errs := run(t, "plan", reduced, "--format", "csv", "--table", "funding")
	if code != 0 {
		t.Fatalf("csv: exit %d: %s", code, errs)
	}
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	csvAmount := func(item, year string) float64 {
		t.Helper()
		for _, r := range rows[1:] {
			if r[0] == item && r[2] == year {
				v, err := strconv.ParseFloat(r[4], 64)
				if err != nil {
					t.Fatalf("CSV %s %s: %v", item, year, err)
				}
				return v
			}
		}
		t.Errorf("CSV funding table lacks %s %s", item, year)
		return math.NaN()
	}
	same := func(what string, got, want float64) {
		t.Helper()
		if got != want {
			t.Errorf("%s: %v, JSON %v", what, got, want)
		}
	}
	same("CSV level budget", csvAmount("level_budget_meeting_targets", ""), *f.LevelBudget)
	same("CSV hold budget", csvAmount("level_budget_holding_condition", ""), *f.HoldBudget)
	same("CSV extra money total", csvAmount("extra_money_total", ""), *f.ExtraTotal)
	same("CSV extra money present value", csvAmount("extra_money_present_value", ""), *f.ExtraPresentValue)
	for _, ym := range f.ExtraMoney {
		same(fmt.Sprintf("CSV extra money %d", ym.Year), csvAmount("extra_money", strconv.Itoa(ym.Year)), ym.Amount)
	}

	// Workbook: the Funding sheet holds the same numbers as number cells.
	path := filepath.Join(dir, "reduced.xlsx")
	if code, _, errs := run(t, "report", reduced, "--format", "xlsx", "--date", "2027-01-15", "--out", path); code != 0 {
		t.Fatalf("xlsx: exit %d: %s", code, errs)
	}
	x, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatal(err)
	}
	defer x.Close()
	sheet, err := x.GetRows(report.SheetFunding, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	book := func(figure, year string) float64 {
		t.Helper()
		for _, r := range sheet[1:] {
			if len(r) >= 6 && r[1] == figure && r[3] == year {
				v, err := strconv.ParseFloat(r[5], 64)
				if err != nil {
					t.Fatalf("workbook %s %s: %v", figure, year, err)
				}
				return v
			}
		}
		t.Errorf("workbook Funding sheet lacks %s %s", figure, year)
		return math.NaN()
	}
	same("workbook level budget", book("Least level budget that meets every target (a year)", ""), *f.LevelBudget)
	same("workbook hold budget", book("Least level budget that holds today's condition (a year)", ""), *f.HoldBudget)
	same("workbook extra money in all", book("Extra money in all", ""), *f.ExtraTotal)
	same("workbook extra money present value", book("Extra money, present value", ""), *f.ExtraPresentValue)
	for _, ym := range f.ExtraMoney {
		same(fmt.Sprintf("workbook extra money %d", ym.Year), book("Extra money", strconv.Itoa(ym.Year)), ym.Amount)
	}
	summary, err := x.GetRows(report.SheetSummary)
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, r := range summary {
		found = found || len(r) > 1 && r[0] == "Funding" && strings.Contains(r[1], "USD "+render.Money(*f.LevelBudget))
	}
	if !found {
		t.Error("the workbook's Summary sheet lacks the funding gap sentence")
	}
}

// spendJSON is the spend part of the JSON contract.
type spendJSON struct {
	GroupClasses []struct {
		Name    string   `json:"name"`
		Classes []string `json:"classes"`
	} `json:"budget_group_classes"`
	Years []struct {
		Year    int     `json:"year"`
		Spend   float64 `json:"spend"`
		Classes []struct {
			Class string   `json:"class"`
			Spend *float64 `json:"spend"`
		} `json:"classes"`
		Groups []struct {
			Name   string  `json:"name"`
			Spend  float64 `json:"spend"`
			Budget float64 `json:"budget"`
		} `json:"budget_groups"`
	} `json:"years"`
}

// TestSpendByClassAndGroupAddsUp: in the JSON, the CSV and the workbook of
// the invented utility (two budget groups), each year's class spends add
// up to its spend and a group's spend is the sum of its classes', within
// the cents each figure is rounded to (half a cent a figure); no class or
// group spends above its cap once rounded.
func TestSpendByClassAndGroupAddsUp(t *testing.T) {
	code, js, errs := run(t, "plan", keswold, "--format", "json")
	if code != 0 {
		t.Fatalf("plan: exit %d: %s", code, errs)
	}
	var plan spendJSON
	if err := json.Unmarshal([]byte(js), &plan); err != nil {
		t.Fatal(err)
	}
	if len(plan.GroupClasses) != 2 || len(plan.Years) != 15 {
		t.Fatalf("%d groups, %d years", len(plan.GroupClasses), len(plan.Years))
	}
	classSpend := map[[2]any]float64{}
	for _, y := range plan.Years {
		sum := 0.0
		for _, c := range y.Classes {
			if c.Spend == nil {
				t.Fatalf("%d %s: no spend", y.Year, c.Class)
			}
			sum += *c.Spend
			classSpend[[2]any{y.Year, c.Class}] = *c.Spend
		}
		if tol := 0.005 * float64(len(y.Classes)+1); math.Abs(sum-y.Spend) > tol {
			t.Errorf("%d: classes add up to %.2f, the year's spend is %.2f", y.Year, sum, y.Spend)
		}
		for _, g := range y.Groups {
			gsum, n := 0.0, 0
			for _, gc := range plan.GroupClasses {
				if gc.Name != g.Name {
					continue
				}
				for _, name := range gc.Classes {
					gsum += classSpend[[2]any{y.Year, name}]
					n++
				}
			}
			if n == 0 || math.Abs(gsum-g.Spend) > 0.005*float64(n+1) {
				t.Errorf("%d group %s: its %d classes add up to %.2f, its spend is %.2f", y.Year, g.Name, n, gsum, g.Spend)
			}
		}
	}

	// CSV class-spend holds the JSON's class spends.
	_, out, _ := run(t, "plan", keswold, "--format", "csv", "--table", "class-spend")
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 1+15*4 {
		t.Fatalf("%d CSV class-spend rows, want %d", len(rows), 1+15*4)
	}
	for _, r := range rows[1:] {
		year, _ := strconv.Atoi(r[0])
		v, err := strconv.ParseFloat(r[3], 64)
		if err != nil || v != classSpend[[2]any{year, r[1]}] {
			t.Errorf("CSV %v: JSON %v", r, classSpend[[2]any{year, r[1]}])
		}
		if (r[1] == "water-mains" || r[1] == "hydrants") != (r[2] == "water") {
			t.Errorf("CSV %v: wrong budget group", r)
		}
	}

	// The workbook's Spend by class sheet holds the same numbers.
	path := filepath.Join(t.TempDir(), "keswold.xlsx")
	if code, _, errs := run(t, "report", keswold, "--format", "xlsx", "--date", "2027-01-15", "--out", path); code != 0 {
		t.Fatalf("xlsx: exit %d: %s", code, errs)
	}
	x, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatal(err)
	}
	defer x.Close()
	sheet, err := x.GetRows(report.SheetClassSpend, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(sheet) != 1+15*4 {
		t.Fatalf("%d workbook class-spend rows", len(sheet))
	}
	for _, r := range sheet[1:] {
		year, _ := strconv.Atoi(r[1])
		v, err := strconv.ParseFloat(r[4], 64)
		if err != nil || v != classSpend[[2]any{year, r[2]}] {
			t.Errorf("workbook %v: JSON %v", r, classSpend[[2]any{year, r[2]}])
		}
	}
}

// moneyKeys are the JSON keys whose numbers are money; "amount" is money
// under the extra money, a share or index points under shortfalls.
var moneyKeys = map[string]bool{
	"total_cost": true, "present_value": true, "routine_cost": true, "routine_present_value": true, "spend": true, "budget": true,
	"cost": true, "replacement_value": true, "backlog": true, "unit_cost": true, "level_budget": true, "hold_budget": true,
	"extra_total": true, "extra_present_value": true, "total": true, "depreciated_cost": true, "consumption": true,
	"renewal_spend": true, "required_renewal": true, "annual_cost": true, "annual_treatment_cost": true, "annual_routine_cost": true,
	"targets_budget": true,
}

// moneyDecimals walks a JSON document read with UseNumber and reports
// every money number written with more than two decimals, or as -0, or
// with an exponent.
func moneyDecimals(t *testing.T, what string, v any, path []string) {
	t.Helper()
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			moneyDecimals(t, what, e, append(path, k))
		}
	case []any:
		for _, e := range x {
			moneyDecimals(t, what, e, path)
		}
	case json.Number:
		key := path[len(path)-1]
		money := moneyKeys[key] || key == "amount" && strings.Contains(strings.Join(path, "/"), "extra_")
		if !money {
			return
		}
		s := x.String()
		if strings.ContainsAny(s, "eE") || s == "-0" || strings.HasPrefix(s, "-0.") && strings.Trim(s, "-0.") == "" {
			t.Errorf("%s: %s = %s", what, strings.Join(path, "/"), s)
		}
		if i := strings.IndexByte(s, '.'); i >= 0 && len(s)-i-1 > 2 {
			t.Errorf("%s: %s = %s has more than two decimals", what, strings.Join(path, "/"), s)
		}
	}
}

// TestMoneyHasAtMostTwoDecimals: every money figure of the JSON and CSV
// output of plan, forecast, sweep, compare and longrun, for the demo, its
// reduced alternative and the invented utility, is written in cents at
// most, without exponent or negative zero.
func TestMoneyHasAtMostTwoDecimals(t *testing.T) {
	for _, args := range [][]string{
		{"plan", reduced}, {"plan", keswold}, {"forecast", keswold},
		{"sweep", reduced, "--budget", "3e6,4.25e6"}, {"compare", demo, reduced}, {"longrun", keswold},
	} {
		code, js, errs := run(t, append(args, "--format", "json")...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
		dec := json.NewDecoder(strings.NewReader(js))
		dec.UseNumber()
		var doc any
		if err := dec.Decode(&doc); err != nil {
			t.Fatal(err)
		}
		moneyDecimals(t, strings.Join(args[:2], " ")+" json", doc, []string{""})
	}
	// CSV: every money column (its name ends in the currency; the sweep's
	// and comparison's money columns by name).
	named := map[string]bool{"yearly_budget": true, "total_cost": true, "present_value": true, "hold_budget": true, "targets_budget": true, "extra_money": true, "annual_cost": true}
	dir := t.TempDir()
	for _, file := range []string{reduced, keswold} {
		out := filepath.Join(dir, filepath.Base(file))
		if code, _, errs := run(t, "plan", file, "--format", "csv", "--out", mkdir(t, out)); code != 0 {
			t.Fatalf("csv: exit %d: %s", code, errs)
		}
		for _, table := range render.CSVTables {
			checkCSVMoney(t, filepath.Join(out, table+".csv"), readFile(t, filepath.Join(out, table+".csv")), named)
		}
	}
	for _, args := range [][]string{{"sweep", reduced, "--budget", "3e6,4.25e6"}, {"compare", demo, reduced}, {"longrun", keswold}} {
		_, out, _ := run(t, append(args, "--format", "csv")...)
		checkCSVMoney(t, args[0]+" csv", out, named)
	}
}

func checkCSVMoney(t *testing.T, what, text string, named map[string]bool) {
	t.Helper()
	rows, err := csv.NewReader(strings.NewReader(text)).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	for c, h := range rows[0] {
		if !named[h] && !strings.HasSuffix(h, "_usd") && !strings.HasSuffix(h, "_cad") {
			continue
		}
		for _, r := range rows[1:] {
			s := r[c]
			if s == "" {
				continue
			}
			if strings.ContainsAny(s, "eE") || s == "-0" {
				t.Errorf("%s: column %s: %q", what, h, s)
			}
			if i := strings.IndexByte(s, '.'); i >= 0 && len(s)-i-1 > 2 {
				t.Errorf("%s: column %s: %s has more than two decimals", what, h, s)
			}
		}
	}
}

// mkdir makes a folder and returns its path.
func mkdir(t *testing.T, path string) string {
	t.Helper()
	if err := os.MkdirAll(path, 0o755); err != nil {
		t.Fatal(err)
	}
	return path
}

// indicatorJSON is the indicators part of the JSON contract.
type indicatorPointJSON struct {
	Year              int      `json:"year"`
	MeanRemainingLife *float64 `json:"mean_remaining_life"`
	DepreciatedCost   *float64 `json:"depreciated_cost"`
	ConsumptionRatio  *float64 `json:"consumption_ratio"`
	Consumption       *float64 `json:"consumption"`
	RenewalSpend      float64  `json:"renewal_spend"`
	RequiredRenewal   *float64 `json:"required_renewal"`
}

type indicatorsJSON struct {
	Indicators struct {
		RatioYears int `json:"ratio_years"`
		Classes    []struct {
			Class               string               `json:"class"`
			Today               indicatorPointJSON   `json:"today"`
			Years               []indicatorPointJSON `json:"years"`
			SustainabilityRatio *float64             `json:"sustainability_ratio"`
			RenewalFundingRatio *float64             `json:"renewal_funding_ratio"`
			RemainingLife       []struct {
				State string  `json:"state"`
				Years float64 `json:"years"`
			} `json:"remaining_life"`
		} `json:"classes"`
	} `json:"indicators"`
}

// TestWorkbookIndicatorsAreTheJSONs: the workbook's Indicators, Renewal
// ratios and Remaining life sheets hold the JSON's figures, number for
// number, for the invented utility.
func TestWorkbookIndicatorsAreTheJSONs(t *testing.T) {
	var plan indicatorsJSON
	x := planAndWorkbook(t, keswold, &plan)
	defer x.Close()
	rows := func(sheet string) [][]string {
		rs, err := x.GetRows(sheet, excelize.Options{RawCellValue: true})
		if err != nil || len(rs) < 2 {
			t.Fatalf("%s: %v", sheet, err)
		}
		return rs[1:]
	}
	cellOf := func(r []string, c int) *float64 {
		if c >= len(r) || r[c] == "" {
			return nil
		}
		v, err := strconv.ParseFloat(r[c], 64)
		if err != nil {
			t.Fatalf("%v column %d: %v", r, c, err)
		}
		return &v
	}
	same := func(what string, got, want *float64) {
		t.Helper()
		if (got == nil) != (want == nil) || got != nil && *got != *want {
			t.Errorf("%s: workbook %v, JSON %v", what, deref(got), deref(want))
		}
	}
	ind := rows(report.SheetIndicators)
	n := 0
	for _, c := range plan.Indicators.Classes {
		points := append([]indicatorPointJSON{c.Today}, c.Years...)
		for i, p := range points {
			r := ind[n]
			if r[3] != c.Class {
				t.Fatalf("indicators row %d: %v, want class %s", n+2, r, c.Class)
			}
			what := fmt.Sprintf("%s row %d", c.Class, n+2)
			same(what+" mean remaining life", cellOf(r, 4), p.MeanRemainingLife)
			same(what+" depreciated cost", cellOf(r, 6), p.DepreciatedCost)
			same(what+" consumption ratio", cellOf(r, 7), p.ConsumptionRatio)
			if i > 0 {
				same(what+" consumption", cellOf(r, 8), p.Consumption)
				spend := p.RenewalSpend
				same(what+" renewal spend", cellOf(r, 9), &spend)
				same(what+" required renewal", cellOf(r, 10), p.RequiredRenewal)
			}
			n++
		}
	}
	ratios := rows(report.SheetRatios)
	for k, c := range plan.Indicators.Classes {
		same(c.Class+" sustainability ratio", cellOf(ratios[k], 4), c.SustainabilityRatio)
		same(c.Class+" renewal funding ratio", cellOf(ratios[k], 5), c.RenewalFundingRatio)
	}
	life := rows(report.SheetLife)
	n = 0
	for _, c := range plan.Indicators.Classes {
		for _, sy := range c.RemainingLife {
			v := sy.Years
			same(c.Class+" "+sy.State+" remaining life", cellOf(life[n], 3), &v)
			n++
		}
	}
	if n != len(life) || n == 0 {
		t.Errorf("%d remaining-life rows in the workbook, %d in JSON", len(life), n)
	}
}

func deref(v *float64) any {
	if v == nil {
		return nil
	}
	return *v
}

// TestTerminalSaysTheSharedWords: the terminal's funding section is the
// words render gives the what-if page and the reports.
func TestTerminalSaysTheSharedWords(t *testing.T) {
	sc, err := scenarios.LoadFile(keswold)
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	_, out, _ := run(t, "plan", keswold)
	flat := strings.Join(strings.Fields(out), " ")
	lines := append(render.ShortfallWords(r), render.FundingWords(r)...)
	if len(lines) < 4 {
		t.Fatalf("only %d funding sentences for a plan that misses targets", len(lines))
	}
	for _, s := range lines {
		if !strings.Contains(flat, strings.Join(strings.Fields(s), " ")) {
			t.Errorf("terminal lacks %q", s)
		}
	}
}
