package scenarios

import (
	"math"

	"wearplan/optimize"
)

// Asset value and backlog (see doc.go for the definitions).
//
// Replacement value: a class's total quantity times its replacement unit
// cost, at the prices of the year reported (start-year prices escalated by
// cost_escalation, the prices that year's work is costed at; today's
// figure is at start-year prices).
//
// Backlog: the cost, at the same prices, of the treatments that the
// quantities in poor states call for. A poor state calls for the cheapest
// of the class's treatments that applies to it and leaves nothing in a
// poor state right after treatment; when none does, for replacement at the
// replacement unit cost.

// BacklogRule says what one poor state's backlog is valued at.
type BacklogRule struct {
	Class string `json:"class"`
	State string `json:"state"`
	// Treatment is the treatment the state calls for, or "replacement".
	Treatment string `json:"treatment"`
	// UnitCost is per unit of quantity at start-year prices.
	UnitCost float64 `json:"unit_cost"`
}

// Replacement names the rule used when no treatment lifts a poor state.
const Replacement = "replacement"

// classValue is what a class's value and backlog are computed from.
type classValue struct {
	// unit[i] is the backlog unit cost of state i: 0 outside the poor group.
	unit []float64
	// backlogKnown is false when some poor state has neither a lifting
	// treatment nor a replacement cost.
	backlogKnown bool
	rules        []BacklogRule
}

// valueBases works out every class's backlog unit costs.
func valueBases(sc *Scenario) []classValue {
	out := make([]classValue, len(sc.Classes))
	for k := range sc.Classes {
		out[k] = valueBasis(&sc.Classes[k])
	}
	return out
}

func valueBasis(c *Class) classValue {
	n := len(c.Scale.States)
	cv := classValue{unit: make([]float64, n), backlogKnown: true}
	for i := range n {
		if c.Scale.Group[i] != optimize.Poor {
			continue
		}
		best, name := math.Inf(1), ""
		for t := range c.Treatments {
			tr := &c.Treatments[t]
			if !applies(tr.Applies, i) {
				continue
			}
			row, err := tr.EffectRow(i, n)
			if err != nil || poorMass(c.Scale, row) > 1e-12 {
				continue
			}
			if tr.Cost[i] < best {
				best, name = tr.Cost[i], tr.Name
			}
		}
		if name == "" {
			if c.ReplacementCost <= 0 {
				cv.backlogKnown = false
				continue
			}
			best, name = c.ReplacementCost, Replacement
		}
		cv.unit[i] = best
		cv.rules = append(cv.rules, BacklogRule{Class: c.Name, State: c.Scale.States[i].Name, Treatment: name, UnitCost: best})
	}
	return cv
}

func applies(states []int, i int) bool {
	for _, s := range states {
		if s == i {
			return true
		}
	}
	return false
}

func poorMass(s *Scale, row []float64) float64 {
	m := 0.0
	for j, p := range row {
		if s.Group[j] == optimize.Poor {
			m += p
		}
	}
	return m
}

// figures returns a class's replacement value and backlog for quantities q
// at a price factor (1 for start-year prices); nil when unknown.
func (cv *classValue) figures(c *Class, q []float64, price float64) (value, backlog *float64) {
	if c.ReplacementCost > 0 {
		v := c.Total() * c.ReplacementCost * price
		value = &v
	}
	if cv.backlogKnown {
		b := 0.0
		for i, x := range q {
			b += x * cv.unit[i]
		}
		b *= price
		backlog = &b
	}
	return value, backlog
}

// priceFactor is the escalation of year t's prices (t = 0 for today and
// t = 1 for the first year, both at start-year prices).
func priceFactor(sc *Scenario, t int) float64 {
	return math.Pow(1+sc.Escalation, float64(max(t-1, 0)))
}

// addTo sums class figures into a network figure, which stays nil when any
// class's figure is unknown.
func addTo(total **float64, part *float64, first bool) {
	switch {
	case first && part != nil:
		v := *part
		*total = &v
	case *total != nil && part != nil:
		**total += *part
	default:
		*total = nil
	}
}
