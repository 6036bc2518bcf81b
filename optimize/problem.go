package optimize

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"

	"wearplan/treatments"
)

// Group is a level-of-service group of condition states.
type Group int

const (
	Good Group = iota
	Fair
	Poor
	groupCount
)

// Groups lists the groups in report order.
var Groups = [...]Group{Good, Fair, Poor}

func (g Group) String() string {
	switch g {
	case Good:
		return "good"
	case Fair:
		return "fair"
	case Poor:
		return "poor"
	}
	return fmt.Sprintf("group(%d)", int(g))
}

// Objective is what the plan optimises.
type Objective int

const (
	// MaxCondition maximises the mean network condition score over the horizon.
	MaxCondition Objective = iota
	// MinCost minimises the present value of spending subject to the targets.
	MinCost
)

func (o Objective) String() string {
	if o == MinCost {
		return "min-cost"
	}
	return "max-condition"
}

// Class is one asset class as the optimizer sees it.
type Class struct {
	Name string
	// Initial is today's quantity in each state (start of year 1).
	Initial []float64
	// Score is the condition score of each state, 0 (worst) to 100 (best).
	Score []float64
	// Group is the level-of-service group of each state.
	Group []Group
	// Weight is the class's weight in network figures; weights are
	// normalised over the classes, so only their ratios matter.
	Weight float64
	// Actions are do nothing and the class's treatments (treatments.Actions).
	Actions []treatments.Action
	// Routine is the yearly cost per unit left untreated (do nothing) in
	// each state at start-year prices; nil for none.
	Routine []float64
	// Labels name the states in the legend of exported models, for
	// classes whose states are not simply condition states (a state
	// widened with the years since work, treatments.History); nil for
	// condition states numbered best first.
	Labels []string
}

// Network is the Class index that Target uses for the whole network.
const Network = -1

// TargetKind is the form of a condition target.
type TargetKind int

const (
	// MaxShare: share of Group at most Value.
	MaxShare TargetKind = iota
	// MinShare: share of Group at least Value.
	MinShare
	// MinScore: average condition score at least Value (0-100).
	MinScore
	// Hold: condition score at the end of the horizon at least today's.
	Hold
)

// Target is a condition target on a class or the network over a range of
// years. Years count from 1 (the condition at the end of the first year).
type Target struct {
	// Label names the target in messages, e.g. "network poor share at most 15%".
	Label string
	Class int
	Kind  TargetKind
	Group Group
	// States, when not nil, replaces Group in a MaxShare or MinShare
	// target of one class: the share measured is that of the class's
	// states marked true (one entry per state of the class). A target on
	// one named condition state marks that state; a class whose states
	// are widened (condition × something) marks every widened state of
	// that condition.
	States []bool
	Value  float64
	// From and To are the first and last year the target applies, 1..Horizon.
	// Hold ignores them and applies to the last year.
	From, To int
}

// GroupBudget caps the yearly spend on a named group of classes.
type GroupBudget struct {
	Name    string
	Classes []int
	// Yearly is the cap of each year; +Inf for no cap.
	Yearly []float64
}

// MinSpend is money ring-fenced for some classes: their spend in each year
// is at least Yearly of that year. Spend is measured as the budget caps
// measure it (treatment cost, plus routine cost when RoutineInBudget), and
// each year on its own, with or without carry-over.
type MinSpend struct {
	Name    string
	Classes []int
	// Yearly is the least nominal spend of each year; zero for none.
	Yearly []float64
}

// Problem is a finite-horizon planning problem.
type Problem struct {
	Horizon int
	Classes []Class
	// Budget is the network cap of each year in nominal money (len Horizon),
	// +Inf for an uncapped year; nil for no network cap.
	Budget       []float64
	GroupBudgets []GroupBudget
	// MinSpends are yearly floors on the spend of some classes.
	MinSpends []MinSpend
	// CarryOver lets money unspent in one year be spent in a later one.
	CarryOver bool
	// RoutineInBudget counts routine costs against the budget caps; without
	// it they enter only life-cycle cost and the min-cost objective.
	RoutineInBudget bool
	Escalation      float64
	DiscountRate    float64
	Targets         []Target
	Objective       Objective
	// Timeout bounds each solver call; zero means no limit.
	Timeout time.Duration

	// ctx is the context of the problem's solves; see WithContext.
	ctx context.Context
}

// Context returns the problem's context. To change it, use WithContext.
//
// The returned context is always non-nil; it defaults to the background
// context.
//
// Every solve of the problem (SolveWith, Solve, SolveLongRun, SolveRobust,
// LevelBudget, ClosingMoney, Reachability and the rest) checks the context
// before each lp_solve call and between the decomposition's rounds, and
// stops with an error that wraps the context's error once it is done, so
// that errors.Is(err, context.Canceled) and errors.Is(err,
// context.DeadlineExceeded) report why. lp_solve, called through golp,
// cannot be interrupted inside one call: cancellation is seen between
// calls, so a solve stops at the latest when the call in progress ends.
// A stopped solve is never taken for a solver failure: no other method or
// solve path is tried after it.
func (p *Problem) Context() context.Context {
	if p.ctx != nil {
		return p.ctx
	}
	return context.Background()
}

// WithContext returns a shallow copy of p with its context changed to ctx,
// which must be non-nil. The copy shares p's classes, budgets and targets.
func (p *Problem) WithContext(ctx context.Context) *Problem {
	if ctx == nil {
		panic("optimize: nil context")
	}
	q := *p
	q.ctx = ctx
	return &q
}

// stopped returns the error of a solve whose context is done (wrapping the
// context's error), and nil while it is not.
func (p *Problem) stopped() error { return stoppedBy(p.Context()) }

// stoppedBy is Problem.stopped for a context on its own.
func stoppedBy(ctx context.Context) error {
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("the solve was stopped before it finished: %w", err)
	}
	return nil
}

// halted reports whether err ends a solve at once, with no other path or
// method tried: the problem's time limit ran out (IsTimeout) or its
// context was cancelled or passed its deadline.
func halted(err error) bool {
	return IsTimeout(err) || errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded)
}

// Validate reports every inconsistency in the problem.
func (p *Problem) Validate() error {
	var errs []error
	add := func(format string, args ...any) { errs = append(errs, fmt.Errorf(format, args...)) }
	if p.Horizon < 1 {
		add("horizon %d: plan at least 1 year", p.Horizon)
	}
	if len(p.Classes) == 0 {
		add("no asset classes to plan")
	}
	checkCaps := func(what string, caps []float64) {
		if len(caps) != p.Horizon {
			add("%s: %d yearly caps for a %d-year horizon", what, len(caps), p.Horizon)
		}
		for t, b := range caps {
			if math.IsNaN(b) || b < 0 {
				add("%s: cap %g in year %d must be zero or more", what, b, t+1)
			}
		}
	}
	if p.Budget != nil {
		checkCaps("network budget", p.Budget)
	}
	for _, g := range p.GroupBudgets {
		checkCaps(fmt.Sprintf("budget group %q", g.Name), g.Yearly)
		for _, k := range g.Classes {
			if k < 0 || k >= len(p.Classes) {
				add("budget group %q: class index %d out of range", g.Name, k)
			}
		}
	}
	if math.IsNaN(p.Escalation) || p.Escalation <= -1 {
		add("cost escalation %g must be above -1", p.Escalation)
	}
	if math.IsNaN(p.DiscountRate) || p.DiscountRate <= -1 {
		add("discount rate %g must be above -1", p.DiscountRate)
	}
	for k := range p.Classes {
		if err := p.Classes[k].validate(); err != nil {
			errs = append(errs, fmt.Errorf("class %q: %w", p.Classes[k].Name, err))
		}
	}
	for n, t := range p.Targets {
		if t.Class != Network && (t.Class < 0 || t.Class >= len(p.Classes)) {
			add("target %d (%s): class index %d out of range", n+1, t.Label, t.Class)
		}
		if t.Kind != Hold && (t.From < 1 || t.To > p.Horizon || t.From > t.To) {
			add("target %d (%s): years %d-%d outside the horizon 1-%d", n+1, t.Label, t.From, t.To, p.Horizon)
		}
		if (t.Kind == MaxShare || t.Kind == MinShare) && (t.Value < 0 || t.Value > 1) {
			add("target %d (%s): share %g outside [0, 1]", n+1, t.Label, t.Value)
		}
		if t.States != nil {
			if err := p.validateStates(&t); err != nil {
				add("target %d (%s): %w", n+1, t.Label, err)
			}
		}
	}
	for _, m := range p.MinSpends {
		if len(m.Yearly) != p.Horizon {
			add("least spend %q: %d yearly amounts for a %d-year horizon", m.Name, len(m.Yearly), p.Horizon)
		}
		for t, v := range m.Yearly {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				add("least spend %q: amount %g in year %d must be a finite number of zero or more", m.Name, v, t+1)
			}
		}
		if len(m.Classes) == 0 {
			add("least spend %q: no classes", m.Name)
		}
		for _, k := range m.Classes {
			if k < 0 || k >= len(p.Classes) {
				add("least spend %q: class index %d out of range", m.Name, k)
			}
		}
	}
	return errors.Join(errs...)
}

// validateStates checks the state set of a share target.
func (p *Problem) validateStates(t *Target) error {
	if t.Kind != MaxShare && t.Kind != MinShare {
		return errors.New("a set of states goes with a share target only")
	}
	if t.Class == Network {
		return errors.New("a set of states needs a class; the network's classes have scales of their own")
	}
	if t.Class < 0 || t.Class >= len(p.Classes) {
		return nil // reported above
	}
	if n := len(p.Classes[t.Class].Initial); len(t.States) != n {
		return fmt.Errorf("%d state flags for the %d states of class %q", len(t.States), n, p.Classes[t.Class].Name)
	}
	for _, in := range t.States {
		if in {
			return nil
		}
	}
	return errors.New("the set of states is empty")
}

// endShare is the share of a pair's year transition row that a share
// target measures: the target's states, or its group's.
func (t *Target) endShare(row []float64, group []Group) float64 {
	s := 0.0
	for j, pj := range row {
		if t.States != nil {
			if t.States[j] {
				s += pj
			}
		} else if group[j] == t.Group {
			s += pj
		}
	}
	return s
}

// ShareOf is the share of quantities q (by state of class c) that a share
// target measures.
func (t *Target) ShareOf(c *Class, q []float64) float64 {
	tot := 0.0
	for _, v := range q {
		tot += v
	}
	if tot == 0 {
		return 0
	}
	return t.endShare(q, c.Group) / tot
}

func (c *Class) validate() error {
	n := len(c.Initial)
	var errs []error
	add := func(format string, args ...any) { errs = append(errs, fmt.Errorf(format, args...)) }
	if n < 2 {
		add("%d states; a scale needs at least 2", n)
	}
	if len(c.Score) != n || len(c.Group) != n {
		add("%d scores and %d groups for %d states", len(c.Score), len(c.Group), n)
	}
	total := 0.0
	for i, q := range c.Initial {
		if math.IsNaN(q) || math.IsInf(q, 0) || q < 0 {
			add("quantity %g in state %d must be a finite number of zero or more", q, i+1)
		}
		total += q
	}
	if !(total > 0) {
		add("total quantity is zero; give today's quantity in at least one state")
	}
	if !(c.Weight > 0) || math.IsInf(c.Weight, 0) {
		add("network weight %g must be positive", c.Weight)
	}
	if len(c.Actions) == 0 || c.Actions[0].Name != treatments.DoNothing {
		add("the first action must be do nothing")
	}
	for _, a := range c.Actions {
		if len(a.Applies) != n || len(a.Cost) != n || len(a.Rows) != n {
			add("action %q does not match the %d-state scale", a.Name, n)
		}
	}
	if c.Labels != nil && len(c.Labels) != n {
		add("%d state labels for %d states", len(c.Labels), n)
	}
	if c.Routine != nil && len(c.Routine) != n {
		add("%d routine costs for %d states", len(c.Routine), n)
	}
	for i, r := range c.Routine {
		if math.IsNaN(r) || math.IsInf(r, 0) || r < 0 {
			add("routine cost %g in state %d must be a finite number of zero or more", r, i+1)
		}
	}
	return errors.Join(errs...)
}

// Total is the class's total quantity.
func (c *Class) Total() float64 {
	s := 0.0
	for _, q := range c.Initial {
		s += q
	}
	return s
}

// ScoreOf is the average condition score of quantities q by state.
func (c *Class) ScoreOf(q []float64) float64 {
	tot, s := 0.0, 0.0
	for i, v := range q {
		tot += v
		s += v * c.Score[i]
	}
	if tot == 0 {
		return 0
	}
	return s / tot
}

// SharesOf is the share of each group in quantities q by state.
func (c *Class) SharesOf(q []float64) [3]float64 {
	var sh [3]float64
	tot := 0.0
	for i, v := range q {
		tot += v
		sh[c.Group[i]] += v
	}
	if tot > 0 {
		for g := range sh {
			sh[g] /= tot
		}
	}
	return sh
}

// Weights returns the classes' network weights normalised to sum to 1.
func (p *Problem) Weights() []float64 {
	w := make([]float64, len(p.Classes))
	s := 0.0
	for k := range p.Classes {
		s += p.Classes[k].Weight
	}
	for k := range p.Classes {
		w[k] = p.Classes[k].Weight / s
	}
	return w
}

// escalation returns the price factor of year t (0-based).
func (p *Problem) escalation(t int) float64 { return math.Pow(1+p.Escalation, float64(t)) }

// discount returns the present-value factor of year t (0-based).
func (p *Problem) discount(t int) float64 { return math.Pow(1+p.DiscountRate, -float64(t)) }
