package render

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"wearplan/scenarios"
)

// SimulationJSON writes a simulation result as indented JSON.
func SimulationJSON(w io.Writer, r *scenarios.SimulationResult) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(r)
}

// SimulationCSVTables names the tables a simulation writes as CSV.
var SimulationCSVTables = []string{"bands", "targets"}

// SimulationCSV writes one table of a simulation result: "bands" has one
// row per year, class (or network) and measure with its percentiles, mean
// and the deterministic plan value; "targets" one row per target and year
// with the probability that it is met.
func SimulationCSV(w io.Writer, r *scenarios.SimulationResult, name string) error {
	cw := csv.NewWriter(w)
	var rows [][]string
	switch name {
	case "bands":
		rows = append(rows, []string{"year", "class", "measure", "p5", "p50", "p95", "mean", "plan"})
		add := func(year, class, measure string, b scenarios.Band) {
			rows = append(rows, []string{year, class, measure, Plain(b.P5), Plain(b.P50), Plain(b.P95), Plain(b.Mean), Plain(b.Plan)})
		}
		spend := "spend_" + strings.ToLower(simCurrency(r))
		for _, y := range r.Years {
			yr := fmt.Sprint(y.Year)
			for _, c := range y.Classes {
				add(yr, c.Class, "good_share", c.Shares.Good)
				add(yr, c.Class, "fair_share", c.Shares.Fair)
				add(yr, c.Class, "poor_share", c.Shares.Poor)
				add(yr, c.Class, "average_index", c.AverageIndex)
				add(yr, c.Class, "score", c.Score)
				if c.Spend != nil {
					add(yr, c.Class, spend, *c.Spend)
				}
			}
			n := y.Network
			add(yr, "network", "good_share", n.Shares.Good)
			add(yr, "network", "fair_share", n.Shares.Fair)
			add(yr, "network", "poor_share", n.Shares.Poor)
			if n.AverageIndex != nil {
				add(yr, "network", "average_index", *n.AverageIndex)
			}
			add(yr, "network", "score", n.Score)
			if n.Spend != nil {
				add(yr, "network", spend, *n.Spend)
			}
		}
	case "targets":
		rows = append(rows, []string{"target", "met_by_plan", "probability_all_years", "year", "probability"})
		for _, t := range r.Targets {
			for _, y := range t.Years {
				rows = append(rows, []string{t.Target, fmt.Sprint(t.MetByPlan), Plain(t.AllYears), fmt.Sprint(y.Year), Plain(y.Probability)})
			}
		}
	default:
		return fmt.Errorf("unknown table %q; choose one of %s", name, strings.Join(SimulationCSVTables, ", "))
	}
	if err := cw.WriteAll(sheetSafe(rows)); err != nil {
		return err
	}
	return cw.Error()
}

func simCurrency(r *scenarios.SimulationResult) string {
	if r.Currency == "" {
		return "currency units"
	}
	return r.Currency
}

// SimulationText writes a simulation result as terminal tables: what was
// simulated and which uncertainty the bands include, condition bands per
// class and year, spend bands, target probabilities, notes and the caution.
func SimulationText(w io.Writer, r *scenarios.SimulationResult) error {
	ew := &errWriter{w: w}
	last := r.StartYear + r.Horizon - 1
	ew.printf("%s\n", r.Scenario)
	what := "the plan (status " + r.PlanStatus + ")"
	if r.Policy == scenarios.PolicyDoNothing {
		what = "doing nothing"
	}
	ew.printf("Simulation of %s, %d-%d: %d runs, seed %d\n", what, r.StartYear, last, r.Runs, r.Seed)
	ew.printf("\nIncluded in the bands:\n")
	for _, s := range r.Uncertainty.Included {
		ew.printf("%s\n", bullet(s))
	}
	ew.printf("Not included:\n")
	for _, s := range r.Uncertainty.Excluded {
		ew.printf("%s\n", bullet(s))
	}
	ew.printf("\nPieces: each class moves as these pieces, independently of each other\n")
	tabulate(ew, simClassTable(r))

	ew.printf("\nCondition at the end of each year: median [5th-95th percentile] over %d runs; PLAN is the deterministic %s\n",
		r.Runs, map[bool]string{true: "forecast", false: "plan"}[r.Policy == scenarios.PolicyDoNothing])
	tabulate(ew, bandTable(r))
	if len(r.Years) > 0 && r.Years[0].Network.Spend != nil {
		ew.printf("\nSpend per year (%s at that year's prices): median [5th-95th percentile]\n", simCurrency(r))
		tabulate(ew, spendBandTable(r))
	}
	if len(r.Targets) > 0 {
		ew.printf("\nTargets: share of runs in which each holds\n")
		tabulate(ew, chanceTable(r))
		ew.printf("\nBy year (share of runs meeting the target in that year)\n")
		tabulate(ew, chanceByYearTable(r))
	}
	for _, warn := range r.Warnings {
		ew.printf("\nNote: %s\n", wrap(warn, 100))
	}
	if r.PolicyRule != "" {
		ew.printf("\nHow runs follow the plan\n%s\n", wrap(r.PolicyRule, 100))
	}
	ew.printf("\nPercentiles\n%s.\n", wrap(r.Percentiles, 100))
	ew.printf("\n%s\n", wrap(r.Caution, 100))
	return ew.err
}

func bullet(s string) string {
	return "  - " + strings.ReplaceAll(wrap(s, 96), "\n", "\n    ")
}

func simClassTable(r *scenarios.SimulationResult) table {
	t := table{header: []string{"CLASS", "PIECES", "QUANTITY", "UNIT", "FROM", "MATRIX"}, right: []bool{false, true, true, false, false, false}}
	for _, c := range r.Classes {
		from := c.SegmentsFrom
		if c.LotSize > 0 {
			from = fmt.Sprintf("pieces of %s (%s)", Plain(c.LotSize), c.PieceRule)
		}
		t.rows = append(t.rows, []string{c.Class, fmt.Sprint(c.Segments), Quantity(c.Quantity), c.Unit, from, c.Matrix})
	}
	return t
}

// shareBand formats a share band as "median [p5-p95]" in percent.
func shareBand(b scenarios.Band) string {
	return fmt.Sprintf("%s [%s-%s]", Percent(b.P50), strings.TrimSuffix(Percent(b.P5), "%"), Percent(b.P95))
}

func indexBand(b scenarios.Band) string {
	return fmt.Sprintf("%s [%s-%s]", Index(b.P50), Index(b.P5), Index(b.P95))
}

func bandTable(r *scenarios.SimulationResult) table {
	t := table{header: []string{"CLASS", "YEAR", "GOOD", "FAIR", "POOR", "PLAN POOR", "AVG INDEX", "PLAN INDEX"},
		right: []bool{false, false, true, true, true, true, true, true}}
	if len(r.Years) == 0 {
		return t
	}
	for k := range r.Years[0].Classes {
		for n, y := range r.Years {
			c := y.Classes[k]
			name := ""
			if n == 0 {
				name = c.Class
			}
			t.rows = append(t.rows, []string{name, fmt.Sprint(y.Year), shareBand(c.Shares.Good), shareBand(c.Shares.Fair), shareBand(c.Shares.Poor),
				Percent(c.Shares.Poor.Plan), indexBand(c.AverageIndex), Index(c.AverageIndex.Plan)})
		}
	}
	for n, y := range r.Years {
		net := y.Network
		name := ""
		if n == 0 {
			name = "network"
		}
		avg, plan := "-", "-"
		if net.AverageIndex != nil {
			avg, plan = indexBand(*net.AverageIndex), Index(net.AverageIndex.Plan)
		}
		t.rows = append(t.rows, []string{name, fmt.Sprint(y.Year), shareBand(net.Shares.Good), shareBand(net.Shares.Fair), shareBand(net.Shares.Poor),
			Percent(net.Shares.Poor.Plan), avg, plan})
	}
	return t
}

func spendBandTable(r *scenarios.SimulationResult) table {
	t := table{header: []string{"YEAR", "BUDGET", "PLAN SPEND", "SIMULATED SPEND"}, right: []bool{false, true, true, true}}
	for _, y := range r.Years {
		b := y.Network.Spend
		budget := "no cap"
		if y.Budget != nil {
			budget = Money(*y.Budget)
		}
		t.rows = append(t.rows, []string{fmt.Sprint(y.Year), budget, Money(b.Plan), fmt.Sprintf("%s [%s-%s]", Money(b.P50), Money(b.P5), Money(b.P95))})
	}
	return t
}

func chanceTable(r *scenarios.SimulationResult) table {
	t := table{header: []string{"", "TARGET", "PLAN MEETS IT", "EVERY YEAR", "LOWEST YEAR"}, right: []bool{false, false, false, true, false}}
	for n, tc := range r.Targets {
		met := "yes"
		if !tc.MetByPlan {
			met = "NO"
		}
		lowest := ""
		if len(tc.Years) > 0 {
			lo := tc.Years[0]
			for _, y := range tc.Years {
				if y.Probability < lo.Probability {
					lo = y
				}
			}
			lowest = fmt.Sprintf("%s in %d", Chance(lo.Probability), lo.Year)
		}
		t.rows = append(t.rows, []string{fmt.Sprintf("T%d", n+1), tc.Target, met, Chance(tc.AllYears), lowest})
	}
	return t
}

func chanceByYearTable(r *scenarios.SimulationResult) table {
	t := table{header: []string{"YEAR"}, right: []bool{false}}
	years := map[int][]string{}
	var order []int
	for _, y := range r.Years {
		order = append(order, y.Year)
		years[y.Year] = make([]string, len(r.Targets))
	}
	for n, tc := range r.Targets {
		t.header = append(t.header, fmt.Sprintf("T%d", n+1))
		t.right = append(t.right, true)
		for _, y := range tc.Years {
			years[y.Year][n] = Chance(y.Probability)
		}
	}
	for _, y := range order {
		cells := years[y]
		any := false
		for _, c := range cells {
			any = any || c != ""
		}
		if any {
			t.rows = append(t.rows, append([]string{fmt.Sprint(y)}, cells...))
		}
	}
	return t
}

// Chance formats a probability as a whole percentage, keeping "<1%" and
// ">99%" apart from certainty.
func Chance(p float64) string {
	switch {
	case p == 0:
		return "0%"
	case p == 1:
		return "100%"
	case p < 0.01:
		return "<1%"
	case p > 0.99:
		return ">99%"
	}
	return fmt.Sprintf("%.0f%%", 100*p)
}
