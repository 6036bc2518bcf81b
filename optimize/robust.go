package optimize

import (
	"errors"
	"fmt"
	"math"
)

// Plans robust to the transition matrices.
//
// Matrices estimated from inspections are uncertain; a fit keeps bootstrap
// replicates or counts from which sample matrices can be drawn. A robust
// plan is one work program whose targets hold under the problem's own
// matrices (the point estimate) and under every one of N sampled matrix
// sets at once: a scenario-based robust LP (Mulvey, Vanderbei and Zenios,
// "Robust optimization of large-scale systems", Operations Research, 1995:
// decisions shared by every scenario, state variables per scenario, the
// constraints in each; Kuhn and Madanat, "Model uncertainty and the
// management of a system of infrastructure facilities", Transportation
// Research Part C, 2005, for the network-level Markov decision LP whose
// transition probabilities are uncertain).
//
// The same plan under every sample means the same work quantities:
// w[k,t,i,a] ≥ 0, the share of class k in state i at the start of year t
// treated with treatment a (a ≥ 1), is one column shared by all samples,
// and so is the spend. What is left untreated is each sample's own column
// d[s,k,t,i] ≥ 0, fixed by that sample's flow:
//
//	d[s,k,t,j] + Σ_a w[k,t,j,a] = Σ_i d[s,k,t-1,i]·M_s,0(i,j) + Σ_{i,a} w[k,t-1,i,a]·M_s,a(i,j)
//
// (today's shares for t = 1), with M_s,a the year transition of action a
// under sample s. d ≥ 0 says that a state is never treated for more than it
// holds in any sample. Each sample's condition is linear in the columns, so
// every target row is written once per sample and the model stays an LP.
// This is what a council approves and a crew carries out: quantities and
// money, not shares of whatever will turn out to be in a state; keeping the
// shares by state the same instead would multiply unknown shares by
// unknown quantities, which is not linear.
//
// The objective is the plan's own (max-condition or min-cost) under the
// point estimate, then the other as tie-break, as in the flat plan; the
// samples only constrain. So the price of robustness is what the robust
// plan gives up against the point-estimate plan, measured where both are
// planned: condition score, or money. When the targets cannot hold under
// every sample within the budgets, the shortfalls are minimised first
// (SolveRobust says how).

// MatrixSample is one draw of the year transitions: Rows[k][a][i] is action
// a's distribution at the end of a year that starts in state i, for class
// k, under the draw. A nil Rows[k] keeps the class's own rows (its matrix
// is the same in every draw).
type MatrixSample struct {
	Rows [][][][]float64
}

// RobustPlan is a work program whose targets hold under the problem's own
// matrices and under each sample.
type RobustPlan struct {
	// Plan is the work program with its condition, spend, status and
	// shortfalls under the problem's own matrices (the point estimate).
	*Plan
	// HoldsUnderSamples says that every target holds under every sample
	// as well.
	HoldsUnderSamples bool
	// Samples[s][k][t][i] is the quantity of class k in state i at the end
	// of year t under sample s, doing the same work (RollWork).
	Samples [][][][]float64
}

// robustBuilder writes the robust LP.
type robustBuilder struct {
	b       *builder // the flat model's layout, terms, weights and money unit
	samples []MatrixSample
	// scen counts the scenarios: 0 is the point estimate, s ≥ 1 sample s.
	scen int
	// varies[k] says that class k's rows differ in some sample; only such
	// classes get a column set d per scenario.
	varies []bool
	// treat[k] lists the class's (state, treatment) pairs, treatments only.
	treat [][]pair
	wBase []int   // first w column of each class
	dBase [][]int // [s][k]: first d column, -1 when the class shares scenario 0's
	m     Model
	// targetRows[n] are a target's rows, per year and scenario.
	targetRows [][]robustRow
}

type robustRow struct{ row, year, scenario int }

// rows returns class k's rows of action a under scenario s.
func (rb *robustBuilder) rows(s, k, a int) [][]float64 {
	if s > 0 && rb.samples[s-1].Rows[k] != nil {
		return rb.samples[s-1].Rows[k][a]
	}
	return rb.b.p.Classes[k].Actions[a].Rows
}

// dCol is the column of d[s,k,t,i], the untreated share.
//
// Year 1 starts from today's quantities in every scenario, so its untreated
// shares are scenario 0's for all: a sample's own columns start in year 2.
func (rb *robustBuilder) dCol(s, k, t, i int) int {
	if !rb.varies[k] || t == 0 {
		s = 0
	}
	if s > 0 {
		t-- // the sample's columns start with year 2
	}
	return rb.dBase[s][k] + t*len(rb.b.p.Classes[k].Initial) + i
}

func (rb *robustBuilder) wCol(k, t, n int) int { return rb.wBase[k] + t*len(rb.treat[k]) + n }

func checkSamples(p *Problem, samples []MatrixSample) error {
	for s, sm := range samples {
		if len(sm.Rows) != len(p.Classes) {
			return fmt.Errorf("matrix sample %d: rows for %d classes, want %d", s+1, len(sm.Rows), len(p.Classes))
		}
		for k, byAction := range sm.Rows {
			if byAction == nil {
				continue
			}
			c := &p.Classes[k]
			if len(byAction) != len(c.Actions) {
				return fmt.Errorf("matrix sample %d, class %q: rows for %d actions, want %d", s+1, c.Name, len(byAction), len(c.Actions))
			}
			for a, rows := range byAction {
				if len(rows) != len(c.Initial) {
					return fmt.Errorf("matrix sample %d, class %q, action %q: rows for %d states, want %d", s+1, c.Name, c.Actions[a].Name, len(rows), len(c.Initial))
				}
				for i, row := range rows {
					if !c.Actions[a].Applies[i] {
						continue
					}
					sum := 0.0
					for _, v := range row {
						if math.IsNaN(v) || v < 0 {
							return fmt.Errorf("matrix sample %d, class %q, action %q, state %d: probability %g", s+1, c.Name, c.Actions[a].Name, i+1, v)
						}
						sum += v
					}
					if len(row) != len(c.Initial) || math.Abs(sum-1) > 1e-6 {
						return fmt.Errorf("matrix sample %d, class %q, action %q, state %d: not a distribution over %d states", s+1, c.Name, c.Actions[a].Name, i+1, len(c.Initial))
					}
				}
			}
		}
	}
	for k := range p.Classes {
		for i, ok := range p.Classes[k].Actions[0].Applies {
			if !ok {
				return fmt.Errorf("class %q: do nothing must apply to every state for a robust plan (state %d)", p.Classes[k].Name, i+1)
			}
		}
	}
	return nil
}

func newRobustBuilder(p *Problem, samples []MatrixSample) (*robustBuilder, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	if err := checkSamples(p, samples); err != nil {
		return nil, err
	}
	rb := &robustBuilder{b: newBuilder(p), samples: samples, scen: len(samples) + 1, varies: make([]bool, len(p.Classes)), treat: make([][]pair, len(p.Classes))}
	for k := range p.Classes {
		for _, sm := range samples {
			rb.varies[k] = rb.varies[k] || sm.Rows[k] != nil
		}
		for _, pr := range rb.b.lay.pairs[k] {
			if pr.action > 0 {
				rb.treat[k] = append(rb.treat[k], pr)
			}
		}
	}
	return rb, nil
}

// build writes the columns, flow, budget and target rows and the primary
// objective.
func (rb *robustBuilder) build() *Model {
	p := rb.b.p
	m := &rb.m
	m.Name = "wearplan-robust"
	T := p.Horizon
	rb.wBase = make([]int, len(p.Classes))
	for k := range p.Classes {
		rb.wBase[k] = len(m.Cols)
		for t := range T {
			for _, pr := range rb.treat[k] {
				m.addCol(fmt.Sprintf("w%d_%d_%d_%d", k+1, t+1, pr.state+1, pr.action), 0)
			}
		}
	}
	rb.dBase = make([][]int, rb.scen)
	for s := range rb.scen {
		rb.dBase[s] = make([]int, len(p.Classes))
		for k := range p.Classes {
			rb.dBase[s][k] = -1
			if s > 0 && !rb.varies[k] {
				continue
			}
			rb.dBase[s][k] = len(m.Cols)
			for t := range T {
				if s > 0 && t == 0 {
					continue // year 1 is scenario 0's (dCol)
				}
				for i := range p.Classes[k].Initial {
					m.addCol(fmt.Sprintf("d%d_%d_%d_%d", s, k+1, t+1, i+1), 0)
				}
			}
		}
	}
	rb.flowRows()
	rb.budgetRows()
	rb.targetRows = make([][]robustRow, len(p.Targets))
	for n := range p.Targets {
		rb.addTarget(n)
	}
	obj := rb.objectiveOf(p.Objective)
	copy(m.Obj, obj)
	m.Maximize = p.Objective == MaxCondition
	return m
}

func (rb *robustBuilder) flowRows() {
	p := rb.b.p
	for s := range rb.scen {
		for k := range p.Classes {
			if s > 0 && !rb.varies[k] {
				continue
			}
			c := &p.Classes[k]
			tot := c.Total()
			ns := len(c.Initial)
			for t := range p.Horizon {
				if s > 0 && t == 0 {
					continue // year 1's flow is scenario 0's
				}
				byState := make([][]Entry, ns)
				for i := range ns {
					byState[i] = append(byState[i], Entry{rb.dCol(s, k, t, i), 1})
				}
				for n, pr := range rb.treat[k] {
					byState[pr.state] = append(byState[pr.state], Entry{rb.wCol(k, t, n), 1})
				}
				if t > 0 {
					for i := range ns {
						for j, pj := range rb.rows(s, k, 0)[i] {
							if pj != 0 {
								byState[j] = append(byState[j], Entry{rb.dCol(s, k, t-1, i), -pj})
							}
						}
					}
					for n, pr := range rb.treat[k] {
						for j, pj := range rb.rows(s, k, pr.action)[pr.state] {
							if pj != 0 {
								byState[j] = append(byState[j], Entry{rb.wCol(k, t-1, n), -pj})
							}
						}
					}
				}
				for j := range ns {
					rhs := 0.0
					if t == 0 {
						rhs = c.Initial[j] / tot
					}
					rb.m.addRow(Row{Name: fmt.Sprintf("flow%d_%d_%d_%d", s, k+1, t+1, j+1), Entries: byState[j], Sense: Equal, RHS: rhs})
				}
			}
		}
	}
}

// spendEntries are the money entries of year t for the classes (nil: all)
// under scenario s, in money units: treatment cost on the shared work,
// and routine cost on the scenario's untreated shares when the budget
// counts it.
func (rb *robustBuilder) spendEntries(s, t int, classes []int) []Entry {
	p := rb.b.p
	esc := p.escalation(t)
	var out []Entry
	add := func(k int) {
		c := &p.Classes[k]
		tot := c.Total()
		for n, pr := range rb.treat[k] {
			if v := c.Actions[pr.action].Cost[pr.state] * tot; v != 0 {
				out = append(out, Entry{rb.wCol(k, t, n), v * esc / rb.b.moneyUnit})
			}
		}
		if p.RoutineInBudget && c.Routine != nil {
			for i, r := range c.Routine {
				if r != 0 {
					out = append(out, Entry{rb.dCol(s, k, t, i), r * tot * esc / rb.b.moneyUnit})
				}
			}
		}
	}
	for _, k := range p.classesOf(classes) {
		add(k)
	}
	return out
}

// budgetRows caps spend once when it is the same in every scenario, and
// per scenario when routine costs on the untreated quantities count.
func (rb *robustBuilder) budgetRows() {
	p := rb.b.p
	perScenario := false
	if p.RoutineInBudget {
		for k := range p.Classes {
			perScenario = perScenario || (rb.varies[k] && p.Classes[k].Routine != nil)
		}
	}
	scens := 1
	if perScenario {
		scens = rb.scen
	}
	caps := func(name string, limits []float64, classes []int) {
		for s := range scens {
			cum := 0.0
			var cumEntries []Entry
			for t := range p.Horizon {
				e := rb.spendEntries(s, t, classes)
				limit := limits[t]
				if p.CarryOver {
					cum += limit
					cumEntries = append(cumEntries, e...)
					e = append([]Entry(nil), cumEntries...)
					limit = cum
				}
				if math.IsInf(limit, 1) || len(e) == 0 {
					continue
				}
				rb.m.addRow(Row{Name: fmt.Sprintf("%s_%d_%d", name, s, t+1), Entries: e, Sense: LessEq, RHS: limit / rb.b.moneyUnit})
			}
		}
	}
	if p.Budget != nil {
		caps("budget", p.Budget, nil)
	}
	for g, gb := range p.GroupBudgets {
		caps(fmt.Sprintf("groupbudget%d", g+1), gb.Yearly, gb.Classes)
	}
}

// measure returns the entries of a target's measure at the end of year t
// (0-based) under scenario s: a group share or the score on 0-1.
func (rb *robustBuilder) measure(tg *Target, s, t int) []Entry {
	p := rb.b.p
	var out []Entry
	value := func(k int, row []float64) float64 {
		v := 0.0
		for j, pj := range row {
			switch {
			case tg.Kind == MinScore || tg.Kind == Hold:
				v += pj * p.Classes[k].Score[j] / 100
			case tg.States != nil:
				if tg.States[j] {
					v += pj
				}
			case p.Classes[k].Group[j] == tg.Group:
				v += pj
			}
		}
		return v
	}
	add := func(k int, w float64) {
		for i := range p.Classes[k].Initial {
			if v := value(k, rb.rows(s, k, 0)[i]); v != 0 {
				out = append(out, Entry{rb.dCol(s, k, t, i), w * v})
			}
		}
		for n, pr := range rb.treat[k] {
			if v := value(k, rb.rows(s, k, pr.action)[pr.state]); v != 0 {
				out = append(out, Entry{rb.wCol(k, t, n), w * v})
			}
		}
	}
	if tg.Class == Network {
		for k := range p.Classes {
			add(k, rb.b.weights[k])
		}
	} else {
		add(tg.Class, 1)
	}
	return out
}

// scenarioMatters says whether target tg's measure differs under scenario
// s from scenario 0's, so that s needs rows of its own.
func (rb *robustBuilder) scenarioMatters(tg *Target, s int) bool {
	if s == 0 {
		return true
	}
	if tg.Class != Network {
		return rb.varies[tg.Class]
	}
	for _, v := range rb.varies {
		if v {
			return true
		}
	}
	return false
}

func (rb *robustBuilder) addTarget(n int) {
	p := rb.b.p
	tg := &p.Targets[n]
	from, to := tg.From, tg.To
	if tg.Kind == Hold {
		from, to = p.Horizon, p.Horizon
	}
	sense, rhs := rb.b.targetBound(tg)
	for y := from; y <= to; y++ {
		for s := range rb.scen {
			if !rb.scenarioMatters(tg, s) {
				continue
			}
			r := rb.m.addRow(Row{Name: fmt.Sprintf("target%d_%d_%d", n+1, s, y), Entries: rb.measure(tg, s, y-1), Sense: sense, RHS: rhs})
			rb.targetRows[n] = append(rb.targetRows[n], robustRow{row: r, year: y, scenario: s})
		}
	}
}

// objectiveOf returns an objective under the point estimate: the mean
// network score on 0-1 for MaxCondition, the present value of spend and
// routine cost in money units for MinCost.
func (rb *robustBuilder) objectiveOf(o Objective) []float64 {
	p := rb.b.p
	obj := make([]float64, len(rb.m.Cols))
	for k := range p.Classes {
		c := &p.Classes[k]
		tot := c.Total()
		for t := range p.Horizon {
			for i := range c.Initial {
				j := rb.dCol(0, k, t, i)
				if o == MaxCondition {
					obj[j] = rb.b.weights[k] * endScore(c, c.Actions[0].Rows[i]) / 100 / float64(p.Horizon)
				} else if c.Routine != nil {
					obj[j] = c.Routine[i] * tot * p.escalation(t) * p.discount(t) / rb.b.moneyUnit
				}
			}
			for n, pr := range rb.treat[k] {
				j := rb.wCol(k, t, n)
				if o == MaxCondition {
					obj[j] = rb.b.weights[k] * endScore(c, c.Actions[pr.action].Rows[pr.state]) / 100 / float64(p.Horizon)
				} else {
					obj[j] = c.Actions[pr.action].Cost[pr.state] * tot * p.escalation(t) * p.discount(t) / rb.b.moneyUnit
				}
			}
		}
	}
	return obj
}

func endScore(c *Class, row []float64) float64 {
	v := 0.0
	for j, pj := range row {
		v += pj * c.Score[j]
	}
	return v
}

// BuildRobustModel returns the robust LP of the problem and samples with
// its primary objective, as SolveRobust hands it to lp_solve first and as
// WriteMPS exports it.
func BuildRobustModel(p *Problem, samples []MatrixSample) (*Model, error) {
	rb, err := newRobustBuilder(p, samples)
	if err != nil {
		return nil, err
	}
	m := rb.build()
	m.Notes = []string{
		"wearplan robust plan: targets hold under the point estimate (scenario 0) and under each matrix sample (scenarios 1..N).",
		"Columns w<class>_<year>_<state>_<treatment>: share of the class treated, the same in every scenario;",
		"d<scenario>_<class>_<year>_<state>: share left untreated under that scenario (classes whose matrix is the same in every sample keep scenario 0's).",
		"Rows flow<scenario>_..., budget_<scenario>_<year>, target<n>_<scenario>_<year>. Objective: the plan's own, under the point estimate.",
	}
	return m, nil
}

// SolveRobust plans the problem so that its targets hold under its own
// matrices and under every sample, with the same work program in all of
// them (see the package notes above). It solves the flat robust LP with
// lp_solve: the primary objective under the point estimate, then the other
// as tie-break. When the targets cannot all hold, an elastic model adds a
// slack to every target row of every scenario and minimises, in turn, the
// total shortfall under the point estimate (as the ordinary plan does), the
// total shortfall over the samples with that held, then the objectives:
// the plan meets the targets as far as the point estimate allows and
// misses them under the samples as little as it can in all.
func SolveRobust(p *Problem, samples []MatrixSample) (*RobustPlan, error) {
	rb, err := newRobustBuilder(p, samples)
	if err != nil {
		return nil, err
	}
	m := rb.build()
	primary := objectiveSpec{obj: m.Obj, maximize: m.Maximize}
	secondary := objectiveSpec{obj: rb.objectiveOf(other(p.Objective)), maximize: other(p.Objective) == MaxCondition}
	stats := Stats{Rows: len(m.Rows), Cols: len(m.Cols), Nonzeros: m.Nonzeros(), Method: "robust"}
	// lp_solve's "infeasible" is taken at its word here: the elastic model
	// below settles plans with targets.
	lr, err := lexicographic(m, p, []objectiveSpec{primary, secondary}, false)
	x := robustAnswer(lr, &stats)
	holds := true
	var slacks []robustSlack
	var solverErr *SolverError
	// lp_solve now and then gives up on a degenerate robust model (an
	// accuracy failure); the elastic model, always feasible, is then
	// solved instead, and gives the same plan when every slack is zero.
	if (errors.Is(err, ErrInfeasible) || errors.As(err, &solverErr)) && len(p.Targets) > 0 {
		em, cols := rb.elastic()
		nominal, sampled := make([]float64, len(em.Cols)), make([]float64, len(em.Cols))
		for _, c := range cols {
			if c.scenario == 0 {
				nominal[c.col] = 1
			} else {
				sampled[c.col] = 1
			}
		}
		pad := func(o []float64) []float64 {
			return append(append([]float64(nil), o...), make([]float64, len(cols))...)
		}
		lr, err = lexicographic(em, p, []objectiveSpec{{obj: nominal}, {obj: sampled}, {obj: pad(primary.obj), maximize: primary.maximize}, {obj: pad(secondary.obj), maximize: secondary.maximize}}, false)
		x = robustAnswer(lr, &stats)
		slacks = cols
	}
	if errors.Is(err, ErrInfeasible) {
		return &RobustPlan{Plan: &Plan{Status: Infeasible, Stats: stats}}, nil
	}
	if err != nil {
		return nil, err
	}
	work := rb.readWork(x)
	plan, _ := rollPlan(p, work, nil)
	plan.Status, plan.Stats = Optimal, stats
	for _, sc := range slacks {
		v := x[sc.col]
		if v <= shortfallFloor {
			continue
		}
		holds = false
		if sc.scenario > 0 {
			continue
		}
		if k := p.Targets[sc.target].Kind; k == MinScore || k == Hold {
			v *= 100
		}
		plan.Status = TargetsNotMet
		plan.Shortfalls = append(plan.Shortfalls, Shortfall{Target: sc.target, Year: sc.year, Amount: v})
	}
	rp := &RobustPlan{Plan: plan, HoldsUnderSamples: holds}
	for s := range samples {
		c, _ := RollWork(p, work, &samples[s])
		rp.Samples = append(rp.Samples, c)
	}
	return rp, nil
}

// robustSlack is a slack column of the elastic robust model: the
// shortfall of one target in one year under one scenario.
type robustSlack struct {
	col, target, year, scenario int
}

// elastic returns a copy of the model with a slack column on every target
// row of every scenario.
func (rb *robustBuilder) elastic() (*Model, []robustSlack) {
	em := &Model{Name: rb.m.Name, Cols: append([]string(nil), rb.m.Cols...), Obj: make([]float64, len(rb.m.Cols))}
	em.Rows = append([]Row(nil), rb.m.Rows...)
	var cols []robustSlack
	for n, rows := range rb.targetRows {
		for _, tr := range rows {
			c := em.addCol(fmt.Sprintf("short%d_%d_%d", n+1, tr.scenario, tr.year), 0)
			cols = append(cols, robustSlack{col: c, target: n, year: tr.year, scenario: tr.scenario})
			r := em.Rows[tr.row]
			sign := 1.0
			if r.Sense == LessEq {
				sign = -1
			}
			r.Entries = append(append([]Entry(nil), r.Entries...), Entry{c, sign})
			em.Rows[tr.row] = r
		}
	}
	return em, cols
}

// readWork returns the treated quantities by class, year, state and
// treatment (action 0 left zero: RollWork fills it).
func (rb *robustBuilder) readWork(x []float64) [][][][]float64 {
	p := rb.b.p
	work := make([][][][]float64, len(p.Classes))
	for k := range p.Classes {
		c := &p.Classes[k]
		tot := c.Total()
		work[k] = make([][][]float64, p.Horizon)
		for t := range p.Horizon {
			work[k][t] = make([][]float64, len(c.Initial))
			for i := range work[k][t] {
				work[k][t][i] = make([]float64, len(c.Actions))
			}
			for n, pr := range rb.treat[k] {
				work[k][t][pr.state][pr.action] = math.Max(clean(x[rb.wCol(k, t, n)]), 0) * tot
			}
		}
	}
	return work
}

// RollWork forecasts a work program under a sample of the matrices (nil:
// the problem's own): each year, each state's treated quantities
// work[k][t][i][a] (a ≥ 1) are done as far as the state holds them (all
// of them in proportion when it holds less), the rest is left untreated,
// and everything moves by the sample's year transitions. It returns the
// condition Condition[k][t][i] (t = 0 today) and, per class, the quantity
// the work program asked to treat that was not there.
func RollWork(p *Problem, work [][][][]float64, s *MatrixSample) ([][][]float64, []float64) {
	plan, undone := rollPlan(p, work, s)
	return plan.Condition, undone
}

// rollPlan is RollWork with the work done (do nothing included), spend
// and condition score filled in as a Plan.
func rollPlan(p *Problem, work [][][][]float64, s *MatrixSample) (*Plan, []float64) {
	undone := make([]float64, len(p.Classes))
	T := p.Horizon
	weights := p.Weights()
	plan := &Plan{Work: make([][][][]float64, len(p.Classes)), Condition: make([][][]float64, len(p.Classes)),
		Spend: make([][]float64, len(p.Classes)), Routine: make([][]float64, len(p.Classes))}
	for k := range p.Classes {
		c := &p.Classes[k]
		rows := func(a int) [][]float64 {
			if s != nil && s.Rows[k] != nil {
				return s.Rows[k][a]
			}
			return c.Actions[a].Rows
		}
		plan.Condition[k] = make([][]float64, T+1)
		plan.Condition[k][0] = append([]float64(nil), c.Initial...)
		plan.Work[k] = make([][][]float64, T)
		plan.Spend[k] = make([]float64, T)
		plan.Routine[k] = make([]float64, T)
		for t := range T {
			q := plan.Condition[k][t]
			next := make([]float64, len(q))
			plan.Work[k][t] = make([][]float64, len(q))
			esc := p.escalation(t)
			for i, have := range q {
				done := make([]float64, len(c.Actions))
				asked := 0.0
				for a := 1; a < len(c.Actions); a++ {
					asked += work[k][t][i][a]
				}
				f := 1.0
				if asked > have && asked > 0 {
					f = math.Max(have, 0) / asked
					undone[k] += asked - math.Max(have, 0)
				}
				left := math.Max(have, 0)
				for a := 1; a < len(c.Actions); a++ {
					done[a] = work[k][t][i][a] * f
					left -= done[a]
					plan.Spend[k][t] += done[a] * c.Actions[a].Cost[i] * esc
				}
				done[0] = math.Max(left, 0)
				if c.Routine != nil {
					plan.Routine[k][t] += done[0] * c.Routine[i] * esc
				}
				for a, v := range done {
					if v == 0 {
						continue
					}
					for j, pj := range rows(a)[i] {
						next[j] += v * pj
					}
				}
				plan.Work[k][t][i] = done
			}
			plan.Condition[k][t+1] = next
		}
	}
	for t := 1; t <= T; t++ {
		sc := 0.0
		for k := range p.Classes {
			sc += weights[k] * p.Classes[k].ScoreOf(plan.Condition[k][t])
		}
		plan.ConditionScore += sc / float64(T)
	}
	for k := range plan.Spend {
		for t, v := range plan.Spend[k] {
			plan.TotalCost += v
			plan.PresentValue += v * p.discount(t)
			plan.RoutineCost += plan.Routine[k][t]
			plan.RoutinePresentValue += plan.Routine[k][t] * p.discount(t)
		}
	}
	return plan, undone
}

// RobustLevelBudget is the least network budget, one nominal amount for
// every year, under which a robust plan exists: every target holds under
// the problem's own matrices and under every sample, with the same work in
// all (SolveRobust). Like LevelBudget it replaces the network cap (budget
// groups keep theirs) by a column L with spend in year t at most L (with
// carry-over, spend up to year t at most t·L) and minimises L, then the
// present value of spend. ErrUnreachable when no amount of money will do.
func RobustLevelBudget(p *Problem, samples []MatrixSample) (float64, error) {
	q := *p
	q.Budget = nil
	rb, err := newRobustBuilder(&q, samples)
	if err != nil {
		return 0, err
	}
	m := rb.build()
	level := m.addCol("level", 0)
	scens := 1
	for k := range q.Classes {
		if q.RoutineInBudget && rb.varies[k] && q.Classes[k].Routine != nil {
			scens = rb.scen
		}
	}
	for s := range scens {
		for t := range q.Horizon {
			var e []Entry
			if q.CarryOver {
				for u := 0; u <= t; u++ {
					e = append(e, rb.spendEntries(s, u, nil)...)
				}
				e = append(e, Entry{level, -float64(t + 1)})
			} else {
				e = append(rb.spendEntries(s, t, nil), Entry{level, -1})
			}
			m.addRow(Row{Name: fmt.Sprintf("level_%d_%d", s, t+1), Entries: e, Sense: LessEq, RHS: 0})
		}
	}
	obj := make([]float64, len(m.Cols))
	obj[level] = 1
	pv := rb.objectiveOf(MinCost) // the level column is already among m's
	lr, err := lexicographic(m, &q, []objectiveSpec{{obj: obj}, {obj: pv}}, false)
	if errors.Is(err, ErrInfeasible) {
		return 0, ErrUnreachable
	}
	if err != nil {
		return 0, err
	}
	return roundUpMoney(lr.x[level]*rb.b.moneyUnit, rb.b.moneyUnit), nil
}

// robustAnswer adds a lexicographic solve's counts and path to stats and
// returns its answer (nil when it gave none).
func robustAnswer(lr *lexResult, stats *Stats) []float64 {
	stats.note(lr)
	if lr == nil {
		return nil
	}
	return lr.x
}
