package render

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"

	"wearplan/scenarios"
)

// Text writes a result as terminal tables: summary, work program, spend
// against budget, condition by year, targets, and the caution.
func Text(w io.Writer, r *scenarios.Result) error {
	ew := &errWriter{w: w}
	summary(ew, r)
	if r.Kind == scenarios.KindPlan || r.Status == scenarios.FollowsWorstFirst {
		ew.printf("\nWork program (quantity treated in the year; cost in %s at that year's prices)\n", currency(r))
		tabulate(ew, workTable(r))
		ew.printf("\nSpend against budget (%s)\n", currency(r))
		tabulate(ew, spendTable(r))
		if len(r.Initial.Classes) > 1 || len(r.Years) > 0 && len(r.Years[0].Groups) > 0 {
			ew.printf("\nSpend by class and budget group (%s at each year's prices)\n", currency(r))
			tabulate(ew, classSpendTable(r))
		}
	}
	ew.printf("\nCondition at the end of each year (share of each class's quantity; network weighted by %s)\n", r.Weighting)
	tabulate(ew, serviceTable(r, true))
	if hasValue(r) {
		ew.printf("\nAsset value and backlog (%s at each year's prices; backlog = cost of the work that lifts poor states out of poor;\nclass columns are each class's backlog)\n", currency(r))
		tabulate(ew, valueTable(r))
		for _, line := range backlogBasis(r) {
			ew.printf("  %s\n", line)
		}
	}
	if len(r.Targets) > 0 {
		ew.printf("\nTargets\n")
		tabulate(ew, targetTable(r))
	}
	fundingText(ew, r)
	indicatorText(ew, r)
	confidenceText(ew, r)
	robustText(ew, r)
	for _, warn := range r.Warnings {
		ew.printf("\nNote: %s\n", warn)
	}
	ew.printf("\n%s\n", wrap(r.Caution, 100))
	return ew.err
}

func currency(r *scenarios.Result) string {
	if r.Currency == "" {
		return "currency units"
	}
	return r.Currency
}

func summary(w *errWriter, r *scenarios.Result) {
	w.printf("%s\n", r.Scenario)
	last := r.StartYear + r.Horizon - 1
	switch r.Kind {
	case scenarios.KindPlan:
		w.printf("Plan %d-%d: objective %s, status %s\n", r.StartYear, last, r.Objective, r.Status)
		w.printf("Condition score %.2f (mean network score over the horizon, 0 worst - 100 best); spend %s %s, present value %s at %.1f%% a year\n",
			r.ConditionScore, currency(r), Money(r.TotalCost), Money(r.PresentValue), 100*r.DiscountRate)
	case scenarios.KindForecast:
		if r.Status == scenarios.FollowsWorstFirst {
			w.printf("Forecast %d-%d with the budget spent worst first (the worst states, each with its cheapest improving treatment)\n", r.StartYear, last)
			w.printf("Condition score %.2f (mean network score over the horizon, 0 worst - 100 best); spend %s %s\n", r.ConditionScore, currency(r), Money(r.TotalCost))
			return
		}
		fallthrough
	default:
		w.printf("Forecast %d-%d with no work done\n", r.StartYear, last)
		w.printf("Condition score %.2f (mean network score over the horizon, 0 worst - 100 best)\n", r.ConditionScore)
	}
}

// A table is a header and rows of cells; numeric columns are right-aligned.
type table struct {
	header []string
	right  []bool
	rows   [][]string
}

func tabulate(w *errWriter, t table) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	// tabwriter aligns every column one way; pad left-aligned text columns
	// to their width so that AlignRight leaves them flush left.
	widths := make([]int, len(t.header))
	for _, row := range append([][]string{t.header}, t.rows...) {
		for i, c := range row {
			widths[i] = max(widths[i], len(c))
		}
	}
	line := func(row []string) {
		cells := make([]string, len(row))
		for i, c := range row {
			if !t.right[i] {
				c += strings.Repeat(" ", widths[i]-len(c))
			}
			cells[i] = c
		}
		fmt.Fprintln(tw, strings.Join(cells, "\t")+"\t")
	}
	line(t.header)
	for _, row := range t.rows {
		line(row)
	}
	if err := tw.Flush(); err != nil && w.err == nil {
		w.err = err
	}
}

func workTable(r *scenarios.Result) table {
	t := table{header: []string{"YEAR", "CLASS", "TREATMENT", "STATE", "QUANTITY", "UNIT", "COST"}, right: []bool{false, false, false, false, true, false, true}}
	for _, y := range r.Years {
		for _, c := range y.Classes {
			for _, wk := range c.Work {
				t.rows = append(t.rows, []string{fmt.Sprint(y.Year), c.Class, wk.Treatment, wk.State, Quantity(wk.Quantity), c.Unit, Money(wk.Cost)})
			}
		}
	}
	if len(t.rows) == 0 {
		t.rows = append(t.rows, []string{"-", "no work", "", "", "", "", ""})
	}
	return t
}

func spendTable(r *scenarios.Result) table {
	t := table{header: []string{"YEAR", "SPEND", "BUDGET", "UNSPENT"}, right: []bool{false, true, true, true}}
	for _, y := range r.Years {
		budget, left := "no cap", ""
		if y.Budget != nil {
			budget, left = Money(*y.Budget), Money(*y.Budget-y.Spend)
		}
		t.rows = append(t.rows, []string{fmt.Sprint(y.Year), Money(y.Spend), budget, left})
	}
	return t
}

// serviceTable lists good/fair/poor shares and average index per class and
// year, today first, then the network.
func serviceTable(r *scenarios.Result, blankRepeats bool) table {
	t := table{header: []string{"CLASS", "YEAR", "GOOD", "FAIR", "POOR", "AVG INDEX", "SCORE"}, right: []bool{false, false, true, true, true, true, true}}
	for k := range r.Initial.Classes {
		add := func(label string, c scenarios.ClassCondition) {
			name := c.Class
			if blankRepeats && label != "today" {
				name = ""
			}
			t.rows = append(t.rows, []string{name, label, Percent(c.Shares.Good), Percent(c.Shares.Fair), Percent(c.Shares.Poor), Index(c.AverageIndex), fmt.Sprintf("%.1f", c.Score)})
		}
		add("today", r.Initial.Classes[k])
		for _, y := range r.Years {
			add(fmt.Sprint(y.Year), y.Classes[k])
		}
	}
	net := func(label string, n scenarios.NetworkCondition) {
		name := "network"
		if blankRepeats && label != "today" {
			name = ""
		}
		avg := "-"
		if n.AverageIndex != nil {
			avg = Index(*n.AverageIndex)
		}
		t.rows = append(t.rows, []string{name, label, Percent(n.Shares.Good), Percent(n.Shares.Fair), Percent(n.Shares.Poor), avg, fmt.Sprintf("%.1f", n.Score)})
	}
	net("today", r.Initial.Network)
	for _, y := range r.Years {
		net(fmt.Sprint(y.Year), y.Network)
	}
	return t
}

func targetTable(r *scenarios.Result) table {
	t := table{header: []string{"TARGET", "MET", "WORST YEAR", "WORST", "LIMIT", "SHORT BY (YEARS)"}, right: []bool{false, false, false, true, true, false}}
	for _, o := range r.Targets {
		met := "yes"
		if !o.Met {
			met = "NO"
		}
		t.rows = append(t.rows, []string{o.Target, met, fmt.Sprint(o.WorstYear), TargetValue(o, o.WorstValue), TargetValue(o, o.Limit), shortfallSummary(o)})
	}
	return t
}

// shortfallSummary gives the largest shortfall and the years it spans.
func shortfallSummary(o scenarios.TargetOutcome) string {
	if len(o.Shortfalls) == 0 {
		return ""
	}
	first, last := o.Shortfalls[0].Year, o.Shortfalls[len(o.Shortfalls)-1].Year
	span := fmt.Sprint(first)
	if last != first {
		span = fmt.Sprintf("%d-%d", first, last)
	}
	return fmt.Sprintf("up to %s (%s)", ShortfallAmount(o, WorstShortfall(o)), span)
}

// wrap breaks text into lines of at most width characters.
func wrap(s string, width int) string {
	var b strings.Builder
	n := 0
	for _, word := range strings.Fields(s) {
		if n > 0 && n+1+len(word) > width {
			b.WriteByte('\n')
			n = 0
		} else if n > 0 {
			b.WriteByte(' ')
			n++
		}
		b.WriteString(word)
		n += len(word)
	}
	return b.String()
}

// errWriter keeps the first write error so rendering code stays linear.
type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) Write(p []byte) (int, error) {
	if e.err != nil {
		return 0, e.err
	}
	n, err := e.w.Write(p)
	e.err = err
	return n, err
}

func (e *errWriter) printf(format string, args ...any) {
	fmt.Fprintf(e, format, args...)
}

// hasValue says whether any replacement value or backlog is known.
func hasValue(r *scenarios.Result) bool {
	for _, c := range r.Initial.Classes {
		if c.ReplacementValue != nil || c.Backlog != nil {
			return true
		}
	}
	return false
}

// maxClassColumns bounds the per-class backlog columns of the terminal
// value table; the CSV value table has every class.
const maxClassColumns = 6

// valueTable lists the network's replacement value and backlog per year,
// today first, with each class's backlog when there are few classes.
func valueTable(r *scenarios.Result) table {
	t := table{header: []string{"YEAR", "REPLACEMENT VALUE", "BACKLOG", "BACKLOG/VALUE"}, right: []bool{false, true, true, true}}
	perClass := len(r.Initial.Classes) <= maxClassColumns
	if perClass {
		for _, c := range r.Initial.Classes {
			t.header = append(t.header, c.Class)
			t.right = append(t.right, true)
		}
	}
	money := func(v *float64) string {
		if v == nil {
			return "-"
		}
		return Money(*v)
	}
	add := func(label string, cs []scenarios.ClassCondition, n scenarios.NetworkCondition) {
		share := "-"
		if n.Backlog != nil && n.ReplacementValue != nil && *n.ReplacementValue > 0 {
			share = Percent(*n.Backlog / *n.ReplacementValue)
		}
		row := []string{label, money(n.ReplacementValue), money(n.Backlog), share}
		if perClass {
			for _, c := range cs {
				row = append(row, money(c.Backlog))
			}
		}
		t.rows = append(t.rows, row)
	}
	add("today", r.Initial.Classes, r.Initial.Network)
	for _, y := range r.Years {
		add(fmt.Sprint(y.Year), y.Classes, y.Network)
	}
	return t
}

// backlogBasis says, per class, what each poor state's backlog is valued
// at (unit costs at start-year prices).
func backlogBasis(r *scenarios.Result) []string {
	var out []string
	unit := map[string]string{}
	for _, c := range r.Initial.Classes {
		unit[c.Class] = c.Unit
	}
	for i := 0; i < len(r.BacklogRules); {
		class := r.BacklogRules[i].Class
		var parts []string
		for ; i < len(r.BacklogRules) && r.BacklogRules[i].Class == class; i++ {
			br := r.BacklogRules[i]
			parts = append(parts, fmt.Sprintf("%s by %s at %s", br.State, br.Treatment, Money(br.UnitCost)))
		}
		out = append(out, fmt.Sprintf("%s (%s): %s", class, PerUnit(unit[class]), strings.Join(parts, "; ")))
	}
	return out
}

// classSpendTable lists each year's spend per class (when there are few
// classes) and per budget group with its cap, beside the total.
func classSpendTable(r *scenarios.Result) table {
	t := table{header: []string{"YEAR"}, right: []bool{false}}
	perClass := len(r.Initial.Classes) <= maxClassColumns
	if perClass {
		for _, c := range r.Initial.Classes {
			t.header = append(t.header, c.Class)
			t.right = append(t.right, true)
		}
	}
	t.header = append(t.header, "TOTAL")
	t.right = append(t.right, true)
	if len(r.Years) > 0 {
		for _, g := range r.Years[0].Groups {
			t.header = append(t.header, g.Name, g.Name+" CAP")
			t.right = append(t.right, true, true)
		}
	}
	for _, y := range r.Years {
		row := []string{fmt.Sprint(y.Year)}
		if perClass {
			for _, c := range y.Classes {
				v := 0.0
				if c.Spend != nil {
					v = *c.Spend
				}
				row = append(row, Money(v))
			}
		}
		row = append(row, Money(y.Spend))
		for _, g := range y.Groups {
			row = append(row, Money(g.Spend), capMoney(g.Budget))
		}
		t.rows = append(t.rows, row)
	}
	return t
}

func capMoney(v float64) string {
	if math.IsInf(v, 1) {
		return "no cap"
	}
	return Money(v)
}

// indicatorText prints the asset management plan indicators in brief: per
// class and for the network, mean remaining life and the consumption ratio
// today and at the end of the ratio years, and the two ratios.
func indicatorText(w *errWriter, r *scenarios.Result) {
	in := r.Indicators
	if in == nil || len(in.Classes) == 0 {
		return
	}
	n := in.RatioYears
	end := r.StartYear + n - 1
	w.printf("\nAsset management plan indicators (remaining life in years to the worst state with no work; ratios over %d-%d)\n", r.StartYear, end)
	t := table{header: []string{"CLASS", "REMAINING LIFE TODAY", fmt.Sprintf("END %d", end), "CONSUMPTION RATIO TODAY", fmt.Sprintf("END %d", end), "SUSTAINABILITY RATIO", "RENEWAL FUNDING RATIO"},
		right: []bool{false, true, true, true, true, true, true}}
	opt := func(v *float64, f func(float64) string) string {
		if v == nil {
			return "-"
		}
		return f(*v)
	}
	years := func(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }
	ratio := func(v float64) string { return strconv.FormatFloat(v, 'f', 2, 64) }
	for _, c := range in.Classes {
		t.rows = append(t.rows, []string{c.Class, opt(c.Today.MeanRemainingLife, years), opt(c.Years[n-1].MeanRemainingLife, years),
			opt(c.Today.ConsumptionRatio, Percent), opt(c.Years[n-1].ConsumptionRatio, Percent), opt(c.SustainabilityRatio, ratio), opt(c.RenewalFundingRatio, ratio)})
	}
	nw := in.Network
	t.rows = append(t.rows, []string{"network", "-", "-", opt(nw.Today.ConsumptionRatio, Percent), opt(nw.Years[n-1].ConsumptionRatio, Percent), opt(nw.SustainabilityRatio, ratio), opt(nw.RenewalFundingRatio, ratio)})
	// A forecast has no plan to compare renewal with: leave the column
	// out rather than fill it with dashes.
	funded := false
	for _, row := range t.rows {
		funded = funded || row[6] != "-"
	}
	if !funded {
		t.header, t.right = t.header[:6], t.right[:6]
		for i := range t.rows {
			t.rows[i] = t.rows[i][:6]
		}
	}
	tabulate(w, t)
	for _, note := range in.Notes {
		w.printf("%s\n", hangingWrap("Note: "+note, 100, "  ", "  "))
	}
}
