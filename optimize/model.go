package optimize

import (
	"fmt"
	"math"
)

// Sense is the direction of a constraint row.
type Sense int

const (
	LessEq Sense = iota
	GreaterEq
	Equal
)

// Entry is one non-zero coefficient of a row.
type Entry struct {
	Col int
	Val float64
}

// Row is one constraint: Σ entries (sense) RHS.
type Row struct {
	Name    string
	Entries []Entry
	Sense   Sense
	RHS     float64
}

// Model is a linear program over non-negative columns, held as plain data so
// that the same model can be solved by lp_solve, written as MPS, or handed to
// a reference solver in tests.
type Model struct {
	Name     string
	Cols     []string
	Obj      []float64
	Rows     []Row
	Maximize bool
	// Notes explain the model to a reader of an exported file (what the
	// columns, rows and units are); writers print them as comments.
	Notes []string
}

func (m *Model) addCol(name string, obj float64) int {
	m.Cols = append(m.Cols, name)
	m.Obj = append(m.Obj, obj)
	return len(m.Cols) - 1
}

func (m *Model) addRow(r Row) int {
	m.Rows = append(m.Rows, r)
	return len(m.Rows) - 1
}

// Nonzeros counts the constraint coefficients.
func (m *Model) Nonzeros() int {
	n := 0
	for _, r := range m.Rows {
		n += len(r.Entries)
	}
	return n
}

// Value is the objective at column values x.
func (m *Model) Value(x []float64) float64 {
	s := 0.0
	for j, c := range m.Obj {
		s += c * x[j]
	}
	return s
}

// pair is an applicable (state, action) combination of a class.
type pair struct{ state, action int }

// layout fixes the column order of the flat model: class-major, then year,
// then the class's applicable (state, action) pairs.
type layout struct {
	pairs [][]pair // per class
	base  []int    // first column of each class
}

func newLayout(p *Problem) layout {
	l := layout{pairs: make([][]pair, len(p.Classes)), base: make([]int, len(p.Classes))}
	next := 0
	for k := range p.Classes {
		c := &p.Classes[k]
		for i := range c.Initial {
			for a := range c.Actions {
				if c.Actions[a].Applies[i] {
					l.pairs[k] = append(l.pairs[k], pair{i, a})
				}
			}
		}
		l.base[k] = next
		next += p.Horizon * len(l.pairs[k])
	}
	return l
}

func (l layout) col(k, t, n int) int { return l.base[k] + t*len(l.pairs[k]) + n }

// classTerms holds per-pair coefficients that rows and objectives reuse.
// Columns are shares of the class total, so these are per share.
type classTerms struct {
	cost     []float64    // nominal start-year cost of treating the whole class
	routine  []float64    // start-year routine cost of leaving the whole class untreated
	endScore []float64    // expected score at the end of the year
	endGroup [][3]float64 // expected group shares at the end of the year
}

func termsOf(c *Class, pairs []pair) classTerms {
	tot := c.Total()
	ct := classTerms{cost: make([]float64, len(pairs)), routine: make([]float64, len(pairs)), endScore: make([]float64, len(pairs)), endGroup: make([][3]float64, len(pairs))}
	for n, pr := range pairs {
		a := &c.Actions[pr.action]
		ct.cost[n] = a.Cost[pr.state] * tot
		if pr.action == 0 && c.Routine != nil {
			ct.routine[n] = c.Routine[pr.state] * tot
		}
		for j, pj := range a.Rows[pr.state] {
			ct.endScore[n] += pj * c.Score[j]
			ct.endGroup[n][c.Group[j]] += pj
		}
	}
	return ct
}

// builder assembles the flat model and remembers which rows are which, so
// that the elastic variant and the solution reader can find them.
type builder struct {
	p          *Problem
	lay        layout
	terms      []classTerms
	weights    []float64
	moneyUnit  float64
	m          Model
	targetRows [][]targetRow // per target
	caps       []capRow      // budget rows, in the order written
	floors     []capRow      // least-spend rows (budget: the MinSpend index)
	// anonymous: build the model without column and row names, for a
	// check that needs only the numbers (decomposer.verify).
	anonymous bool
}

// name formats a column or row name, or returns "" for an anonymous model.
func (b *builder) name(format string, args ...any) string {
	if b.anonymous {
		return ""
	}
	return fmt.Sprintf(format, args...)
}

// capRow is one budget row: which cap (Network or a group index) and the
// year it caps (1-based). With carry-over the row caps cumulative spend of
// years 1..year.
type capRow struct {
	row, budget, year int
}

type targetRow struct {
	row  int
	year int // 1-based
}

func newBuilder(p *Problem) *builder {
	p = p.bindingCaps()
	b := &builder{p: p, lay: newLayout(p), weights: p.Weights()}
	b.terms = make([]classTerms, len(p.Classes))
	for k := range p.Classes {
		b.terms[k] = termsOf(&p.Classes[k], b.lay.pairs[k])
	}
	b.moneyUnit = moneyUnit(p, b.terms)
	return b
}

// moneyUnit picks the unit money is measured in inside the model: the
// largest finite yearly cap, kept between a thousandth of and the cost of
// treating the largest class with its dearest treatment (that cost alone
// without caps). Either keeps budget rows near 1, and the clamp keeps a
// budget far below the cost of any work (a zero or tiny budget) from
// making the costs huge in the model's units. Caps too large to bind never
// reach this (see bindingCaps).
func moneyUnit(p *Problem, terms []classTerms) float64 {
	dearest := 0.0
	for _, t := range terms {
		for n, c := range t.cost {
			dearest = math.Max(dearest, math.Max(c, t.routine[n]))
		}
	}
	u := 0.0
	for _, b := range p.Budget {
		if !math.IsInf(b, 1) {
			u = math.Max(u, b)
		}
	}
	for _, g := range p.GroupBudgets {
		for _, b := range g.Yearly {
			if !math.IsInf(b, 1) {
				u = math.Max(u, b)
			}
		}
	}
	switch {
	case dearest > 0 && u > 0:
		return math.Min(math.Max(u, 1e-3*dearest), dearest)
	case u > 0:
		return u
	case dearest > 0:
		return dearest
	}
	return 1
}

// bindingCaps returns p with every cap that no plan can reach lifted (set
// to +Inf): a cap at least the most that taking the dearest action on
// every unit of the classes it covers could cost that year (with
// carry-over: a run of caps to the horizon whose every cumulative sum is at
// least that much, summed). Such a row never binds, and leaving it out
// keeps a budget a trillion times the network's value from putting 1e12 on
// the right-hand side of a row whose terms are near 1. It returns p itself
// when no cap is lifted.
func (p *Problem) bindingCaps() *Problem {
	most := make([][]float64, len(p.Classes)) // [class][year]
	for k := range p.Classes {
		c := &p.Classes[k]
		top := 0.0
		for i := range c.Initial {
			for a, act := range c.Actions {
				if !act.Applies[i] {
					continue
				}
				v := act.Cost[i]
				if a == 0 && p.RoutineInBudget && c.Routine != nil {
					v += c.Routine[i]
				}
				top = math.Max(top, v)
			}
		}
		most[k] = make([]float64, p.Horizon)
		for t := range most[k] {
			most[k][t] = top * c.Total() * p.escalation(t)
		}
	}
	lift := func(caps []float64, classes []int) []float64 {
		reaches := func(limit, reach float64) bool { return limit >= reach*(1+1e-9)+1e-9 }
		out := append([]float64(nil), caps...)
		lifted := false
		if !p.CarryOver {
			for t, cp := range caps {
				reach := 0.0
				for _, k := range classes {
					reach += most[k][t]
				}
				if !math.IsInf(cp, 1) && reaches(cp, reach) {
					out[t], lifted = math.Inf(1), true
				}
			}
		} else {
			// The cumulative rows from year t0 on never bind when each of
			// them does not: lift every cap from t0.
			limit, reach := make([]float64, len(caps)), make([]float64, len(caps))
			for t, cp := range caps {
				for _, k := range classes {
					reach[t] += most[k][t]
				}
				limit[t] = cp
				if t > 0 {
					limit[t] += limit[t-1]
					reach[t] += reach[t-1]
				}
			}
			t0 := len(caps)
			for t := len(caps) - 1; t >= 0 && reaches(limit[t], reach[t]); t-- {
				t0 = t
			}
			for t := t0; t < len(caps); t++ {
				if !math.IsInf(out[t], 1) {
					out[t], lifted = math.Inf(1), true
				}
			}
		}
		if !lifted {
			return nil
		}
		return out
	}
	all := make([]int, len(p.Classes))
	for k := range all {
		all[k] = k
	}
	q := *p
	changed := false
	if p.Budget != nil {
		if b := lift(p.Budget, all); b != nil {
			q.Budget, changed = b, true
		}
	}
	copied := false
	for g, gb := range p.GroupBudgets {
		if y := lift(gb.Yearly, gb.Classes); y != nil {
			if !copied {
				q.GroupBudgets, copied = append([]GroupBudget(nil), p.GroupBudgets...), true
			}
			q.GroupBudgets[g].Yearly, changed = y, true
		}
	}
	if !changed {
		return p
	}
	return &q
}

// build writes the primary model: columns, flow rows, budget rows, target
// rows and the objective of p.Objective.
func (b *builder) build() *Model {
	p := b.p
	m := &b.m
	m.Name = "wearplan"
	for k := range p.Classes {
		for t := 0; t < p.Horizon; t++ {
			for _, pr := range b.lay.pairs[k] {
				m.addCol(b.name("x%d_%d_%d_%d", k+1, t+1, pr.state+1, pr.action), 0)
			}
		}
	}
	b.flowRows()
	b.budgetRows()
	b.floorRows()
	b.targetRows = make([][]targetRow, len(p.Targets))
	for n := range p.Targets {
		b.addTarget(n)
	}
	b.setObjective(p.Objective)
	return m
}

func (b *builder) flowRows() {
	p := b.p
	for k := range p.Classes {
		c := &p.Classes[k]
		tot := c.Total()
		pairs := b.lay.pairs[k]
		nStates := len(c.Initial)
		for t := 0; t < p.Horizon; t++ {
			byState := make([][]Entry, nStates)
			for n, pr := range pairs {
				byState[pr.state] = append(byState[pr.state], Entry{b.lay.col(k, t, n), 1})
			}
			if t > 0 {
				for n, pr := range pairs {
					row := c.Actions[pr.action].Rows[pr.state]
					for j, pj := range row {
						if pj != 0 {
							byState[j] = append(byState[j], Entry{b.lay.col(k, t-1, n), -pj})
						}
					}
				}
			}
			for j := 0; j < nStates; j++ {
				rhs := 0.0
				if t == 0 {
					rhs = c.Initial[j] / tot
				}
				b.m.addRow(Row{Name: b.name("flow%d_%d_%d", k+1, t+1, j+1), Entries: byState[j], Sense: Equal, RHS: rhs})
			}
		}
	}
}

// spendEntries returns the money entries of year t for the given classes
// (nil = all), in money units: treatment cost, plus routine cost when the
// problem counts it against the budget.
func (b *builder) spendEntries(t int, classes []int) []Entry {
	var out []Entry
	esc := b.p.escalation(t)
	add := func(k int) {
		for n, c := range b.terms[k].cost {
			if b.p.RoutineInBudget {
				c += b.terms[k].routine[n]
			}
			if c != 0 {
				out = append(out, Entry{b.lay.col(k, t, n), c * esc / b.moneyUnit})
			}
		}
	}
	for _, k := range b.p.classesOf(classes) {
		add(k)
	}
	return out
}

// classesOf is classes, or every class's index when classes is nil (a
// network cap or target rather than a group's).
func (p *Problem) classesOf(classes []int) []int {
	if classes != nil {
		return classes
	}
	all := make([]int, len(p.Classes))
	for k := range all {
		all[k] = k
	}
	return all
}

func (b *builder) capRows(name string, budget int, caps []float64, classes []int) {
	cum := 0.0
	var cumEntries []Entry
	for t := 0; t < b.p.Horizon; t++ {
		e := b.spendEntries(t, classes)
		cap := caps[t]
		if b.p.CarryOver {
			cum += cap
			cumEntries = append(cumEntries, e...)
			e = append([]Entry(nil), cumEntries...)
			cap = cum
		}
		if math.IsInf(cap, 1) || len(e) == 0 {
			continue
		}
		r := b.m.addRow(Row{Name: b.name("%s_%d", name, t+1), Entries: e, Sense: LessEq, RHS: cap / b.moneyUnit})
		b.caps = append(b.caps, capRow{row: r, budget: budget, year: t + 1})
	}
}

func (b *builder) budgetRows() {
	if b.p.Budget != nil {
		b.capRows("budget", Network, b.p.Budget, nil)
	}
	for g, gb := range b.p.GroupBudgets {
		b.capRows(fmt.Sprintf("groupbudget%d", g+1), g, gb.Yearly, gb.Classes)
	}
}

// floorRows writes the least-spend rows: the spend of the MinSpend's
// classes in year t at least its amount. A zero amount needs no row.
func (b *builder) floorRows() {
	for m, ms := range b.p.MinSpends {
		for t := 0; t < b.p.Horizon; t++ {
			if ms.Yearly[t] <= 0 {
				continue
			}
			r := b.m.addRow(Row{Name: b.name("minspend%d_%d", m+1, t+1), Entries: b.spendEntries(t, ms.Classes), Sense: GreaterEq, RHS: ms.Yearly[t] / b.moneyUnit})
			b.floors = append(b.floors, capRow{row: r, budget: m, year: t + 1})
		}
	}
}

// conditionEntries returns, for the end of year t (0-based), the entries of
// a target's measure: a group share or the score, for one class or the
// network.
func (b *builder) conditionEntries(tg *Target, t int) []Entry {
	var out []Entry
	add := func(k int, w float64) {
		c := &b.p.Classes[k]
		for n, pr := range b.lay.pairs[k] {
			var v float64
			switch {
			case tg.Kind == MinScore || tg.Kind == Hold:
				v = b.terms[k].endScore[n] / 100
			case tg.States != nil:
				v = tg.endShare(c.Actions[pr.action].Rows[pr.state], c.Group)
			default:
				v = b.terms[k].endGroup[n][tg.Group]
			}
			if v != 0 {
				out = append(out, Entry{b.lay.col(k, t, n), w * v})
			}
		}
	}
	if tg.Class == Network {
		for k := range b.p.Classes {
			add(k, b.weights[k])
		}
	} else {
		add(tg.Class, 1)
	}
	return out
}

// targetBound returns the sense and right-hand side of a target row, scores
// measured on 0-1 inside the model.
func (b *builder) targetBound(tg *Target) (Sense, float64) {
	switch tg.Kind {
	case MaxShare:
		return LessEq, tg.Value
	case MinShare:
		return GreaterEq, tg.Value
	case MinScore:
		return GreaterEq, tg.Value / 100
	default: // Hold
		return GreaterEq, b.p.InitialScore(tg.Class) / 100
	}
}

func (b *builder) addTarget(n int) {
	tg := &b.p.Targets[n]
	from, to := tg.From, tg.To
	if tg.Kind == Hold {
		from, to = b.p.Horizon, b.p.Horizon
	}
	sense, rhs := b.targetBound(tg)
	for y := from; y <= to; y++ {
		r := b.m.addRow(Row{Name: b.name("target%d_%d", n+1, y), Entries: b.conditionEntries(tg, y-1), Sense: sense, RHS: rhs})
		b.targetRows[n] = append(b.targetRows[n], targetRow{row: r, year: y})
	}
}

// objectiveOf returns the coefficients of an objective over the structural
// columns: the mean network score on 0-1 for MaxCondition, the present value
// of spending in money units for MinCost.
func (b *builder) objectiveOf(o Objective) []float64 {
	p := b.p
	obj := make([]float64, b.structural())
	for k := range p.Classes {
		for t := 0; t < p.Horizon; t++ {
			for n := range b.lay.pairs[k] {
				j := b.lay.col(k, t, n)
				if o == MaxCondition {
					obj[j] = b.weights[k] * b.terms[k].endScore[n] / 100 / float64(p.Horizon)
				} else {
					obj[j] = (b.terms[k].cost[n] + b.terms[k].routine[n]) * p.escalation(t) * p.discount(t) / b.moneyUnit
				}
			}
		}
	}
	return obj
}

// structural is the number of plan columns (before any slack).
func (b *builder) structural() int {
	n := 0
	for k := range b.lay.pairs {
		n += b.p.Horizon * len(b.lay.pairs[k])
	}
	return n
}

func (b *builder) setObjective(o Objective) {
	obj := b.objectiveOf(o)
	for j := range b.m.Obj {
		b.m.Obj[j] = 0
		if j < len(obj) {
			b.m.Obj[j] = obj[j]
		}
	}
	b.m.Maximize = o == MaxCondition
}

// InitialScore is today's condition score (0-100) of a class, or of the
// network for Network.
func (p *Problem) InitialScore(class int) float64 {
	if class != Network {
		c := &p.Classes[class]
		return c.ScoreOf(c.Initial)
	}
	w := p.Weights()
	s := 0.0
	for k := range p.Classes {
		s += w[k] * p.Classes[k].ScoreOf(p.Classes[k].Initial)
	}
	return s
}
