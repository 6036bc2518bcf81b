package scenarios

import (
	"errors"
	"fmt"
	"math"

	"wearplan/markov"
	"wearplan/optimize"
)

// Asset management plan indicators (see doc.go for the definitions and
// their sources).
//
// Remaining life of state i, L_i: the expected years an asset left
// untreated takes to reach the worst state (markov.YearsToWorst, the mean
// time to absorption from the fundamental matrix). Remaining share of
// state i: s_i = L_i / max_j L_j (the best state is as new).
//
// Depreciated replacement cost: Σ_i q_i s_i times the replacement unit
// cost at the year's prices; the asset consumption ratio divides it by the
// current replacement cost (quantity times unit cost at the same prices).
//
// Consumption of year t: the drop in depreciated replacement cost that a
// year with no work would cause from the condition at the start of the
// year, q·s - (q·P)·s at year t's prices. For a chain whose worst state
// is absorbing it is (quantity not in the worst state) / L_best times the
// unit cost: straight-line depreciation over the expected life.
//
// Over the first RatioYears years: asset sustainability ratio = renewal
// spend / consumption; renewal funding ratio = present value of the plan's
// renewal spend / present value of the renewal spend of the least-cost
// plan that keeps the class's condition score at or above today's in
// every year (no budget caps).

// RatioYearsMax is the number of first years the ratios cover (fewer when
// the horizon is shorter).
const RatioYearsMax = 10

// Indicators are the asset management plan indicators of a result: per
// class and for the network, today and for each year.
type Indicators struct {
	// RatioYears is the number of first years the two ratios cover.
	RatioYears int               `json:"ratio_years"`
	Classes    []ClassIndicators `json:"classes"`
	Network    NetworkIndicators `json:"network"`
	// Notes say why a figure is unknown.
	Notes []string `json:"notes,omitempty"`
}

// ClassIndicators are one class's indicators.
type ClassIndicators struct {
	Class string `json:"class"`
	// RemainingLife is the expected years from each state to the worst
	// state with no work (absent when some state never reaches it).
	RemainingLife []StateYears `json:"remaining_life,omitempty"`
	// RenewalTreatments name the treatments whose spend counts as renewal.
	RenewalTreatments []string        `json:"renewal_treatments"`
	Today             IndicatorPoint  `json:"today"`
	Years             []IndicatorYear `json:"years"`
	IndicatorRatios
}

// NetworkIndicators are the network's indicators: sums over the classes,
// unknown when any class's is.
type NetworkIndicators struct {
	Today IndicatorPoint  `json:"today"`
	Years []IndicatorYear `json:"years"`
	IndicatorRatios
}

// IndicatorRatios are the ratios over the first RatioYears years, each
// nil when unknown or undefined (nothing to divide by).
type IndicatorRatios struct {
	// SustainabilityRatio is renewal spend over consumption.
	SustainabilityRatio *float64 `json:"sustainability_ratio,omitempty"`
	// RenewalFundingRatio is the present value of the plan's renewal spend
	// over that of the renewal the least-cost plan holding today's
	// condition needs.
	RenewalFundingRatio *float64 `json:"renewal_funding_ratio,omitempty"`
}

// StateYears is a number of years for one condition state.
type StateYears struct {
	State string  `json:"state"`
	Years float64 `json:"years"`
}

// IndicatorPoint is the condition-based value of a class or the network at
// one time (today, or the end of a year), at that year's prices.
type IndicatorPoint struct {
	// MeanRemainingLife is the quantity-weighted mean of the states'
	// remaining lives (classes only).
	MeanRemainingLife *float64 `json:"mean_remaining_life,omitempty"`
	DepreciatedCost   *float64 `json:"depreciated_cost,omitempty"`
	// ConsumptionRatio is the depreciated over the current replacement
	// cost.
	ConsumptionRatio *float64 `json:"consumption_ratio,omitempty"`
}

// IndicatorYear is one year: the value at its end, its consumption and its
// renewal spend.
type IndicatorYear struct {
	Year int `json:"year"`
	IndicatorPoint
	Consumption  *float64 `json:"consumption,omitempty"`
	RenewalSpend float64  `json:"renewal_spend"`
	// RequiredRenewal is the renewal spend of the least-cost plan that
	// holds today's condition, in the years the ratios cover.
	RequiredRenewal *float64 `json:"required_renewal,omitempty"`
}

// classBasis is what a class's indicators are computed from.
type classBasis struct {
	life  []float64 // remaining life by state; nil when unknown
	share []float64 // remaining share of life by state; nil when unknown
	// consumed[i] is the share of a unit's replacement cost that a year
	// untreated in state i consumes: s_i - Σ_j P_ij s_j.
	consumed []float64
	renewal  map[string]bool
}

func indicatorBasis(c *Class) (classBasis, error) {
	b := classBasis{renewal: map[string]bool{}}
	for _, t := range c.Treatments {
		if t.Renewal {
			b.renewal[t.Name] = true
		}
	}
	abs, err := c.Transition.YearsToWorst()
	if err != nil {
		return b, err
	}
	n := len(abs.Mean)
	longest := 0.0
	for _, l := range abs.Mean {
		longest = math.Max(longest, l)
	}
	b.life, b.share, b.consumed = make([]float64, n), make([]float64, n), make([]float64, n)
	for i, l := range abs.Mean {
		// Nine decimals of a year hide the inverse's last-digit noise
		// (19.000000000000007) and change no figure anyone reads.
		b.life[i] = math.Round(l*1e9) / 1e9
		b.share[i] = l / longest
	}
	for i := range n {
		next := 0.0
		for j, p := range c.Transition.Row(i) {
			next += p * b.share[j]
		}
		b.consumed[i] = b.share[i] - next
	}
	return b, nil
}

// addIndicators fills r.Indicators from the result's condition and work;
// required[k] is the required renewal of class k by year (nil when
// unknown or not computed).
func addIndicators(sc *Scenario, r *Result, required [][]float64, notes []string) {
	in := &Indicators{RatioYears: min(RatioYearsMax, sc.Horizon), Notes: notes}
	netToday := IndicatorPoint{}
	netYears := make([]IndicatorYear, len(r.Years))
	netKnown, netRequired := true, required != nil
	if required == nil {
		required = make([][]float64, len(sc.Classes))
	}
	for t := range netYears {
		netYears[t].Year = r.Years[t].Year
	}
	discount := func(t int) float64 { return math.Pow(1+sc.DiscountRate, -float64(t)) }
	var netRenewalPV, netRequiredPV, netRenewal, netConsumed float64
	for k := range sc.Classes {
		c := &sc.Classes[k]
		ci := ClassIndicators{Class: c.Name, RenewalTreatments: []string{}}
		b, err := indicatorBasis(c)
		for _, t := range c.Treatments {
			if b.renewal[t.Name] {
				ci.RenewalTreatments = append(ci.RenewalTreatments, t.Name)
			}
		}
		if errors.Is(err, markov.ErrNotAbsorbed) {
			in.Notes = append(in.Notes, fmt.Sprintf("%s: remaining life and depreciated values are unknown: with no work some state never reaches the worst state (%v)", c.Name, err))
		} else if err != nil {
			in.Notes = append(in.Notes, fmt.Sprintf("%s: remaining life and depreciated values are unknown: %v", c.Name, err))
		}
		if b.life != nil {
			for i, l := range b.life {
				ci.RemainingLife = append(ci.RemainingLife, StateYears{State: c.Scale.States[i].Name, Years: l})
			}
		}
		valued := b.share != nil && c.ReplacementCost > 0
		if b.share != nil && c.ReplacementCost <= 0 {
			in.Notes = append(in.Notes, fmt.Sprintf("%s: depreciated values are unknown: the class gives no replacement cost", c.Name))
		}
		netKnown = netKnown && valued
		point := func(q Quantities, price float64) IndicatorPoint {
			var pt IndicatorPoint
			if b.life == nil {
				return pt
			}
			total, life, dep := 0.0, 0.0, 0.0
			for i, s := range q {
				total += s.Quantity
				life += s.Quantity * b.life[i]
				dep += s.Quantity * b.share[i]
			}
			if total > 0 {
				pt.MeanRemainingLife = ptr(life / total)
			}
			if valued {
				pt.DepreciatedCost = ptr(dep * c.ReplacementCost * price)
				if total > 0 {
					pt.ConsumptionRatio = ptr(dep / total)
				}
			}
			return pt
		}
		ci.Today = point(r.Initial.Classes[k].States, priceFactor(sc, 0))
		addPoint(&netToday, ci.Today, k == 0)
		var renewalPV, requiredPV, renewal, consumed float64
		known := valued
		for t, y := range r.Years {
			cc := y.Classes[k]
			iy := IndicatorYear{Year: y.Year, IndicatorPoint: point(cc.States, priceFactor(sc, t+1))}
			for _, w := range cc.Work {
				if b.renewal[w.Treatment] {
					iy.RenewalSpend += w.Cost
				}
			}
			start := r.Initial.Classes[k].States
			if t > 0 {
				start = r.Years[t-1].Classes[k].States
			}
			if valued {
				u := 0.0
				for i, s := range start {
					u += s.Quantity * b.consumed[i]
				}
				iy.Consumption = ptr(u * c.ReplacementCost * priceFactor(sc, t+1))
			}
			if t < in.RatioYears {
				renewal += iy.RenewalSpend
				renewalPV += iy.RenewalSpend * discount(t)
				if iy.Consumption != nil {
					consumed += *iy.Consumption
				}
				if required[k] != nil {
					iy.RequiredRenewal = ptr(required[k][t])
					requiredPV += required[k][t] * discount(t)
				}
			}
			ci.Years = append(ci.Years, iy)
			addPoint(&netYears[t].IndicatorPoint, iy.IndicatorPoint, k == 0)
			netYears[t].RenewalSpend += iy.RenewalSpend
			addTo(&netYears[t].Consumption, iy.Consumption, k == 0)
			if t < in.RatioYears {
				addTo(&netYears[t].RequiredRenewal, iy.RequiredRenewal, k == 0)
			}
		}
		if known && consumed > 0 {
			ci.SustainabilityRatio = ptr(renewal / consumed)
		}
		if required[k] != nil && requiredPV > 0 {
			ci.RenewalFundingRatio = ptr(renewalPV / requiredPV)
		} else if required[k] != nil {
			in.Notes = append(in.Notes, fmt.Sprintf("%s: no renewal funding ratio: the least-cost plan that holds today's condition needs no renewal in the first %d years", c.Name, in.RatioYears))
		}
		netRequired = netRequired && required[k] != nil
		netRenewal += renewal
		netRenewalPV += renewalPV
		netRequiredPV += requiredPV
		netConsumed += consumed
		in.Classes = append(in.Classes, ci)
	}
	if netKnown && netConsumed > 0 {
		in.Network.SustainabilityRatio = ptr(netRenewal / netConsumed)
	}
	if netRequired && netRequiredPV > 0 {
		in.Network.RenewalFundingRatio = ptr(netRenewalPV / netRequiredPV)
	}
	if !netRequired {
		for t := range netYears {
			netYears[t].RequiredRenewal = nil
		}
	}
	in.Network.Today, in.Network.Years = netToday, netYears
	r.Indicators = in
	networkRatios(r)
}

// addPoint sums a class's depreciated cost into the network's (the
// network's consumption ratio comes from the sums: networkRatios). Mean
// remaining life stays unset: years of classes in different units do not
// average into a network figure.
func addPoint(net *IndicatorPoint, c IndicatorPoint, first bool) {
	addTo(&net.DepreciatedCost, c.DepreciatedCost, first)
}

// networkRatios sets the network's consumption ratios from its
// depreciated cost and the result's replacement values.
func networkRatios(r *Result) {
	in := r.Indicators
	ratio := func(pt *IndicatorPoint, value *float64) {
		if pt.DepreciatedCost != nil && value != nil && *value > 0 {
			pt.ConsumptionRatio = ptr(*pt.DepreciatedCost / *value)
		}
	}
	ratio(&in.Network.Today, r.Initial.Network.ReplacementValue)
	for t := range in.Network.Years {
		ratio(&in.Network.Years[t].IndicatorPoint, r.Years[t].Network.ReplacementValue)
	}
}

// RenewalDetailClasses is the most classes whose renewal funding ratios a
// plan works out: each needs a plan of its class alone, about 20 ms of one
// core for a class of 10 states, 8 treatments and 40 years, so at 200
// classes about 2 s on 2 cores, more than the network's own plan.
const RenewalDetailClasses = 200

// requiredRenewal plans each class alone, with no budget caps and the
// min-cost objective, under a target that keeps its condition score at or
// above today's in every year, and returns the renewal spend of each year
// (nil for a class whose condition no plan holds, with a note).
func requiredRenewal(sc *Scenario, opt Options) ([][]float64, []string, error) {
	if n := len(sc.Classes); n > RenewalDetailClasses {
		return nil, []string{fmt.Sprintf("the renewal funding ratios are left out: they need a plan of each class alone, and %d classes are more than the %d these extra solves are made for", n, RenewalDetailClasses)}, nil
	}
	out := make([][]float64, len(sc.Classes))
	classNotes := make([]string, len(sc.Classes))
	jobs := make([]func() error, len(sc.Classes))
	for k := range sc.Classes {
		jobs[k] = func() error {
			var err error
			out[k], classNotes[k], err = classRenewal(sc, k, opt)
			return err
		}
	}
	if err := runParallel(opt.context(), jobs); err != nil {
		return nil, nil, err
	}
	var notes []string
	for _, n := range classNotes {
		if n != "" {
			notes = append(notes, n)
		}
	}
	return out, notes, nil
}

// classRenewal plans class k alone for requiredRenewal: its renewal spend
// by year, or nil and a note when no plan holds its condition.
func classRenewal(sc *Scenario, k int, opt Options) ([]float64, string, error) {
	c := sc.Classes[k]
	c.Weight = 1
	sub := *sc
	sub.Classes = []Class{c}
	sub.Budget, sub.BudgetGroups, sub.RoutineInBudget, sub.CarryOver = nil, nil, false, false
	// Alone and unfunded: money ring-fenced for other classes or groups
	// does not apply to it, and its own floor is no part of what holding
	// its condition costs.
	sub.MinSpends = nil
	sub.Objective = optimize.MinCost
	p, err := opt.problem(&sub)
	if err != nil {
		return nil, "", err
	}
	// The problem's own quantities: a class with a History is planned over
	// widened states, and c.Initial has only its condition states.
	today := p.Classes[0].ScoreOf(p.Classes[0].Initial)
	label := c.Name + " condition score at least today's in every year"
	sub.Targets = []Target{{Label: label, Class: c.Name, FromYear: sc.Year(1), ToYear: sc.Year(sc.Horizon),
		Spec: optimize.Target{Label: label, Class: 0, Kind: optimize.MinScore, Value: today - holdSlack, From: 1, To: sc.Horizon}}}
	res, err := plan(&sub, Options{Timeout: opt.Timeout, Solver: opt.Solver, SkipFunding: true, ctx: opt.ctx, master: opt.master})
	if err != nil {
		return nil, "", fmt.Errorf("class %q: the plan that holds today's condition: %w", c.Name, err)
	}
	if res.Status != Optimal {
		return nil, fmt.Sprintf("%s: no renewal funding ratio: no plan keeps the class at today's condition in every year (%s)", c.Name, res.Status), nil
	}
	b, _ := indicatorBasis(&c)
	out := make([]float64, sc.Horizon)
	for t, y := range res.Years {
		for _, w := range y.Classes[0].Work {
			if b.renewal[w.Treatment] {
				out[t] += w.Cost
			}
		}
	}
	return out, "", nil
}

// holdSlack is the allowance, in score points, below today's score that
// the plan holding today's condition may fall: far below any reported
// digit, it keeps an exactly binding row from failing on rounding.
const holdSlack = 1e-7
