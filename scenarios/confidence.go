package scenarios

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"wearplan/optimize"
)

// Targets with a stated confidence. A plan that meets a target exactly
// meets it in about half of the simulated runs: the runs scatter around
// the plan's expected condition. A target with confidence c must hold, in
// every year it covers, in at least the share c of the simulated runs. The
// plan that does so is found by planning to a tighter limit (the stated
// limit less a margin for an at-most target, plus a margin for an
// at-least target) and simulating the plan, raising each margin until the
// runs reach the confidence, then bisecting it down to the least margin
// that still does (confidenceSearch).

// DefaultConfidenceRuns is the number of simulated runs each plan of a
// confidence search is measured on: the share of runs meeting a target
// then has a Monte Carlo standard error of about 1 percentage point at 90%.
const DefaultConfidenceRuns = 1000

// Bounds of the search.
const (
	// maxConfidenceTries bounds the plans solved and simulated in one
	// search.
	maxConfidenceTries = 24
	// shareTolerance and scoreTolerance are how close the bisection brings
	// a margin to the least one that reaches the confidence: a tenth of a
	// percentage point of a share, a tenth of a point of the 0-100 score.
	shareTolerance = 0.001
	scoreTolerance = 0.1
	// feasibleHalvings bounds the bisection for the largest margins a
	// budget can hold.
	feasibleHalvings = 6
)

// ConfidenceOptions set up the search for plans that meet targets with a
// stated confidence.
type ConfidenceOptions struct {
	// Runs is the number of simulated runs each plan is measured on; 0
	// means DefaultConfidenceRuns. Seed fixes them (0 means 1): every plan
	// of a search is measured on the same runs, so two margins' shares of
	// runs differ only by their plans.
	Runs int
	Seed uint64
}

func (o ConfidenceOptions) normalised() ConfidenceOptions {
	if o.Runs <= 0 {
		o.Runs = DefaultConfidenceRuns
	}
	if o.Seed == 0 {
		o.Seed = 1
	}
	return o
}

// ConfidenceMethod says how a plan that meets targets with a stated
// confidence is found; every result with confident targets repeats it.
const ConfidenceMethod = "A target with a confidence must hold, in every year it covers, in at least that share of simulated runs " +
	"(the plan run piece by piece as wearplan simulate runs it, with the scenario's pieces and, for classes whose matrix comes from a fit, " +
	"a matrix drawn from its sampling distribution in every run). The plan is found by tightening each such target in the plan's " +
	"linear program by a margin (its limit less the margin for an at-most target, plus the margin for an at-least target): " +
	"margins start at zero; each round simulates the plan and raises the margin of every target still short of its confidence by " +
	"the amount its runs missed it by at that confidence (the confidence quantile of each run's worst miss over its years, at least " +
	"a tenth of a point), until every target reaches its confidence; then each margin is bisected down to the least that still " +
	"reaches every confidence, to within a tenth of a percentage point (shares) or of a score point; at most 24 plans are tried. " +
	"Every plan is measured on the same runs. The share of runs reached is given with its Monte Carlo standard error " +
	"sqrt(p(1-p)/runs); since the margin was chosen on these runs, fresh runs give a share that may be lower by about one standard error."

// Confidence is how a plan was made to meet targets with a stated
// confidence, and what it reached.
type Confidence struct {
	Method string `json:"method"`
	Runs   int    `json:"runs"`
	Seed   uint64 `json:"seed"`
	// Tries counts the plans solved and simulated.
	Tries int `json:"plans_tried"`
	// Reached says whether every confident target holds in at least its
	// share of the runs; Why says why not.
	Reached bool   `json:"reached"`
	Why     string `json:"why,omitempty"`
	// Included and Excluded are the sources of uncertainty the runs
	// include and leave out.
	Included []string          `json:"included"`
	Excluded []string          `json:"not_included"`
	Targets  []ConfidentTarget `json:"targets"`
	// LevelBudget is the least level yearly budget whose plan meets every
	// target with its confidence (min-cost plans, and plans that do not
	// reach the confidence); nil when not asked.
	LevelBudget *ConfidentBudget `json:"level_budget,omitempty"`
}

// ConfidentTarget is one target with a confidence and what the plan
// reached.
type ConfidentTarget struct {
	Target     string  `json:"target"`
	Confidence float64 `json:"confidence"`
	// Index says whether Margin and Limit are index points of the target's
	// scale (average index targets) rather than shares (0-1).
	Index bool `json:"index,omitempty"`
	// Margin is how much tighter than stated the plan holds the target;
	// PlannedLimit is the limit the plan was made for.
	Margin       float64 `json:"margin"`
	PlannedLimit float64 `json:"planned_limit"`
	// Probability is the share of the runs in which the target holds in
	// every year it covers; StandardError its Monte Carlo standard error.
	Probability   float64 `json:"probability"`
	StandardError float64 `json:"standard_error"`
	Reached       bool    `json:"reached"`
}

// ConfidentBudget answers "the least level yearly budget that meets every
// target with its confidence".
type ConfidentBudget struct {
	// Amount is the budget, the same nominal amount every year; nil when
	// no amount of money meets the targets (Unreachable says why).
	Amount      *float64          `json:"amount,omitempty"`
	Reached     bool              `json:"reached"`
	Why         string            `json:"why,omitempty"`
	Unreachable string            `json:"unreachable,omitempty"`
	Tries       int               `json:"plans_tried"`
	Targets     []ConfidentTarget `json:"targets"`
}

// hasConfidence says whether a target of the scenario states a confidence.
func hasConfidence(sc *Scenario) bool {
	for _, t := range sc.Targets {
		if t.Confidence > 0 {
			return true
		}
	}
	return false
}

// confidenceMatrix picks the matrix uncertainty of a confidence search:
// the bootstrap replicates when every class with a fitted matrix keeps at
// least two, else the Dirichlet posterior of the transition counts, and
// none when no class has a fitted matrix.
func confidenceMatrix(sc *Scenario) string {
	fitted, replicated := 0, 0
	for k := range sc.Classes {
		if ev := sc.Classes[k].Evidence; ev != nil {
			fitted++
			if len(ev.Replicates) >= 2 {
				replicated++
			}
		}
	}
	switch {
	case fitted == 0:
		return MatrixNone
	case replicated == fitted:
		return MatrixBootstrap
	}
	return MatrixDirichlet
}

// trial is one plan of a search: the margins it was planned with, its
// problem and plan, and what its runs reached.
type trial struct {
	margins []float64
	p       *optimize.Problem
	plan    *optimize.Plan
	level   float64 // the level budget (budget searches)
	// feasible says that the plan meets the tightened targets.
	feasible bool
	prob     []float64
	miss     [][]float64 // per confident target, each run's worst miss
	reached  bool
	sim      *SimulationResult
}

// errUnreachable marks margins no amount of money can hold.
var errUnreachable = errors.New("unreachable")

// confidenceSearch finds the least margins whose plan meets every
// confident target in its share of the runs.
type confidenceSearch struct {
	sc    *Scenario
	idx   []int     // the confident targets
	cap   []float64 // the largest margin each can take
	tol   []float64
	sim   SimulateOptions
	tries int
	// solve plans the problem with the targets tightened by the margins;
	// errUnreachable when no plan can hold them.
	solve func(p *optimize.Problem) (*optimize.Plan, float64, error)
}

func newConfidenceSearch(sc *Scenario, opt Options, solve func(p *optimize.Problem) (*optimize.Plan, float64, error)) *confidenceSearch {
	co := opt.Confidence.normalised()
	s := &confidenceSearch{sc: sc, solve: solve,
		sim: SimulateOptions{Runs: co.Runs, Seed: co.Seed, Matrix: confidenceMatrix(sc), Timeout: opt.Timeout, Solver: opt.Solver, ctx: opt.ctx}}
	for n, t := range sc.Targets {
		if t.Confidence <= 0 {
			continue
		}
		s.idx = append(s.idx, n)
		switch t.Spec.Kind {
		case optimize.MaxShare:
			s.cap, s.tol = append(s.cap, t.Spec.Value), append(s.tol, shareTolerance)
		case optimize.MinShare:
			s.cap, s.tol = append(s.cap, 1-t.Spec.Value), append(s.tol, shareTolerance)
		default: // MinScore; hold takes no confidence
			s.cap, s.tol = append(s.cap, 100-t.Spec.Value), append(s.tol, scoreTolerance)
		}
	}
	return s
}

// try plans with the margins and, when the plan holds them, measures it
// on the runs.
func (s *confidenceSearch) try(margins []float64) (*trial, error) {
	t, err := s.plan(margins)
	if err != nil || !t.feasible {
		return t, err
	}
	return t, s.measure(t)
}

// plan solves the problem with the targets tightened by the margins.
func (s *confidenceSearch) plan(margins []float64) (*trial, error) {
	s.tries++
	p, err := s.sc.Problem()
	if err != nil {
		return nil, err
	}
	p = p.WithContext(orBackground(s.sim.ctx))
	for i, n := range s.idx {
		tg := &p.Targets[n]
		if tg.Kind == optimize.MaxShare {
			tg.Value -= margins[i]
		} else {
			tg.Value += margins[i]
		}
	}
	t := &trial{margins: slices.Clone(margins), p: p}
	plan, level, err := s.solve(p)
	if errors.Is(err, errUnreachable) {
		return t, nil // no plan, nothing to simulate
	}
	if err != nil {
		return nil, err
	}
	if plan.Status == optimize.Infeasible {
		return nil, budgetInfeasible(s.sc, p)
	}
	t.plan, t.level, t.feasible = plan, level, plan.Status == optimize.Optimal
	return t, nil
}

// measure simulates a trial's plan and finds the share of runs meeting
// each confident target.
func (s *confidenceSearch) measure(t *trial) error {
	res, fig, err := simulate(s.sc, s.sim, &givenPlan{p: t.p, plan: t.plan})
	if err != nil {
		return err
	}
	t.sim = res
	t.reached = true
	for i, n := range s.idx {
		miss := fig.worstMiss(n, &res.Initial)
		hits := 0
		for _, m := range miss {
			if m <= targetSlack {
				hits++
			}
		}
		t.miss = append(t.miss, miss)
		t.prob = append(t.prob, float64(hits)/float64(len(miss)))
		if t.prob[i] < s.sc.Targets[n].Confidence {
			t.reached = false
		}
	}
	return nil
}

// search runs the rounds from the trial at zero margins, which must be
// feasible. It returns the trial to report and, when the confidence was
// not reached, why.
func (s *confidenceSearch) search(first *trial) (*trial, string, error) {
	short := slices.Clone(first.margins) // per target, a margin known to fall short
	cur := first
	var lastFeasible *trial
	for {
		if !cur.feasible {
			t, err := s.largestFeasible(lastFeasible, cur)
			if err != nil {
				return nil, "", err
			}
			return t, "the budget cannot hold the margins these confidences need, so the plan keeps the largest margins it can", nil
		}
		lastFeasible = cur
		if cur.reached {
			break
		}
		if s.tries >= maxConfidenceTries {
			return cur, fmt.Sprintf("no plan reached every confidence within %d tries", maxConfidenceTries), nil
		}
		next := slices.Clone(cur.margins)
		raised := false
		for i, n := range s.idx {
			c := s.sc.Targets[n].Confidence
			if cur.prob[i] >= c {
				continue
			}
			short[i] = cur.margins[i]
			next[i] = math.Min(cur.margins[i]+math.Max(quantile(cur.miss[i], c), s.tol[i]), s.cap[i])
			raised = raised || next[i] > cur.margins[i]
		}
		if !raised {
			return cur, "a target cannot be tightened further (its limit is already at the end of its scale)", nil
		}
		var err error
		if cur, err = s.try(next); err != nil {
			return nil, "", err
		}
	}
	// The least margins: each bisected between a margin that fell short
	// and one that reached every confidence, the others held.
	best := cur
	for i := range s.idx {
		lo, hi := short[i], best.margins[i]
		for hi-lo > s.tol[i] && s.tries < maxConfidenceTries {
			m := slices.Clone(best.margins)
			m[i] = (lo + hi) / 2
			t, err := s.try(m)
			if err != nil {
				return nil, "", err
			}
			if t.feasible && t.reached {
				best, hi = t, m[i]
			} else {
				lo = m[i]
			}
		}
	}
	return best, "", nil
}

// largestFeasible bisects between the margins of a feasible trial and
// those of one the budget cannot hold, for the largest fraction of the
// step it can; only the plan kept is simulated.
func (s *confidenceSearch) largestFeasible(ok, bad *trial) (*trial, error) {
	lo, hi := 0.0, 1.0
	best := ok
	for range feasibleHalvings {
		f := (lo + hi) / 2
		m := make([]float64, len(s.idx))
		for i := range m {
			m[i] = ok.margins[i] + f*(bad.margins[i]-ok.margins[i])
		}
		t, err := s.plan(m)
		if err != nil {
			return nil, err
		}
		if t.feasible {
			best, lo = t, f
		} else {
			hi = f
		}
	}
	if best.sim == nil {
		if err := s.measure(best); err != nil {
			return nil, err
		}
	}
	return best, nil
}

// quantile returns the smallest value v of xs such that at least the share
// c of xs is at most v: the shift that would bring that share of runs
// within a limit.
func quantile(xs []float64, c float64) float64 {
	sorted := slices.Clone(xs)
	slices.Sort(sorted)
	k := int(math.Ceil(c*float64(len(sorted)))) - 1
	return sorted[min(max(k, 0), len(sorted)-1)]
}

// confidentTargets reports the confident targets of a trial.
func (s *confidenceSearch) confidentTargets(t *trial) []ConfidentTarget {
	out := make([]ConfidentTarget, len(s.idx))
	runs := float64(s.sim.Runs)
	for i, n := range s.idx {
		tg := &s.sc.Targets[n]
		ct := ConfidentTarget{Target: tg.Label, Confidence: tg.Confidence, Margin: t.margins[i], PlannedLimit: t.p.Targets[n].Value}
		if tg.Spec.Kind == optimize.MinScore {
			ct.Index = true
			ct.Margin = indexPoints(s.sc, *tg, t.margins[i])
			ct.PlannedLimit = scoreToIndex(s.sc, *tg, t.p.Targets[n].Value)
		}
		if t.prob != nil {
			p := t.prob[i]
			ct.Probability, ct.StandardError = p, math.Sqrt(p*(1-p)/runs)
			ct.Reached = p >= tg.Confidence
		}
		out[i] = ct
	}
	return out
}

// planConfident plans a scenario with confident targets: the plan of the
// least margins that meet every confident target in its share of the runs,
// or, when the budget cannot, the plan with the largest margins it holds.
// The funding answers are those of the targets as stated; the least level
// budget that meets every target with its confidence is added for min-cost
// plans and for plans that do not reach the confidence.
func planConfident(sc *Scenario, opt Options) (*Result, error) {
	// Its plans change the targets' margins: no answer is budget-free.
	opt.BudgetFree = nil
	warm := opt.Warm
	if warm == nil {
		warm = &optimize.Warm{}
	}
	s := newConfidenceSearch(sc, opt, func(p *optimize.Problem) (*optimize.Plan, float64, error) {
		p.Timeout = opt.Timeout
		plan, err := optimize.SolveWith(p, optimize.Options{Method: opt.Solver, Warm: warm})
		return plan, 0, err
	})
	// The plan of the targets as stated, measured even when it misses them.
	first, err := s.plan(make([]float64, len(s.idx)))
	if err != nil {
		return nil, err
	}
	if err := s.measure(first); err != nil {
		return nil, err
	}
	// Its result, with the funding answers for the targets as stated.
	stated, err := planResult(sc, first.p, first.plan, opt)
	if err != nil {
		return nil, err
	}
	c := &Confidence{Method: ConfidenceMethod, Runs: s.sim.Runs, Seed: s.sim.Seed,
		Included: first.sim.Uncertainty.Included, Excluded: first.sim.Uncertainty.Excluded}
	r, best := stated, first
	if !first.feasible {
		c.Why = "the budget does not meet the targets as stated, so it cannot meet them with a confidence"
	} else {
		var why string
		if best, why, err = s.search(first); err != nil {
			return nil, err
		}
		c.Why = why
		if best != first {
			o := opt
			o.SkipFunding = true
			if r, err = planResult(sc, best.p, best.plan, o); err != nil {
				return nil, err
			}
			r.Funding = stated.Funding
			if stated.Baseline != nil {
				b := *stated.Baseline
				b.Gain = r.ConditionScore - b.ConditionScore
				r.Baseline = &b
			}
		}
	}
	c.Tries = s.tries
	c.Targets = s.confidentTargets(best)
	c.Reached = best.reached && best.feasible
	if c.Reached {
		c.Why = ""
	}
	r.Warnings = append(r.Warnings, pieceWarnings(best.sim)...)
	if !c.Reached {
		var parts []string
		for _, ct := range c.Targets {
			if !ct.Reached {
				parts = append(parts, fmt.Sprintf("%s holds in %s of the runs, not %s", ct.Target, pctOne(ct.Probability), pct(ct.Confidence)))
			}
		}
		r.Warnings = append(r.Warnings, "the plan does not meet every target with its confidence: "+strings.Join(parts, "; "))
	}
	if !opt.SkipFunding && (sc.Objective == optimize.MinCost || !c.Reached) {
		if c.LevelBudget, err = confidentLevelBudget(sc, opt); err != nil {
			return nil, err
		}
	}
	r.Confidence = c
	return r, nil
}

// confidentLevelBudget finds the least level yearly budget whose plan
// meets every target with its confidence: the same search, each plan made
// at the least level budget that meets the tightened targets
// (optimize.LevelBudget), with the scenario's objective at that budget.
func confidentLevelBudget(sc *Scenario, opt Options) (*ConfidentBudget, error) {
	s := newConfidenceSearch(sc, opt, func(p *optimize.Problem) (*optimize.Plan, float64, error) {
		p.Timeout = opt.Timeout
		level, err := optimize.LevelBudget(p)
		if errors.Is(err, optimize.ErrUnreachable) {
			return nil, 0, errUnreachable
		}
		if err != nil {
			return nil, 0, fmt.Errorf("least level budget: %w", err)
		}
		p.Budget = make([]float64, p.Horizon)
		for t := range p.Budget {
			p.Budget[t] = level
		}
		plan, err := optimize.SolveWith(p, optimize.Options{Method: opt.Solver})
		return plan, level, err
	})
	first, err := s.try(make([]float64, len(s.idx)))
	if err != nil {
		return nil, err
	}
	out := &ConfidentBudget{}
	if !first.feasible {
		out.Unreachable = unreachableText
		out.Tries = s.tries
		return out, nil
	}
	best, why, err := s.search(first)
	if err != nil {
		return nil, err
	}
	level := best.level
	out.Amount, out.Why, out.Reached, out.Tries = &level, why, best.reached && best.feasible, s.tries
	if out.Reached {
		out.Why = ""
	}
	out.Targets = s.confidentTargets(best)
	return out, nil
}

// pieceWarnings are a simulation's warnings about its pieces.
func pieceWarnings(r *SimulationResult) []string {
	var out []string
	for _, w := range r.Warnings {
		if strings.Contains(w, " pieces, ") {
			out = append(out, w)
		}
	}
	return out
}

// pctOne writes a share as a percentage with one decimal.
func pctOne(v float64) string { return fmt.Sprintf("%.1f%%", 100*v) }
