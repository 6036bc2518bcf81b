package report

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/xuri/excelize/v2"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// Workbook sheet names, in the order they appear.
const (
	SheetAbout   = "About"
	SheetSummary = "Summary"
	SheetWork    = "Work program"
	// SheetCondition to SheetTargets follow in this order.
	SheetCondition  = "Condition by year"
	SheetService    = "Level of service"
	SheetSpend      = "Spend and budget"
	SheetClassSpend = "Spend by class"
	SheetFunding    = "Funding"
	SheetTargets    = "Targets"
	// SheetIndicators, SheetRatios and SheetLife follow the targets (and
	// the bands), before SheetInputs.
	SheetIndicators = "Indicators"
	SheetRatios     = "Renewal ratios"
	SheetLife       = "Remaining life"
	SheetInputs     = "Inputs"
	// SheetBands and SheetTargetChances follow SheetTargets when the
	// report has bands.
	SheetBands         = "Bands"
	SheetTargetChances = "Target probabilities"
)

// Number formats of workbook columns. Values are stored at full precision;
// the formats only change how they show.
const (
	fmtText     = ""
	fmtInt      = "0"
	fmtMoney    = "#,##0"
	fmtQuantity = "#,##0.0"
	fmtShare    = "0.0%"
	fmtIndex    = "0.00"
	fmtProb     = "0.000"
)

// column is one workbook column: its header (with the unit) and format.
type column struct {
	head   string
	format string
	width  float64
}

// sheetData is a long-format table: a header row and rows of values
// (float64, int, string, bool or nil for an empty cell).
type sheetData struct {
	name string
	cols []column
	rows [][]any
}

// Workbook writes the report as an .xlsx workbook: one sheet each for the
// work program, condition by year, level of service, spend and budget,
// targets and inputs, after an About sheet with the caution and the run
// details. Every table has a scenario column, so that comparison workbooks
// keep the same shape; numbers are stored as numbers (shares as fractions
// shown as percentages) with units in the headers; header rows are frozen
// and filtered. When a run carries a simulation, the Bands and Target
// probabilities sheets follow Targets, and the About sheet says what the
// bands include.
func Workbook(w io.Writer, rep *Report) error {
	if err := rep.validate(); err != nil {
		return err
	}
	// Money is stored rounded to cents, as the JSON and CSV output give it,
	// so that a workbook figure equals the JSON figure.
	rounded := *rep
	rounded.Runs = make([]Run, len(rep.Runs))
	for i, run := range rep.Runs {
		run.Result = render.RoundedMoney(run.Result)
		rounded.Runs[i] = run
	}
	rep = &rounded
	f := excelize.NewFile()
	defer f.Close()
	wb := &workbook{f: f, styles: map[string]int{}}
	if err := wb.about(rep); err != nil {
		return err
	}
	if err := wb.summary(rep); err != nil {
		return fmt.Errorf("sheet %q: %w", SheetSummary, err)
	}
	sheets := []sheetData{workSheet(rep), conditionSheet(rep), serviceSheet(rep), spendSheet(rep), classSpendSheet(rep), fundingSheet(rep), targetSheet(rep)}
	if hasBands(rep) {
		sheets = append(sheets, bandSheet(rep), chanceSheet(rep))
	}
	sheets = append(sheets, indicatorSheet(rep), ratioSheet(rep), lifeSheet(rep))
	for _, s := range sheets {
		if err := wb.table(s); err != nil {
			return fmt.Errorf("sheet %q: %w", s.name, err)
		}
	}
	if err := wb.inputs(rep); err != nil {
		return fmt.Errorf("sheet %q: %w", SheetInputs, err)
	}
	if err := f.SetDocProps(&excelize.DocProperties{
		Title:   "wearplan report",
		Creator: "wearplan " + rep.Details.Version,
		Created: rep.Details.Date + "T00:00:00Z", Modified: rep.Details.Date + "T00:00:00Z",
	}); err != nil {
		return err
	}
	f.SetActiveSheet(0)
	_, err := f.WriteTo(w)
	return err
}

type workbook struct {
	f      *excelize.File
	styles map[string]int // number format -> style id
	bold   int
}

func (wb *workbook) style(format string) (int, error) {
	if id, ok := wb.styles[format]; ok {
		return id, nil
	}
	st := &excelize.Style{Alignment: &excelize.Alignment{Vertical: "top"}}
	if format != "" {
		fm := format
		st.CustomNumFmt = &fm
	}
	id, err := wb.f.NewStyle(st)
	wb.styles[format] = id
	return id, err
}

func (wb *workbook) boldStyle() (int, error) {
	if wb.bold != 0 {
		return wb.bold, nil
	}
	id, err := wb.f.NewStyle(&excelize.Style{
		Font:      &excelize.Font{Bold: true},
		Alignment: &excelize.Alignment{WrapText: true, Vertical: "bottom"},
		Border:    []excelize.Border{{Type: "bottom", Color: "000000", Style: 1}},
	})
	wb.bold = id
	return id, err
}

// setRow writes values from the given cell rightwards. Floats are written
// with every digit of their shortest exact decimal form: excelize's default
// cuts them to 15 significant digits, and Excel reads the full form, so a
// workbook number is the same float64 as the JSON output's.
func setRow(f *excelize.File, sheet string, col, row int, vals []any) error {
	for i, v := range vals {
		ref := cell(col+i, row)
		var err error
		switch x := v.(type) {
		case nil:
			continue
		case float64:
			s := strconv.FormatFloat(x, 'f', -1, 64)
			prec := 0
			if dot := strings.IndexByte(s, '.'); dot >= 0 {
				prec = len(s) - dot - 1
			}
			err = f.SetCellFloat(sheet, ref, x, prec, 64)
		default:
			err = f.SetCellValue(sheet, ref, v)
		}
		if err != nil {
			return err
		}
	}
	return nil
}

func cell(col, row int) string {
	name, _ := excelize.CoordinatesToCellName(col, row)
	return name
}

// table writes one long-format sheet with a frozen, filtered header row.
func (wb *workbook) table(s sheetData) error {
	f := wb.f
	if _, err := f.NewSheet(s.name); err != nil {
		return err
	}
	head := make([]any, len(s.cols))
	for i, c := range s.cols {
		head[i] = c.head
	}
	if err := f.SetSheetRow(s.name, "A1", &head); err != nil {
		return err
	}
	bold, err := wb.boldStyle()
	if err != nil {
		return err
	}
	last := cell(len(s.cols), 1)
	if err := f.SetCellStyle(s.name, "A1", last, bold); err != nil {
		return err
	}
	for r, vals := range s.rows {
		if err := setRow(f, s.name, 1, r+2, vals); err != nil {
			return err
		}
	}
	for i, c := range s.cols {
		colName, _ := excelize.ColumnNumberToName(i + 1)
		if len(s.rows) > 0 {
			id, err := wb.style(c.format)
			if err != nil {
				return err
			}
			if err := f.SetCellStyle(s.name, cell(i+1, 2), cell(i+1, len(s.rows)+1), id); err != nil {
				return err
			}
		}
		width := c.width
		if width == 0 {
			width = 14
		}
		if err := f.SetColWidth(s.name, colName, colName, width); err != nil {
			return err
		}
	}
	if err := f.SetRowHeight(s.name, 1, 32); err != nil {
		return err
	}
	if err := f.SetPanes(s.name, &excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"}); err != nil {
		return err
	}
	return f.AutoFilter(s.name, "A1:"+cell(len(s.cols), len(s.rows)+1), nil)
}

func workSheet(rep *Report) sheetData {
	cur := commonCurrency(rep)
	s := sheetData{name: SheetWork, cols: []column{
		{"Scenario", fmtText, 30}, {"Year", fmtInt, 8}, {"Class", fmtText, 18}, {"Treatment", fmtText, 18},
		{"State treated", fmtText, 16}, {"Quantity", fmtQuantity, 12}, {"Unit", fmtText, 9}, {"Cost (" + cur + ", that year's prices)", fmtMoney, 16},
	}}
	for _, run := range rep.Runs {
		r := run.Result
		for _, y := range r.Years {
			for _, c := range y.Classes {
				for _, wk := range c.Work {
					s.rows = append(s.rows, []any{r.Scenario, y.Year, c.Class, wk.Treatment, wk.State, wk.Quantity, c.Unit, wk.Cost})
				}
			}
		}
	}
	return s
}

// yearPoints lists a result's condition snapshots: today (the start of
// the first year), then the end of each year.
func yearPoints(r *scenarios.Result) []struct {
	year    int
	point   string
	classes []scenarios.ClassCondition
	network scenarios.NetworkCondition
} {
	type pt = struct {
		year    int
		point   string
		classes []scenarios.ClassCondition
		network scenarios.NetworkCondition
	}
	out := []pt{{r.StartYear, "start (today)", r.Initial.Classes, r.Initial.Network}}
	for _, y := range r.Years {
		out = append(out, pt{y.Year, "end", y.Classes, y.Network})
	}
	return out
}

func conditionSheet(rep *Report) sheetData {
	s := sheetData{name: SheetCondition, cols: []column{
		{"Scenario", fmtText, 30}, {"Year", fmtInt, 8}, {"Start or end of year", fmtText, 12}, {"Class", fmtText, 18},
		{"State (best first)", fmtText, 16}, {"State order (1 = best)", fmtInt, 10}, {"Quantity", fmtQuantity, 12}, {"Unit", fmtText, 9}, {"Share of class", fmtShare, 10},
	}}
	for _, run := range rep.Runs {
		r := run.Result
		for _, p := range yearPoints(r) {
			for _, c := range p.classes {
				total := 0.0
				for _, q := range c.States {
					total += q.Quantity
				}
				for i, q := range c.States {
					var share any
					if total > 0 {
						share = q.Quantity / total
					}
					s.rows = append(s.rows, []any{r.Scenario, p.year, p.point, c.Class, q.State, i + 1, q.Quantity, c.Unit, share})
				}
			}
		}
	}
	return s
}

// commonCurrency names the currency of the money columns: the scenarios'
// currency, or a phrase when a comparison mixes currencies.
func commonCurrency(rep *Report) string {
	cur := currencyOf(rep.Runs[0].Result)
	for _, run := range rep.Runs[1:] {
		if currencyOf(run.Result) != cur {
			return "each scenario's currency"
		}
	}
	return cur
}

func optional(v *float64) any {
	if v == nil {
		return nil
	}
	return *v
}

func serviceSheet(rep *Report) sheetData {
	cur := commonCurrency(rep)
	s := sheetData{name: SheetService, cols: []column{
		{"Scenario", fmtText, 30}, {"Year", fmtInt, 8}, {"Start or end of year", fmtText, 12}, {"Class (or network)", fmtText, 18},
		{"Good (share of quantity)", fmtShare, 11}, {"Fair (share of quantity)", fmtShare, 11}, {"Poor (share of quantity)", fmtShare, 11},
		{"Average index (class scale)", fmtIndex, 11}, {"Condition score (0-100, 100 best)", fmtIndex, 12},
		{"Replacement value (" + cur + ")", fmtMoney, 16}, {"Backlog (" + cur + ")", fmtMoney, 16},
	}}
	for _, run := range rep.Runs {
		r := run.Result
		for _, p := range yearPoints(r) {
			for _, c := range p.classes {
				s.rows = append(s.rows, []any{r.Scenario, p.year, p.point, c.Class, c.Shares.Good, c.Shares.Fair, c.Shares.Poor, c.AverageIndex, c.Score, optional(c.ReplacementValue), optional(c.Backlog)})
			}
			n := p.network
			s.rows = append(s.rows, []any{r.Scenario, p.year, p.point, "network", n.Shares.Good, n.Shares.Fair, n.Shares.Poor, optional(n.AverageIndex), n.Score, optional(n.ReplacementValue), optional(n.Backlog)})
		}
	}
	return s
}

func spendSheet(rep *Report) sheetData {
	cur := commonCurrency(rep)
	s := sheetData{name: SheetSpend, cols: []column{
		{"Scenario", fmtText, 30}, {"Year", fmtInt, 8}, {"Spend (" + cur + ", that year's prices)", fmtMoney, 16},
		{"Budget cap (" + cur + "; empty = no cap)", fmtMoney, 16}, {"Unspent (" + cur + ")", fmtMoney, 14},
		{"Present value of spend (" + cur + ")", fmtMoney, 16},
	}}
	// Budget groups, by name in order of first appearance.
	var groups []string
	seen := map[string]bool{}
	for _, run := range rep.Runs {
		for _, y := range run.Result.Years {
			for _, g := range y.Groups {
				if !seen[g.Name] {
					seen[g.Name] = true
					groups = append(groups, g.Name)
				}
			}
		}
	}
	for _, g := range groups {
		s.cols = append(s.cols, column{g + " spend (" + cur + ")", fmtMoney, 16}, column{g + " cap (" + cur + ")", fmtMoney, 16})
	}
	for _, run := range rep.Runs {
		r := run.Result
		if r.Kind != scenarios.KindPlan {
			continue
		}
		for t, y := range r.Years {
			var budget, left any
			if y.Budget != nil {
				budget, left = *y.Budget, render.Cents(*y.Budget-y.Spend)
			}
			pv := render.Cents(y.Spend * math.Pow(1+r.DiscountRate, -float64(t)))
			row := []any{r.Scenario, y.Year, y.Spend, budget, left, pv}
			for _, name := range groups {
				var gs, gc any
				for _, g := range y.Groups {
					if g.Name == name {
						gs = g.Spend
						if !math.IsInf(g.Budget, 1) {
							gc = g.Budget
						}
					}
				}
				row = append(row, gs, gc)
			}
			s.rows = append(s.rows, row)
		}
	}
	return s
}

func targetSheet(rep *Report) sheetData {
	s := sheetData{name: SheetTargets, cols: []column{
		{"Scenario", fmtText, 30}, {"Target", fmtText, 44}, {"Met", fmtText, 6}, {"Worst year", fmtInt, 8},
		{"Worst value (share 0-1 or index)", "0.000", 12}, {"Limit (share 0-1 or index)", "0.000", 12},
		{"Shortfall year", fmtInt, 9}, {"Shortfall (share 0-1 or index points)", "0.0000", 13},
	}}
	for _, run := range rep.Runs {
		r := run.Result
		for _, o := range r.Targets {
			met := "yes"
			if !o.Met {
				met = "no"
			}
			if len(o.Shortfalls) == 0 {
				s.rows = append(s.rows, []any{r.Scenario, o.Target, met, o.WorstYear, o.WorstValue, o.Limit, nil, nil})
			}
			for _, sf := range o.Shortfalls {
				s.rows = append(s.rows, []any{r.Scenario, o.Target, met, o.WorstYear, o.WorstValue, o.Limit, sf.Year, sf.Amount})
			}
		}
	}
	return s
}

// hasBands says whether any run of the report carries a simulation.
func hasBands(rep *Report) bool {
	for _, run := range rep.Runs {
		if run.Simulation != nil {
			return true
		}
	}
	return false
}

// bandSheet holds each run's share bands: per year, class (then the
// network) and group, the 5th, 50th and 95th percentile and the plan.
func bandSheet(rep *Report) sheetData {
	s := sheetData{name: SheetBands, cols: []column{
		{"Scenario", fmtText, 30}, {"Year (end of)", fmtInt, 8}, {"Class (or network)", fmtText, 18}, {"Group", fmtText, 8},
		{"5th percentile (share)", fmtShare, 11}, {"Median (share)", fmtShare, 11}, {"95th percentile (share)", fmtShare, 11},
		{"Plan (share)", fmtShare, 11}, {"Runs", fmtInt, 8},
	}}
	for _, run := range rep.Runs {
		sim := run.Simulation
		if sim == nil {
			continue
		}
		add := func(year int, class string, sh scenarios.ShareBands) {
			for _, g := range []struct {
				name string
				b    scenarios.Band
			}{{"good", sh.Good}, {"fair", sh.Fair}, {"poor", sh.Poor}} {
				s.rows = append(s.rows, []any{run.Result.Scenario, year, class, g.name, g.b.P5, g.b.P50, g.b.P95, g.b.Plan, sim.Runs})
			}
		}
		for _, y := range sim.Years {
			for _, c := range y.Classes {
				add(y.Year, c.Class, c.Shares)
			}
			add(y.Year, "network", y.Network.Shares)
		}
	}
	return s
}

// chanceSheet holds, per target and year, the share of runs meeting it.
func chanceSheet(rep *Report) sheetData {
	s := sheetData{name: SheetTargetChances, cols: []column{
		{"Scenario", fmtText, 30}, {"Target", fmtText, 44}, {"Plan meets it", fmtText, 8},
		{"Probability met in every year it covers (share of runs)", fmtShare, 14},
		{"Year", fmtInt, 8}, {"Probability met in the year (share of runs)", fmtShare, 14}, {"Runs", fmtInt, 8},
	}}
	for _, run := range rep.Runs {
		sim := run.Simulation
		if sim == nil {
			continue
		}
		for _, tc := range sim.Targets {
			met := "yes"
			if !tc.MetByPlan {
				met = "no"
			}
			for _, y := range tc.Years {
				s.rows = append(s.rows, []any{run.Result.Scenario, tc.Target, met, tc.AllYears, y.Year, y.Probability, sim.Runs})
			}
		}
	}
	return s
}

// about writes the first sheet: title, caution, what each sheet holds, and
// the run details.
func (wb *workbook) about(rep *Report) error {
	f := wb.f
	if err := f.SetSheetName("Sheet1", SheetAbout); err != nil {
		return err
	}
	bold, err := wb.boldStyle()
	if err != nil {
		return err
	}
	wrap, err := f.NewStyle(&excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	if err != nil {
		return err
	}
	var lines [][]any
	for _, run := range rep.Runs {
		lines = append(lines, []any{"Scenario", run.Result.Scenario})
	}
	// What each plan does to its classes, first: a reader of the
	// workbook sees no other page of words.
	for _, run := range rep.Runs {
		for _, w := range run.Result.ClassWarnings {
			lines = append(lines, []any{"Warning", run.Result.Scenario + ": " + w.Text})
		}
	}
	lines = append(lines,
		[]any{"Caution", scenarios.Caution},
		[]any{},
		[]any{"Sheet", "What it holds"},
		[]any{SheetWork, "quantity of each class and state given each treatment in each year, and its cost at that year's prices"},
		[]any{SheetCondition, "quantity in each condition state, best first, today (start of the first year) and at the end of each year"},
		[]any{SheetService, "good, fair and poor shares (fractions shown as percentages), average index and condition score per class and for the network; replacement value and backlog where known"},
		[]any{SheetSpend, "spend against the budget cap each year, and its present value; each budget group's spend and cap"},
		[]any{SheetClassSpend, "spend of each class in each year, with its budget group; the classes of a year add up to its spend"},
		[]any{SheetFunding, "the funding answers: least level budgets that meet every target and that hold today's condition, extra money by year and budget at the least present value, the money that closes each missed target, routine costs"},
		[]any{SheetTargets, "each target, whether it holds, its worst year, and any shortfall by year"},
	)
	if hasBands(rep) {
		lines = append(lines,
			[]any{SheetBands, "5th, 50th and 95th percentile over the simulated runs of the good, fair and poor shares per class and for the network at the end of each year, beside the plan's share"},
			[]any{SheetTargetChances, "for each target and year it covers, the share of simulated runs in which it is met, and the share in which it is met in every year"},
		)
	}
	lines = append(lines,
		[]any{SheetIndicators, "asset management plan indicators per class and for the network, today and at the end of each year: mean remaining life, depreciated replacement cost, consumption ratio, consumption, renewal spend and the renewal the holding plan needs"},
		[]any{SheetRatios, "asset sustainability and renewal funding ratios over the first years, per class and for the network"},
		[]any{SheetLife, "remaining life of each condition state: expected years to the worst state with no work"},
		[]any{SheetInputs, "the assumptions: rates, budget, classes, condition scales, deterioration matrices and treatments"},
		[]any{},
		[]any{"Indicators", "what they mean and where they come from:"},
	)
	years := 10
	if in := rep.Runs[0].Result.Indicators; in != nil {
		years = in.RatioYears
	}
	for _, d := range indicatorDefinitions(years) {
		lines = append(lines, []any{d.Label, d.Value})
	}
	lines = append(lines, []any{})
	for _, run := range rep.Runs {
		sim := run.Simulation
		if sim == nil {
			continue
		}
		lines = append(lines,
			[]any{"Bands", fmt.Sprintf("%s: %d simulated runs of the plan, seed %d", run.Result.Scenario, sim.Runs, sim.Seed)},
			[]any{"Included", strings.Join(sim.Uncertainty.Included, "; ")},
			[]any{"Not included", strings.Join(sim.Uncertainty.Excluded, "; ")},
		)
	}
	if hasBands(rep) {
		lines = append(lines, []any{"About the bands", bandsCaution}, []any{})
	}
	lines = append(lines,
		[]any{"Run details", ""},
		[]any{"wearplan version", rep.Details.Version},
		[]any{"Report date", rep.Details.Date},
	)
	for _, in := range rep.Details.Inputs {
		lines = append(lines, []any{"Input file", in.Path, "SHA-256", in.SHA256})
	}
	for i, l := range lines {
		row := l
		if err := f.SetSheetRow(SheetAbout, cell(1, i+1), &row); err != nil {
			return err
		}
		if len(l) > 0 {
			if err := f.SetCellStyle(SheetAbout, cell(1, i+1), cell(1, i+1), bold); err != nil {
				return err
			}
		}
		if err := f.SetCellStyle(SheetAbout, cell(2, i+1), cell(2, i+1), wrap); err != nil {
			return err
		}
	}
	if err := f.SetColWidth(SheetAbout, "A", "A", 20); err != nil {
		return err
	}
	if err := f.SetColWidth(SheetAbout, "B", "B", 90); err != nil {
		return err
	}
	return f.SetColWidth(SheetAbout, "C", "D", 12)
}

// putRow writes vals from the first column of row, in style (0: none)
// with each cell's number format from formats ("" keeps the style's).
func (wb *workbook) putRow(sheet string, row int, vals []any, style int, formats []string) error {
	f := wb.f
	if err := setRow(f, sheet, 1, row, vals); err != nil {
		return err
	}
	if style != 0 && len(vals) > 0 {
		if err := f.SetCellStyle(sheet, cell(1, row), cell(len(vals), row), style); err != nil {
			return err
		}
	}
	for i, fm := range formats {
		if fm == "" {
			continue
		}
		id, err := wb.style(fm)
		if err != nil {
			return err
		}
		if err := f.SetCellStyle(sheet, cell(i+1, row), cell(i+1, row), id); err != nil {
			return err
		}
	}
	return nil
}

// inputs writes the assumptions of every run as blocks, each with a bold
// title and header row.
func (wb *workbook) inputs(rep *Report) error {
	f := wb.f
	if _, err := f.NewSheet(SheetInputs); err != nil {
		return err
	}
	bold, err := wb.boldStyle()
	if err != nil {
		return err
	}
	row := 1
	put := func(vals []any, style int, formats []string) error {
		if err := wb.putRow(SheetInputs, row, vals, style, formats); err != nil {
			return err
		}
		row++
		return nil
	}
	for _, run := range rep.Runs {
		sc := run.Scenario
		if sc == nil {
			continue
		}
		cur := currencyOf(run.Result)
		steps := []func() error{
			func() error { return put([]any{"Scenario: " + sc.Name}, bold, nil) },
			func() error { return put([]any{"Start year", sc.StartYear}, 0, nil) },
			func() error { return put([]any{"Horizon (years)", sc.Horizon}, 0, nil) },
			func() error { return put([]any{"Currency", cur}, 0, nil) },
			func() error {
				return put([]any{"Cost escalation (a year)", sc.Escalation}, 0, []string{"", "0.00%"})
			},
			func() error { return put([]any{"Discount rate (a year)", sc.DiscountRate}, 0, []string{"", "0.00%"}) },
			func() error { return put([]any{"Objective", sc.Objective.String()}, 0, nil) },
			func() error { return put([]any{"Network weighting", string(sc.Weighting)}, 0, nil) },
			func() error { return put([]any{"Carry-over of unspent money", sc.CarryOver}, 0, nil) },
		}
		for _, st := range steps {
			if err := st(); err != nil {
				return err
			}
		}
		for t := range sc.Horizon {
			var b any
			if sc.Budget != nil && !math.IsInf(sc.Budget[t], 1) {
				b = sc.Budget[t]
			}
			if err := put([]any{fmt.Sprintf("Network budget %d (%s; empty = no cap)", sc.Year(t+1), cur), b}, 0, []string{"", fmtMoney}); err != nil {
				return err
			}
		}
		for _, g := range sc.BudgetGroups {
			for t, v := range g.Yearly {
				var b any
				if !math.IsInf(v, 1) {
					b = v
				}
				if err := put([]any{fmt.Sprintf("Budget group %s %d (%s)", g.Name, sc.Year(t+1), cur), b}, 0, []string{"", fmtMoney}); err != nil {
					return err
				}
			}
		}
		for _, t := range sc.Targets {
			if err := put([]any{"Target", t.Label}, 0, nil); err != nil {
				return err
			}
		}
		row++
		if err := put([]any{"Class", "Unit", "Quantity today", "Replacement cost (" + cur + " per unit)", "Network weight (share)", "Scale"}, bold, nil); err != nil {
			return err
		}
		for k := range sc.Classes {
			c := &sc.Classes[k]
			var rc any
			if c.ReplacementCost > 0 {
				rc = c.ReplacementCost
			}
			if err := put([]any{c.Name, c.Unit, c.Total(), rc, c.Weight, scaleLabel(c.Scale)}, 0, []string{"", "", fmtQuantity, fmtMoney, fmtShare}); err != nil {
				return err
			}
		}
		for k := range sc.Classes {
			c := &sc.Classes[k]
			row++
			if err := put([]any{c.Name + ": condition states, best first"}, bold, nil); err != nil {
				return err
			}
			if err := put([]any{"State", "Index from", "Index to", "Value used for averages", "Group", "Quantity today (" + render.UnitWord(c.Unit) + ")"}, bold, nil); err != nil {
				return err
			}
			for i, st := range c.Scale.States {
				if err := put([]any{st.Name, st.Min, st.Max, st.Value, c.Scale.Group[i].String(), c.Initial[i]}, 0, []string{"", "", "", "", "", fmtQuantity}); err != nil {
					return err
				}
			}
			row++
			if err := put([]any{c.Name + ": one-year transition probabilities with no work (row: state now; column: state a year later)"}, bold, nil); err != nil {
				return err
			}
			head := []any{"From \\ to"}
			for _, st := range c.Scale.States {
				head = append(head, st.Name)
			}
			if err := put(head, bold, nil); err != nil {
				return err
			}
			probFmt := make([]string, len(head))
			for i := 1; i < len(head); i++ {
				probFmt[i] = fmtProb
			}
			for i, p := range c.Transition.Rows() {
				vals := []any{c.Scale.States[i].Name}
				for _, v := range p {
					vals = append(vals, v)
				}
				if err := put(vals, 0, probFmt); err != nil {
					return err
				}
			}
			row++
			if err := put([]any{c.Name + ": treatments"}, bold, nil); err != nil {
				return err
			}
			if err := put([]any{"Treatment", "State treated", "Unit cost (" + cur + " " + render.PerUnit(c.Unit) + ", start-year prices)", "Condition right after", "Ages in its year", "Counts as renewal"}, bold, nil); err != nil {
				return err
			}
			for ti := range c.Treatments {
				tr := &c.Treatments[ti]
				for _, i := range tr.Applies {
					if err := put([]any{tr.Name, c.Scale.States[i].Name, tr.Cost[i], effectWords(tr, i, c.Scale), !tr.SkipsAging, tr.Renewal}, 0, []string{"", "", fmtMoney}); err != nil {
						return err
					}
				}
			}
		}
		row += 2
	}
	for col, width := range []float64{44, 16, 16, 18, 16, 16} {
		name, _ := excelize.ColumnNumberToName(col + 1)
		if err := f.SetColWidth(SheetInputs, name, name, width); err != nil {
			return err
		}
	}
	return nil
}
