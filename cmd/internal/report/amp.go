package report

import (
	"fmt"
	"strconv"
	"strings"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// indicatorsView is a run's section of asset management plan indicators:
// remaining life by state, value and consumption at the level-of-service
// years, renewal against consumption over the first years, the ratios per
// class, and what each figure means and where it comes from.
type indicatorsView struct {
	Intro       string
	Definitions []fact
	Life        table
	Value       table
	Renewal     table
	Ratios      table
	Notes       []string
}

// indicatorDefinitions says what each indicator is and where it comes
// from; every report that shows the indicators carries them.
func indicatorDefinitions(years int) []fact {
	return []fact{
		{"Remaining life", "the expected years an asset left untreated takes to reach the worst state of its scale: the mean time to absorption of the deterioration chain with the worst state absorbing, t = N·1 with the fundamental matrix N = (I - Q)^-1 (Kemeny and Snell, Finite Markov Chains, 1960; Grinstead and Snell, Introduction to Probability, chapter 11). A class's figure is the mean over its quantity."},
		{"Depreciated replacement cost", "the replacement value (quantity times replacement unit cost, at that year's prices) times each state's remaining share of life, its remaining life over the best state's, summed over the states. Valuing an asset at replacement cost less the share of its life used is common practice in public-sector asset accounting; taking the share from the chain is this report's own."},
		{"Asset consumption ratio", "depreciated replacement cost over current replacement cost: the share of the assets' service potential left (IPWEA, Australian Infrastructure Financial Management Manual; from memory)."},
		{"Consumption", "the drop in depreciated replacement cost that a year with no work would cause, from the condition at the start of the year, at that year's prices. For a chain whose worst state holds its assets it is straight-line depreciation: the replacement cost of the quantity not yet in the worst state divided by the best state's remaining life."},
		{"Asset sustainability ratio", fmt.Sprintf("renewal spend over consumption, summed over the first %s: below 1, the assets are renewed more slowly than they are used up (IPWEA; the asset sustainability ratio of Australian local government financial sustainability indicators; from memory).", render.Plural(years, "year", "years"))},
		{"Renewal funding ratio", fmt.Sprintf("the present value of the plan's renewal spend over the present value of the renewal spend of the least-cost plan that keeps each class's condition score at today's or better in every year, with no budget caps, over the first %s (IPWEA's asset renewal funding ratio compares planned with required renewal over ten years; from memory; the required renewal here is that plan's).", render.Plural(years, "year", "years"))},
		{"Renewal spend", "spend on the treatments marked as renewal: by default those that put every unit they treat in the best state; renewal: true or false on a treatment in the scenario file decides otherwise. Treatments that hold or lift condition part way count as maintenance."},
	}
}

func buildIndicators(id string, r *scenarios.Result) *indicatorsView {
	in := r.Indicators
	if in == nil || len(in.Classes) == 0 {
		return nil
	}
	cur := currencyOf(r)
	n := in.RatioYears
	v := &indicatorsView{Definitions: indicatorDefinitions(n), Notes: append([]string(nil), in.Notes...)}
	v.Intro = fmt.Sprintf("Financial indicators of the kind asset management plans state, worked out from the deterioration chains and this plan; the ratios cover %d-%d. Every year's figures are in the workbook (sheet %s) and in the indicators table of wearplan plan --format csv.",
		r.StartYear, r.StartYear+n-1, SheetIndicators)

	v.Life = table{ID: id + "-life", Caption: "Remaining life by state: expected years to the worst state with no work",
		Head: []string{"State", "Remaining life (years)", "Remaining share of life"}, Num: []bool{false, true, true}}
	for _, c := range in.Classes {
		v.Life.group(c.Class)
		if len(c.RemainingLife) == 0 {
			v.Life.add("not known", "", "")
			continue
		}
		longest := 0.0
		for _, sy := range c.RemainingLife {
			longest = max(longest, sy.Years)
		}
		for _, sy := range c.RemainingLife {
			v.Life.add(sy.State, strconv.FormatFloat(sy.Years, 'f', 1, 64), render.Percent(sy.Years/longest))
		}
	}

	years := render.LOSYears(r.Horizon)
	v.Value = table{ID: id + "-value", Caption: "Remaining life, depreciated replacement cost and consumption ratio today and at the end of selected years (" + cur + ", at each year's prices)",
		Head: []string{"Measure", fmt.Sprintf("Today (start of %d)", r.StartYear)}, Num: []bool{false, true}}
	for _, y := range years {
		v.Value.Head = append(v.Value.Head, fmt.Sprintf("%d (year %d)", r.StartYear+y-1, y))
		v.Value.Num = append(v.Value.Num, true)
	}
	opt := func(p *float64, f func(float64) string) string {
		if p == nil {
			return "not known"
		}
		return f(*p)
	}
	yearsText := func(x float64) string { return strconv.FormatFloat(x, 'f', 1, 64) }
	row := func(label string, today scenarios.IndicatorPoint, at func(t int) scenarios.IndicatorPoint, get func(scenarios.IndicatorPoint) *float64, f func(float64) string) {
		cells := []string{label, opt(get(today), f)}
		known := get(today) != nil
		for _, y := range years {
			p := get(at(y - 1))
			known = known || p != nil
			cells = append(cells, opt(p, f))
		}
		if known {
			v.Value.add(cells...)
		}
	}
	life := func(p scenarios.IndicatorPoint) *float64 { return p.MeanRemainingLife }
	dep := func(p scenarios.IndicatorPoint) *float64 { return p.DepreciatedCost }
	ratio := func(p scenarios.IndicatorPoint) *float64 { return p.ConsumptionRatio }
	for k, c := range in.Classes {
		v.Value.group(c.Class)
		at := func(t int) scenarios.IndicatorPoint { return c.Years[t].IndicatorPoint }
		row("Mean remaining life (years)", c.Today, at, life, yearsText)
		row("Depreciated replacement cost", c.Today, at, dep, render.Money)
		row("Asset consumption ratio", c.Today, at, ratio, render.Percent)
		_ = k
	}
	v.Value.group("Network")
	at := func(t int) scenarios.IndicatorPoint { return in.Network.Years[t].IndicatorPoint }
	row("Depreciated replacement cost", in.Network.Today, at, dep, render.Money)
	row("Asset consumption ratio", in.Network.Today, at, ratio, render.Percent)

	v.Renewal = table{ID: id + "-renewal", Caption: fmt.Sprintf("Network renewal against consumption, %d-%d (%s, at each year's prices)", r.StartYear, r.StartYear+n-1, cur),
		Head: []string{"Year", "Consumption", "Renewal spend", "Renewal over consumption", "Renewal the holding plan needs"}, Num: []bool{false, true, true, true, true}}
	var use, ren, req float64
	useKnown, reqKnown := true, true
	for t := 0; t < n; t++ {
		y := in.Network.Years[t]
		u, q, rr := "not known", "not known", "-"
		if y.Consumption != nil {
			u = render.Money(*y.Consumption)
			use += *y.Consumption
			if *y.Consumption > 0 {
				rr = strconv.FormatFloat(y.RenewalSpend / *y.Consumption, 'f', 2, 64)
			}
		} else {
			useKnown = false
		}
		if y.RequiredRenewal != nil {
			q = render.Money(*y.RequiredRenewal)
			req += *y.RequiredRenewal
		} else {
			reqKnown = false
		}
		ren += y.RenewalSpend
		v.Renewal.add(strconv.Itoa(y.Year), u, render.Money(y.RenewalSpend), rr, q)
	}
	total := []string{"In all", "not known", render.Money(ren), "-", "not known"}
	if useKnown {
		total[1] = render.Money(use)
	}
	if in.Network.SustainabilityRatio != nil {
		total[3] = strconv.FormatFloat(*in.Network.SustainabilityRatio, 'f', 2, 64)
	}
	if reqKnown {
		total[4] = render.Money(req)
	}
	v.Renewal.add(total...)
	if !reqKnown {
		dropColumns(&v.Renewal, 4)
	}

	v.Ratios = table{ID: id + "-ratios", Caption: fmt.Sprintf("Asset sustainability and renewal funding ratios, %d-%d", r.StartYear, r.StartYear+n-1),
		Head: []string{"Class", "Asset sustainability ratio", "Renewal funding ratio", "Treatments counted as renewal"}, Num: []bool{false, true, true, false}}
	ratioText := func(p *float64) string {
		if p == nil {
			return "-"
		}
		return strconv.FormatFloat(*p, 'f', 2, 64)
	}
	for _, c := range in.Classes {
		names := "none"
		if len(c.RenewalTreatments) > 0 {
			names = strings.Join(c.RenewalTreatments, ", ")
		}
		v.Ratios.add(c.Class, ratioText(c.SustainabilityRatio), ratioText(c.RenewalFundingRatio), names)
	}
	v.Ratios.add("Network", ratioText(in.Network.SustainabilityRatio), ratioText(in.Network.RenewalFundingRatio), "")
	v.Ratios.Note = "A dash: the ratio is not defined (nothing to divide by) or not known; the notes below say which."
	funded := false
	for _, row := range v.Ratios.Rows {
		funded = funded || row.Cells[2] != "-"
	}
	if !funded {
		// A forecast has no plan to compare renewal with.
		dropColumns(&v.Ratios, 2)
		v.Ratios.Caption = fmt.Sprintf("Asset sustainability ratio, %d-%d", r.StartYear, r.StartYear+n-1)
	}
	if note := maintenanceNote(in, n); note != "" {
		v.Notes = append(v.Notes, note)
	}
	return v
}

// maintenanceNote warns, when the network's sustainability ratio is below
// 1 while its consumption ratio rises, that maintenance treatments (not
// counted as renewal) are what keeps the condition up: read alone, the
// ratio would suggest a network running down.
func maintenanceNote(in *scenarios.Indicators, n int) string {
	nw := in.Network
	if nw.SustainabilityRatio == nil || *nw.SustainabilityRatio >= 1 || nw.Today.ConsumptionRatio == nil || n < 1 || nw.Years[n-1].ConsumptionRatio == nil {
		return ""
	}
	from, to := *nw.Today.ConsumptionRatio, *nw.Years[n-1].ConsumptionRatio
	if to <= from {
		return ""
	}
	return fmt.Sprintf("The asset sustainability ratio is %.2f, yet the network's consumption ratio rises from %s to %s over the same years: treatments not counted as renewal (seals, overlays that lift condition part way) keep the assets up. Mark a treatment renewal: true in the scenario where your accounts treat it as renewal.",
		*nw.SustainabilityRatio, render.Percent(from), render.Percent(to))
}
