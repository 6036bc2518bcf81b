package optimize

import (
	"errors"
	"fmt"
)

// Status is the outcome of a plan.
type Status string

const (
	// Optimal: every target holds and the objective is optimal.
	Optimal Status = "optimal"
	// TargetsNotMet: the targets cannot all be met within the budgets; the
	// plan is the one with the least total shortfall (see Plan.Shortfalls).
	TargetsNotMet Status = "targets-not-met"
	// Infeasible: the budgets alone cannot hold (never for well-formed input).
	Infeasible Status = "infeasible"
)

// Shortfall is how far a plan misses one target in one year: share points
// (0-1) for share targets, score points (0-100) for score targets.
type Shortfall struct {
	Target int
	Year   int
	Amount float64
}

// Stats describes the model that was solved.
type Stats struct {
	Rows, Cols, Nonzeros int
	// Solves counts solver calls (a lexicographic plan needs two).
	Solves int
	// Method is the solver that made the plan: "flat" or "decomposed".
	// For a decomposed plan, Rows and Cols describe the last master LP and
	// Nonzeros is zero; Iterations counts pricing rounds over all stages,
	// Columns the policies generated, and Gap is the largest proven
	// relative optimality gap of any stage.
	Method     string
	Iterations int
	Columns    int
	Gap        float64
	// Restarts counts master solves that lp_solve could not finish from
	// the last basis and that were solved again from scratch.
	Restarts int
	// Path names the way lp_solve was run when the first way failed (its
	// settings, the re-ordered model, the other method); empty otherwise.
	Path string
	// TieBreakMissed: no path solved the tie-break objective, and the plan
	// is optimal in the primary objective only.
	TieBreakMissed bool
}

// Plan is an optimised work program.
type Plan struct {
	Status Status
	// Work[k][t][i][a] is the quantity of class k in state i treated with
	// action a in year t (0-based; action 0 is do nothing).
	Work [][][][]float64
	// Condition[k][t][i] is the quantity of class k in state i at the end of
	// year t; Condition[k][0] is today's.
	Condition [][][]float64
	// Spend[k][t] is nominal treatment spend on class k in year t.
	Spend [][]float64
	// Routine[k][t] is the nominal routine cost of class k's untreated
	// quantity in year t (zero without routine costs).
	Routine [][]float64
	// ConditionScore is the mean over the horizon of the network score, 0-100.
	ConditionScore float64
	// TotalCost is nominal treatment spend over the horizon; PresentValue
	// discounts it. RoutineCost and RoutinePresentValue are the same for
	// routine costs, which they do not include.
	TotalCost, PresentValue          float64
	RoutineCost, RoutinePresentValue float64
	Shortfalls                       []Shortfall
	Stats                            Stats
	// Warnings say where the plan may fall short of the optimum (see
	// SolveWith); empty for a plan proven optimal.
	Warnings []string
}

// BuildModel returns the flat LP of the problem with its primary objective,
// the model that Solve hands to lp_solve first and that WriteMPS exports.
func BuildModel(p *Problem) (*Model, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	b := newBuilder(p)
	m := b.build()
	m.Notes = b.legend()
	return m, nil
}

// Solve plans the problem with the flat LP.
func Solve(p *Problem) (*Plan, error) {
	r, err := solveFlat(p)
	if err != nil {
		return nil, err
	}
	if r.status == Infeasible {
		return &Plan{Status: Infeasible, Stats: r.stats}, nil
	}
	plan := r.b.readPlan(r.x, r.slacks)
	plan.Status = r.status
	plan.Stats = r.stats
	if r.status == TargetsNotMet && len(plan.Shortfalls) == 0 {
		// The slack is below reporting precision: the targets hold to within
		// solver tolerance, so the infeasibility was numerical noise.
		plan.Status = Optimal
	}
	return plan, nil
}

// flatResult is the raw outcome of solveFlat: column values of the primary
// model (plus slack columns when elastic) and where the slacks are.
type flatResult struct {
	b      *builder
	x      []float64
	slacks []slackCol
	stats  Stats
	status Status
}

func solveFlat(p *Problem) (*flatResult, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	b := newBuilder(p)
	m := b.build()
	primary := objectiveSpec{obj: m.Obj, maximize: m.Maximize}
	secondary := objectiveSpec{obj: b.objectiveOf(other(p.Objective)), maximize: other(p.Objective) == MaxCondition}
	r := &flatResult{b: b, stats: Stats{Rows: len(m.Rows), Cols: len(m.Cols), Nonzeros: m.Nonzeros()}}
	fits := doNothingFits(p)
	if !fits {
		// Doing nothing overspends a cap (routine costs counted against
		// it): whether any plan keeps the budgets is settled first, by an
		// LP that always has an answer, so that lp_solve's "infeasible" is
		// never taken on trust.
		excess, lr, err := leastExcess(m, p, b.capRowIndexes(), b.targetRowIndexes())
		r.note(lr)
		if err != nil {
			return nil, err
		}
		if excess > infeasibleExcess {
			r.status = Infeasible
			return r, nil
		}
		fits = true
	}

	// With targets, lp_solve's "infeasible" sends the plan to the elastic
	// model, which settles it; without, doing nothing is a plan whenever
	// it keeps the budgets.
	lr, err := lexicographic(m, p, []objectiveSpec{primary, secondary}, fits && len(p.Targets) == 0)
	r.note(lr)
	if err == nil {
		r.x, r.status = lr.x, Optimal
		return r, nil
	}
	if !errors.Is(err, ErrInfeasible) {
		return nil, err
	}
	// Elastic model: a slack on every target row, least total slack first.
	em, slackCols := b.elastic()
	slack := make([]float64, len(em.Cols))
	for _, c := range slackCols {
		slack[c.col] = 1
	}
	pad := func(o []float64) []float64 {
		return append(append([]float64(nil), o...), make([]float64, len(slackCols))...)
	}
	objs := []objectiveSpec{{obj: slack}, {obj: pad(primary.obj), maximize: primary.maximize}, {obj: pad(secondary.obj), maximize: secondary.maximize}}
	lr, err = lexicographic(em, p, objs, fits)
	r.note(lr)
	if errors.Is(err, ErrInfeasible) {
		r.status = Infeasible
		return r, nil
	}
	if err != nil {
		return nil, err
	}
	r.x, r.slacks, r.status = lr.x, slackCols, TargetsNotMet
	return r, nil
}

// note adds a lexicographic solve's counts and path to the stats.
func (r *flatResult) note(lr *lexResult) {
	r.stats.note(lr)
}

// note adds a lexicographic solve's counts and path to the stats.
func (s *Stats) note(lr *lexResult) {
	if lr == nil {
		return
	}
	s.Solves += lr.solves
	if lr.path != "" {
		s.Path = lr.path
	}
	if lr.partial {
		s.TieBreakMissed = true
	}
}

func other(o Objective) Objective {
	if o == MaxCondition {
		return MinCost
	}
	return MaxCondition
}

type slackCol struct {
	col, target, year int
}

// elastic returns a copy of the built model with a slack column on every
// target row, and where those columns are.
func (b *builder) elastic() (*Model, []slackCol) {
	em := &Model{Name: b.m.Name, Cols: append([]string(nil), b.m.Cols...), Obj: make([]float64, len(b.m.Cols)), Maximize: false}
	em.Rows = make([]Row, len(b.m.Rows))
	copy(em.Rows, b.m.Rows)
	var cols []slackCol
	for n, rows := range b.targetRows {
		for _, tr := range rows {
			c := em.addCol(fmt.Sprintf("short%d_%d", n+1, tr.year), 0)
			r := em.Rows[tr.row]
			sign := 1.0
			if r.Sense == LessEq {
				sign = -1
			}
			r.Entries = append(append([]Entry(nil), r.Entries...), Entry{c, sign})
			em.Rows[tr.row] = r
			cols = append(cols, slackCol{col: c, target: n, year: tr.year})
		}
	}
	return em, cols
}

// shortfallFloor is the smallest slack reported as a shortfall: 1e-7 of a
// share or of a score point on the model's 0-1 scale is far below anything
// a planner can read, and well above solver noise.
const shortfallFloor = 1e-7

// leastExcess is the least total spend over the budget rows (capRows of
// m), in model money units, of any answer to m without its target rows:
// each budget row gets an excess column, and their sum is minimised. The
// model always has an answer (take every excess large enough), so its
// optimum settles whether the budgets can hold without trusting a solver's
// "infeasible".
func leastExcess(m *Model, p *Problem, capRows, targetRows []int) (float64, *lexResult, error) {
	em := &Model{Name: m.Name, Cols: append([]string(nil), m.Cols...), Obj: make([]float64, len(m.Cols))}
	drop := make([]bool, len(m.Rows))
	for _, r := range targetRows {
		drop[r] = true
	}
	at := make([]int, len(m.Rows)) // each kept row's place in em
	for i, row := range m.Rows {
		if !drop[i] {
			at[i] = len(em.Rows)
			em.Rows = append(em.Rows, row)
		}
	}
	for _, r := range capRows {
		row := &em.Rows[at[r]]
		c := em.addCol("excess_"+row.Name, 1)
		row.Entries = append(append([]Entry(nil), row.Entries...), Entry{c, -1})
	}
	lr, err := lexicographic(em, p, []objectiveSpec{{obj: em.Obj}}, true)
	if err != nil {
		return 0, lr, fmt.Errorf("least overspend of the budgets: %w", err)
	}
	return em.Value(lr.x), lr, nil
}

// capRowIndexes and targetRowIndexes list the model rows of the budgets
// and of the targets.
func (b *builder) capRowIndexes() []int {
	out := make([]int, len(b.caps))
	for i, cr := range b.caps {
		out[i] = cr.row
	}
	return out
}

func (b *builder) targetRowIndexes() []int {
	var out []int
	for _, rows := range b.targetRows {
		for _, tr := range rows {
			out = append(out, tr.row)
		}
	}
	return out
}

// doNothingFits reports whether leaving everything untreated keeps every
// budget cap and least spend: it costs nothing unless routine costs count
// against the budget, so a least spend above zero never fits.
func doNothingFits(p *Problem) bool {
	if !p.RoutineInBudget {
		for _, m := range p.MinSpends {
			for _, v := range m.Yearly {
				if v > 0 {
					return false
				}
			}
		}
		return true
	}
	spend := make([][]float64, len(p.Classes)) // [class][year]
	for k := range p.Classes {
		c := &p.Classes[k]
		spend[k] = make([]float64, p.Horizon)
		q := append([]float64(nil), c.Initial...)
		for t := 0; t < p.Horizon; t++ {
			next := make([]float64, len(q))
			for i, v := range q {
				if c.Routine != nil {
					spend[k][t] += v * c.Routine[i] * p.escalation(t)
				}
				for j, pj := range c.Actions[0].Rows[i] {
					next[j] += v * pj
				}
			}
			q = next
		}
	}
	fits := func(caps []float64, classes []int) bool {
		cum, capSum := 0.0, 0.0
		for t := 0; t < p.Horizon; t++ {
			s := 0.0
			for _, k := range p.classesOf(classes) {
				s += spend[k][t]
			}
			cum += s
			capSum += caps[t]
			used, limit := s, caps[t]
			if p.CarryOver {
				used, limit = cum, capSum
			}
			if used > limit*(1+1e-9)+1e-9 {
				return false
			}
		}
		return true
	}
	if p.Budget != nil && !fits(p.Budget, nil) {
		return false
	}
	for _, g := range p.GroupBudgets {
		if !fits(g.Yearly, g.Classes) {
			return false
		}
	}
	for _, m := range p.MinSpends {
		for t := 0; t < p.Horizon; t++ {
			s := 0.0
			for _, k := range m.Classes {
				s += spend[k][t]
			}
			if s < m.Yearly[t]*(1-1e-9)-1e-9 {
				return false
			}
		}
	}
	return true
}
