package optimize

import (
	"errors"
	"fmt"
	"math"
)

// ErrUnreachable is returned when no amount of money meets the targets: a
// target asks for a condition the treatments cannot reach in time (or a
// budget group's fixed cap holds it back).
var ErrUnreachable = errors.New("no amount of money meets the targets")

// roundUpMoney turns an amount found by the solver into whole currency
// units, rounding up so that the amount fed back stays feasible: lp_solve
// holds rows (scaled near 1) to 1e-9, so the amount is known to about 1e-9
// of the money unit, far below one currency unit for any budget under a
// billion. An amount within 1e-9 relative above a whole number is that
// number (400.0000001 is 400, not 401). Amounts below 1e-9 of the money
// unit are solver noise and read as zero.
func roundUpMoney(v, unit float64) float64 {
	if v <= 1e-9*unit {
		return 0
	}
	return math.Ceil(v * (1 - 1e-9))
}

// LevelBudget is the least network budget, one nominal amount for every
// year, under which every target holds. It replaces the problem's network
// cap (budget groups keep theirs). It is a linear program: the plan's
// columns plus one column L for the level, with spend in year t at most L
// (with carry-over: spend up to year t at most t·L), minimising L. With a
// Hold target alone it answers "what does it take to hold today's
// condition". Without targets the answer is zero (or the routine cost, when
// it counts against the budget).
func LevelBudget(p *Problem) (float64, error) {
	q := *p
	q.Budget = nil
	if err := q.Validate(); err != nil {
		return 0, err
	}
	b := newBuilder(&q)
	m := b.build()
	level := m.addCol("level", 0)
	for t := 0; t < q.Horizon; t++ {
		var e []Entry
		if q.CarryOver {
			for s := 0; s <= t; s++ {
				e = append(e, b.spendEntries(s, nil)...)
			}
			e = append(e, Entry{level, -float64(t + 1)})
		} else {
			e = append(b.spendEntries(t, nil), Entry{level, -1})
		}
		m.addRow(Row{Name: fmt.Sprintf("level_%d", t+1), Entries: e, Sense: LessEq, RHS: 0})
	}
	obj := make([]float64, len(m.Cols))
	obj[level] = 1
	// Then, at that level, the cheapest plan: it keeps the solver from
	// leaving spend at the level where less would do, which changes nothing
	// in L but keeps the answer reproducible.
	pv := append(b.objectiveOf(MinCost), 0)
	x, _, err := lexicographic(m, &q, []objectiveSpec{{obj: obj}, {obj: pv}})
	if errors.Is(err, ErrInfeasible) {
		return 0, ErrUnreachable
	}
	if err != nil {
		return 0, err
	}
	return roundUpMoney(x[level]*b.moneyUnit, b.moneyUnit), nil
}

// Gap is the extra money that would let every target hold: per year
// (0-based) on top of the network cap, and per budget group and year on top
// of the group's cap. Amounts are nominal and rounded up to whole currency
// units.
type Gap struct {
	Network []float64
	Groups  [][]float64
	// PresentValue is the discounted sum of all extra money.
	PresentValue float64
}

// Total is the nominal sum of all extra money.
func (g *Gap) Total() float64 {
	s := 0.0
	for _, v := range g.Network {
		s += v
	}
	for _, gr := range g.Groups {
		for _, v := range gr {
			s += v
		}
	}
	return s
}

// ClosingMoney finds the extra money, year by year, that closes every
// target's shortfall at the least present value: the plan's model with a
// non-negative column e added to each cap (e in year s raises the cap of
// year s, and with carry-over every later cumulative cap too), minimising
// the discounted sum of e subject to all targets. Adding Gap.Network to the
// network budget and Gap.Groups to the group caps makes the targets
// feasible. When the budgets cannot hold even without targets (routine
// costs counted against a small budget), the same model says how much more
// money makes them hold. It returns ErrUnreachable when no money closes the
// gap.
func ClosingMoney(p *Problem) (*Gap, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	b := newBuilder(p)
	m := b.build()
	gap := &Gap{Groups: make([][]float64, len(p.GroupBudgets))}
	if p.Budget != nil {
		gap.Network = make([]float64, p.Horizon)
	}
	for g := range gap.Groups {
		gap.Groups[g] = make([]float64, p.Horizon)
	}
	type extraCol struct{ col, budget, year int }
	var extras []extraCol
	colOf := map[[2]int]int{}
	for _, cr := range b.caps {
		key := [2]int{cr.budget, cr.year}
		if _, ok := colOf[key]; !ok {
			c := m.addCol(fmt.Sprintf("extra%d_%d", cr.budget+2, cr.year), 0)
			colOf[key] = c
			extras = append(extras, extraCol{c, cr.budget, cr.year})
		}
	}
	for _, cr := range b.caps {
		r := &m.Rows[cr.row]
		r.Entries = append([]Entry(nil), r.Entries...)
		first := cr.year
		if p.CarryOver {
			first = 1
		}
		for y := first; y <= cr.year; y++ {
			if c, ok := colOf[[2]int{cr.budget, y}]; ok {
				r.Entries = append(r.Entries, Entry{c, -1})
			}
		}
	}
	obj := make([]float64, len(m.Cols))
	for _, e := range extras {
		obj[e.col] = p.discount(e.year - 1)
	}
	pv := append(b.objectiveOf(MinCost), make([]float64, len(extras))...)
	x, _, err := lexicographic(m, p, []objectiveSpec{{obj: obj}, {obj: pv}})
	if errors.Is(err, ErrInfeasible) {
		return nil, ErrUnreachable
	}
	if err != nil {
		return nil, err
	}
	for _, e := range extras {
		v := roundUpMoney(x[e.col]*b.moneyUnit, b.moneyUnit)
		if e.budget == Network {
			gap.Network[e.year-1] = v
		} else {
			gap.Groups[e.budget][e.year-1] = v
		}
		gap.PresentValue += v * p.discount(e.year-1)
	}
	return gap, nil
}
