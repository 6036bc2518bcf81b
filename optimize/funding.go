package optimize

import (
	"errors"
	"fmt"
	"math"
)

// ErrUnreachable is returned when no amount of money meets the targets:
// with every budget cap lifted, some target still misses (Reachability
// says which, in which years, and what is reachable instead).
var ErrUnreachable = errors.New("no amount of money meets the targets")

// ErrHeldBack is wrapped by the HeldBackError of LevelBudget when enough
// money meets the targets, but no network budget does while the budget
// groups keep their caps.
var ErrHeldBack = errors.New("the budget groups' caps keep the targets out of reach of any network budget")

// HeldBackError names the budget groups whose caps keep the targets out of
// reach of any network budget: lifting the cap of any one of them (or, when
// Together is set, of all of them, no single one being enough) lets a
// network budget meet the targets.
type HeldBackError struct {
	Groups   []int
	Together bool
}

func (e *HeldBackError) Error() string {
	return fmt.Sprintf("%v (budget groups %v)", ErrHeldBack, e.Groups)
}

func (e *HeldBackError) Unwrap() error { return ErrHeldBack }

// roundUpMoney turns an amount found by the solver into whole currency
// units, rounding up so that the amount fed back stays feasible: lp_solve
// holds rows (scaled near 1) to about 1e-9 (checkAnswer accepts 1e-7), so
// the amount is known to about 1e-9 of the money unit, far below one
// currency unit for any budget under a billion. An amount within 1e-9
// relative above a whole number is that number (400.0000001 is 400, not
// 401). Amounts below 1e-9 of the money unit are solver noise and read as
// zero.
func roundUpMoney(v, unit float64) float64 {
	if v <= 1e-9*unit {
		return 0
	}
	return math.Ceil(v * (1 - 1e-9))
}

// uncapped returns a copy of p with no network cap and, unless keepGroups,
// no group caps: the problem with as much money as it can use.
func uncapped(p *Problem, keepGroups bool) *Problem {
	q := *p
	q.Budget = nil
	if !keepGroups {
		q.GroupBudgets = nil
	}
	return &q
}

// leastShortfall is the least total target shortfall (on the model's 0-1
// scale) of any plan of p, from the elastic model, which always has an
// answer when the budgets can hold.
func leastShortfall(p *Problem) (float64, error) {
	if len(p.Targets) == 0 {
		return 0, nil
	}
	if flatColumns(p) > fundingFlatColumns {
		s, err := leastShortfallDecomposed(p)
		if err == nil || halted(err) {
			return s, err
		}
	}
	b := newBuilder(p)
	b.build()
	em, cols := b.elastic()
	slack := make([]float64, len(em.Cols))
	for _, c := range cols {
		slack[c.col] = 1
	}
	em.Obj = slack
	lr, err := lexicographic(em, p, []objectiveSpec{{obj: slack}}, true)
	if err != nil {
		return 0, err
	}
	return em.Value(lr.x), nil
}

// reachable reports whether enough money meets every target of p.
func reachable(p *Problem) (bool, error) {
	s, err := leastShortfall(uncapped(p, false))
	return s <= shortfallFloor, err
}

// YearReach is the best value of a target's measure that any plan reaches
// at the end of one year (1-based), whatever the money: a share (0-1) for
// share targets, a score (0-100) for score targets.
type YearReach struct {
	Year int
	Best float64
}

// TargetReach is a target that no amount of money meets, with the years it
// misses and the best value reachable in each of them. A target that can be
// met on its own but not together with the others has no Years and
// Together set.
type TargetReach struct {
	Target   int
	Years    []YearReach
	Together bool
}

// Reachability lists the targets that no amount of money meets (nil when
// enough money meets them all). Each target is first tried alone with
// every cap lifted; for one that misses, each year of its range gets its
// own LP, the best value of the target's measure reachable that year, and
// the years where that misses the target are listed. When every target can
// be met alone but not all together, each target of the least-shortfall
// plan that misses is listed with Together set.
func Reachability(p *Problem) ([]TargetReach, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	q := uncapped(p, false)
	ok, err := reachable(q)
	if err != nil || ok {
		return nil, err
	}
	var out []TargetReach
	for n := range p.Targets {
		alone := *q
		alone.Targets = []Target{p.Targets[n]}
		if ok, err := reachable(&alone); err != nil {
			return nil, err
		} else if ok {
			continue
		}
		tr := TargetReach{Target: n}
		tg := &p.Targets[n]
		from, to := tg.From, tg.To
		if tg.Kind == Hold {
			from, to = p.Horizon, p.Horizon
		}
		for y := from; y <= to; y++ {
			best, err := bestReachable(q, tg, y)
			if err != nil {
				return nil, err
			}
			if misses(q, tg, best) {
				if tg.Kind == MinScore || tg.Kind == Hold {
					best *= 100
				}
				tr.Years = append(tr.Years, YearReach{Year: y, Best: best})
			}
		}
		out = append(out, tr)
	}
	if out != nil {
		return out, nil
	}
	// Each target alone can be met; together they cannot.
	plan, err := Solve(q)
	if err != nil {
		return nil, err
	}
	seen := map[int]bool{}
	for _, s := range plan.Shortfalls {
		if !seen[s.Target] {
			seen[s.Target] = true
			out = append(out, TargetReach{Target: s.Target, Together: true})
		}
	}
	return out, nil
}

// bestReachable is the best value (0-1 model scale) of target tg's measure
// at the end of year y (1-based) over every plan of q (no targets).
func bestReachable(q *Problem, tg *Target, y int) (float64, error) {
	r := *q
	r.Targets = nil
	b := newBuilder(&r)
	m := b.build()
	obj := make([]float64, len(m.Cols))
	for _, e := range b.conditionEntries(tg, y-1) {
		obj[e.Col] += e.Val
	}
	sense, _ := b.targetBound(tg)
	m.Obj, m.Maximize = obj, sense != LessEq
	lr, err := lexicographic(m, &r, []objectiveSpec{{obj: obj, maximize: m.Maximize}}, true)
	if err != nil {
		return 0, fmt.Errorf("best reachable value of %s in year %d: %w", tg.Label, y, err)
	}
	return m.Value(lr.x), nil
}

// misses reports whether the best reachable value v (0-1) misses target tg
// by more than shortfallFloor.
func misses(q *Problem, tg *Target, v float64) bool {
	b := &builder{p: q}
	sense, rhs := b.targetBound(tg)
	if sense == LessEq {
		return v > rhs+shortfallFloor
	}
	return v < rhs-shortfallFloor
}

// settle runs a funding LP, whose model has an answer exactly when
// reachableFn says so: lp_solve's "infeasible", or a failure on every
// path, is checked against it. It returns ErrUnreachable when reachableFn
// says no answer exists.
func settle(m *Model, p *Problem, objs []objectiveSpec, reachableFn func() (bool, error)) (*lexResult, error) {
	lr, err := lexicographic(m, p, objs, false)
	if err == nil || halted(err) {
		return lr, err
	}
	ok, rerr := reachableFn()
	if rerr != nil {
		return nil, rerr
	}
	if !ok {
		return nil, ErrUnreachable
	}
	if !errors.Is(err, ErrInfeasible) {
		return nil, err // every path failed on a model that has an answer
	}
	// lp_solve called a model with an answer infeasible: the other paths.
	return lexicographic(m, p, objs, true)
}

// LevelBudget is the least network budget, one nominal amount for every
// year, under which every target holds. It replaces the problem's network
// cap (budget groups keep theirs). It is a linear program: the plan's
// columns plus one column L for the level, with spend in year t at most L
// (with carry-over: spend up to year t at most t·L), minimising L. With a
// Hold target alone it answers "what does it take to hold today's
// condition". Without targets the answer is zero (or the routine cost, when
// it counts against the budget). It returns ErrUnreachable when no amount
// of money meets the targets, and a *HeldBackError when enough money
// does but not while the budget groups keep their caps.
func LevelBudget(p *Problem) (float64, error) {
	q := uncapped(p, true)
	if err := q.Validate(); err != nil {
		return 0, err
	}
	b := newBuilder(q)
	m := b.build()
	level := addLevelRows(b, m)
	if flatColumns(q) > fundingFlatColumns {
		x, err := levelBudgetDecomposed(q, b, m, level)
		if err == nil || halted(err) {
			if err != nil {
				return 0, err
			}
			return roundUpMoney(x[level]*b.moneyUnit, b.moneyUnit), nil
		}
		// Targets out of reach, or no checked answer: the flat model
		// below says which, and why.
	}
	obj := make([]float64, len(m.Cols))
	obj[level] = 1
	// Then, at that level, the cheapest plan: it keeps the solver from
	// leaving spend at the level where less would do, which changes nothing
	// in L but keeps the answer reproducible.
	pv := append(b.objectiveOf(MinCost), 0)
	var heldBack error
	lr, err := settle(m, q, []objectiveSpec{{obj: obj}, {obj: pv}}, func() (bool, error) {
		if ok, err := reachable(q); err != nil || !ok {
			return false, err
		}
		// Enough money meets the targets; the group caps may not let it.
		s, err := leastShortfall(q)
		if err != nil || s <= shortfallFloor {
			return err == nil, err
		}
		heldBack, err = heldBackBy(q)
		return false, err
	})
	if errors.Is(err, ErrUnreachable) && heldBack != nil {
		return 0, heldBack
	}
	if err != nil {
		return 0, err
	}
	return roundUpMoney(lr.x[level]*b.moneyUnit, b.moneyUnit), nil
}

// addLevelRows adds to m, built by b, the level column L and the rows that
// hold spend at most L each year (with carry-over, spend up to year t at
// most t·L), and returns L's column.
func addLevelRows(b *builder, m *Model) int {
	q := b.p
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
	return level
}

// heldBackBy names the budget groups whose caps keep the targets of q (no
// network cap) out of reach: each group whose cap, lifted alone, lets the
// targets be met, or all of them together.
func heldBackBy(q *Problem) (error, error) {
	e := &HeldBackError{}
	for g := range q.GroupBudgets {
		r := *q
		r.GroupBudgets = append(append([]GroupBudget(nil), q.GroupBudgets[:g]...), q.GroupBudgets[g+1:]...)
		s, err := leastShortfall(&r)
		if err != nil {
			return nil, err
		}
		if s <= shortfallFloor {
			e.Groups = append(e.Groups, g)
		}
	}
	if e.Groups == nil {
		e.Together = true
		for g := range q.GroupBudgets {
			e.Groups = append(e.Groups, g)
		}
	}
	return e, nil
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

// extraMoney is a column of ClosingMoney's model: money added to the cap
// of budget (Network or a group) in year (1-based).
type extraMoney struct{ col, budget, year int }

// addExtraMoney adds to m, built by b, a column of extra money for every
// capped budget and year, entering that year's cap row and, with
// carry-over, every later one.
func addExtraMoney(b *builder, m *Model) []extraMoney {
	var extras []extraMoney
	colOf := map[[2]int]int{}
	for _, cr := range b.caps {
		key := [2]int{cr.budget, cr.year}
		if _, ok := colOf[key]; !ok {
			c := m.addCol(fmt.Sprintf("extra%d_%d", cr.budget+2, cr.year), 0)
			colOf[key] = c
			extras = append(extras, extraMoney{c, cr.budget, cr.year})
		}
	}
	for _, cr := range b.caps {
		r := &m.Rows[cr.row]
		r.Entries = append([]Entry(nil), r.Entries...)
		first := cr.year
		if b.p.CarryOver {
			first = 1
		}
		for y := first; y <= cr.year; y++ {
			if c, ok := colOf[[2]int{cr.budget, y}]; ok {
				r.Entries = append(r.Entries, Entry{c, -1})
			}
		}
	}
	return extras
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
	extras := addExtraMoney(b, m)
	var x []float64
	if flatColumns(p) > fundingFlatColumns {
		var err error
		x, err = closingMoneyDecomposed(p, b, m, extras)
		if halted(err) {
			return nil, err
		}
		if err != nil {
			x = nil // the flat model below says why
		}
	}
	if x == nil {
		obj := make([]float64, len(m.Cols))
		for _, e := range extras {
			obj[e.col] = p.discount(e.year - 1)
		}
		pv := append(b.objectiveOf(MinCost), make([]float64, len(extras))...)
		lr, err := settle(m, p, []objectiveSpec{{obj: obj}, {obj: pv}}, func() (bool, error) { return reachable(p) })
		if err != nil {
			return nil, err
		}
		x = lr.x
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
