package report

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
	"wearplan/treatments"
)

// document is the content of a report, laid out once and written as HTML or
// Markdown. Every number in it is already formatted for people.
type document struct {
	Title    string
	Subtitle string
	Caution  string
	Contents []link
	// Summary is the one-page summary of a single-scenario report.
	Summary *summaryView
	Compare *comparison
	Runs    []runView
	Sweep   *sweepView
	// Assumptions lists the runs whose assumptions the report restates,
	// in their own section after the plans and the sweep.
	Assumptions []runView
	Details     detailsView
}

type link struct{ ID, Text string }

// fact is a label and its value in a summary list.
type fact struct{ Label, Value string }

// table is a captioned table. Group rows head a block of rows and span
// the table; Num marks right-aligned (numeric) columns.
type table struct {
	ID      string
	Caption string
	Note    string
	Head    []string
	Num     []bool
	Rows    []row
}

type row struct {
	Cells []string
	Group bool
}

func (t *table) add(cells ...string) { t.Rows = append(t.Rows, row{Cells: cells}) }

func (t *table) group(title string) {
	t.Rows = append(t.Rows, row{Cells: []string{title}, Group: true})
}

type runView struct {
	ID          string
	Name        string
	Description string
	Headline    string
	Summary     []fact
	Warnings    []string
	LOS         table
	Charts      []chart
	Targets     *table
	Funding     *fundingView
	Confidence  *table
	Bands       *bandsView
	Spend       *table
	ClassSpend  *table
	GroupSpend  *table
	// SpendCharts are the spend stacked by class against the network cap,
	// then one per budget group against its cap.
	SpendCharts []chart
	Work        *table
	Indicators  *indicatorsView
	Assumptions *assumptions

	// ClassWarnings say what the plan does to classes a council should
	// hear about (scenarios.ClassWarning); Warnings holds the other notes.
	ClassWarnings []string
}

type assumptions struct {
	General []fact
	Targets []string
	Weights table
	Classes []classAssumptions
}

type classAssumptions struct {
	Name       string
	Heading    string
	Scale      table
	Matrix     table
	Treatments table
}

type comparison struct {
	Overview table
	LOS      table
	Spend    table
	Charts   []chart
}

type sweepView struct {
	Chart *chart
	Facts []fact
	Notes []string
	Table table
}

type detailsView struct {
	Facts  []fact
	Inputs table
}

func currencyOf(r *scenarios.Result) string {
	if r.Currency == "" {
		return "currency units"
	}
	return r.Currency
}

// build lays out the report. withCharts draws the SVG charts (HTML only).
func build(rep *Report, withCharts bool) (*document, error) {
	if err := rep.validate(); err != nil {
		return nil, err
	}
	d := &document{Caution: scenarios.Caution}
	first := rep.Runs[0].Result
	if len(rep.Runs) == 1 {
		d.Title = first.Scenario
		d.Subtitle = "Maintenance work program report"
		sv, err := buildSummary("summary", rep.Runs[0], withCharts)
		if err != nil {
			return nil, err
		}
		d.Summary = sv
		d.Contents = append(d.Contents, link{"summary", "Summary"})
	} else {
		names := make([]string, len(rep.Runs))
		for i, run := range rep.Runs {
			names[i] = run.Result.Scenario
		}
		d.Title = "Comparison of " + strconv.Itoa(len(rep.Runs)) + " scenarios"
		d.Subtitle = strings.Join(names, "; ")
		c, err := buildComparison(rep, withCharts)
		if err != nil {
			return nil, err
		}
		d.Compare = c
		d.Contents = append(d.Contents, link{"compare", "Comparison"})
	}
	for i, run := range rep.Runs {
		rv, err := buildRun(fmt.Sprintf("run-%d", i+1), run, withCharts)
		if err != nil {
			return nil, err
		}
		d.Runs = append(d.Runs, rv)
		d.Contents = append(d.Contents, link{rv.ID, rv.Name})
		if rv.Assumptions != nil {
			d.Assumptions = append(d.Assumptions, rv)
		}
	}
	if rep.Sweep != nil && len(rep.Sweep.Points) > 0 {
		sv, err := buildSweep(rep.Sweep, withCharts)
		if err != nil {
			return nil, err
		}
		d.Sweep = sv
		d.Contents = append(d.Contents, link{"sweep", "Condition score against budget"})
	}
	if len(d.Assumptions) > 0 {
		d.Contents = append(d.Contents, link{"assumptions", "Assumptions"})
	}
	d.Details = buildDetails(rep)
	d.Contents = append(d.Contents, link{"caution", "About these figures"}, link{"details", "Run details"})
	return d, nil
}

func buildRun(id string, run Run, withCharts bool) (runView, error) {
	r := run.Result
	rv := runView{ID: id, Name: r.Scenario, Headline: render.Headline(r)}
	for _, w := range r.ClassWarnings {
		rv.ClassWarnings = append(rv.ClassWarnings, w.Text)
	}
	for _, w := range r.Warnings {
		if !slices.Contains(rv.ClassWarnings, w) {
			rv.Warnings = append(rv.Warnings, w)
		}
	}
	if run.Scenario != nil {
		rv.Description = strings.TrimSpace(run.Scenario.Description)
	}
	rv.Summary = summaryFacts(r)
	rv.LOS = losTable(id+"-los", run, true)
	if withCharts {
		cs, err := runCharts(id, run)
		if err != nil {
			return rv, err
		}
		if run.Simulation != nil {
			bs, err := bandCharts(id, run.Simulation)
			if err != nil {
				return rv, err
			}
			cs = withBandCharts(cs, bs)
		}
		rv.Charts = cs
	}
	if len(r.Targets) > 0 {
		t := targetTable(id+"-targets", r)
		rv.Targets = &t
	}
	rv.Confidence = confidenceTable(id+"-confidence", r)
	if run.Simulation != nil {
		rv.Bands = buildBands(id, run.Simulation)
	}
	if r.Kind == scenarios.KindPlan || r.Funding != nil || r.RoutineCost != nil {
		rv.Funding = buildFunding(id+"-funding", r)
	}
	if r.Kind == scenarios.KindPlan {
		s, w := spendTable(id+"-spend", r), workTable(id+"-work", r)
		rv.Spend, rv.Work = &s, &w
		cs := classSpendTable(id+"-class-spend", r)
		rv.ClassSpend, rv.GroupSpend = &cs, groupSpendTable(id+"-group-spend", r)
		if withCharts {
			charts, err := classSpendCharts(id, r)
			if err != nil {
				return rv, err
			}
			rv.SpendCharts = charts
		}
	}
	rv.Indicators = buildIndicators(id+"-amp", r)
	if run.Scenario != nil {
		rv.Assumptions = buildAssumptions(id, run.Scenario, r)
	}
	return rv, nil
}

func summaryFacts(r *scenarios.Result) []fact {
	last := r.StartYear + r.Horizon - 1
	cur := currencyOf(r)
	var fs []fact
	if r.Kind == scenarios.KindPlan {
		fs = append(fs,
			fact{"What this is", fmt.Sprintf("an optimised work program for %d-%d (%d years)", r.StartYear, last, r.Horizon)},
			fact{"Objective", objectiveWords(r.Objective)},
			fact{"Status", statusWords(r.Status)},
		)
	} else {
		fs = append(fs, fact{"What this is", fmt.Sprintf("a forecast for %d-%d with no work done", r.StartYear, last)})
	}
	fs = append(fs, fact{"Condition score", fmt.Sprintf("%.1f out of 100 (network average over the %d years; 100 = every asset at the best end of its scale)", r.ConditionScore, r.Horizon)})
	if r.Kind == scenarios.KindPlan {
		fs = append(fs,
			fact{"Total spend", fmt.Sprintf("%s %s over %d years, at each year's prices", cur, render.Money(r.TotalCost), r.Horizon)},
			fact{"Present value of spend", fmt.Sprintf("%s %s at a discount rate of %s a year", cur, render.Money(r.PresentValue), percentRate(r.DiscountRate))},
		)
	}
	met := 0
	for _, t := range r.Targets {
		if t.Met {
			met++
		}
	}
	if len(r.Targets) > 0 {
		fs = append(fs, fact{"Targets met", fmt.Sprintf("%d of %d", met, len(r.Targets))})
	}
	fs = append(fs, fact{"Network figures", "classes weighted by " + r.Weighting})
	return fs
}

func objectiveWords(o string) string {
	switch o {
	case "max-condition":
		return "max-condition: the best average network condition the budget buys"
	case "min-cost":
		return "min-cost: the least present-value spend that meets the targets"
	}
	return o
}

func statusWords(s scenarios.Status) string {
	switch s {
	case scenarios.Optimal:
		return "optimal: every target is met"
	case scenarios.TargetsNotMet:
		return "targets not met: no plan within the budget meets every target; this plan keeps the shortfall as small as possible"
	}
	return string(s)
}

// percentRate writes a yearly rate given as a fraction (0.035) as a
// percentage (3.5%), rounded to six decimals so that binary fractions do
// not show (100 * 0.035 is 3.5000000000000004).
func percentRate(v float64) string {
	return plainNumber(100*v) + "%"
}

// plainNumber writes v with up to six decimals and no trailing zeros.
func plainNumber(v float64) string {
	return strconv.FormatFloat(math.Round(v*1e6)/1e6, 'f', -1, 64)
}

// scaleNote describes a class's index for the average-index row.
func scaleNote(sc *scenarios.Scenario, class string) string {
	if sc == nil {
		return ""
	}
	for k := range sc.Classes {
		if sc.Classes[k].Name == class {
			s := sc.Classes[k].Scale
			dir := "higher is better"
			if s.Best < s.Worst {
				dir = "lower is better"
			}
			return fmt.Sprintf(" (%s; %s-%s, %s)", scaleLabel(s), plainNumber(math.Min(s.Best, s.Worst)), plainNumber(math.Max(s.Best, s.Worst)), dir)
		}
	}
	return ""
}

// scaleLabel names a scale for people: a preset by its title, never by
// its key (preset:pci-astm-d6433), a scale of the file by its name.
func scaleLabel(s *scenarios.Scale) string {
	if s.Preset != "" {
		for _, p := range scenarios.Presets() {
			if p.Name == s.Preset {
				return p.Title
			}
		}
	}
	return strings.TrimPrefix(s.Name, scenarios.PresetPrefix)
}

// losTable is the level-of-service table: per class (when classes is set)
// and for the network, today and at the end of year 1, 5, 10 and the last:
// good, fair and poor shares, average index, and replacement value and
// backlog where known.
func losTable(id string, run Run, classes bool) table {
	r := run.Result
	years := render.LOSYears(r.Horizon)
	t := table{ID: id, Caption: "Level of service: condition today and at the end of selected years"}
	t.Head = []string{"Measure", fmt.Sprintf("Today (start of %d)", r.StartYear)}
	t.Num = []bool{false, true}
	for _, y := range years {
		t.Head = append(t.Head, fmt.Sprintf("%d (year %d)", r.StartYear+y-1, y))
		t.Num = append(t.Num, true)
	}
	cur := currencyOf(r)
	moneyRow := func(label string, vals []*float64) {
		known := false
		cells := []string{label}
		for _, v := range vals {
			if v == nil {
				cells = append(cells, "not known")
			} else {
				known = true
				cells = append(cells, render.Money(*v))
			}
		}
		if known {
			t.add(cells...)
		}
	}
	for k := range r.Initial.Classes {
		if !classes {
			break
		}
		cs := []scenarios.ClassCondition{r.Initial.Classes[k]}
		for _, y := range years {
			cs = append(cs, r.Years[y-1].Classes[k])
		}
		c := cs[0]
		t.group(fmt.Sprintf("%s (share of %s)", c.Class, render.UnitWord(c.Unit)))
		shareRow := func(label string, get func(scenarios.Shares) float64) {
			cells := []string{label}
			for _, c := range cs {
				cells = append(cells, render.Percent(get(c.Shares)))
			}
			t.add(cells...)
		}
		shareRow("Good", func(s scenarios.Shares) float64 { return s.Good })
		shareRow("Fair", func(s scenarios.Shares) float64 { return s.Fair })
		shareRow("Poor", func(s scenarios.Shares) float64 { return s.Poor })
		if run.Simulation != nil {
			t.add(poorRangeRow(run.Simulation, k, years)...)
		}
		cells := []string{"Average index" + scaleNote(run.Scenario, c.Class)}
		for _, c := range cs {
			cells = append(cells, render.Index(c.AverageIndex))
		}
		t.add(cells...)
		var rv, bl []*float64
		for _, c := range cs {
			rv, bl = append(rv, c.ReplacementValue), append(bl, c.Backlog)
		}
		moneyRow("Replacement value ("+cur+")", rv)
		moneyRow("Backlog ("+cur+")", bl)
	}
	ns := []scenarios.NetworkCondition{r.Initial.Network}
	for _, y := range years {
		ns = append(ns, r.Years[y-1].Network)
	}
	t.group("Network (classes weighted by " + r.Weighting + ")")
	for _, g := range []struct {
		label string
		get   func(scenarios.Shares) float64
	}{{"Good", func(s scenarios.Shares) float64 { return s.Good }}, {"Fair", func(s scenarios.Shares) float64 { return s.Fair }}, {"Poor", func(s scenarios.Shares) float64 { return s.Poor }}} {
		cells := []string{g.label}
		for _, n := range ns {
			cells = append(cells, render.Percent(g.get(n.Shares)))
		}
		t.add(cells...)
		if g.label == "Poor" && run.Simulation != nil {
			t.add(poorRangeRow(run.Simulation, -1, years)...)
		}
	}
	if ns[0].AverageIndex != nil {
		cells := []string{"Average index"}
		for _, n := range ns {
			cells = append(cells, render.Index(*n.AverageIndex))
		}
		t.add(cells...)
	}
	cells := []string{"Condition score (0-100, 100 best)"}
	for _, n := range ns {
		cells = append(cells, strconv.FormatFloat(n.Score, 'f', 1, 64))
	}
	t.add(cells...)
	var rv, bl []*float64
	for _, n := range ns {
		rv, bl = append(rv, n.ReplacementValue), append(bl, n.Backlog)
	}
	moneyRow("Replacement value ("+cur+")", rv)
	moneyRow("Backlog ("+cur+")", bl)
	t.Note = "Shares are of each class's quantity; good, fair and poor group the states of each class's scale. Years mean the condition at the end of the year."
	if !classes {
		t.Note = "Network shares weight each class's shares by " + r.Weighting + ". Years mean the condition at the end of the year; the full table, by class, is in the plan's section."
	}
	if run.Simulation != nil {
		t.Note += " The 5th-95th percentile rows come from simulating the plan (see \"How sure the forecast is\"); today's condition is known, so it has no range."
	}
	return t
}

func targetTable(id string, r *scenarios.Result) table {
	t := table{ID: id, Caption: "Whether each target holds, its worst year, and any shortfall", Head: []string{"Target", "Met", "Worst year", "Worst value", "Limit", "Shortfall"}, Num: []bool{false, false, true, true, true, false}}
	short := false
	for _, o := range r.Targets {
		met := "yes"
		if !o.Met {
			met = "no"
		}
		s := ""
		if n := len(o.Shortfalls); n > 0 {
			short = true
			s = fmt.Sprintf("up to %s in %d", render.ShortfallAmount(o, render.WorstShortfall(o)), o.Shortfalls[0].Year)
			if last := o.Shortfalls[n-1].Year; last != o.Shortfalls[0].Year {
				s = fmt.Sprintf("up to %s in %d-%d", render.ShortfallAmount(o, render.WorstShortfall(o)), o.Shortfalls[0].Year, last)
			}
		}
		t.add(o.Target, met, strconv.Itoa(o.WorstYear), render.TargetValue(o, o.WorstValue), render.TargetValue(o, o.Limit), s)
	}
	if !short {
		dropColumns(&t, 5)
	}
	return t
}

func spendTable(id string, r *scenarios.Result) table {
	cur := currencyOf(r)
	// Budget groups have their own table (groupSpendTable).
	t := table{ID: id, Caption: "Spend against the network budget (" + cur + ", at each year's prices)", Head: []string{"Year", "Spend", "Budget cap", "Unspent"}, Num: []bool{false, true, true, true}}
	budget := 0.0
	capped := true
	for _, y := range r.Years {
		b, left := "no cap", ""
		if y.Budget != nil {
			b, left = render.Money(*y.Budget), render.Money(render.Cents(*y.Budget-y.Spend))
			budget += *y.Budget
		} else {
			capped = false
		}
		t.add(strconv.Itoa(y.Year), render.Money(y.Spend), b, left)
	}
	total := []string{"Total", render.Money(r.TotalCost), "", ""}
	if capped {
		total[2], total[3] = render.Money(budget), render.Money(render.Cents(budget-r.TotalCost))
	}
	t.add(total...)
	return t
}

func capText(v float64) string {
	if math.IsInf(v, 1) {
		return "no cap"
	}
	return render.Money(v)
}

func workTable(id string, r *scenarios.Result) table {
	cur := currencyOf(r)
	t := table{ID: id, Caption: "Work program: quantity treated each year and its cost (" + cur + ", at that year's prices)",
		Head: []string{"Year", "Class", "Treatment", "State treated", "Quantity", "Unit", "Cost"}, Num: []bool{false, false, false, false, true, false, true}}
	for _, y := range r.Years {
		for _, c := range y.Classes {
			for _, w := range c.Work {
				t.add(strconv.Itoa(y.Year), c.Class, w.Treatment, w.State, render.Quantity(w.Quantity), c.Unit, render.Money(w.Cost))
			}
		}
	}
	if len(t.Rows) == 0 {
		t.Note = "No work in any year."
	} else {
		t.Note = "A state's quantity may be split between treatments: the plan is a network-level mix, not a list of sites."
	}
	return t
}

func buildAssumptions(id string, sc *scenarios.Scenario, r *scenarios.Result) *assumptions {
	cur := currencyOf(r)
	a := &assumptions{}
	a.General = []fact{
		{"Planning years", fmt.Sprintf("%d-%d (%d years)", sc.StartYear, sc.Year(sc.Horizon), sc.Horizon)},
		{"Currency", cur},
		{"Cost escalation", percentRate(sc.Escalation) + " a year (year 1 at start-year prices)"},
		{"Discount rate", percentRate(sc.DiscountRate) + " a year (for present values)"},
		{"Objective", objectiveWords(sc.Objective.String())},
		{"Network budget", budgetWords(sc.Budget, cur)},
	}
	if sc.CarryOver {
		a.General = append(a.General, fact{"Carry-over", "money unspent in a year may be spent in a later year"})
	}
	for _, g := range sc.BudgetGroups {
		a.General = append(a.General, fact{"Budget group " + g.Name, budgetWords(g.Yearly, cur) + "; classes: " + strings.Join(g.Classes, ", ")})
	}
	for _, t := range sc.Targets {
		a.Targets = append(a.Targets, t.Label)
	}
	a.Weights = table{ID: id + "-weights", Caption: "Asset classes and their weight in network figures (" + string(sc.Weighting) + ")",
		Head: []string{"Class", "Quantity today", "Unit", "Replacement cost (" + cur + " per unit)", "Weight"}, Num: []bool{false, true, false, true, true}}
	for k := range sc.Classes {
		c := &sc.Classes[k]
		rc := "not given"
		if c.ReplacementCost > 0 {
			rc = render.Money(c.ReplacementCost)
		}
		a.Weights.add(c.Name, render.Quantity(c.Total()), c.Unit, rc, render.Percent(c.Weight))
	}
	for k := range sc.Classes {
		a.Classes = append(a.Classes, classAssumption(fmt.Sprintf("%s-class-%d", id, k+1), &sc.Classes[k], cur))
	}
	return a
}

func budgetWords(b []float64, cur string) string {
	if b == nil {
		return "no cap"
	}
	same := true
	for _, v := range b {
		same = same && v == b[0]
	}
	if same {
		return fmt.Sprintf("%s %s every year", cur, capText(b[0]))
	}
	parts := make([]string, len(b))
	for i, v := range b {
		parts[i] = capText(v)
	}
	return fmt.Sprintf("%s a year, by year: %s", cur, strings.Join(parts, "; "))
}

func classAssumption(id string, c *scenarios.Class, cur string) classAssumptions {
	ca := classAssumptions{Name: c.Name, Heading: fmt.Sprintf("%s (%s, scale: %s)", c.Name, c.Unit, scaleLabel(c.Scale))}
	ca.Scale = table{ID: id + "-scale", Caption: "Condition states, best first, and today's quantity",
		Head: []string{"State", "Index range", "Value used for averages", "Group", "Quantity today (" + render.UnitWord(c.Unit) + ")"}, Num: []bool{false, true, true, false, true}}
	if c.Scale.Source != "" {
		ca.Scale.Note = "Scale source: " + c.Scale.Source + "."
	}
	for i, st := range c.Scale.States {
		ca.Scale.add(st.Name, plainNumber(st.Min)+" - "+plainNumber(st.Max), plainNumber(st.Value), c.Scale.Group[i].String(), render.Quantity(c.Initial[i]))
	}
	n := len(c.Scale.States)
	ca.Matrix = table{ID: id + "-matrix", Caption: "Deterioration with no work: chance of each state one year later (rows: state now; columns: state a year later)",
		Head: []string{"From \\ to"}, Num: []bool{false}}
	for _, st := range c.Scale.States {
		ca.Matrix.Head = append(ca.Matrix.Head, st.Name)
		ca.Matrix.Num = append(ca.Matrix.Num, true)
	}
	for i, rowP := range c.Transition.Rows() {
		cells := []string{c.Scale.States[i].Name}
		for j := 0; j < n; j++ {
			cells = append(cells, probability(rowP[j]))
		}
		ca.Matrix.add(cells...)
	}
	ca.Treatments = table{ID: id + "-treatments", Caption: "Treatments (unit costs in " + cur + " " + render.PerUnit(c.Unit) + " at start-year prices)",
		Head: []string{"Treatment", "State treated", "Unit cost", "Condition right after", "Ages in its year", "Renewal"}, Num: []bool{false, false, true, false, false, false}}
	for ti := range c.Treatments {
		tr := &c.Treatments[ti]
		ages, renewal := "yes", "no"
		if tr.SkipsAging {
			ages = "no"
		}
		if tr.Renewal {
			renewal = "yes"
		}
		for _, i := range tr.Applies {
			ca.Treatments.add(tr.Name, c.Scale.States[i].Name, render.Money(tr.Cost[i]), effectWords(tr, i, c.Scale), ages, renewal)
		}
	}
	return ca
}

// probability writes a transition probability to four decimals (the
// workbook keeps every digit); zero as a dash so the structure of the
// matrix stands out.
func probability(p float64) string {
	if p == 0 {
		return "-"
	}
	return strconv.FormatFloat(math.Round(p*1e4)/1e4, 'f', -1, 64)
}

func effectWords(tr *treatments.Treatment, i int, s *scenarios.Scale) string {
	row, err := tr.EffectRow(i, len(s.States))
	if err != nil {
		return "?"
	}
	var parts []string
	for j, p := range row {
		if p > 0 {
			if p == 1 {
				return s.States[j].Name
			}
			parts = append(parts, fmt.Sprintf("%s %s", s.States[j].Name, render.Percent(p)))
		}
	}
	return strings.Join(parts, ", ")
}

// buildComparison lays out the side-by-side tables and charts of several
// runs. Years are matched by calendar year; the level-of-service years are
// those of the first run.
func buildComparison(rep *Report, withCharts bool) (*comparison, error) {
	c := &comparison{}
	// Tables and charts name the scenarios by their names; column heads
	// wrap, and the charts put their legends below the plot.
	label := func(i int) string { return rep.Runs[i].Result.Scenario }
	c.Overview = table{ID: "compare-overview", Caption: "Scenarios at a glance",
		Head: []string{"Scenario", "Status", "Condition score (0-100)", "Total spend", "Present value", "Targets met", "Least level budget meeting every target", "Least level budget holding today's condition"}, Num: []bool{false, false, true, true, true, true, true, true}}
	for i, run := range rep.Runs {
		r := run.Result
		met := 0
		for _, t := range r.Targets {
			if t.Met {
				met++
			}
		}
		spend, pv := "-", "-"
		if r.Kind == scenarios.KindPlan {
			spend, pv = currencyOf(r)+" "+render.Money(r.TotalCost), currencyOf(r)+" "+render.Money(r.PresentValue)
		}
		level, hold := "-", "-"
		if f := r.Funding; f != nil {
			if f.LevelBudget != nil {
				level = render.Money(*f.LevelBudget)
			} else if f.Unreachable != "" || f.HeldBack != "" {
				level = "no amount"
			}
			if f.HoldBudget != nil {
				hold = render.Money(*f.HoldBudget)
			}
		}
		c.Overview.add(label(i), statusWordsShort(r.Status), strconv.FormatFloat(r.ConditionScore, 'f', 1, 64), spend, pv, fmt.Sprintf("%d of %d", met, len(r.Targets)), level, hold)
	}
	if cur := commonCurrency(rep); cur != "each scenario's currency" {
		c.Overview.Caption += " (money in " + cur + ")"
		for i, row := range c.Overview.Rows {
			for j := 3; j <= 4; j++ {
				row.Cells[j] = strings.TrimPrefix(row.Cells[j], cur+" ")
			}
			c.Overview.Rows[i] = row
		}
	}

	first := rep.Runs[0].Result
	c.LOS = table{ID: "compare-los", Caption: "Level of service side by side", Head: []string{"Measure"}, Num: []bool{false}}
	for i := range rep.Runs {
		c.LOS.Head = append(c.LOS.Head, label(i))
		c.LOS.Num = append(c.LOS.Num, true)
	}
	type when struct {
		label string
		year  int // calendar year; 0 = today
	}
	whens := []when{{fmt.Sprintf("Today (start of %d)", first.StartYear), 0}}
	for _, y := range render.LOSYears(first.Horizon) {
		whens = append(whens, when{fmt.Sprintf("End of %d (year %d)", first.StartYear+y-1, y), first.StartYear + y - 1})
	}
	for _, w := range whens {
		c.LOS.group(w.label)
		netAt := func(r *scenarios.Result) (*scenarios.NetworkCondition, []scenarios.ClassCondition) {
			if w.year == 0 {
				return &r.Initial.Network, r.Initial.Classes
			}
			for i := range r.Years {
				if r.Years[i].Year == w.year {
					return &r.Years[i].Network, r.Years[i].Classes
				}
			}
			return nil, nil
		}
		add := func(label string, get func(n *scenarios.NetworkCondition, cs []scenarios.ClassCondition) string) {
			cells := []string{label}
			for _, run := range rep.Runs {
				n, cs := netAt(run.Result)
				if n == nil {
					cells = append(cells, "-")
					continue
				}
				cells = append(cells, get(n, cs))
			}
			c.LOS.add(cells...)
		}
		add("Network good", func(n *scenarios.NetworkCondition, _ []scenarios.ClassCondition) string {
			return render.Percent(n.Shares.Good)
		})
		add("Network fair", func(n *scenarios.NetworkCondition, _ []scenarios.ClassCondition) string {
			return render.Percent(n.Shares.Fair)
		})
		add("Network poor", func(n *scenarios.NetworkCondition, _ []scenarios.ClassCondition) string {
			return render.Percent(n.Shares.Poor)
		})
		add("Network condition score (0-100)", func(n *scenarios.NetworkCondition, _ []scenarios.ClassCondition) string {
			return strconv.FormatFloat(n.Score, 'f', 1, 64)
		})
		for _, cc := range first.Initial.Classes {
			name := cc.Class
			find := func(cs []scenarios.ClassCondition) *scenarios.ClassCondition {
				for i := range cs {
					if cs[i].Class == name {
						return &cs[i]
					}
				}
				return nil
			}
			add(name+" poor", func(_ *scenarios.NetworkCondition, cs []scenarios.ClassCondition) string {
				if x := find(cs); x != nil {
					return render.Percent(x.Shares.Poor)
				}
				return "-"
			})
			add(name+" average index", func(_ *scenarios.NetworkCondition, cs []scenarios.ClassCondition) string {
				if x := find(cs); x != nil {
					return render.Index(x.AverageIndex)
				}
				return "-"
			})
		}
	}

	// Spend side by side, by calendar year over the union of the years: one
	// column per scenario, "spend / cap" in each cell, so that the table
	// keeps to the page with several scenarios.
	c.Spend = table{ID: "compare-spend", Caption: "Spend and network budget cap side by side (spend / cap, " + commonCurrency(rep) + " at each year's prices)", Head: []string{"Year"}, Num: []bool{false}}
	lo, hi := math.MaxInt, math.MinInt
	for i, run := range rep.Runs {
		r := run.Result
		c.Spend.Head = append(c.Spend.Head, label(i))
		c.Spend.Num = append(c.Spend.Num, true)
		lo, hi = min(lo, r.StartYear), max(hi, r.StartYear+r.Horizon-1)
	}
	for y := lo; y <= hi; y++ {
		cells := []string{strconv.Itoa(y)}
		for _, run := range rep.Runs {
			r := run.Result
			i := y - r.StartYear
			if i < 0 || i >= len(r.Years) || r.Kind != scenarios.KindPlan {
				cells = append(cells, "-")
				continue
			}
			b := "no cap"
			if r.Years[i].Budget != nil {
				b = render.Money(*r.Years[i].Budget)
			}
			cells = append(cells, render.Money(r.Years[i].Spend)+" / "+b)
		}
		c.Spend.add(cells...)
	}
	total := []string{"Total spend"}
	pv := []string{"Present value"}
	for _, run := range rep.Runs {
		total = append(total, render.Money(run.Result.TotalCost))
		pv = append(pv, render.Money(run.Result.PresentValue))
	}
	c.Spend.add(total...)
	c.Spend.add(pv...)

	if withCharts {
		sameStart := true
		for _, run := range rep.Runs {
			sameStart = sameStart && run.Result.StartYear == first.StartYear
		}
		var scores, spends []series
		var allScores, allSpend []float64
		largest := 0.0
		for i, run := range rep.Runs {
			r := run.Result
			s := series{name: label(i)}
			// x = plan year of the first run, so that calendar years line up.
			off := float64(r.StartYear - first.StartYear)
			s.xs, s.ys = append(s.xs, off), append(s.ys, r.Initial.Network.Score)
			for i, y := range r.Years {
				s.xs, s.ys = append(s.xs, off+float64(i+1)), append(s.ys, y.Network.Score)
				largest = math.Max(largest, y.Spend)
			}
			scores = append(scores, s)
			allScores = append(allScores, s.ys...)
		}
		div, word := moneyScale(largest)
		for i, run := range rep.Runs {
			r := run.Result
			if r.Kind != scenarios.KindPlan {
				continue
			}
			s := series{name: label(i)}
			off := float64(r.StartYear - first.StartYear)
			for i, y := range r.Years {
				s.xs, s.ys = append(s.xs, off+float64(i+1)), append(s.ys, y.Spend/div)
			}
			spends = append(spends, s)
			allSpend = append(allSpend, s.ys...)
		}
		today := ""
		if sameStart {
			today = "today"
		}
		lo, hi := paddedRange(0, 100, allScores)
		ch, err := lineChart("compare-chart-score", "Network condition score by year",
			"Network condition score (0-100, 100 best) today and at the end of each year, one line per scenario.",
			"End of year", "Condition score (0-100)", yearAxis{firstYear: first.StartYear, today: today}, lo, hi, scores)
		if err != nil {
			return nil, err
		}
		c.Charts = append(c.Charts, ch)
		if len(spends) > 0 {
			_, top := paddedRange(0, math.Inf(1), allSpend)
			ch, err := lineChart("compare-chart-spend", "Spend by year",
				"Treatment spend each year at that year's prices, one line per scenario.",
				"Year", word+currencyOf(first)+" a year", yearAxis{firstYear: first.StartYear}, 0, top, spends)
			if err != nil {
				return nil, err
			}
			c.Charts = append(c.Charts, ch)
		}
	}
	return c, nil
}

// runCharts draws a run's charts: network good/fair/poor shares, each
// class's shares by state, and spend against budget.
// networkChart draws the network's good, fair and poor shares by year.
func networkChart(id string, r *scenarios.Result) (chart, error) {
	three := conditionRamp(3)
	net := []band{{name: "Good", fill: three[0]}, {name: "Fair", fill: three[1]}, {name: "Poor", fill: three[2], hatch: true}}
	snaps := append([]scenarios.NetworkCondition{r.Initial.Network}, make([]scenarios.NetworkCondition, 0, len(r.Years))...)
	for _, y := range r.Years {
		snaps = append(snaps, y.Network)
	}
	for _, s := range snaps {
		net[0].values = append(net[0].values, 100*s.Shares.Good)
		net[1].values = append(net[1].values, 100*s.Shares.Fair)
		net[2].values = append(net[2].values, 100*s.Shares.Poor)
	}
	return sharesChart(id, "Network condition: good, fair and poor shares",
		fmt.Sprintf("Share of the network in good, fair and poor condition today and at the end of each year (classes weighted by %s). Poor is hatched.", r.Weighting),
		"Share of network (%)", r.StartYear, net)
}

func runCharts(id string, run Run) ([]chart, error) {
	r := run.Result
	var out []chart
	ch, err := networkChart(id+"-chart-network", r)
	if err != nil {
		return nil, err
	}
	out = append(out, ch)
	for k, c := range r.Initial.Classes {
		var poor []bool
		if run.Scenario != nil && k < len(run.Scenario.Classes) {
			for _, g := range run.Scenario.Classes[k].Scale.Group {
				poor = append(poor, g.String() == "poor")
			}
		}
		colours := conditionRamp(len(c.States))
		bands := make([]band, len(c.States))
		for i, st := range c.States {
			bands[i] = band{name: st.State, fill: colours[i], hatch: i < len(poor) && poor[i]}
			for t := 0; t <= len(r.Years); t++ {
				cc := r.Initial.Classes[k]
				if t > 0 {
					cc = r.Years[t-1].Classes[k]
				}
				total := 0.0
				for _, q := range cc.States {
					total += q.Quantity
				}
				v := 0.0
				if total > 0 {
					v = 100 * cc.States[i].Quantity / total
				}
				bands[i].values = append(bands[i].values, v)
			}
		}
		caption := fmt.Sprintf("Share of %s (%s) in each condition state, best at the top, today and at the end of each year.", c.Class, render.UnitWord(c.Unit))
		if len(poor) > 0 {
			caption += " States in the poor group are hatched."
		}
		ch, err := sharesChart(fmt.Sprintf("%s-chart-class-%d", id, k+1), "Condition of "+c.Class+" by state", caption,
			"Share of "+render.UnitWord(c.Unit)+" (%)", r.StartYear, bands)
		if err != nil {
			return nil, err
		}
		out = append(out, ch)
	}
	if r.Kind == scenarios.KindPlan {
		spend := make([]float64, len(r.Years))
		budget := make([]*float64, len(r.Years))
		for i, y := range r.Years {
			spend[i], budget[i] = y.Spend, y.Budget
		}
		ch, err := spendChart(id+"-chart-spend", "Spend against budget",
			"Treatment spend each year at that year's prices (bars) and the network budget cap (heavy rules).",
			currencyOf(r), r.StartYear, spend, budget)
		if err != nil {
			return nil, err
		}
		out = append(out, ch)
	}
	return out, nil
}

func buildSweep(s *Sweep, withCharts bool) (*sweepView, error) {
	cur := s.Currency
	if cur == "" {
		cur = "currency units"
	}
	sv := &sweepView{Table: table{ID: "sweep-table", Caption: "Condition score against yearly budget: " + s.Scenario,
		Head: []string{"Yearly budget (" + cur + ")", "Condition score (0-100)", "Network poor share at the end", "Targets met", "Status"}, Num: []bool{true, true, true, true, false}}}
	largest := 0.0
	for _, p := range s.Points {
		sv.Table.add(render.Money(p.Budget), strconv.FormatFloat(p.ConditionScore, 'f', 1, 64), render.Percent(p.EndPoorShare), fmt.Sprintf("%d of %d", p.TargetsMet, p.Targets), statusWordsShort(p.Status))
		largest = math.Max(largest, p.Budget)
	}
	type named struct {
		label, fact string
		v           *float64
	}
	budgetName := "Scenario's budget"
	if s.BudgetVaries {
		budgetName = "Scenario's budget (mean of its years)"
	}
	marks := []named{
		{budgetName, "The scenario's own yearly budget", s.Budget},
		{"Least level budget meeting every target", "Least level yearly budget that meets every target", s.TargetsBudget},
		{"Least level budget holding today's condition", "Least level yearly budget that holds today's network condition to the last year", s.HoldBudget},
	}
	withTargets := len(s.Points) > 0 && s.Points[0].Targets > 0
	for i, m := range marks {
		switch {
		case m.v != nil:
			sv.Facts = append(sv.Facts, fact{m.fact, cur + " " + render.Money(*m.v)})
			largest = math.Max(largest, *m.v)
		case i == 1 && withTargets, i == 2:
			sv.Facts = append(sv.Facts, fact{m.fact, "none: no level budget reaches it (see the notes)"})
		}
	}
	sv.Notes = s.Notes
	if withCharts {
		div, word := moneyScale(largest)
		se := series{name: "Condition score of the best plan for each level budget"}
		for _, p := range s.Points {
			se.xs, se.ys = append(se.xs, p.Budget/div), append(se.ys, p.ConditionScore)
		}
		var ms []mark
		for _, m := range marks {
			if m.v != nil {
				ms = append(ms, mark{name: m.label, x: *m.v / div})
			}
		}
		lo, hi := paddedRange(0, 100, se.ys)
		ch, err := lineChart("sweep-chart", "Condition score against yearly budget",
			"Condition score (0-100, mean network score over the horizon) of the best plan for each level yearly budget, with the scenario's own budget and the least level budgets that meet the targets and hold today's condition marked as vertical rules.",
			"Yearly budget ("+word+cur+")", "Condition score (0-100)", nil, lo, hi, []series{se}, ms...)
		if err != nil {
			return nil, err
		}
		sv.Chart = &ch
	}
	return sv, nil
}

// statusWordsShort writes a plan status for a table cell.
func statusWordsShort(s scenarios.Status) string {
	switch s {
	case scenarios.Optimal:
		return "every target met"
	case scenarios.TargetsNotMet:
		return "targets not met"
	}
	return strings.ReplaceAll(string(s), "-", " ")
}

func buildDetails(rep *Report) detailsView {
	d := rep.Details
	dv := detailsView{Facts: []fact{{"wearplan version", d.Version}, {"Report date", d.Date}}}
	for _, run := range rep.Runs {
		if m := run.Result.Model; m != nil {
			dv.Facts = append(dv.Facts, fact{"Model of " + run.Result.Scenario, modelWords(m)})
		}
	}
	dv.Inputs = table{ID: "inputs", Caption: "Input files", Head: []string{"File", "SHA-256"}, Num: []bool{false, false}}
	for _, f := range d.Inputs {
		dv.Inputs.add(f.Path, f.SHA256)
	}
	return dv
}

// modelWords describes the LP solved: the flat model, or the last master
// LP of the decomposition with its rounds and policies. Counts that are
// zero (a master LP's coefficients are not counted) are left out.
func modelWords(m *scenarios.ModelSize) string {
	what := "the linear program"
	if m.Solver == "decomposed" {
		what = "the last master linear program of the decomposition"
	}
	parts := []string{render.Money(float64(m.Rows)) + " rows", render.Money(float64(m.Columns)) + " columns"}
	if m.Nonzeros > 0 {
		parts = append(parts, render.Money(float64(m.Nonzeros))+" coefficients")
	}
	s := fmt.Sprintf("%s: %s; %s with lp_solve 5.5", what, strings.Join(parts, ", "), render.Plural(m.Solves, "solve", "solves"))
	if m.Iterations > 0 {
		s += fmt.Sprintf(", %s, %s generated", render.Plural(m.Iterations, "pricing round", "pricing rounds"), render.Plural(m.Policies, "policy", "policies"))
	}
	return s
}
