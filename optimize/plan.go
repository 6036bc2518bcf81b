package optimize

import (
	"errors"
	"fmt"
	"math"
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

	x, solves, err := lexicographic(m, p, []objectiveSpec{primary, secondary})
	r.stats.Solves = solves
	if err == nil {
		r.x, r.status = x, Optimal
		return r, nil
	}
	if !errors.Is(err, ErrInfeasible) {
		return nil, err
	}
	if len(p.Targets) == 0 {
		return r, infeasibleOrFailure(p, r)
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
	x, n, err := lexicographic(em, p, objs)
	r.stats.Solves += n
	if errors.Is(err, ErrInfeasible) {
		return r, infeasibleOrFailure(p, r)
	}
	if err != nil {
		return nil, err
	}
	r.x, r.slacks, r.status = x, slackCols, TargetsNotMet
	return r, nil
}

func other(o Objective) Objective {
	if o == MaxCondition {
		return MinCost
	}
	return MaxCondition
}

type objectiveSpec struct {
	obj      []float64
	maximize bool
}

// holdTolerance is how much a held objective may give up in later stages:
// relative 1e-9, absolute 1e-10 near zero (objectives are on 0-1 or in money
// units near 1).
func holdTolerance(z float64) float64 { return 1e-9 * math.Max(math.Abs(z), 0.1) }

// lexicographic optimises the objectives in turn, each later one subject to
// the earlier ones staying at their optimum. It returns the final columns
// and the number of solver calls.
func lexicographic(m *Model, p *Problem, objs []objectiveSpec) ([]float64, int, error) {
	s, err := newLPSolver(m, p.Timeout)
	if errors.Is(err, errEmptyInfeasible) {
		return nil, 0, ErrInfeasible
	}
	if err != nil {
		return nil, 0, err
	}
	var best []float64
	for n, o := range objs {
		s.setObjective(o.obj, o.maximize)
		x, z, err := s.solve()
		if err != nil {
			if n > 0 && !errors.Is(err, ErrInfeasible) && best != nil {
				// A tie-break stage failed numerically: the earlier stage's
				// answer is still optimal for everything that matters.
				return best, n + 1, nil
			}
			return nil, n + 1, err
		}
		best = x
		if n == len(objs)-1 {
			return best, n + 1, nil
		}
		var entries []Entry
		for j, c := range o.obj {
			if c != 0 {
				entries = append(entries, Entry{j, c})
			}
		}
		if len(entries) == 0 {
			continue
		}
		tol := holdTolerance(z)
		hold := Row{Name: fmt.Sprintf("hold%d", n+1), Entries: entries, Sense: LessEq, RHS: z + tol}
		if o.maximize {
			hold.Sense, hold.RHS = GreaterEq, z-tol
		}
		if err := s.addRow(hold); err != nil {
			return nil, n + 1, err
		}
	}
	return best, len(objs), nil
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

func clean(v float64) float64 {
	if math.Abs(v) < 1e-11 {
		return 0
	}
	return v
}

// readPlan turns column values into quantities, condition and money.
func (b *builder) readPlan(x []float64, slacks []slackCol) *Plan {
	p := b.p
	T := p.Horizon
	plan := &Plan{
		Work:      make([][][][]float64, len(p.Classes)),
		Condition: make([][][]float64, len(p.Classes)),
		Spend:     make([][]float64, len(p.Classes)),
		Routine:   make([][]float64, len(p.Classes)),
	}
	for k := range p.Classes {
		c := &p.Classes[k]
		tot := c.Total()
		ns, na := len(c.Initial), len(c.Actions)
		plan.Work[k] = make([][][]float64, T)
		plan.Condition[k] = make([][]float64, T+1)
		plan.Condition[k][0] = append([]float64(nil), c.Initial...)
		plan.Spend[k] = make([]float64, T)
		plan.Routine[k] = make([]float64, T)
		for t := 0; t < T; t++ {
			plan.Work[k][t] = make([][]float64, ns)
			for i := range plan.Work[k][t] {
				plan.Work[k][t][i] = make([]float64, na)
			}
			end := make([]float64, ns)
			esc := p.escalation(t)
			for n, pr := range b.lay.pairs[k] {
				y := clean(x[b.lay.col(k, t, n)])
				if y < 0 {
					y = 0
				}
				q := y * tot
				plan.Work[k][t][pr.state][pr.action] = q
				a := &c.Actions[pr.action]
				for j, pj := range a.Rows[pr.state] {
					end[j] += q * pj
				}
				spend := q * a.Cost[pr.state] * esc
				plan.Spend[k][t] += spend
				plan.PresentValue += spend * p.discount(t)
				if pr.action == 0 && c.Routine != nil {
					r := q * c.Routine[pr.state] * esc
					plan.Routine[k][t] += r
					plan.RoutineCost += r
					plan.RoutinePresentValue += r * p.discount(t)
				}
			}
			plan.Condition[k][t+1] = end
		}
	}
	w := b.weights
	for t := 1; t <= T; t++ {
		s := 0.0
		for k := range p.Classes {
			s += w[k] * p.Classes[k].ScoreOf(plan.Condition[k][t])
		}
		plan.ConditionScore += s / float64(T)
	}
	for k := range plan.Spend {
		for _, v := range plan.Spend[k] {
			plan.TotalCost += v
		}
	}
	for _, sc := range slacks {
		v := x[sc.col]
		if v <= shortfallFloor {
			continue
		}
		tg := p.Targets[sc.target]
		if tg.Kind == MinScore || tg.Kind == Hold {
			v *= 100
		}
		plan.Shortfalls = append(plan.Shortfalls, Shortfall{Target: sc.target, Year: sc.year, Amount: v})
	}
	return plan
}

// infeasibleOrFailure settles an infeasibility that lp_solve reported for
// a model whose only hard rows are flow and budgets (no targets, or the
// elastic model): it is genuine only when doing nothing overspends a cap
// (routine costs counted against the budget). Otherwise doing nothing is a
// feasible plan, and lp_solve has failed numerically (seen on degenerate
// elastic models); the caller gets a SolverError it can act on (SolveWith
// tries the other method) instead of a wrong verdict.
func infeasibleOrFailure(p *Problem, r *flatResult) error {
	if !doNothingFits(p) {
		r.status = Infeasible
		return nil
	}
	return &SolverError{Status: "numerical failure", Advice: "lp_solve called a feasible model infeasible; solve with the other --solver, or report it with the scenario"}
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
			if classes == nil {
				for k := range p.Classes {
					s += spend[k][t]
				}
			} else {
				for _, k := range classes {
					s += spend[k][t]
				}
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
