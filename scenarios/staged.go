package scenarios

import (
	"context"
	"errors"
	"strconv"
	"strings"
	"sync"

	"wearplan/optimize"
)

// PlanStaged is PlanContext in two stages, for a page that shows a plan
// before its funding answers, which cost several solves of the flat LP
// each: it returns the plan without them (the Result of
// Options.SkipFunding) and a function that completes it. The completed
// Result is the one PlanContext returns for the same scenario and options:
// it reuses the first stage's solve and adds the funding answers, the
// baseline and the indicators. The function may be called once, with a
// context of its own. It is nil when the first Result is already whole:
// with Options.SkipFunding, and for plans with a confidence target, which
// are planned whole at once.
func PlanStaged(ctx context.Context, sc *Scenario, opt Options) (*Result, func(context.Context) (*Result, error), error) {
	if opt.SkipFunding || hasConfidence(sc) {
		r, err := PlanContext(ctx, sc, opt)
		return r, nil, err
	}
	opt.ctx = ctx
	if err := stopped(ctx); err != nil {
		return nil, nil, err
	}
	p, err := opt.problem(sc)
	if err != nil {
		return nil, nil, err
	}
	p.Timeout = opt.Timeout
	plan, err := optimize.SolveWith(p, optimize.Options{Method: opt.Solver, Warm: opt.Warm})
	if err != nil {
		return nil, nil, err
	}
	first := opt
	first.SkipFunding = true
	r, err := planResult(sc, p, plan, first)
	if r, err = finish(ctx, r, err); err != nil {
		return nil, nil, err
	}
	rest := func(ctx context.Context) (*Result, error) {
		o := opt
		o.ctx = ctx
		r, err := planResult(sc, p.WithContext(o.context()), plan, o)
		return finish(ctx, r, err)
	}
	return r, rest, nil
}

// BudgetFree keeps the funding answers of a plan that do not depend on the
// network's yearly budget: which targets no money meets, the least level
// budgets that meet the targets and that hold today's condition (each
// lifts the network cap), and the renewal each class needs alone (planned
// unfunded). The what-if page plans one scenario at many budgets; with a
// BudgetFree shared by plans that differ in nothing but the network's
// yearly budget, these flat LPs are solved once instead of at every budget.
// Sharing one between plans that differ otherwise gives wrong answers.
//
// It is safe for concurrent use. Answers are kept once computed, errors
// other than the answers themselves (a time limit, a cancelled context)
// are not; two plans asking at once may both compute an answer.
type BudgetFree struct {
	mu      sync.Mutex
	reach   *reachAnswer
	level   map[string]*levelAnswer
	hold    *levelAnswer
	renewal *renewalAnswer
}

type reachAnswer struct {
	reach []optimize.TargetReach
	err   error
}

type levelAnswer struct {
	level float64
	err   error
}

type renewalAnswer struct {
	required [][]float64
	notes    []string
}

// kept reports whether an answer with error err may be kept: the
// funding LPs' own answers (unreachable, held back by group caps) may,
// a time limit, a cancelled context or a solver failure may not.
func kept(err error) bool {
	return err == nil || errors.Is(err, optimize.ErrUnreachable) || errors.Is(err, optimize.ErrHeldBack)
}

// reachability is optimize.Reachability of p, kept in bf when bf is not nil.
func (bf *BudgetFree) reachability(p *optimize.Problem) ([]optimize.TargetReach, error) {
	if bf == nil {
		return optimize.Reachability(p)
	}
	bf.mu.Lock()
	a := bf.reach
	bf.mu.Unlock()
	if a != nil {
		return a.reach, a.err
	}
	reach, err := optimize.Reachability(p)
	if err == nil {
		bf.mu.Lock()
		bf.reach = &reachAnswer{reach: reach}
		bf.mu.Unlock()
	}
	return reach, err
}

// levelBudget is optimize.LevelBudget of p, whose targets are the
// scenario's less those listed in dropped (the ones no money meets), kept
// in bf when bf is not nil.
func (bf *BudgetFree) levelBudget(p *optimize.Problem, dropped []optimize.TargetReach) (float64, error) {
	if bf == nil {
		return optimize.LevelBudget(p)
	}
	var key strings.Builder
	for _, r := range dropped {
		key.WriteString(strconv.Itoa(r.Target))
		key.WriteByte(' ')
	}
	k := key.String()
	bf.mu.Lock()
	a := bf.level[k]
	bf.mu.Unlock()
	if a != nil {
		return a.level, a.err
	}
	level, err := optimize.LevelBudget(p)
	if kept(err) {
		bf.mu.Lock()
		if bf.level == nil {
			bf.level = map[string]*levelAnswer{}
		}
		bf.level[k] = &levelAnswer{level: level, err: err}
		bf.mu.Unlock()
	}
	return level, err
}

// holdBudget is the least level network budget that holds today's network
// condition score (p with a Hold target alone), kept in bf when bf is not
// nil.
func (bf *BudgetFree) holdBudget(p *optimize.Problem) (float64, error) {
	q := *p
	q.Targets = []optimize.Target{{Label: "hold", Class: optimize.Network, Kind: optimize.Hold}}
	if bf == nil {
		return optimize.LevelBudget(&q)
	}
	bf.mu.Lock()
	a := bf.hold
	bf.mu.Unlock()
	if a != nil {
		return a.level, a.err
	}
	level, err := optimize.LevelBudget(&q)
	if kept(err) {
		bf.mu.Lock()
		bf.hold = &levelAnswer{level: level, err: err}
		bf.mu.Unlock()
	}
	return level, err
}

// requiredRenewal is requiredRenewal of sc, kept in bf when bf is not nil.
func (bf *BudgetFree) requiredRenewal(sc *Scenario, opt Options) ([][]float64, []string, error) {
	if bf == nil {
		return requiredRenewal(sc, opt)
	}
	bf.mu.Lock()
	a := bf.renewal
	bf.mu.Unlock()
	if a != nil {
		return a.required, append([]string(nil), a.notes...), nil
	}
	required, notes, err := requiredRenewal(sc, opt)
	if err == nil {
		bf.mu.Lock()
		bf.renewal = &renewalAnswer{required: required, notes: notes}
		bf.mu.Unlock()
	}
	return required, notes, err
}
