package render

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"wearplan/scenarios"
)

// JSONOf writes any result (long-run, sweep, comparison) as indented JSON,
// with money rounded to cents.
func JSONOf(w io.Writer, v any) error {
	switch x := v.(type) {
	case *scenarios.Result:
		v = RoundedMoney(x)
	case *scenarios.SweepResult:
		v = RoundedSweep(x)
	case *scenarios.CompareResult:
		v = RoundedCompare(x)
	case *scenarios.LongRunResult:
		v = RoundedLongRun(x)
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// fundingText prints the plan's funding answers in the words every output
// shares (words.go): the targets missed and what closes them, the level
// budgets, the extra money (with a table by year and budget), routine
// costs and the worst-first comparison.
func fundingText(w *errWriter, r *scenarios.Result) {
	lines := append(ShortfallWords(r), FundingWords(r)...)
	if len(lines) == 0 {
		return
	}
	w.printf("\nFunding\n")
	for _, s := range lines {
		w.printf("%s\n", hangingWrap(s, 100, "  - ", "    "))
	}
	if f := r.Funding; f != nil && (len(f.ExtraMoney) > 0 || len(f.ExtraGroups) > 0) {
		w.printf("\n  Extra money by year (%s, on top of the budget):\n", currency(r))
		t := table{header: []string{"YEAR", "BUDGET", "EXTRA"}, right: []bool{false, false, true}}
		for _, ym := range f.ExtraMoney {
			t.rows = append(t.rows, []string{fmt.Sprint(ym.Year), "network", Money(ym.Amount)})
		}
		for _, g := range f.ExtraGroups {
			for _, ym := range g.Years {
				t.rows = append(t.rows, []string{fmt.Sprint(ym.Year), g.Name, Money(ym.Amount)})
			}
		}
		tabulate(w, t)
	}
}

// hangingWrap wraps s at width with first in front of the first line and
// rest in front of the others.
func hangingWrap(s string, width int, first, rest string) string {
	lines := strings.Split(wrap(s, width-len(first)), "\n")
	for i := range lines {
		if i == 0 {
			lines[i] = first + lines[i]
		} else {
			lines[i] = rest + lines[i]
		}
	}
	return strings.Join(lines, "\n")
}

// LongRunText writes the long-run policy as terminal tables.
func LongRunText(w io.Writer, r *scenarios.LongRunResult) error {
	ew := &errWriter{w: w}
	cur := r.Currency
	if cur == "" {
		cur = "currency units"
	}
	ew.printf("%s\n", r.Scenario)
	ew.printf("Long-run policy (steady state, Golabi-Kulkarni-Way LP): objective %s, status %s\n", r.Objective, r.Status)
	budget := "no annual budget"
	if r.Budget != nil {
		budget = "annual budget " + Money(*r.Budget)
	}
	ew.printf("Annual cost %s %s (treatments %s, routine %s) at start-year prices; %s\n", cur, Money(r.AnnualCost), Money(r.AnnualTreatment), Money(r.AnnualRoutine), budget)
	ew.printf("\nPolicy: each year, the share of each state given each treatment\n")
	t := table{header: []string{"CLASS", "STATE", "TREATMENT", "SHARE", "QUANTITY", "UNIT", "ANNUAL COST"}, right: []bool{false, false, false, true, true, false, true}}
	for _, c := range r.Classes {
		for _, e := range c.Policy {
			t.rows = append(t.rows, []string{c.Class, e.State, e.Treatment, Percent(e.Share), Quantity(e.Quantity), c.Unit, Money(e.Cost)})
		}
	}
	tabulate(ew, t)
	ew.printf("\nCondition today and in the long run (network weighted by %s)\n", r.Weighting)
	s := table{header: []string{"CLASS", "WHEN", "GOOD", "FAIR", "POOR", "AVG INDEX", "SCORE", "ANNUAL COST"}, right: []bool{false, false, true, true, true, true, true, true}}
	for k, c := range r.Classes {
		today := r.Today.Classes[k]
		s.rows = append(s.rows, []string{c.Class, "today", Percent(today.Shares.Good), Percent(today.Shares.Fair), Percent(today.Shares.Poor), Index(today.AverageIndex), fmt.Sprintf("%.1f", today.Score), ""})
		s.rows = append(s.rows, []string{"", "long run", Percent(c.Shares.Good), Percent(c.Shares.Fair), Percent(c.Shares.Poor), Index(c.AverageIndex), fmt.Sprintf("%.1f", c.Score), Money(c.AnnualTreatment + c.AnnualRoutine)})
	}
	net := func(when string, n scenarios.NetworkCondition, cost string) []string {
		avg := "-"
		if n.AverageIndex != nil {
			avg = Index(*n.AverageIndex)
		}
		name := "network"
		if when != "today" {
			name = ""
		}
		return []string{name, when, Percent(n.Shares.Good), Percent(n.Shares.Fair), Percent(n.Shares.Poor), avg, fmt.Sprintf("%.1f", n.Score), cost}
	}
	s.rows = append(s.rows, net("today", r.Today.Network, ""), net("long run", r.Network, Money(r.AnnualCost)))
	tabulate(ew, s)
	if len(r.Targets) > 0 {
		ew.printf("\nTargets in the long run\n")
		tt := table{header: []string{"TARGET", "MET", "VALUE", "LIMIT", "SHORT BY"}, right: []bool{false, false, true, true, true}}
		for _, o := range r.Targets {
			met, val, lim, short := "yes", Index(o.Value), Index(o.Limit), ""
			if !o.Met {
				met = "NO"
			}
			isShare := strings.Contains(o.Target, " share ")
			if isShare {
				val, lim = Percent(o.Value), Percent(o.Limit)
			}
			if o.Shortfall > 0 {
				short = Index(o.Shortfall) + " points"
				if isShare {
					short = fmt.Sprintf("%.1f percentage points", 100*o.Shortfall)
				}
			}
			tt.rows = append(tt.rows, []string{o.Target, met, val, lim, short})
		}
		tabulate(ew, tt)
	}
	for _, warn := range r.Warnings {
		ew.printf("\nNote: %s\n", warn)
	}
	ew.printf("\n%s\n", wrap(r.Caution, 100))
	return ew.err
}

// LongRunCSV writes the policy: one row per class, state and action.
func LongRunCSV(w io.Writer, r *scenarios.LongRunResult) error {
	r = RoundedLongRun(r)
	rows := [][]string{{"class", "state", "treatment", "share_of_state", "quantity", "unit", "annual_cost"}}
	for _, c := range r.Classes {
		for _, e := range c.Policy {
			rows = append(rows, []string{c.Class, e.State, e.Treatment, Plain(e.Share), Plain(e.Quantity), c.Unit, Plain(e.Cost)})
		}
	}
	return writeCSV(w, rows)
}

func writeCSV(w io.Writer, rows [][]string) error {
	cw := csv.NewWriter(w)
	if err := cw.WriteAll(sheetSafe(rows)); err != nil {
		return err
	}
	return cw.Error()
}

func optIndex(v *float64) string {
	if v == nil {
		return "-"
	}
	return Index(*v)
}

func optPlain(v *float64) string {
	if v == nil {
		return ""
	}
	return Plain(*v)
}

// SweepText writes the budget trade-off as a terminal table.
func SweepText(w io.Writer, r *scenarios.SweepResult) error {
	ew := &errWriter{w: w}
	cur := r.Currency
	if cur == "" {
		cur = "currency units"
	}
	ew.printf("%s\n", r.Scenario)
	ew.printf("Budget trade-off: each level yearly budget planned with max-condition and the scenario's targets (%s)\n", cur)
	// The average index exists only when every class shares one scale;
	// otherwise the column is left out rather than filled with dashes.
	withIndex := false
	for _, p := range r.Points {
		withIndex = withIndex || p.EndAverageIndex != nil
	}
	t := table{header: []string{"YEARLY BUDGET", "STATUS", "SCORE", "END POOR"}, right: []bool{true, false, true, true}}
	if withIndex {
		t.header, t.right = append(t.header, "END AVG INDEX"), append(t.right, true)
	}
	t.header = append(t.header, "END SCORE", "SPEND", "PRESENT VALUE", "TARGETS MET")
	t.right = append(t.right, true, true, true, true)
	for _, p := range r.Points {
		if !p.Planned() {
			// No plan at this budget: the notes below say why.
			row := []string{Money(p.Budget), string(p.Status), "-", "-"}
			if withIndex {
				row = append(row, "-")
			}
			t.rows = append(t.rows, append(row, "-", "-", "-", "-"))
			continue
		}
		row := []string{Money(p.Budget), string(p.Status), fmt.Sprintf("%.2f", p.ConditionScore), Percent(p.EndPoorShare)}
		if withIndex {
			row = append(row, optIndex(p.EndAverageIndex))
		}
		t.rows = append(t.rows, append(row, fmt.Sprintf("%.1f", p.EndScore), Money(p.TotalCost), Money(p.PresentValue), fmt.Sprintf("%d of %d", p.TargetsMet, p.Targets)))
	}
	sweepConfidenceColumn(&t, r)
	tabulate(ew, t)
	if r.HoldBudget != nil {
		ew.printf("\nLeast level yearly budget that holds today's network condition to the last year: %s\n", Money(*r.HoldBudget))
	}
	if r.TargetsBudget != nil {
		ew.printf("Least level yearly budget that meets every target: %s\n", Money(*r.TargetsBudget))
	}
	sweepConfidenceText(ew, r)
	for _, warn := range r.Warnings {
		ew.printf("\nNote: %s\n", warn)
	}
	ew.printf("\n%s\n", wrap(r.Caution, 100))
	return ew.err
}

// SweepCSV writes one row per budget; the hold and targets budgets go in
// every row so that the file stands alone.
func SweepCSV(w io.Writer, r *scenarios.SweepResult) error {
	r = RoundedSweep(r)
	rows := [][]string{{"yearly_budget", "status", "condition_score", "end_poor_share", "end_average_index", "end_score", "total_cost", "present_value", "targets_met", "targets", "hold_budget", "targets_budget"}}
	for _, p := range r.Points {
		if !p.Planned() {
			rows = append(rows, []string{Plain(p.Budget), string(p.Status), "", "", "", "", "", "", "", "", optPlain(r.HoldBudget), optPlain(r.TargetsBudget)})
			continue
		}
		rows = append(rows, []string{Plain(p.Budget), string(p.Status), Plain(p.ConditionScore), Plain(p.EndPoorShare), optPlain(p.EndAverageIndex), Plain(p.EndScore), Plain(p.TotalCost), Plain(p.PresentValue), fmt.Sprint(p.TargetsMet), fmt.Sprint(p.Targets), optPlain(r.HoldBudget), optPlain(r.TargetsBudget)})
	}
	return writeCSV(w, rows)
}

// CompareText writes the scenarios side by side: one column per scenario.
func CompareText(w io.Writer, r *scenarios.CompareResult) error {
	ew := &errWriter{w: w}
	cur := r.Currency
	if cur == "" {
		cur = "currency units"
	}
	head := []string{""}
	right := []bool{false}
	for n, c := range r.Scenarios {
		ew.printf("[%d] %s (%s)\n", n+1, c.Scenario, c.Source)
		head = append(head, fmt.Sprintf("[%d]", n+1))
		right = append(right, true)
	}
	t := table{header: head, right: right}
	row := func(label string, cell func(c scenarios.CompareColumn) string) {
		cells := []string{label}
		for _, c := range r.Scenarios {
			cells = append(cells, cell(c))
		}
		t.rows = append(t.rows, cells)
	}
	row("status", func(c scenarios.CompareColumn) string { return string(c.Status) })
	row("condition score", func(c scenarios.CompareColumn) string { return fmt.Sprintf("%.2f", c.ConditionScore) })
	row("spend ("+cur+")", func(c scenarios.CompareColumn) string { return Money(c.TotalCost) })
	row("present value", func(c scenarios.CompareColumn) string { return Money(c.PresentValue) })
	if hasRoutine(r) {
		row("routine cost", func(c scenarios.CompareColumn) string { return optMoney(c.RoutineCost) })
	}
	row("targets met", func(c scenarios.CompareColumn) string { return fmt.Sprintf("%d of %d", c.TargetsMet, c.Targets) })
	row("extra money to meet them", func(c scenarios.CompareColumn) string {
		if c.Funding == nil || c.Funding.ExtraTotal == nil {
			return "-"
		}
		return Money(*c.Funding.ExtraTotal)
	})
	row("worst-first rule score", func(c scenarios.CompareColumn) string {
		if c.Baseline == nil {
			return "-"
		}
		return fmt.Sprintf("%.2f", c.Baseline.ConditionScore)
	})
	compareConfidenceRows(r, row)
	ew.printf("\nSummary\n")
	tabulate(ew, t)
	// Level of service: one block per chosen position, classes then network.
	ew.printf("\nLevel of service at the end of the year (poor share / good share / average index)\n")
	ls := table{header: append([]string{"YEAR", "CLASS"}, head[1:]...), right: append([]bool{false, false}, right[1:]...)}
	first := r.Scenarios[0]
	for y := range first.Service {
		for k := range first.Service[y].Classes {
			cells := []string{fmt.Sprint(first.Service[y].Year), first.Service[y].Classes[k].Class}
			for _, c := range r.Scenarios {
				cells = append(cells, serviceCell(c, y, k))
			}
			ls.rows = append(ls.rows, cells)
		}
		cells := []string{fmt.Sprint(first.Service[y].Year), "network"}
		for _, c := range r.Scenarios {
			cells = append(cells, serviceCell(c, y, -1))
		}
		ls.rows = append(ls.rows, cells)
	}
	tabulate(ew, ls)
	for n, c := range r.Scenarios {
		for _, s := range c.Shortfalls {
			ew.printf("[%d] misses: %s (%s)\n", n+1, s.Target, shortfallSummary(s))
		}
	}
	for _, warn := range r.Warnings {
		ew.printf("\nNote: %s\n", warn)
	}
	ew.printf("\n%s\n", wrap(r.Caution, 100))
	return ew.err
}

func hasRoutine(r *scenarios.CompareResult) bool {
	for _, c := range r.Scenarios {
		if c.RoutineCost != nil {
			return true
		}
	}
	return false
}

func optMoney(v *float64) string {
	if v == nil {
		return "-"
	}
	return Money(*v)
}

// serviceCell is "poor / good / index" of a class (k >= 0) or the network
// in a scenario's y-th chosen year; "-" when the scenario lacks the class.
func serviceCell(c scenarios.CompareColumn, y, k int) string {
	if y >= len(c.Service) {
		return "-"
	}
	s := c.Service[y]
	if k < 0 {
		avg := fmt.Sprintf("%.1f", s.Network.Score) + " score"
		if s.Network.AverageIndex != nil {
			avg = Index(*s.Network.AverageIndex)
		}
		return fmt.Sprintf("%s / %s / %s", Percent(s.Network.Shares.Poor), Percent(s.Network.Shares.Good), avg)
	}
	if k >= len(s.Classes) {
		return "-"
	}
	cl := s.Classes[k]
	return fmt.Sprintf("%s / %s / %s", Percent(cl.Shares.Poor), Percent(cl.Shares.Good), Index(cl.AverageIndex))
}

// CompareCSV writes one row per scenario, year and class (and network).
func CompareCSV(w io.Writer, r *scenarios.CompareResult) error {
	r = RoundedCompare(r)
	rows := [][]string{{"scenario", "source", "status", "year", "class", "good_share", "fair_share", "poor_share", "average_index", "condition_score", "total_cost", "present_value", "targets_met", "targets", "extra_money"}}
	for _, c := range r.Scenarios {
		extra := ""
		if c.Funding != nil && c.Funding.ExtraTotal != nil {
			extra = Plain(*c.Funding.ExtraTotal)
		}
		tail := []string{Plain(c.ConditionScore), Plain(c.TotalCost), Plain(c.PresentValue), fmt.Sprint(c.TargetsMet), fmt.Sprint(c.Targets), extra}
		for _, y := range c.Service {
			for _, cl := range y.Classes {
				rows = append(rows, append([]string{c.Scenario, c.Source, string(c.Status), fmt.Sprint(y.Year), cl.Class, Plain(cl.Shares.Good), Plain(cl.Shares.Fair), Plain(cl.Shares.Poor), Plain(cl.AverageIndex)}, tail...))
			}
			rows = append(rows, append([]string{c.Scenario, c.Source, string(c.Status), fmt.Sprint(y.Year), "network", Plain(y.Network.Shares.Good), Plain(y.Network.Shares.Fair), Plain(y.Network.Shares.Poor), optPlain(y.Network.AverageIndex)}, tail...))
		}
	}
	return writeCSV(w, rows)
}
