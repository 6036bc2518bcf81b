package scenarios

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// maxAmount bounds every amount the plan derives from the file: a class's
// total quantity, its replacement value, a treatment's cost for the whole
// class at the last year's prices, routine costs, weights and budget
// totals. lp_solve reads 1e30 as infinity, and a plan adds up to about a
// million such amounts (100 years, thousands of class and treatment
// terms), so each stays below 1e24; numbers this large are mistakes of
// unit (cents for currency units, m2 for km2) or of typing, and would
// otherwise surface as NaN weights far from the line that caused them.
const maxAmount = 1e24

// checkAmounts reports derived amounts that are not finite or too large,
// each at the line and field it comes from.
func checkAmounts(sc *Scenario, f *fileScenario, catalogue map[string]*catalogueEntry, is *issues) {
	bad, say := tooLarge, amountText
	// Prices grow by the escalation over the horizon; the last year's are
	// the highest when it is positive.
	growth := 1.0
	if sc.Horizon > 0 {
		growth = math.Max(1, math.Pow(1+sc.Escalation, float64(sc.Horizon-1)))
	}
	network, weights, classBad := 0.0, 0.0, false
	// A class split by family (families.go) is several classes of the
	// scenario written as one in the file.
	written := map[string]int{}
	for k := range f.Classes {
		if name := strings.TrimSpace(f.Classes[k].Name); name != "" {
			if _, dup := written[name]; !dup {
				written[name] = k
			}
		}
	}
	for k := range sc.Classes {
		c := &sc.Classes[k]
		name := c.Name
		if c.Parent != "" {
			name = c.Parent
		}
		j, ok := written[name]
		if c.Scale == nil || !ok {
			continue
		}
		fc := &f.Classes[j]
		field := fmt.Sprintf("classes[%d] (%s)", j, c.Name)
		total := c.Total()
		if bad(total) {
			line, key := fc.Lines.of("inventory"), ".inventory"
			if fc.Inventory == nil {
				line, key = fc.Lines.of("inventory_csv"), ".inventory_csv"
				if fc.InventoryCSV == nil {
					line, key = f.Lines.of("inventory_csv"), ""
				}
			}
			is.add(line, field+key, "the class's quantities add up to %s; quantities must add up to less than %g: check the unit", say(total), maxAmount)
			continue
		}
		value := c.ReplacementCost * total * growth
		if bad(value) {
			classBad = true
			is.add(fc.Lines.of("replacement_cost"), field+".replacement_cost", "%s per %s times the class's %s %s (at the last year's prices) is %s; a replacement value must be below %g: check the unit", figure(c.ReplacementCost), c.Unit, figure(total), c.Unit, say(value), maxAmount)
		}
		network += value
		if fc.Weight != nil {
			weights += c.Weight // a family's share of the weight written
		}
		for _, t := range c.Treatments {
			for _, i := range t.Applies {
				cost := t.Cost[i] * total * growth
				if !bad(cost) {
					continue
				}
				line, tfield := fc.Lines.of("treatments"), field+".treatments"
				if ce := catalogue[t.Name]; ce != nil {
					line, tfield = ce.ft.Lines.of("cost"), fmt.Sprintf("treatments[%d] (%s).cost", ce.index, t.Name)
				}
				is.add(line, tfield, "%s per %s for all %s %s of class %q (at the last year's prices) is %s; a treatment's cost must stay below %g: check the unit", figure(t.Cost[i]), c.Unit, figure(total), c.Unit, c.Name, say(cost), maxAmount)
				break
			}
		}
		for i, r := range c.Routine {
			if cost := r * total * growth; bad(cost) {
				is.add(fc.Lines.of("routine_cost"), field+".routine_cost."+c.Scale.States[i].Name, "%s per %s for all %s %s (at the last year's prices) is %s; a routine cost must stay below %g: check the unit", figure(r), c.Unit, figure(total), c.Unit, say(cost), maxAmount)
				break
			}
		}
	}
	if bad(network) && !classBad {
		is.add(f.Lines.of("classes"), "classes", "the classes' replacement values add up to %s; the network's value must be below %g: check the units of quantities and replacement costs", say(network), maxAmount)
	}
	if bad(weights) {
		is.add(f.Lines.of("classes"), "classes", "the classes' weights add up to %s; give weights below %g (only their ratios matter)", say(weights), maxAmount)
	}
	if b := f.Budget; b != nil {
		if b.Yearly != nil {
			checkBudgetTotal(sc.Budget, b.Yearly.Line, "budget.yearly", is)
		}
		for i, g := range sc.BudgetGroups {
			if i < len(b.Groups) && b.Groups[i].Yearly != nil {
				checkBudgetTotal(g.Yearly, b.Groups[i].Yearly.Line, fmt.Sprintf("budget.groups[%d] (%s).yearly", i, g.Name), is)
			}
		}
	}
}

// tooLarge says whether a derived amount is not finite or past maxAmount.
func tooLarge(v float64) bool { return math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) >= maxAmount }

// amountText writes an amount that may not be finite.
func amountText(v float64) string {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return "more than a floating-point number holds"
	}
	return fmt.Sprintf("%.3g", v)
}

// figure writes a number from the file, in exponent form when large.
func figure(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// checkBudgetTotal reports a budget whose sum over the horizon (what
// carry-over can gather) is not finite or too large.
func checkBudgetTotal(yearly []float64, line int, field string, is *issues) {
	sum := 0.0
	for _, v := range yearly {
		sum += v
	}
	if tooLarge(sum) {
		is.add(line, field, "the yearly amounts add up to %s over the horizon; budgets must add up to less than %g: check the unit (currency units, not cents)", amountText(sum), maxAmount)
	}
}
