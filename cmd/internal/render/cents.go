package render

import (
	"math"

	"wearplan/scenarios"
)

// Money in machine-readable output (JSON, CSV and the workbook) is rounded
// to cents: the solver's figures carry digits no budget has
// (9500000.00000173, 7829.999999999999), and a difference that rounds to
// nothing must not print as -0.0000017. Rounding is done on copies; the
// result handed in is not changed.

// Cents rounds an amount of money to cents, with no negative zero.
// Infinities and NaN pass unchanged.
func Cents(v float64) float64 {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return v
	}
	c := math.Round(v*100) / 100
	if c == 0 {
		return 0 // not -0
	}
	return c
}

func centsPtr(v *float64) *float64 {
	if v == nil {
		return nil
	}
	c := Cents(*v)
	return &c
}

// RoundedMoney returns a copy of r with every amount of money rounded to
// cents; quantities, shares and scores keep their digits.
func RoundedMoney(r *scenarios.Result) *scenarios.Result {
	c := *r
	c.TotalCost, c.PresentValue = Cents(r.TotalCost), Cents(r.PresentValue)
	c.RoutineCost, c.RoutinePresentValue = centsPtr(r.RoutineCost), centsPtr(r.RoutinePresentValue)
	c.Initial = roundedSnapshot(r.Initial)
	c.Years = make([]scenarios.Year, len(r.Years))
	for t, y := range r.Years {
		y.Spend, y.Budget, y.Routine = Cents(y.Spend), centsPtr(y.Budget), centsPtr(y.Routine)
		if y.Groups != nil {
			gs := make([]scenarios.GroupSpend, len(y.Groups))
			for g, gr := range y.Groups {
				gr.Spend, gr.Budget, gr.MinYearly = Cents(gr.Spend), Cents(gr.Budget), centsPtr(gr.MinYearly)
				gs[g] = gr
			}
			y.Groups = gs
		}
		s := roundedSnapshot(scenarios.Snapshot{Classes: y.Classes, Network: y.Network})
		y.Classes, y.Network = s.Classes, s.Network
		c.Years[t] = y
	}
	if r.BacklogRules != nil {
		c.BacklogRules = make([]scenarios.BacklogRule, len(r.BacklogRules))
		for i, b := range r.BacklogRules {
			b.UnitCost = Cents(b.UnitCost)
			c.BacklogRules[i] = b
		}
	}
	if f := r.Funding; f != nil {
		c.Funding = roundedFunding(f)
	}
	if b := r.Baseline; b != nil {
		bc := *b
		bc.TotalCost = Cents(b.TotalCost)
		c.Baseline = &bc
	}
	if in := r.Indicators; in != nil {
		c.Indicators = roundedIndicators(in)
	}
	if r.ClassWarnings != nil {
		c.ClassWarnings = make([]scenarios.ClassWarning, len(r.ClassWarnings))
		for i, w := range r.ClassWarnings {
			if w.Backlog != nil {
				b := *w.Backlog
				b.Today, b.Value = Cents(b.Today), Cents(b.Value)
				w.Backlog = &b
			}
			c.ClassWarnings[i] = w
		}
	}
	return &c
}

func roundedSnapshot(s scenarios.Snapshot) scenarios.Snapshot {
	out := scenarios.Snapshot{Classes: make([]scenarios.ClassCondition, len(s.Classes)), Network: s.Network}
	for k, cc := range s.Classes {
		cc.ReplacementValue, cc.Backlog, cc.Spend = centsPtr(cc.ReplacementValue), centsPtr(cc.Backlog), centsPtr(cc.Spend)
		cc.MinYearly = centsPtr(cc.MinYearly)
		if cc.Work != nil {
			ws := make([]scenarios.Work, len(cc.Work))
			for i, w := range cc.Work {
				w.Cost = Cents(w.Cost)
				ws[i] = w
			}
			cc.Work = ws
		}
		out.Classes[k] = cc
	}
	out.Network.ReplacementValue, out.Network.Backlog = centsPtr(s.Network.ReplacementValue), centsPtr(s.Network.Backlog)
	return out
}

func roundedYearMoney(ys []scenarios.YearMoney) []scenarios.YearMoney {
	if ys == nil {
		return nil
	}
	out := make([]scenarios.YearMoney, len(ys))
	for i, y := range ys {
		y.Amount = Cents(y.Amount)
		out[i] = y
	}
	return out
}

// roundedFunding rounds a plan's funding answers.
func roundedFunding(f *scenarios.Funding) *scenarios.Funding {
	c := *f
	c.LevelBudget, c.HoldBudget = centsPtr(f.LevelBudget), centsPtr(f.HoldBudget)
	c.ExtraTotal, c.ExtraPresentValue = centsPtr(f.ExtraTotal), centsPtr(f.ExtraPresentValue)
	c.ExtraMoney = roundedYearMoney(f.ExtraMoney)
	if f.ExtraGroups != nil {
		c.ExtraGroups = make([]scenarios.GroupMoney, len(f.ExtraGroups))
		for g, gm := range f.ExtraGroups {
			gm.Years = roundedYearMoney(gm.Years)
			c.ExtraGroups[g] = gm
		}
	}
	if f.Targets != nil {
		c.Targets = make([]scenarios.TargetMoney, len(f.Targets))
		for i, tm := range f.Targets {
			tm.Total, tm.PresentValue = centsPtr(tm.Total), centsPtr(tm.PresentValue)
			c.Targets[i] = tm
		}
	}
	return &c
}

func roundedIndicators(in *scenarios.Indicators) *scenarios.Indicators {
	c := *in
	point := func(p scenarios.IndicatorPoint) scenarios.IndicatorPoint {
		p.DepreciatedCost = centsPtr(p.DepreciatedCost)
		return p
	}
	years := func(ys []scenarios.IndicatorYear) []scenarios.IndicatorYear {
		out := make([]scenarios.IndicatorYear, len(ys))
		for t, y := range ys {
			y.IndicatorPoint = point(y.IndicatorPoint)
			y.Consumption, y.RenewalSpend, y.RequiredRenewal = centsPtr(y.Consumption), Cents(y.RenewalSpend), centsPtr(y.RequiredRenewal)
			out[t] = y
		}
		return out
	}
	c.Classes = make([]scenarios.ClassIndicators, len(in.Classes))
	for k, ci := range in.Classes {
		ci.Today, ci.Years = point(ci.Today), years(ci.Years)
		c.Classes[k] = ci
	}
	c.Network.Today, c.Network.Years = point(in.Network.Today), years(in.Network.Years)
	return &c
}

// RoundedSweep returns a copy of a sweep with its money rounded to cents.
func RoundedSweep(r *scenarios.SweepResult) *scenarios.SweepResult {
	c := *r
	c.HoldBudget, c.TargetsBudget = centsPtr(r.HoldBudget), centsPtr(r.TargetsBudget)
	c.Points = make([]scenarios.SweepPoint, len(r.Points))
	for i, p := range r.Points {
		p.Budget, p.TotalCost, p.PresentValue, p.RoutineCost = Cents(p.Budget), Cents(p.TotalCost), Cents(p.PresentValue), centsPtr(p.RoutineCost)
		c.Points[i] = p
	}
	return &c
}

// RoundedCompare returns a copy of a comparison with its money rounded to
// cents.
func RoundedCompare(r *scenarios.CompareResult) *scenarios.CompareResult {
	c := *r
	c.Scenarios = make([]scenarios.CompareColumn, len(r.Scenarios))
	for i, col := range r.Scenarios {
		col.TotalCost, col.PresentValue, col.RoutineCost = Cents(col.TotalCost), Cents(col.PresentValue), centsPtr(col.RoutineCost)
		if col.Funding != nil {
			col.Funding = roundedFunding(col.Funding)
		}
		if col.Baseline != nil {
			b := *col.Baseline
			b.TotalCost = Cents(b.TotalCost)
			col.Baseline = &b
		}
		if col.Service != nil {
			ys := make([]scenarios.CompareYear, len(col.Service))
			for t, y := range col.Service {
				y.Network.ReplacementValue, y.Network.Backlog = centsPtr(y.Network.ReplacementValue), centsPtr(y.Network.Backlog)
				ys[t] = y
			}
			col.Service = ys
		}
		c.Scenarios[i] = col
	}
	return &c
}

// RoundedLongRun returns a copy of a long-run result with its money
// rounded to cents.
func RoundedLongRun(r *scenarios.LongRunResult) *scenarios.LongRunResult {
	c := *r
	c.Budget = centsPtr(r.Budget)
	c.AnnualCost, c.AnnualTreatment, c.AnnualRoutine = Cents(r.AnnualCost), Cents(r.AnnualTreatment), Cents(r.AnnualRoutine)
	c.Today = roundedSnapshot(r.Today)
	c.Network.ReplacementValue, c.Network.Backlog = centsPtr(r.Network.ReplacementValue), centsPtr(r.Network.Backlog)
	c.Classes = make([]scenarios.LongRunClass, len(r.Classes))
	for k, lc := range r.Classes {
		lc.AnnualTreatment, lc.AnnualRoutine = Cents(lc.AnnualTreatment), Cents(lc.AnnualRoutine)
		ps := make([]scenarios.PolicyEntry, len(lc.Policy))
		for i, p := range lc.Policy {
			p.Cost = Cents(p.Cost)
			ps[i] = p
		}
		lc.Policy = ps
		c.Classes[k] = lc
	}
	return &c
}
