package optimize

import (
	"errors"
	"fmt"
	"math"
)

// LongRun is the steady-state policy of the Markov decision linear program
// of Golabi, Kulkarni and Way (1982): what is done each year, forever, and
// the condition it sustains.
type LongRun struct {
	Status Status
	// Policy[k][i][a] is the long-run quantity of class k in state i
	// treated with action a each year (action 0 is do nothing).
	Policy [][][]float64
	// Distribution[k][i] is the long-run quantity of class k in state i
	// (the same at the start and at the end of every year).
	Distribution [][]float64
	// Treatment[k] and Routine[k] are class k's annual treatment spend and
	// routine cost at start-year prices.
	Treatment, Routine []float64
	// Score is the long-run network condition score (0-100).
	Score float64
	// AnnualTreatment and AnnualRoutine are the network's annual totals.
	AnnualTreatment, AnnualRoutine float64
	// Shortfalls says how far each target misses in the long run (Year 0)
	// when the status is TargetsNotMet.
	Shortfalls []Shortfall
	Stats      Stats
}

// AnnualCost is treatment spend plus routine cost per year.
func (l *LongRun) AnnualCost() float64 { return l.AnnualTreatment + l.AnnualRoutine }

// longRunBuilder writes the steady-state LP. Columns are w[k,i,a], the
// long-run share of class k in state i at the start of a year that is
// treated with a, over the same applicable (state, action) pairs as the
// plan; the per-pair coefficients (classTerms) are the plan's.
type longRunBuilder struct {
	p          *Problem
	pairs      [][]pair
	base       []int
	terms      []classTerms
	weights    []float64
	moneyUnit  float64
	m          Model
	targetRows []int // per target, -1 when none
	capRows    []int
}

// SolveLongRun solves the steady-state problem of p: for each class,
//
//	Σ_a w[k,j,a] = Σ_{i,a} w[k,i,a]·M[k,a](i,j)   (balance, every state j)
//	Σ_{i,a} w[k,i,a] = 1                         (shares of the class total)
//
// with the targets on long-run group or state shares or scores (their
// years are ignored; Hold asks for a long-run score no lower than today's),
// the network budget and the group caps of the first year (start-year
// prices) as annual caps on Σ w·cost, the first year's least spends as
// annual floors on it, and the objective of p: MinCost minimises the
// annual cost (treatment plus routine), MaxCondition maximises the long-run
// network score. Ties are broken as in the plan (the other objective
// second). When the targets cannot all hold under the caps, the least total
// shortfall is found first, as in the plan's elastic model.
//
// Costs are at start-year prices: escalation and discounting do not enter a
// steady state.
func SolveLongRun(p *Problem) (*LongRun, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	p = p.bindingCaps()
	b := &longRunBuilder{p: p, weights: p.Weights(), pairs: make([][]pair, len(p.Classes)), base: make([]int, len(p.Classes)), terms: make([]classTerms, len(p.Classes))}
	lay := newLayout(p)
	next := 0
	for k := range p.Classes {
		b.pairs[k] = lay.pairs[k]
		b.base[k] = next
		next += len(b.pairs[k])
		b.terms[k] = termsOf(&p.Classes[k], b.pairs[k])
	}
	b.moneyUnit = moneyUnit(p, b.terms)
	m := b.build()
	primary := objectiveSpec{obj: b.objectiveOf(p.Objective), maximize: p.Objective == MaxCondition}
	secondary := objectiveSpec{obj: b.objectiveOf(other(p.Objective)), maximize: other(p.Objective) == MaxCondition}
	lr := &LongRun{Stats: Stats{Rows: len(m.Rows), Cols: len(m.Cols), Nonzeros: m.Nonzeros()}}
	note := func(res *lexResult) {
		if res != nil {
			lr.Stats.Solves += res.solves
			if res.path != "" {
				lr.Stats.Path = res.path
			}
			lr.Stats.TieBreakMissed = lr.Stats.TieBreakMissed || res.partial
		}
	}
	// Every policy has a steady state, so the caps alone can fail only
	// when routine costs count against them; then an LP that always has
	// an answer settles it first.
	var targetRows []int
	for _, r := range b.targetRows {
		if r >= 0 {
			targetRows = append(targetRows, r)
		}
	}
	if p.RoutineInBudget && len(b.capRows) > 0 {
		excess, res, err := leastExcess(m, p, b.capRows, targetRows)
		note(res)
		if err != nil {
			return nil, err
		}
		if excess > infeasibleExcess {
			lr.Status = Infeasible
			return lr, nil
		}
	}
	// Doing nothing keeps the caps here (checked above when routine costs
	// count), so the model has a plan unless targets or least spends ask
	// for more: only then may lp_solve's "infeasible" be believed.
	fits := true
	for _, ms := range p.MinSpends {
		if ms.Yearly[0] > 0 {
			fits = false
		}
	}
	res, err := lexicographic(m, p, []objectiveSpec{primary, secondary}, fits && len(p.Targets) == 0)
	note(res)
	if err == nil {
		lr.Status = Optimal
		b.read(lr, res.x)
		return lr, nil
	}
	if !errors.Is(err, ErrInfeasible) {
		return nil, err
	}
	// Elastic: a slack on every target row, least total slack first.
	em := &Model{Name: m.Name, Cols: append([]string(nil), m.Cols...), Obj: make([]float64, len(m.Cols))}
	em.Rows = append([]Row(nil), m.Rows...)
	slackOf := make([]int, len(p.Targets))
	for t, r := range b.targetRows {
		slackOf[t] = -1
		if r < 0 {
			continue
		}
		c := em.addCol(fmt.Sprintf("short%d", t+1), 0)
		slackOf[t] = c
		row := em.Rows[r]
		sign := 1.0
		if row.Sense == LessEq {
			sign = -1
		}
		row.Entries = append(append([]Entry(nil), row.Entries...), Entry{c, sign})
		em.Rows[r] = row
	}
	slack := make([]float64, len(em.Cols))
	for _, c := range slackOf {
		if c >= 0 {
			slack[c] = 1
		}
	}
	pad := func(o []float64) []float64 {
		return append(append([]float64(nil), o...), make([]float64, len(em.Cols)-len(o))...)
	}
	res, err = lexicographic(em, p, []objectiveSpec{{obj: slack}, {obj: pad(primary.obj), maximize: primary.maximize}, {obj: pad(secondary.obj), maximize: secondary.maximize}}, fits)
	note(res)
	if errors.Is(err, ErrInfeasible) {
		lr.Status = Infeasible // a least spend no plan can meet
		return lr, nil
	}
	if err != nil {
		return nil, err
	}
	x := res.x
	lr.Status = TargetsNotMet
	b.read(lr, x)
	for t, c := range slackOf {
		if c < 0 || x[c] <= shortfallFloor {
			continue
		}
		v := x[c]
		if k := p.Targets[t].Kind; k == MinScore || k == Hold {
			v *= 100
		}
		lr.Shortfalls = append(lr.Shortfalls, Shortfall{Target: t, Amount: v})
	}
	if len(lr.Shortfalls) == 0 {
		lr.Status = Optimal
	}
	return lr, nil
}

func (b *longRunBuilder) col(k, n int) int { return b.base[k] + n }

func (b *longRunBuilder) build() *Model {
	p := b.p
	m := &b.m
	m.Name = "wearplan-longrun"
	for k := range p.Classes {
		for _, pr := range b.pairs[k] {
			m.addCol(fmt.Sprintf("w%d_%d_%d", k+1, pr.state+1, pr.action), 0)
		}
	}
	for k := range p.Classes {
		c := &p.Classes[k]
		byState := make([][]Entry, len(c.Initial))
		var all []Entry
		for n, pr := range b.pairs[k] {
			byState[pr.state] = append(byState[pr.state], Entry{b.col(k, n), 1})
			all = append(all, Entry{b.col(k, n), 1})
		}
		for n, pr := range b.pairs[k] {
			for j, pj := range c.Actions[pr.action].Rows[pr.state] {
				if pj != 0 {
					byState[j] = append(byState[j], Entry{b.col(k, n), -pj})
				}
			}
		}
		for j, e := range byState {
			m.addRow(Row{Name: fmt.Sprintf("balance%d_%d", k+1, j+1), Entries: mergeEntries(e), Sense: Equal})
		}
		m.addRow(Row{Name: fmt.Sprintf("total%d", k+1), Entries: all, Sense: Equal, RHS: 1})
	}
	annual := func(classes []int) []Entry {
		var out []Entry
		for _, k := range classes {
			for n, c := range b.terms[k].cost {
				if p.RoutineInBudget {
					c += b.terms[k].routine[n]
				}
				if c != 0 {
					out = append(out, Entry{b.col(k, n), c / b.moneyUnit})
				}
			}
		}
		return out
	}
	all := make([]int, len(p.Classes))
	for k := range all {
		all[k] = k
	}
	if p.Budget != nil && !math.IsInf(p.Budget[0], 1) {
		if e := annual(all); len(e) > 0 {
			b.capRows = append(b.capRows, m.addRow(Row{Name: "budget", Entries: e, Sense: LessEq, RHS: p.Budget[0] / b.moneyUnit}))
		}
	}
	for g, gb := range p.GroupBudgets {
		if math.IsInf(gb.Yearly[0], 1) {
			continue
		}
		if e := annual(gb.Classes); len(e) > 0 {
			b.capRows = append(b.capRows, m.addRow(Row{Name: fmt.Sprintf("groupbudget%d", g+1), Entries: e, Sense: LessEq, RHS: gb.Yearly[0] / b.moneyUnit}))
		}
	}
	for f, ms := range p.MinSpends {
		if ms.Yearly[0] <= 0 {
			continue
		}
		if e := annual(ms.Classes); len(e) > 0 {
			m.addRow(Row{Name: fmt.Sprintf("minspend%d", f+1), Entries: e, Sense: GreaterEq, RHS: ms.Yearly[0] / b.moneyUnit})
		}
	}
	// Targets reuse the plan's measures and bounds through a plan builder
	// over a one-year horizon, whose columns are laid out like these.
	pb := &builder{p: p, lay: layout{pairs: b.pairs, base: b.base}, terms: b.terms, weights: b.weights}
	b.targetRows = make([]int, len(p.Targets))
	for n := range p.Targets {
		tg := &p.Targets[n]
		sense, rhs := pb.targetBound(tg)
		e := pb.conditionEntries(tg, 0)
		b.targetRows[n] = m.addRow(Row{Name: fmt.Sprintf("target%d", n+1), Entries: e, Sense: sense, RHS: rhs})
	}
	m.Obj = b.objectiveOf(p.Objective)
	m.Maximize = p.Objective == MaxCondition
	return m
}

// clean reads values within 1e-11 of zero as zero.
func clean(v float64) float64 {
	if math.Abs(v) < 1e-11 {
		return 0
	}
	return v
}

// mergeEntries sums entries of the same column (a state that an action
// keeps appears on both sides of its balance row).
func mergeEntries(e []Entry) []Entry {
	idx := map[int]int{}
	var out []Entry
	for _, en := range e {
		if i, ok := idx[en.Col]; ok {
			out[i].Val += en.Val
			continue
		}
		idx[en.Col] = len(out)
		out = append(out, en)
	}
	kept := out[:0]
	for _, en := range out {
		if en.Val != 0 {
			kept = append(kept, en)
		}
	}
	return kept
}

func (b *longRunBuilder) objectiveOf(o Objective) []float64 {
	obj := make([]float64, len(b.m.Cols))
	for k := range b.p.Classes {
		for n := range b.pairs[k] {
			if o == MaxCondition {
				obj[b.col(k, n)] = b.weights[k] * b.terms[k].endScore[n] / 100
			} else {
				obj[b.col(k, n)] = (b.terms[k].cost[n] + b.terms[k].routine[n]) / b.moneyUnit
			}
		}
	}
	return obj
}

func (b *longRunBuilder) read(lr *LongRun, x []float64) {
	p := b.p
	nk := len(p.Classes)
	lr.Policy = make([][][]float64, nk)
	lr.Distribution = make([][]float64, nk)
	lr.Treatment = make([]float64, nk)
	lr.Routine = make([]float64, nk)
	for k := range p.Classes {
		c := &p.Classes[k]
		tot := c.Total()
		lr.Policy[k] = make([][]float64, len(c.Initial))
		for i := range lr.Policy[k] {
			lr.Policy[k][i] = make([]float64, len(c.Actions))
		}
		lr.Distribution[k] = make([]float64, len(c.Initial))
		for n, pr := range b.pairs[k] {
			v := clean(x[b.col(k, n)])
			if v < 0 {
				v = 0
			}
			q := v * tot
			lr.Policy[k][pr.state][pr.action] = q
			lr.Distribution[k][pr.state] += q
			lr.Treatment[k] += q * c.Actions[pr.action].Cost[pr.state]
			if pr.action == 0 && c.Routine != nil {
				lr.Routine[k] += q * c.Routine[pr.state]
			}
		}
		lr.Score += b.weights[k] * c.ScoreOf(lr.Distribution[k])
		lr.AnnualTreatment += lr.Treatment[k]
		lr.AnnualRoutine += lr.Routine[k]
	}
}
