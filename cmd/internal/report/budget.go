package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// fundingView is a run's funding section: the words every output shares
// (render.FundingWords and render.ShortfallWords), the extra money by year
// and budget, and each missed target with the money that closes it.
type fundingView struct {
	Gap     string
	Missed  []string
	Words   []string
	Extra   *table
	Targets *table
}

func buildFunding(id string, r *scenarios.Result) *fundingView {
	v := &fundingView{Gap: render.FundingGap(r), Missed: render.ShortfallWords(r), Words: render.FundingWords(r)}
	cur := currencyOf(r)
	if f := r.Funding; f != nil && (len(f.ExtraMoney) > 0 || len(f.ExtraGroups) > 0) {
		t := table{ID: id + "-extra", Caption: "Extra money that meets every target at the least present value (" + cur + ", on top of the budget, at each year's prices)",
			Head: []string{"Year", "Budget", "Extra money"}, Num: []bool{false, false, true}}
		for _, ym := range f.ExtraMoney {
			t.add(strconv.Itoa(ym.Year), "network", render.Money(ym.Amount))
		}
		for _, g := range f.ExtraGroups {
			for _, ym := range g.Years {
				t.add(strconv.Itoa(ym.Year), "budget group "+g.Name, render.Money(ym.Amount))
			}
		}
		t.add("In all", "", render.Money(*f.ExtraTotal))
		t.add("Present value", "", render.Money(*f.ExtraPresentValue))
		v.Extra = &t
	}
	missed := 0
	for _, o := range r.Targets {
		if !o.Met {
			missed++
		}
	}
	if missed > 0 {
		t := table{ID: id + "-missed", Caption: "Targets missed: when, by how much, and the extra money that closes each (" + cur + ")",
			Head: []string{"Target", "Years missed", "Worst shortfall", "Extra money that closes it", "Its present value"}, Num: []bool{false, false, true, true, true}}
		withMoney := false
		for _, o := range r.Targets {
			if o.Met {
				continue
			}
			years, worst := "-", "-"
			if n := len(o.Shortfalls); n > 0 {
				years = strconv.Itoa(o.Shortfalls[0].Year)
				if n > 1 {
					years = fmt.Sprintf("%d-%d (%d years)", o.Shortfalls[0].Year, o.Shortfalls[n-1].Year, n)
				}
				worst = render.ShortfallAmount(o, render.WorstShortfall(o))
			}
			money, pv := "", ""
			if m := render.TargetMoney(r, o.Target); m != nil {
				withMoney = true
				money, pv = "no amount closes it", ""
				if m.Total != nil {
					money, pv = render.Money(*m.Total), render.Money(*m.PresentValue)
				}
			}
			t.add(o.Target, years, worst, money, pv)
		}
		if !withMoney {
			dropColumns(&t, 3, 4)
		}
		v.Targets = &t
	}
	return v
}

// dropColumns removes columns from a table (for columns nothing fills).
func dropColumns(t *table, cols ...int) {
	keep := func(i int) bool {
		for _, c := range cols {
			if c == i {
				return false
			}
		}
		return true
	}
	filter := func(cells []string) []string {
		var out []string
		for i, c := range cells {
			if keep(i) {
				out = append(out, c)
			}
		}
		return out
	}
	var num []bool
	for i, n := range t.Num {
		if keep(i) {
			num = append(num, n)
		}
	}
	t.Head, t.Num = filter(t.Head), num
	for i := range t.Rows {
		if !t.Rows[i].Group {
			t.Rows[i].Cells = filter(t.Rows[i].Cells)
		}
	}
}

// maxWideClasses is the most classes the spend-by-class table gives a
// column each; with more it lists a row per year and class, so that it
// keeps to the page.
const maxWideClasses = 6

// classSpendTable is each year's spend per class, in all, and against the
// network cap: a column per class, or with many classes a row per year and
// class.
func classSpendTable(id string, r *scenarios.Result) table {
	cur := currencyOf(r)
	t := table{ID: id, Caption: "Spend by class (" + cur + ", at each year's prices)", Head: []string{"Year"}, Num: []bool{false}}
	capped := false
	for _, y := range r.Years {
		capped = capped || y.Budget != nil
	}
	capOf := func(y scenarios.Year) string {
		if y.Budget == nil {
			return "no cap"
		}
		return render.Money(*y.Budget)
	}
	spendOf := func(c scenarios.ClassCondition) float64 {
		if c.Spend == nil {
			return 0
		}
		return *c.Spend
	}
	totals := make([]float64, len(r.Initial.Classes))
	if len(r.Initial.Classes) > maxWideClasses {
		t.Head = append(t.Head, "Class", "Spend")
		t.Num = append(t.Num, false, true)
		for _, y := range r.Years {
			all := "All classes"
			if capped {
				all += " (network cap " + capOf(y) + ")"
			}
			for k, c := range y.Classes {
				totals[k] += spendOf(c)
				t.add(strconv.Itoa(y.Year), c.Class, render.Money(spendOf(c)))
			}
			t.add(strconv.Itoa(y.Year), all, render.Money(y.Spend))
		}
		for k, c := range r.Initial.Classes {
			t.add("Total", c.Class, render.Money(totals[k]))
		}
		t.add("Total", "All classes", render.Money(r.TotalCost))
		t.Note = "Each year's classes add up to its \"All classes\" figure."
		return t
	}
	for _, c := range r.Initial.Classes {
		t.Head = append(t.Head, c.Class)
		t.Num = append(t.Num, true)
	}
	t.Head = append(t.Head, "All classes")
	t.Num = append(t.Num, true)
	if capped {
		t.Head = append(t.Head, "Network cap")
		t.Num = append(t.Num, true)
	}
	for _, y := range r.Years {
		cells := []string{strconv.Itoa(y.Year)}
		for k, c := range y.Classes {
			totals[k] += spendOf(c)
			cells = append(cells, render.Money(spendOf(c)))
		}
		cells = append(cells, render.Money(y.Spend))
		if capped {
			cells = append(cells, capOf(y))
		}
		t.add(cells...)
	}
	cells := []string{"Total"}
	for _, v := range totals {
		cells = append(cells, render.Money(v))
	}
	cells = append(cells, render.Money(r.TotalCost))
	if capped {
		cells = append(cells, "")
	}
	t.add(cells...)
	t.Note = "Each row's classes add up to its \"All classes\" figure."
	return t
}

// groupSpendTable is each year's spend of each budget group against its
// cap ("spend / cap" in one cell); nil without groups.
func groupSpendTable(id string, r *scenarios.Result) *table {
	if len(r.GroupClasses) == 0 || len(r.Years) == 0 || len(r.Years[0].Groups) == 0 {
		return nil
	}
	cur := currencyOf(r)
	t := table{ID: id, Caption: "Spend by budget group against its cap (spend / cap, " + cur + ", at each year's prices)", Head: []string{"Year"}, Num: []bool{false}}
	for _, g := range r.Years[0].Groups {
		t.Head = append(t.Head, g.Name)
		t.Num = append(t.Num, true)
	}
	totals := make([]float64, len(r.Years[0].Groups))
	for _, y := range r.Years {
		cells := []string{strconv.Itoa(y.Year)}
		for g, gs := range y.Groups {
			totals[g] += gs.Spend
			cells = append(cells, render.Money(gs.Spend)+" / "+capText(gs.Budget))
		}
		t.add(cells...)
	}
	cells := []string{"Total spend"}
	for _, v := range totals {
		cells = append(cells, render.Money(v))
	}
	t.add(cells...)
	var parts []string
	for _, g := range r.GroupClasses {
		parts = append(parts, g.Name+": "+strings.Join(g.Classes, ", "))
	}
	t.Note = "A budget group's spend is the sum of its classes' (" + strings.Join(parts, "; ") + ")."
	return &t
}

// classSpendCharts draws each year's spend stacked by class against the
// network cap, and for each budget group its classes against its cap.
func classSpendCharts(id string, r *scenarios.Result) ([]chart, error) {
	cur := currencyOf(r)
	classes := make([]string, len(r.Initial.Classes))
	for k, c := range r.Initial.Classes {
		classes[k] = c.Class
	}
	spendOf := func(ks []int) [][]float64 {
		v := make([][]float64, len(ks))
		for i, k := range ks {
			v[i] = make([]float64, len(r.Years))
			for t, y := range r.Years {
				if s := y.Classes[k].Spend; s != nil {
					v[i][t] = *s
				}
			}
		}
		return v
	}
	all := make([]int, len(classes))
	for k := range all {
		all[k] = k
	}
	caps := make([]float64, len(r.Years))
	for t, y := range r.Years {
		caps[t] = math.NaN()
		if y.Budget != nil {
			caps[t] = *y.Budget
		}
	}
	vals := spendOf(all)
	ch, err := stackedSpendChart(id+"-chart-class-spend", "Spend by class against the budget",
		"Treatment spend each year at that year's prices, stacked by class (the legend lists the classes from the top of the bars down), and the network budget cap (heavy rules). Every other class is hatched.",
		cur, r.StartYear, classes, all, len(classes), vals, caps, "Network cap")
	if err != nil {
		return nil, err
	}
	out := []chart{ch}
	for g, gc := range r.GroupClasses {
		var ks []int
		var names []string
		for _, name := range gc.Classes {
			for k, c := range classes {
				if c == name {
					ks, names = append(ks, k), append(names, c)
				}
			}
		}
		gcaps := make([]float64, len(r.Years))
		for t, y := range r.Years {
			gcaps[t] = math.NaN()
			if g < len(y.Groups) && !math.IsInf(y.Groups[g].Budget, 1) {
				gcaps[t] = y.Groups[g].Budget
			}
		}
		vals := spendOf(ks)
		ch, err := stackedSpendChart(fmt.Sprintf("%s-chart-group-spend-%d", id, g+1), "Budget group "+gc.Name+": spend by class against its cap",
			"Spend each year on the classes of budget group "+gc.Name+", stacked by class in the same fills as above, and the group's cap (heavy rules).",
			cur, r.StartYear, names, ks, len(classes), vals, gcaps, "Group cap")
		if err != nil {
			return nil, err
		}
		out = append(out, ch)
	}
	return out, nil
}
