package render

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"strings"

	"wearplan/scenarios"
)

// FitCSVTables names the tables of a fit that CSV can write.
var FitCSVTables = []string{"matrix", "states", "fit", "condition", "data", "counts", "families", "homogeneity", "covariates", "at"}

// FitJSON writes a fit result as JSON: the fit file's content.
func FitJSON(w io.Writer, r *scenarios.FitResult) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(r)
}

var methodWords = map[string]string{
	scenarios.MethodCounting:     "counting pairs of inspections one year apart (Anderson and Goodman, 1957)",
	scenarios.MethodInterval:     "maximum likelihood over pairs of any interval, P^years (panel data, Kalbfleisch and Lawless, 1985)",
	scenarios.MethodYearsInState: "expected years in each state (judgement)",
}

func optNum(v *float64, f func(float64) string) string {
	if v == nil {
		return "-"
	}
	return f(*v)
}

func prob(v float64) string  { return strconv.FormatFloat(v, 'f', 4, 64) }
func years(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }

func count(v int) string { return thousands(float64(v), 0) }

// fitMatrixTable is the matrix with state names, 4 decimals.
func fitMatrixTable(c *scenarios.FitClass) table {
	t := table{header: append([]string{"FROM \\ TO"}, c.States...), right: []bool{false}}
	for range c.States {
		t.right = append(t.right, true)
	}
	for i, row := range c.Deterioration.Matrix {
		cells := []string{c.States[i]}
		for _, v := range row {
			if v == 0 {
				cells = append(cells, "0")
				continue
			}
			cells = append(cells, prob(v))
		}
		t.rows = append(t.rows, cells)
	}
	return t
}

func interval(lo, hi *float64, f func(float64) string) string {
	if lo == nil || hi == nil {
		return "-"
	}
	return f(*lo) + " - " + f(*hi)
}

func fitStateTable(c *scenarios.FitClass) table {
	t := table{
		header: []string{"STATE", "PAIRS", "STAY", "95% INTERVAL", "YEARS IN STATE", "95% INTERVAL", "YEARS TO WORST", "SD"},
		right:  []bool{false, true, true, true, true, true, true, true},
	}
	for _, s := range c.PerState {
		pairs := count(s.Pairs)
		if c.Data == nil {
			pairs = "-"
		}
		t.rows = append(t.rows, []string{
			s.State, pairs, prob(s.Stay), interval(s.StayLow, s.StayHigh, prob),
			optNum(s.YearsInState, years), interval(s.YearsInStateLow, s.YearsInStateHigh, years),
			optNum(s.YearsToWorst, years), optNum(s.YearsToWorstSD, years),
		})
	}
	return t
}

const conditionCaveat = "Assets leave this comparison at their first recorded work, which usually goes to assets in poor " +
	"condition; when much work is recorded the observed mean drifts above the prediction from the first inspection " +
	"even if the matrix is right. The prediction from the previous inspection does not drift that way."

func fitConditionTable(c *scenarios.FitClass) table {
	t := table{header: []string{"YEARS ON", "READINGS", "OBSERVED", "FROM FIRST", "DIFFERENCE", "FROM PREVIOUS", "DIFFERENCE"}, right: []bool{true, true, true, true, true, true, true}}
	for _, p := range c.MeanCondition {
		t.rows = append(t.rows, []string{fmt.Sprint(p.Years), count(p.Readings), Index(p.Observed), Index(p.FromFirst), Index(p.Observed - p.FromFirst), Index(p.FromPrevious), Index(p.Observed - p.FromPrevious)})
	}
	return t
}

// dataSteps lists the data preparation counts in order.
func dataSteps(d *scenarios.FitData) [][2]string {
	kept := "excluded"
	if d.ImprovedKept {
		kept = "kept"
	}
	steps := [][2]string{
		{"rows read for the class", count(d.Rows)},
		{"duplicate inspections dropped", count(d.Duplicates)},
		{"inspections with conflicting conditions on one date dropped", count(d.Conflicts)},
		{"inspections listed out of date order (sorted)", count(d.OutOfOrder)},
		{"assets", count(d.Assets)},
		{"inspections", count(d.Inspections)},
		{"consecutive pairs", count(d.Pairs)},
		{"pairs with work between (excluded)", count(d.WithWork)},
		{"pairs under half a year apart (excluded)", count(d.TooClose)},
		{"pairs over 50 years apart (excluded)", count(d.TooFar)},
		{"pairs improving without recorded work (" + kept + ")", count(d.Improved)},
		{"pairs dropping more states than years (excluded, one-step)", count(d.Impossible)},
		{"pairs used", count(d.Used)},
	}
	for _, y := range d.ByYears {
		steps = append(steps, [2]string{fmt.Sprintf("  of which %d year(s) apart", y.Years), count(y.Pairs)})
	}
	steps = append(steps, [2]string{"pairs the method uses", count(d.UsedByMethod)})
	return steps
}

func gofSentence(g *scenarios.FitTest) string {
	if g.DF == 0 {
		return fmt.Sprintf("chi-square %.2f on 0 degrees of freedom: %s", g.Statistic, g.Note)
	}
	return fmt.Sprintf("chi-square %.2f on %d degrees of freedom (%d rows, %d cells, %s pairs), p = %s: %s",
		g.Statistic, g.DF, g.Rows, g.Cells, count(g.Pairs), pvalue(*g.PValue), g.Note)
}

// familyStayTable compares the families' staying probabilities and years
// in state with the class's, state by state.
func familyStayTable(c *scenarios.FitClass) table {
	t := table{header: []string{"STATE"}, right: []bool{false}}
	for _, f := range c.Families {
		t.header = append(t.header, f.Family)
		t.right = append(t.right, true)
	}
	t.header = append(t.header, "WHOLE CLASS")
	t.right = append(t.right, true)
	pairs := []string{"pairs used"}
	for _, f := range c.Families {
		pairs = append(pairs, count(f.Data.UsedByMethod))
	}
	t.rows = append(t.rows, append(pairs, count(c.Data.UsedByMethod)))
	cell := func(st scenarios.FitState) string {
		if st.YearsInState == nil {
			return prob(st.Stay)
		}
		return fmt.Sprintf("%s (%s y)", prob(st.Stay), years(*st.YearsInState))
	}
	for i, st := range c.PerState[:len(c.PerState)-1] {
		row := []string{st.State}
		for _, f := range c.Families {
			row = append(row, cell(f.PerState[i]))
		}
		t.rows = append(t.rows, append(row, cell(st)))
	}
	return t
}

func homogeneitySentence(c *scenarios.FitClass) string {
	s := homogeneityText(c, c.Homogeneity)
	if c.MergedHomogeneity != nil {
		s += ". After merging, " + homogeneityText(c, c.MergedHomogeneity)
	}
	return s
}

func homogeneityText(c *scenarios.FitClass, h *scenarios.FitHomogeneity) string {
	if h == nil {
		return fmt.Sprintf("one family only (%s): nothing to compare", c.Families[0].Family)
	}
	if h.LikelihoodRatio == nil {
		return h.Note
	}
	s := fmt.Sprintf("likelihood-ratio chi-square %.2f on %d degrees of freedom, p %s", h.LikelihoodRatio.Statistic, h.LikelihoodRatio.DF, pSentence(*h.LikelihoodRatio.PValue))
	if ag := h.AndersonGoodman; ag != nil {
		s += fmt.Sprintf(" (Anderson and Goodman's chi-square %.2f, p %s)", ag.Statistic, pSentence(*ag.PValue))
	}
	return s + ": " + h.Note
}

func coefficientNames(cv *scenarios.FitCovariates) []string {
	var out []string
	for _, c := range cv.Coefficients {
		out = append(out, c.Covariate)
	}
	return out
}

// membersNote names the values a merged family covers.
func membersNote(f *scenarios.FitClass, c *scenarios.FitClass) string {
	if len(f.Members) < 2 {
		return ""
	}
	return fmt.Sprintf(" (%s values %s, merged)", strings.Join(c.By, "/"), strings.Join(f.Members, ", "))
}

func mergeSentence(m scenarios.FitMerge) string {
	return fmt.Sprintf("%s and %s into %s (likelihood-ratio chi-square %.2f on %d degrees of freedom, p %s)",
		m.Merged[0], m.Merged[1], m.Into, m.Test.Statistic, m.Test.DF, pSentence(*m.Test.PValue))
}

// pSentence writes "= 0.0123" or "< 0.0001".
func pSentence(p float64) string {
	if p < 0.0001 {
		return "< 0.0001"
	}
	return "= " + strconv.FormatFloat(p, 'f', 4, 64)
}

// coefficientTable lists a covariate model's coefficients.
func coefficientTable(cv *scenarios.FitCovariates) table {
	t := table{header: []string{"COVARIATE", "MEAN", "SD", "COEFFICIENT", "STANDARD ERROR", "Z", "P"}, right: []bool{false, true, true, true, true, true, true}}
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }
	for _, c := range cv.Coefficients {
		t.rows = append(t.rows, []string{c.Covariate, g(c.Mean), g(c.SD), g(c.Coefficient), g(c.StandardError), strconv.FormatFloat(c.Z, 'f', 2, 64), pvalue(c.PValue)})
	}
	return t
}

// atStayTable compares the staying probability (years in state) of the
// covariate model's matrices.
func atStayTable(c *scenarios.FitClass, cv *scenarios.FitCovariates) table {
	t := table{header: []string{"STATE"}, right: []bool{false}}
	for _, a := range cv.At {
		name := a.Name
		if a.Extrapolated {
			name += " *"
		}
		t.header = append(t.header, name)
		t.right = append(t.right, true)
	}
	for i := 0; i+1 < len(c.States); i++ {
		row := []string{c.States[i]}
		for _, a := range cv.At {
			cell := prob(a.Deterioration.Matrix[i][i])
			if y := a.YearsInState[i]; y != nil {
				cell += fmt.Sprintf(" (%s y)", years(*y))
			}
			row = append(row, cell)
		}
		t.rows = append(t.rows, row)
	}
	return t
}

func covariateSentence(cv *scenarios.FitCovariates) string {
	link := "ordered logit"
	if cv.Link == "probit" {
		link = "ordered probit"
	}
	return fmt.Sprintf("%s model of the yearly drop in state (Madanat, Mishalani and Wan Ibrahim, 1995), %s pairs; a positive coefficient means faster wear as the covariate grows. Likelihood ratio against the matrix without covariates: %.2f on %d degrees of freedom, p %s: %s",
		link, count(cv.Pairs), cv.LikelihoodRatio.Statistic, cv.LikelihoodRatio.DF, pSentence(*cv.LikelihoodRatio.PValue), cv.Note)
}

// extrapolationNote explains the asterisk of extrapolated columns.
func extrapolationNote(cv *scenarios.FitCovariates) string {
	for _, a := range cv.At {
		if a.Extrapolated {
			return "* a chosen value lies outside the values of the pairs fitted: the matrix there is an extrapolation, not an estimate\n"
		}
	}
	return ""
}

// covariateShort is the covariate sentence for a family.
func covariateShort(cv *scenarios.FitCovariates) string {
	return fmt.Sprintf("%s pairs; likelihood ratio against its matrix without covariates %.2f on %d degrees of freedom, p %s",
		count(cv.Pairs), cv.LikelihoodRatio.Statistic, cv.LikelihoodRatio.DF, pSentence(*cv.LikelihoodRatio.PValue))
}

func atNote(cv *scenarios.FitCovariates) string {
	var means []string
	for _, v := range cv.At[0].Values {
		if v.AtMean {
			means = append(means, fmt.Sprintf("%s %s", v.Covariate, strconv.FormatFloat(v.Value, 'g', 6, 64)))
		}
	}
	if len(means) == 0 {
		return ""
	}
	return " (at the mean of the others: " + strings.Join(means, ", ") + ")"
}

// optimizerSentence says how the interval method's maximisation ended.
func optimizerSentence(o *scenarios.FitOptimizer) string {
	starts := fmt.Sprintf("%d of %d starts reached it", o.StartsAtBest, o.Starts)
	if o.StartsAtBest == o.Starts {
		starts = fmt.Sprintf("all %d starts reached it", o.Starts)
	}
	return fmt.Sprintf("Optimizer: log-likelihood %.2f, a maximum (%s; no move of probability between entries of a row "+
		"raises it: Karush-Kuhn-Tucker residual %.1e per pair, tolerance %.0e)", o.LogLikelihood, starts, o.KKT.DualInfeasibility, o.KKT.Tolerance)
}

func pvalue(p float64) string {
	if p < 0.0001 {
		return "< 0.0001"
	}
	return strconv.FormatFloat(p, 'f', 4, 64)
}

func bootstrapSentence(r *scenarios.FitResult, c *scenarios.FitClass) string {
	if c.Bootstrap == nil {
		return "no bootstrap (--bootstrap 0 or a matrix from judgement): no intervals"
	}
	return fmt.Sprintf("95%% percentile intervals from %s bootstrap resamples of assets (seed %d)", count(len(c.Bootstrap.Replicates)), c.Bootstrap.Seed)
}

// FitText writes a fit result as terminal tables.
func FitText(w io.Writer, r *scenarios.FitResult) error {
	ew := &errWriter{w: w}
	ew.printf("Deterioration fitted from %s\n", r.Source)
	ew.printf("Method: %s\n", methodWords[r.Method])
	if r.Rows > 0 {
		ew.printf("Rows read: %s", count(r.Rows))
		if r.Skipped > 0 {
			ew.printf("; %s of other classes skipped", count(r.Skipped))
		}
		if r.BadRows > 0 {
			ew.printf("; %s unreadable rows left out", count(r.BadRows))
		}
		ew.printf("\n")
	}
	for k := range r.Classes {
		c := &r.Classes[k]
		ew.printf("\n== %s (scale %s, %d states) ==\n", c.Class, c.Scale, len(c.States))
		if c.Data != nil {
			ew.printf("\nData preparation\n")
			t := table{header: []string{"STEP", "COUNT"}, right: []bool{false, true}}
			for _, s := range dataSteps(c.Data) {
				t.rows = append(t.rows, []string{s[0], s[1]})
			}
			tabulate(ew, t)
		}
		ew.printf("\nOne-year transition matrix (row: state at an inspection; column: state a year later)\n")
		tabulate(ew, fitMatrixTable(c))
		ew.printf("\nPer state: %s\n", bootstrapSentence(r, c))
		tabulate(ew, fitStateTable(c))
		if c.Selection != nil && c.Selection.Warning != "" {
			ew.printf("%s\n", wrap("Caution: pairs left out for work may make these staying probabilities too high; see the warning at the end, with the figures.", 100))
		}
		if c.GoodnessOfFit != nil {
			ew.printf("\nGoodness of fit: %s\n", wrap(gofSentence(c.GoodnessOfFit), 100))
		}
		if c.Optimizer != nil {
			ew.printf("%s\n", wrap(optimizerSentence(c.Optimizer), 100))
		}
		if len(c.MeanCondition) > 0 {
			ew.printf("\nMean condition index by years since each asset's first inspection (before any recorded work),\n")
			ew.printf("observed and predicted from each asset's first and from its previous inspection\n")
			tabulate(ew, fitConditionTable(c))
			ew.printf("%s\n", wrap(conditionCaveat, 100))
		}
		for _, n := range c.Notes {
			ew.printf("\nNote: %s\n", wrap(n, 100))
		}
		block, err := c.DeteriorationBlock(4)
		if err != nil {
			return err
		}
		ew.printf("\nPaste into the scenario's class %s (or use deterioration: {fit: FILE} with --save FILE):\n%s", c.Class, block)
		if cv := c.Covariates; cv != nil {
			ew.printf("\n-- %s with covariates (%s) --\n\n%s\n", c.Class, strings.Join(coefficientNames(cv), ", "), wrap(covariateSentence(cv), 100))
			tabulate(ew, coefficientTable(cv))
			ew.printf("\n%s\n", wrap(fmt.Sprintf("Staying probability (years in state) at chosen values%s; use one with deterioration: {fit: FILE, fit_class: %s, at: NAME}", atNote(cv), c.Class), 100))
			tabulate(ew, atStayTable(c, cv))
			ew.printf("%s", extrapolationNote(cv))
		}
		if len(c.Families) > 0 {
			ew.printf("\n-- %s by family (%s) --\n", c.Class, strings.Join(c.By, ", "))
			ew.printf("\n%s\n", wrap("Do the families differ? "+homogeneitySentence(c), 100))
			for _, m := range c.Merges {
				ew.printf("%s\n", wrap("Merged "+mergeSentence(m), 100))
			}
			ew.printf("\nStaying probability (years in state) by family\n")
			tabulate(ew, familyStayTable(c))
			for k := range c.Families {
				f := &c.Families[k]
				f.States = c.States
				ew.printf("\n%s\n", wrap(fmt.Sprintf("Family %s%s: one-year transition matrix; use with deterioration: {fit: FILE, fit_class: %s, family: %s}",
					f.Family, membersNote(f, c), c.Class, f.Family), 100))
				tabulate(ew, fitMatrixTable(f))
				if cv := f.Covariates; cv != nil {
					ew.printf("%s\n", wrap(fmt.Sprintf("Family %s with covariates: %s", f.Family, covariateShort(cv)), 100))
					tabulate(ew, coefficientTable(cv))
					ew.printf("%s\n", wrap(fmt.Sprintf("At chosen values%s; use one with deterioration: {fit: FILE, fit_class: %s, family: %s, at: NAME}", atNote(cv), c.Class, f.Family), 100))
					tabulate(ew, atStayTable(f, cv))
					ew.printf("%s", extrapolationNote(cv))
				}
				f.States = nil
				for _, n := range f.Notes {
					ew.printf("Note: %s\n", wrap(n, 100))
				}
			}
		}
	}
	for _, warn := range r.Warnings {
		ew.printf("\nWarning: %s\n", wrap(warn, 100))
	}
	ew.printf("\n%s\n", wrap(r.Caution, 100))
	return ew.err
}

func mdTable(w *errWriter, t table) {
	esc := func(s string) string { return strings.ReplaceAll(s, "|", "\\|") }
	cells := make([]string, len(t.header))
	for i, h := range t.header {
		cells[i] = esc(h)
	}
	w.printf("| %s |\n", strings.Join(cells, " | "))
	for i := range t.header {
		if t.right[i] {
			cells[i] = "---:"
		} else {
			cells[i] = "---"
		}
	}
	w.printf("|%s|\n", strings.Join(cells, "|"))
	for _, row := range t.rows {
		for i, c := range row {
			cells[i] = esc(c)
		}
		w.printf("| %s |\n", strings.Join(cells, " | "))
	}
}

// FitMarkdown writes a fit result as a Markdown report.
func FitMarkdown(w io.Writer, r *scenarios.FitResult) error {
	ew := &errWriter{w: w}
	ew.printf("# Deterioration fitted from %s\n\n", r.Source)
	ew.printf("Method: %s.\n", methodWords[r.Method])
	for k := range r.Classes {
		c := &r.Classes[k]
		ew.printf("\n## %s\n\nScale %s, %d states.\n", c.Class, c.Scale, len(c.States))
		if c.Data != nil {
			ew.printf("\n### Data preparation\n\n")
			t := table{header: []string{"Step", "Count"}, right: []bool{false, true}}
			for _, s := range dataSteps(c.Data) {
				t.rows = append(t.rows, []string{strings.TrimSpace(s[0]), s[1]})
			}
			mdTable(ew, t)
		}
		ew.printf("\n### One-year transition matrix\n\nRow: state at an inspection; column: state a year later.\n\n")
		mdTable(ew, fitMatrixTable(c))
		ew.printf("\n### Per state\n\n%s.\n\n", bootstrapSentence(r, c))
		mdTable(ew, fitStateTable(c))
		if c.GoodnessOfFit != nil {
			ew.printf("\n### Goodness of fit\n\n%s.\n", gofSentence(c.GoodnessOfFit))
		}
		if len(c.MeanCondition) > 0 {
			ew.printf("\n### Mean condition index by years since first inspection\n\n")
			ew.printf("Observed, and predicted from each asset's first and from its previous inspection (readings before any recorded work).\n\n")
			mdTable(ew, fitConditionTable(c))
			ew.printf("\n%s\n", conditionCaveat)
		}
		if len(c.Notes) > 0 {
			ew.printf("\n### Notes\n\n")
			for _, n := range c.Notes {
				ew.printf("- %s\n", n)
			}
		}
		block, err := c.DeteriorationBlock(0)
		if err != nil {
			return err
		}
		ew.printf("\n### For the scenario\n\n```yaml\n%s```\n", block)
		if cv := c.Covariates; cv != nil {
			ew.printf("\n### With covariates (%s)\n\n%s.\n\n", strings.Join(coefficientNames(cv), ", "), covariateSentence(cv))
			mdTable(ew, coefficientTable(cv))
			ew.printf("\nStaying probability (years in state) at chosen values%s; use one with `deterioration: {fit: FILE, fit_class: %s, at: NAME}`.\n\n", atNote(cv), c.Class)
			mdTable(ew, atStayTable(c, cv))
			if n := extrapolationNote(cv); n != "" {
				ew.printf("\n%s", n)
			}
		}
		if len(c.Families) > 0 {
			ew.printf("\n### By family (%s)\n\n%s.\n", strings.Join(c.By, ", "), homogeneitySentence(c))
			for _, m := range c.Merges {
				ew.printf("\n- Merged %s\n", mergeSentence(m))
			}
			ew.printf("\nStaying probability (years in state) by family:\n\n")
			mdTable(ew, familyStayTable(c))
			for k := range c.Families {
				f := &c.Families[k]
				f.States = c.States
				ew.printf("\n#### Family %s\n\nUse with `deterioration: {fit: FILE, fit_class: %s, family: %s}`%s.\n\n",
					f.Family, c.Class, f.Family, membersNote(f, c))
				mdTable(ew, fitMatrixTable(f))
				if cv := f.Covariates; cv != nil {
					ew.printf("\nWith covariates: %s.\n\n", covariateShort(cv))
					mdTable(ew, coefficientTable(cv))
					ew.printf("\nAt chosen values%s; use one with `deterioration: {fit: FILE, fit_class: %s, family: %s, at: NAME}`.\n\n", atNote(cv), c.Class, f.Family)
					mdTable(ew, atStayTable(f, cv))
					if n := extrapolationNote(cv); n != "" {
						ew.printf("\n%s", n)
					}
				}
				f.States = nil
				for _, n := range f.Notes {
					ew.printf("\n- %s\n", n)
				}
			}
		}
	}
	if len(r.Warnings) > 0 {
		ew.printf("\n## Warnings\n\n")
		for _, warn := range r.Warnings {
			ew.printf("- %s\n", warn)
		}
	}
	ew.printf("\n---\n\n%s\n", r.Caution)
	return ew.err
}

// FitCSV writes one table of a fit result as CSV with a header row.
func FitCSV(w io.Writer, r *scenarios.FitResult, name string) error {
	cw := csv.NewWriter(w)
	var rows [][]string
	opt := func(v *float64) string {
		if v == nil {
			return ""
		}
		return Plain(*v)
	}
	switch name {
	case "matrix":
		rows = append(rows, []string{"class", "from_state", "to_state", "probability"})
		for _, c := range r.Classes {
			for i, row := range c.Deterioration.Matrix {
				for j, v := range row {
					rows = append(rows, []string{c.Class, c.States[i], c.States[j], Plain(v)})
				}
			}
		}
	case "states":
		rows = append(rows, []string{"class", "state", "pairs", "stay", "stay_low", "stay_high", "years_in_state", "years_in_state_low", "years_in_state_high", "years_to_worst", "years_to_worst_sd"})
		for _, c := range r.Classes {
			for _, s := range c.PerState {
				rows = append(rows, []string{c.Class, s.State, fmt.Sprint(s.Pairs), Plain(s.Stay), opt(s.StayLow), opt(s.StayHigh),
					opt(s.YearsInState), opt(s.YearsInStateLow), opt(s.YearsInStateHigh), opt(s.YearsToWorst), opt(s.YearsToWorstSD)})
			}
		}
	case "fit":
		rows = append(rows, []string{"class", "method", "chi_square", "degrees_of_freedom", "p_value", "rows", "cells", "pairs", "pooled"})
		for _, c := range r.Classes {
			if g := c.GoodnessOfFit; g != nil {
				rows = append(rows, []string{c.Class, c.Method, Plain(g.Statistic), fmt.Sprint(g.DF), opt(g.PValue), fmt.Sprint(g.Rows), fmt.Sprint(g.Cells), fmt.Sprint(g.Pairs), fmt.Sprint(g.Pooled)})
			}
		}
	case "condition":
		rows = append(rows, []string{"class", "years_since_first", "readings", "observed", "predicted_from_first", "predicted_from_previous"})
		for _, c := range r.Classes {
			for _, p := range c.MeanCondition {
				rows = append(rows, []string{c.Class, fmt.Sprint(p.Years), fmt.Sprint(p.Readings), Plain(p.Observed), Plain(p.FromFirst), Plain(p.FromPrevious)})
			}
		}
	case "data":
		rows = append(rows, []string{"class", "step", "count"})
		for _, c := range r.Classes {
			if c.Data == nil {
				continue
			}
			for _, s := range dataSteps(c.Data) {
				rows = append(rows, []string{c.Class, strings.TrimSpace(s[0]), strings.ReplaceAll(s[1], ",", "")})
			}
		}
	case "counts":
		rows = append(rows, []string{"class", "years", "from_state", "to_state", "pairs"})
		for _, c := range r.Classes {
			for _, fc := range c.Counts {
				for i, row := range fc.Rows {
					for j, v := range row {
						if v > 0 {
							rows = append(rows, []string{c.Class, fmt.Sprint(fc.Years), c.States[i], c.States[j], Plain(v)})
						}
					}
				}
			}
		}
	case "families":
		rows = append(rows, []string{"class", "family", "members", "from_state", "to_state", "probability"})
		for _, c := range r.Classes {
			for _, f := range c.Families {
				for i, row := range f.Deterioration.Matrix {
					for j, v := range row {
						rows = append(rows, []string{c.Class, f.Family, strings.Join(f.Members, "|"), c.States[i], c.States[j], Plain(v)})
					}
				}
			}
		}
	case "covariates":
		rows = append(rows, []string{"class", "family", "covariate", "mean", "standard_deviation", "coefficient", "standard_error", "z", "p_value", "likelihood_ratio", "degrees_of_freedom", "likelihood_ratio_p_value"})
		for _, c := range r.Classes {
			for _, g := range append([]scenarios.FitClass{c}, c.Families...) {
				cv := g.Covariates
				if cv == nil {
					continue
				}
				for _, k := range cv.Coefficients {
					rows = append(rows, []string{c.Class, g.Family, k.Covariate, Plain(k.Mean), Plain(k.SD), Plain(k.Coefficient), Plain(k.StandardError), Plain(k.Z), Plain(k.PValue),
						Plain(cv.LikelihoodRatio.Statistic), fmt.Sprint(cv.LikelihoodRatio.DF), opt(cv.LikelihoodRatio.PValue)})
				}
			}
		}
	case "at":
		rows = append(rows, []string{"class", "family", "at", "from_state", "to_state", "probability"})
		for _, c := range r.Classes {
			for _, g := range append([]scenarios.FitClass{c}, c.Families...) {
				if g.Covariates == nil {
					continue
				}
				for _, a := range g.Covariates.At {
					for i, row := range a.Deterioration.Matrix {
						for j, v := range row {
							rows = append(rows, []string{c.Class, g.Family, a.Name, c.States[i], c.States[j], Plain(v)})
						}
					}
				}
			}
		}
	case "homogeneity":
		rows = append(rows, []string{"class", "by", "families", "likelihood_ratio", "degrees_of_freedom", "p_value", "anderson_goodman", "anderson_goodman_p_value", "differ"})
		for _, c := range r.Classes {
			h := c.Homogeneity
			if h == nil {
				continue
			}
			row := []string{c.Class, strings.Join(c.By, "|"), fmt.Sprint(h.Families), "", "", "", "", "", fmt.Sprint(h.Differ)}
			if t := h.LikelihoodRatio; t != nil {
				row[3], row[4], row[5] = Plain(t.Statistic), fmt.Sprint(t.DF), opt(t.PValue)
			}
			if t := h.AndersonGoodman; t != nil {
				row[6], row[7] = Plain(t.Statistic), opt(t.PValue)
			}
			rows = append(rows, row)
		}
	default:
		return fmt.Errorf("unknown table %q; choose one of %s", name, strings.Join(FitCSVTables, ", "))
	}
	if err := cw.WriteAll(sheetSafe(rows)); err != nil {
		return err
	}
	return cw.Error()
}
