package report

import (
	"fmt"
	"image/color"
	"strings"

	"github.com/xuri/excelize/v2"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// summary writes the sheet after About: for each run the headline, the
// funding gap in one sentence, a few figures, the network's level of
// service as numbers, and the network's condition by year with a stacked
// column chart of it.
func (wb *workbook) summary(rep *Report) error {
	f := wb.f
	sheet := SheetSummary
	if _, err := f.NewSheet(sheet); err != nil {
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
	row := 1
	put := func(vals []any, style int, formats ...string) error {
		if err := wb.putRow(sheet, row, vals, style, formats); err != nil {
			return err
		}
		row++
		return nil
	}
	for _, run := range rep.Runs {
		r := run.Result
		words := [][]any{
			{"Scenario", r.Scenario},
			{"In brief", render.Headline(r)},
			{"Funding", render.FundingGap(r)},
		}
		for _, w := range words {
			if err := put(w, 0); err != nil {
				return err
			}
			if err := f.SetCellStyle(sheet, cell(1, row-1), cell(1, row-1), bold); err != nil {
				return err
			}
			if err := f.SetCellStyle(sheet, cell(2, row-1), cell(2, row-1), wrap); err != nil {
				return err
			}
		}
		if err := put([]any{"Condition score (0-100, average over the years)", r.ConditionScore}, 0, "", fmtIndex); err != nil {
			return err
		}
		if len(r.Targets) > 0 {
			if err := put([]any{"Targets met", render.TargetsMet(r), "of", len(r.Targets)}, 0); err != nil {
				return err
			}
		}
		if r.Kind == scenarios.KindPlan {
			cur := currencyOf(r)
			if err := put([]any{"Total spend (" + cur + ")", r.TotalCost}, 0, "", fmtMoney); err != nil {
				return err
			}
			if err := put([]any{"Present value of spend (" + cur + ")", r.PresentValue}, 0, "", fmtMoney); err != nil {
				return err
			}
		}
		row++
		// The network's level of service: today and the selected years.
		years := render.LOSYears(r.Horizon)
		head := []any{"Network level of service", fmt.Sprintf("Today (start of %d)", r.StartYear)}
		for _, y := range years {
			head = append(head, fmt.Sprintf("%d (year %d)", r.StartYear+y-1, y))
		}
		if err := put(head, bold); err != nil {
			return err
		}
		nets := []scenarios.NetworkCondition{r.Initial.Network}
		for _, y := range years {
			nets = append(nets, r.Years[y-1].Network)
		}
		line := func(label, format string, get func(scenarios.NetworkCondition) any) error {
			vals := []any{label}
			formats := []string{""}
			known := false
			for _, nc := range nets {
				v := get(nc)
				known = known || v != nil
				vals, formats = append(vals, v), append(formats, format)
			}
			if !known {
				return nil
			}
			return put(vals, 0, formats...)
		}
		steps := []struct {
			label, format string
			get           func(scenarios.NetworkCondition) any
		}{
			{"Good (share)", fmtShare, func(n scenarios.NetworkCondition) any { return n.Shares.Good }},
			{"Fair (share)", fmtShare, func(n scenarios.NetworkCondition) any { return n.Shares.Fair }},
			{"Poor (share)", fmtShare, func(n scenarios.NetworkCondition) any { return n.Shares.Poor }},
			{"Average index", fmtIndex, func(n scenarios.NetworkCondition) any { return optional(n.AverageIndex) }},
			{"Condition score (0-100)", fmtIndex, func(n scenarios.NetworkCondition) any { return n.Score }},
			{"Replacement value (" + currencyOf(r) + ")", fmtMoney, func(n scenarios.NetworkCondition) any { return optional(n.ReplacementValue) }},
			{"Backlog (" + currencyOf(r) + ")", fmtMoney, func(n scenarios.NetworkCondition) any { return optional(n.Backlog) }},
		}
		for _, st := range steps {
			if err := line(st.label, st.format, st.get); err != nil {
				return err
			}
		}
		row++
		// The network's condition by year, the chart's data.
		if err := put([]any{"Network condition (end of year)", "Good", "Fair", "Poor"}, bold); err != nil {
			return err
		}
		first := row
		if err := put([]any{"today", r.Initial.Network.Shares.Good, r.Initial.Network.Shares.Fair, r.Initial.Network.Shares.Poor}, 0, "", fmtShare, fmtShare, fmtShare); err != nil {
			return err
		}
		for _, y := range r.Years {
			if err := put([]any{fmt.Sprint(y.Year), y.Network.Shares.Good, y.Network.Shares.Fair, y.Network.Shares.Poor}, 0, "", fmtShare, fmtShare, fmtShare); err != nil {
				return err
			}
		}
		last := row - 1
		if err := wb.conditionChart(sheet, cell(6, first-1), first, last); err != nil {
			return err
		}
		row += 3
	}
	if err := f.SetColWidth(sheet, "A", "A", 34); err != nil {
		return err
	}
	if err := f.SetColWidth(sheet, "B", "B", 60); err != nil {
		return err
	}
	return f.SetColWidth(sheet, "C", "Z", 13)
}

// conditionChart adds a stacked column chart of the network's good, fair
// and poor shares (rows first to last of columns B-D) at the given cell.
func (wb *workbook) conditionChart(sheet, at string, first, last int) error {
	three := conditionRamp(3)
	hex := func(c color.RGBA) string { return fmt.Sprintf("%02X%02X%02X", c.R, c.G, c.B) }
	q := "'" + strings.ReplaceAll(sheet, "'", "''") + "'"
	series := make([]excelize.ChartSeries, 3)
	for i := range series {
		col, _ := excelize.ColumnNumberToName(2 + i)
		series[i] = excelize.ChartSeries{
			Name:       fmt.Sprintf("%s!$%s$%d", q, col, first-1),
			Categories: fmt.Sprintf("%s!$A$%d:$A$%d", q, first, last),
			Values:     fmt.Sprintf("%s!$%s$%d:$%s$%d", q, col, first, col, last),
			Fill:       excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(three[i])}},
		}
	}
	return wb.f.AddChart(sheet, at, &excelize.Chart{
		Type:   excelize.ColPercentStacked,
		Series: series,
		Title:  excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: "Network condition: good, fair and poor shares"}}},
		Legend: excelize.ChartLegend{Position: "right"},
		Format: excelize.GraphicOptions{ScaleX: 1.4, ScaleY: 1.2},
	})
}

// classSpendSheet holds each class's spend in each year with its budget
// group: a year's classes add up to its spend.
func classSpendSheet(rep *Report) sheetData {
	cur := commonCurrency(rep)
	withGroups := false
	for _, run := range rep.Runs {
		withGroups = withGroups || len(run.Result.GroupClasses) > 0
	}
	s := sheetData{name: SheetClassSpend, cols: []column{{"Scenario", fmtText, 30}, {"Year", fmtInt, 8}, {"Class", fmtText, 18}}}
	if withGroups {
		// Without budget groups the column would stay empty.
		s.cols = append(s.cols, column{"Budget group", fmtText, 16})
	}
	s.cols = append(s.cols, column{"Spend (" + cur + ", that year's prices)", fmtMoney, 16})
	for _, run := range rep.Runs {
		r := run.Result
		if r.Kind != scenarios.KindPlan {
			continue
		}
		group := make([]string, len(r.Initial.Classes))
		for _, g := range r.GroupClasses {
			for _, name := range g.Classes {
				for k, c := range r.Initial.Classes {
					if c.Class == name {
						group[k] = strings.TrimPrefix(group[k]+"; "+g.Name, "; ")
					}
				}
			}
		}
		for _, y := range r.Years {
			for k, c := range y.Classes {
				row := []any{r.Scenario, y.Year, c.Class}
				if withGroups {
					var g any
					if group[k] != "" {
						g = group[k]
					}
					row = append(row, g)
				}
				s.rows = append(s.rows, append(row, optional(c.Spend)))
			}
		}
	}
	return s
}

// fundingSheet holds the funding answers, one figure a row, as the CSV
// funding table does.
func fundingSheet(rep *Report) sheetData {
	cur := commonCurrency(rep)
	s := sheetData{name: SheetFunding, cols: []column{
		{"Scenario", fmtText, 30}, {"Figure", fmtText, 44}, {"Target", fmtText, 40}, {"Year", fmtInt, 8}, {"Budget", fmtText, 14},
		{"Amount (" + cur + ")", fmtMoney, 16},
	}}
	for _, run := range rep.Runs {
		r := run.Result
		add := func(item, target string, year any, budget string, v *float64) {
			if v == nil {
				return
			}
			var t, b any
			if target != "" {
				t = target
			}
			if budget != "" {
				b = budget
			}
			s.rows = append(s.rows, []any{r.Scenario, item, t, year, b, *v})
		}
		if f := r.Funding; f != nil {
			add("Least level budget that meets every target (a year)", "", nil, "network", f.LevelBudget)
			add("Least level budget that holds today's condition (a year)", "", nil, "network", f.HoldBudget)
			for _, ym := range f.ExtraMoney {
				add("Extra money", "", ym.Year, "network", &ym.Amount)
			}
			for _, g := range f.ExtraGroups {
				for _, ym := range g.Years {
					add("Extra money", "", ym.Year, g.Name, &ym.Amount)
				}
			}
			add("Extra money in all", "", nil, "", f.ExtraTotal)
			add("Extra money, present value", "", nil, "", f.ExtraPresentValue)
			for _, tm := range f.Targets {
				if tm.Total == nil {
					s.rows = append(s.rows, []any{r.Scenario, "No amount of money closes the target", tm.Target, nil, nil, nil})
					continue
				}
				add("Extra money that closes the target", tm.Target, nil, "", tm.Total)
				add("Extra money that closes the target, present value", tm.Target, nil, "", tm.PresentValue)
			}
		}
		add("Routine cost over the horizon", "", nil, "", r.RoutineCost)
		add("Routine cost, present value", "", nil, "", r.RoutinePresentValue)
	}
	return s
}

// indicatorSheet holds the indicators per class and for the network, today
// and at the end of each year.
func indicatorSheet(rep *Report) sheetData {
	cur := commonCurrency(rep)
	s := sheetData{name: SheetIndicators, cols: []column{
		{"Scenario", fmtText, 30}, {"Year", fmtInt, 8}, {"Start or end of year", fmtText, 12}, {"Class (or network)", fmtText, 18},
		{"Mean remaining life (years)", "0.0", 12}, {"Replacement value (" + cur + ")", fmtMoney, 16}, {"Depreciated replacement cost (" + cur + ")", fmtMoney, 16},
		{"Asset consumption ratio", fmtShare, 12}, {"Consumption in the year (" + cur + ")", fmtMoney, 16}, {"Renewal spend (" + cur + ")", fmtMoney, 16},
		{"Renewal the holding plan needs (" + cur + ")", fmtMoney, 16},
	}}
	for _, run := range rep.Runs {
		r := run.Result
		in := r.Indicators
		if in == nil {
			continue
		}
		for k, c := range in.Classes {
			s.rows = append(s.rows, []any{r.Scenario, r.StartYear, "start (today)", c.Class, optional(c.Today.MeanRemainingLife), optional(r.Initial.Classes[k].ReplacementValue),
				optional(c.Today.DepreciatedCost), optional(c.Today.ConsumptionRatio), nil, nil, nil})
			for t, y := range c.Years {
				s.rows = append(s.rows, []any{r.Scenario, y.Year, "end", c.Class, optional(y.MeanRemainingLife), optional(r.Years[t].Classes[k].ReplacementValue),
					optional(y.DepreciatedCost), optional(y.ConsumptionRatio), optional(y.Consumption), y.RenewalSpend, optional(y.RequiredRenewal)})
			}
		}
		n := in.Network
		s.rows = append(s.rows, []any{r.Scenario, r.StartYear, "start (today)", "network", nil, optional(r.Initial.Network.ReplacementValue),
			optional(n.Today.DepreciatedCost), optional(n.Today.ConsumptionRatio), nil, nil, nil})
		for t, y := range n.Years {
			s.rows = append(s.rows, []any{r.Scenario, y.Year, "end", "network", nil, optional(r.Years[t].Network.ReplacementValue),
				optional(y.DepreciatedCost), optional(y.ConsumptionRatio), optional(y.Consumption), y.RenewalSpend, optional(y.RequiredRenewal)})
		}
	}
	return s
}

// ratioSheet holds the two ratios over the first years per class and for
// the network.
func ratioSheet(rep *Report) sheetData {
	s := sheetData{name: SheetRatios, cols: []column{
		{"Scenario", fmtText, 30}, {"Class (or network)", fmtText, 18}, {"First year", fmtInt, 8}, {"Last year", fmtInt, 8},
		{"Asset sustainability ratio", "0.00", 14}, {"Renewal funding ratio", "0.00", 14}, {"Treatments counted as renewal", fmtText, 40},
	}}
	for _, run := range rep.Runs {
		r := run.Result
		in := r.Indicators
		if in == nil {
			continue
		}
		last := r.StartYear + in.RatioYears - 1
		for _, c := range in.Classes {
			s.rows = append(s.rows, []any{r.Scenario, c.Class, r.StartYear, last, optional(c.SustainabilityRatio), optional(c.RenewalFundingRatio), strings.Join(c.RenewalTreatments, ", ")})
		}
		s.rows = append(s.rows, []any{r.Scenario, "network", r.StartYear, last, optional(in.Network.SustainabilityRatio), optional(in.Network.RenewalFundingRatio), nil})
	}
	return s
}

// lifeSheet holds the remaining life of each state.
func lifeSheet(rep *Report) sheetData {
	s := sheetData{name: SheetLife, cols: []column{
		{"Scenario", fmtText, 30}, {"Class", fmtText, 18}, {"State (best first)", fmtText, 16}, {"Remaining life (years to the worst state, no work)", "0.00", 16},
	}}
	for _, run := range rep.Runs {
		r := run.Result
		if r.Indicators == nil {
			continue
		}
		for _, c := range r.Indicators.Classes {
			for _, sy := range c.RemainingLife {
				s.rows = append(s.rows, []any{r.Scenario, c.Class, sy.State, sy.Years})
			}
		}
	}
	return s
}
