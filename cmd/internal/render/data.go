package render

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"wearplan/scenarios"
)

// JSON writes the result as docs/json.md documents it (plan and forecast).
func JSON(w io.Writer, r *scenarios.Result) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(r)
}

// CSVTables names the tables CSV can write, in the order files are written.
var CSVTables = []string{"work", "condition", "service", "spend", "targets", "value"}

// CSV writes one table of the result as CSV with a header row. Numbers are
// written in full precision without separators so spreadsheets read them
// as numbers; shares are fractions 0-1.
func CSV(w io.Writer, r *scenarios.Result, name string) error {
	cw := csv.NewWriter(w)
	var rows [][]string
	cur := strings.ToLower(currency(r))
	switch name {
	case "work":
		rows = append(rows, []string{"year", "class", "treatment", "state", "quantity", "unit", "cost_" + cur})
		for _, y := range r.Years {
			for _, c := range y.Classes {
				for _, wk := range c.Work {
					rows = append(rows, []string{fmt.Sprint(y.Year), c.Class, wk.Treatment, wk.State, Plain(wk.Quantity), c.Unit, Plain(wk.Cost)})
				}
			}
		}
	case "condition":
		rows = append(rows, []string{"year", "class", "state", "quantity", "unit"})
		add := func(year string, cs []scenarios.ClassCondition) {
			for _, c := range cs {
				for _, s := range c.States {
					rows = append(rows, []string{year, c.Class, s.State, Plain(s.Quantity), c.Unit})
				}
			}
		}
		add("today", r.Initial.Classes)
		for _, y := range r.Years {
			add(fmt.Sprint(y.Year), y.Classes)
		}
	case "service":
		rows = append(rows, []string{"year", "class", "good_share", "fair_share", "poor_share", "average_index", "score"})
		add := func(year string, cs []scenarios.ClassCondition, n scenarios.NetworkCondition) {
			for _, c := range cs {
				rows = append(rows, []string{year, c.Class, Plain(c.Shares.Good), Plain(c.Shares.Fair), Plain(c.Shares.Poor), Plain(c.AverageIndex), Plain(c.Score)})
			}
			avg := ""
			if n.AverageIndex != nil {
				avg = Plain(*n.AverageIndex)
			}
			rows = append(rows, []string{year, "network", Plain(n.Shares.Good), Plain(n.Shares.Fair), Plain(n.Shares.Poor), avg, Plain(n.Score)})
		}
		add("today", r.Initial.Classes, r.Initial.Network)
		for _, y := range r.Years {
			add(fmt.Sprint(y.Year), y.Classes, y.Network)
		}
	case "spend":
		rows = append(rows, []string{"year", "spend_" + cur, "budget_" + cur})
		for _, y := range r.Years {
			b := ""
			if y.Budget != nil {
				b = Plain(*y.Budget)
			}
			rows = append(rows, []string{fmt.Sprint(y.Year), Plain(y.Spend), b})
		}
	case "targets":
		rows = append(rows, []string{"target", "met", "worst_year", "worst_value", "limit", "shortfall_year", "shortfall"})
		for _, o := range r.Targets {
			base := []string{o.Target, fmt.Sprint(o.Met), fmt.Sprint(o.WorstYear), Plain(o.WorstValue), Plain(o.Limit)}
			if len(o.Shortfalls) == 0 {
				rows = append(rows, append(base, "", ""))
			}
			for _, s := range o.Shortfalls {
				rows = append(rows, append(append([]string(nil), base...), fmt.Sprint(s.Year), Plain(s.Amount)))
			}
		}
	case "value":
		rows = append(rows, []string{"year", "class", "replacement_value_" + cur, "backlog_" + cur})
		opt := func(v *float64) string {
			if v == nil {
				return ""
			}
			return Plain(*v)
		}
		add := func(year string, cs []scenarios.ClassCondition, n scenarios.NetworkCondition) {
			for _, c := range cs {
				rows = append(rows, []string{year, c.Class, opt(c.ReplacementValue), opt(c.Backlog)})
			}
			rows = append(rows, []string{year, "network", opt(n.ReplacementValue), opt(n.Backlog)})
		}
		add("today", r.Initial.Classes, r.Initial.Network)
		for _, y := range r.Years {
			add(fmt.Sprint(y.Year), y.Classes, y.Network)
		}
	default:
		return fmt.Errorf("unknown table %q; choose one of %s", name, strings.Join(CSVTables, ", "))
	}
	if err := cw.WriteAll(rows); err != nil {
		return err
	}
	return cw.Error()
}
