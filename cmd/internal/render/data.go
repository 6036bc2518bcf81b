package render

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"

	"wearplan/scenarios"
)

// JSON writes the result as docs/json.md documents it (plan and forecast), with
// money rounded to cents.
func JSON(w io.Writer, r *scenarios.Result) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(RoundedMoney(r))
}

// CSVTables names the tables CSV can write, in the order files are written.
var CSVTables = []string{"work", "condition", "service", "spend", "targets", "value", "class-spend", "group-spend", "funding", "indicators", "remaining-life"}

// CSV writes one table of the result as CSV with a header row. Numbers are
// written in full precision without separators so spreadsheets read them
// as numbers; shares are fractions 0-1.
func CSV(w io.Writer, r *scenarios.Result, name string) error {
	cw := csv.NewWriter(w)
	var rows [][]string
	r = RoundedMoney(r)
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
	case "class-spend":
		rows = append(rows, []string{"year", "class", "budget_group", "spend_" + cur})
		group := classGroups(r)
		for _, y := range r.Years {
			for k, c := range y.Classes {
				rows = append(rows, []string{fmt.Sprint(y.Year), c.Class, group[k], optPlain(c.Spend)})
			}
		}
	case "group-spend":
		rows = append(rows, []string{"year", "budget_group", "spend_" + cur, "cap_" + cur})
		for _, y := range r.Years {
			for _, g := range y.Groups {
				cp := ""
				if !math.IsInf(g.Budget, 1) {
					cp = Plain(g.Budget)
				}
				rows = append(rows, []string{fmt.Sprint(y.Year), g.Name, Plain(g.Spend), cp})
			}
		}
	case "funding":
		rows = append(rows, fundingRows(r, cur)...)
	case "indicators":
		rows = append(rows, []string{"year", "class", "mean_remaining_life_years", "replacement_value_" + cur, "depreciated_cost_" + cur, "consumption_ratio", "consumption_" + cur, "renewal_spend_" + cur, "required_renewal_" + cur, "sustainability_ratio_first_years", "renewal_funding_ratio_first_years", "ratio_years"})
		if in := r.Indicators; in != nil {
			ratioYears := fmt.Sprint(in.RatioYears)
			for k, c := range in.Classes {
				rows = append(rows, []string{"today", c.Class, optPlain(c.Today.MeanRemainingLife), optPlain(r.Initial.Classes[k].ReplacementValue), optPlain(c.Today.DepreciatedCost), optPlain(c.Today.ConsumptionRatio), "", "", "", optPlain(c.SustainabilityRatio), optPlain(c.RenewalFundingRatio), ratioYears})
				for t, y := range c.Years {
					rows = append(rows, []string{fmt.Sprint(y.Year), c.Class, optPlain(y.MeanRemainingLife), optPlain(r.Years[t].Classes[k].ReplacementValue), optPlain(y.DepreciatedCost), optPlain(y.ConsumptionRatio), optPlain(y.Consumption), Plain(y.RenewalSpend), optPlain(y.RequiredRenewal), optPlain(c.SustainabilityRatio), optPlain(c.RenewalFundingRatio), ratioYears})
				}
			}
			n := in.Network
			rows = append(rows, []string{"today", "network", "", optPlain(r.Initial.Network.ReplacementValue), optPlain(n.Today.DepreciatedCost), optPlain(n.Today.ConsumptionRatio), "", "", "", optPlain(n.SustainabilityRatio), optPlain(n.RenewalFundingRatio), ratioYears})
			for t, y := range n.Years {
				rows = append(rows, []string{fmt.Sprint(y.Year), "network", "", optPlain(r.Years[t].Network.ReplacementValue), optPlain(y.DepreciatedCost), optPlain(y.ConsumptionRatio), optPlain(y.Consumption), Plain(y.RenewalSpend), optPlain(y.RequiredRenewal), optPlain(n.SustainabilityRatio), optPlain(n.RenewalFundingRatio), ratioYears})
			}
		}
	case "remaining-life":
		rows = append(rows, []string{"class", "state", "remaining_life_years", "renewal_treatments"})
		if in := r.Indicators; in != nil {
			for _, c := range in.Classes {
				for _, sy := range c.RemainingLife {
					rows = append(rows, []string{c.Class, sy.State, Plain(sy.Years), strings.Join(c.RenewalTreatments, "; ")})
				}
			}
		}
	default:
		return fmt.Errorf("unknown table %q; choose one of %s", name, strings.Join(CSVTables, ", "))
	}
	if err := cw.WriteAll(sheetSafe(rows)); err != nil {
		return err
	}
	return cw.Error()
}

// classGroups names each class's budget group ("" for none; groups joined
// by "; " for a class in several).
func classGroups(r *scenarios.Result) []string {
	out := make([]string, len(r.Initial.Classes))
	for _, g := range r.GroupClasses {
		for _, name := range g.Classes {
			for k, c := range r.Initial.Classes {
				if c.Class == name {
					if out[k] != "" {
						out[k] += "; "
					}
					out[k] += g.Name
				}
			}
		}
	}
	return out
}

// fundingRows are the funding answers as rows of item, target, year,
// budget and amount: the level budgets, the extra money by year and budget
// with its total and present value, the money per missed target, and the
// routine cost.
func fundingRows(r *scenarios.Result, cur string) [][]string {
	rows := [][]string{{"item", "target", "year", "budget", "amount_" + cur}}
	add := func(item, target, year, budget string, v *float64) {
		if v != nil {
			rows = append(rows, []string{item, target, year, budget, Plain(*v)})
		}
	}
	if f := r.Funding; f != nil {
		add("level_budget_meeting_targets", "", "", "network", f.LevelBudget)
		add("level_budget_holding_condition", "", "", "network", f.HoldBudget)
		for _, ym := range f.ExtraMoney {
			add("extra_money", "", fmt.Sprint(ym.Year), "network", &ym.Amount)
		}
		for _, g := range f.ExtraGroups {
			for _, ym := range g.Years {
				add("extra_money", "", fmt.Sprint(ym.Year), g.Name, &ym.Amount)
			}
		}
		add("extra_money_total", "", "", "", f.ExtraTotal)
		add("extra_money_present_value", "", "", "", f.ExtraPresentValue)
		for _, tm := range f.Targets {
			if tm.Total == nil {
				rows = append(rows, []string{"target_no_money_closes", tm.Target, "", "", ""})
				continue
			}
			add("target_money_total", tm.Target, "", "", tm.Total)
			add("target_money_present_value", tm.Target, "", "", tm.PresentValue)
		}
	}
	add("routine_cost", "", "", "", r.RoutineCost)
	add("routine_cost_present_value", "", "", "", r.RoutinePresentValue)
	return rows
}
