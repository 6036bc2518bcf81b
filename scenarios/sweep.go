package scenarios

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"

	"wearplan/optimize"
)

// SweepResult is the trade-off between a level yearly budget and condition.
type SweepResult struct {
	Scenario string       `json:"scenario"`
	Source   string       `json:"source"`
	Kind     Kind         `json:"kind"` // KindSweep
	Currency string       `json:"currency"`
	Points   []SweepPoint `json:"points"`
	// HoldBudget is the least level budget that holds today's network
	// condition score at the end of the horizon; nil when unreachable.
	HoldBudget *float64 `json:"hold_budget"`
	// TargetsBudget is the least level budget that meets the scenario's
	// targets; nil without targets or when unreachable.
	TargetsBudget *float64 `json:"targets_budget"`
	// ConfidentBudget is the least level budget whose max-condition plan
	// meets every target with its confidence; only when a target states
	// one (confidence.go).
	ConfidentBudget *ConfidentBudget `json:"confident_budget,omitempty"`
	Warnings        []string         `json:"warnings"`
	Caution         string           `json:"caution"`
}

// SweepPoint is one yearly budget's max-condition plan: exactly what Plan
// gives for the scenario with that level budget and max-condition.
type SweepPoint struct {
	Budget float64 `json:"budget"`
	// Status is the plan's status, or "infeasible" (the budget cannot be
	// kept even by doing nothing: routine costs count against it) or
	// "failed" (no plan; Problem says why). Such points carry no figures.
	Status         Status  `json:"status"`
	Problem        string  `json:"problem,omitempty"`
	ConditionScore float64 `json:"condition_score"`
	// End-of-horizon network figures.
	EndPoorShare    float64  `json:"end_poor_share"`
	EndAverageIndex *float64 `json:"end_average_index"`
	EndScore        float64  `json:"end_score"`
	TotalCost       float64  `json:"total_cost"`
	PresentValue    float64  `json:"present_value"`
	// RoutineCost is present when the scenario gives routine costs.
	RoutineCost *float64 `json:"routine_cost,omitempty"`
	// TargetsMet counts the targets that hold.
	TargetsMet int `json:"targets_met"`
	Targets    int `json:"targets"`
	// ConfidenceReached says whether the point's plan meets every target
	// that states a confidence in its share of the runs, and Confidence
	// what each reached; both only when a target states one.
	ConfidenceReached *bool             `json:"confidence_reached,omitempty"`
	Confidence        []ConfidentTarget `json:"confidence,omitempty"`
}

// The statuses of a sweep point without a plan.
const (
	// PointInfeasible: the budget cannot be kept even by doing nothing
	// (routine costs count against it), or it is below a ring fence.
	PointInfeasible Status = "infeasible"
	// PointFailed: no plan; the point's Problem says why.
	PointFailed Status = "failed"
)

// Planned reports whether the point has a plan, and so figures.
func (p *SweepPoint) Planned() bool {
	return p.Status != PointInfeasible && p.Status != PointFailed
}

// BudgetRange expands FROM:TO:STEP into the budgets FROM, FROM+STEP, ...
// up to TO (included when reached within a millionth of a step).
func BudgetRange(from, to, step float64) ([]float64, error) {
	switch {
	case math.IsNaN(from) || math.IsNaN(to) || math.IsNaN(step) || math.IsInf(from, 0) || math.IsInf(to, 0) || math.IsInf(step, 0):
		return nil, errors.New("budget range: give finite numbers FROM:TO:STEP")
	case from < 0 || to < 0:
		return nil, fmt.Errorf("budget range %g:%g: budgets must be zero or more", from, to)
	case step <= 0:
		return nil, fmt.Errorf("budget range step %g: the step must be positive", step)
	case to < from:
		return nil, fmt.Errorf("budget range %g:%g runs backwards: give the smaller budget first", from, to)
	}
	n := int(math.Floor((to-from)/step+1e-6)) + 1
	if n > MaxSweepPoints {
		return nil, fmt.Errorf("budget range gives %d points; a sweep takes at most %d: use a larger step", n, MaxSweepPoints)
	}
	out := make([]float64, n)
	for i := range out {
		out[i] = from + float64(i)*step
	}
	return out, nil
}

// MaxSweepPoints bounds a sweep.
const MaxSweepPoints = 1000

// Sweep plans the scenario under each level yearly budget (the same
// nominal amount every year, replacing budget.yearly; budget groups keep
// their caps) with the max-condition objective and the scenario's targets,
// and finds the least level budget that holds today's condition and the
// one that meets the targets. Each point is exactly the plan Plan makes
// for that budget (the same method, solved from scratch, so the answer
// does not depend on the other points); a budget with no plan is marked
// and the sweep goes on. Points are solved in parallel, at most
// runtime.GOMAXPROCS at a time, and returned in the order of budgets.
//
// The condition score never falls as the budget rises between points
// whose plans miss the targets by the same least total shortfall, in
// particular between points that meet every target (every plan of the
// smaller budget keeps the larger one): a plan first keeps the least
// shortfall, then maximises condition, so where more money lets it miss
// the targets by less, it may spend on closing the shortfall what buys
// less condition, and the score can fall.
func Sweep(sc *Scenario, budgets []float64, opt Options) (*SweepResult, error) {
	return SweepContext(context.Background(), sc, budgets, opt)
}

// SweepContext is Sweep with a context: once ctx is done no further point
// is started, the points being planned stop between solver calls, and it
// returns an error wrapping ctx.Err(), and no result.
func SweepContext(ctx context.Context, sc *Scenario, budgets []float64, opt Options) (*SweepResult, error) {
	opt.ctx = ctx
	r, err := sweep(sc, budgets, opt)
	return finish(ctx, r, err)
}

// sweep is Sweep under opt's context.
func sweep(sc *Scenario, budgets []float64, opt Options) (*SweepResult, error) {
	if len(budgets) == 0 {
		return nil, errors.New("sweep: no budgets given")
	}
	for _, b := range budgets {
		if math.IsNaN(b) || math.IsInf(b, 0) || b < 0 {
			return nil, fmt.Errorf("sweep: budget %g must be a finite amount of zero or more", b)
		}
	}
	p, err := opt.problem(sc)
	if err != nil {
		return nil, err
	}
	r := &SweepResult{Scenario: sc.Name, Source: sc.Source, Kind: KindSweep, Currency: sc.Currency, Points: make([]SweepPoint, len(budgets)), Caution: Caution, Warnings: append([]string{}, sc.Notes...)}
	opt.Warm = nil // a point must not depend on the others
	jobs := make([]func() error, 0, len(budgets)+2)
	pointNotes := make([][]string, len(budgets))
	for n, b := range budgets {
		jobs = append(jobs, func() error {
			pt, notes, err := sweepPoint(sc, b, opt)
			for _, w := range notes {
				pointNotes[n] = append(pointNotes[n], fmt.Sprintf("budget %s: %s", money(b), w))
			}
			if err != nil {
				if halted(err) {
					return fmt.Errorf("budget %s: %w", money(b), err)
				}
				pt = &SweepPoint{Budget: b, Status: PointFailed, Problem: err.Error()}
				var ie *InputError
				if errors.As(err, &ie) {
					pt.Status = PointInfeasible
					pt.Problem = issuesText(ie)
				}
			}
			r.Points[n] = *pt
			return nil
		})
	}
	var holdNote, targetsNote string
	level := func(targets []optimize.Target, out **float64, note *string) func() error {
		return func() error {
			p, err := opt.problem(sc)
			if err != nil {
				return err
			}
			p.Timeout, p.Targets = opt.Timeout, targets
			v, err := optimize.LevelBudget(p)
			var hb *optimize.HeldBackError
			switch {
			case errors.As(err, &hb):
				*note = heldBackText(sc, hb)
			case errors.Is(err, optimize.ErrUnreachable):
			case halted(err):
				return fmt.Errorf("least level budget: %w", err)
			case err != nil:
				*note = "the least level budget could not be computed: " + err.Error()
			default:
				*out = &v
			}
			return nil
		}
	}
	jobs = append(jobs, level([]optimize.Target{{Label: "hold", Class: optimize.Network, Kind: optimize.Hold}}, &r.HoldBudget, &holdNote))
	if len(sc.Targets) > 0 {
		// The problem's targets: on widened classes they hold every
		// widened state of the states they name.
		jobs = append(jobs, level(p.Targets, &r.TargetsBudget, &targetsNote))
	}
	if hasConfidence(sc) {
		jobs = append(jobs, func() error {
			s := *sc
			s.Objective = optimize.MaxCondition
			var err error
			r.ConfidentBudget, err = confidentLevelBudget(&s, opt)
			return err
		})
	}
	if err := runParallel(opt.context(), jobs); err != nil {
		return nil, err
	}
	for n, pt := range r.Points {
		r.Warnings = append(r.Warnings, pointNotes[n]...)
		if !pt.Planned() {
			r.Warnings = append(r.Warnings, fmt.Sprintf("budget %s: no plan (%s): %s", money(pt.Budget), pt.Status, pt.Problem))
		}
	}
	r.Warnings = append(r.Warnings, lowerScoreNotes(r.Points)...)
	switch {
	case holdNote != "":
		r.Warnings = append(r.Warnings, "holding today's network condition: "+holdNote)
	case r.HoldBudget == nil:
		r.Warnings = append(r.Warnings, "no level budget holds today's network condition: the treatments cannot keep it up")
	}
	switch {
	case targetsNote != "":
		r.Warnings = append(r.Warnings, "meeting the targets: "+targetsNote)
	case len(sc.Targets) > 0 && r.TargetsBudget == nil:
		r.Warnings = append(r.Warnings, unreachableText+"; plan the scenario to see which targets and what is reachable")
	}
	return r, nil
}

// SweepScenario is the scenario a sweep plans at one budget: the same
// amount every year and the max-condition objective. Plan on it gives the
// sweep's point.
func SweepScenario(sc *Scenario, budget float64) *Scenario {
	s := *sc
	s.Budget = make([]float64, sc.Horizon)
	for t := range s.Budget {
		s.Budget[t] = budget
	}
	s.Objective = optimize.MaxCondition
	return &s
}

// sweepPoint plans one point; notes are the plan's own warnings (those
// beyond the scenario's).
func sweepPoint(sc *Scenario, budget float64, opt Options) (*SweepPoint, []string, error) {
	opt.SkipFunding = true
	res, err := plan(SweepScenario(sc, budget), opt)
	if err != nil {
		return nil, nil, err
	}
	last := res.Years[len(res.Years)-1].Network
	pt := &SweepPoint{Budget: budget, Status: res.Status, ConditionScore: res.ConditionScore, EndPoorShare: last.Shares.Poor, EndAverageIndex: last.AverageIndex,
		EndScore: last.Score, TotalCost: res.TotalCost, PresentValue: res.PresentValue, RoutineCost: res.RoutineCost, Targets: len(res.Targets)}
	for _, t := range res.Targets {
		if t.Met {
			pt.TargetsMet++
		}
	}
	if c := res.Confidence; c != nil {
		pt.ConfidenceReached, pt.Confidence = &c.Reached, c.Targets
	}
	return pt, res.Warnings[len(sc.Notes):], nil
}

// runParallel runs the jobs on at most runtime.GOMAXPROCS goroutines and
// returns the error of the first job (in job order) that failed. Once ctx
// is done it starts no more jobs; each job left out fails with the
// context's error. Jobs write
// their results into their own slots, so the outcome does not depend on
// the number of cores or on which job finishes first.
func runParallel(ctx context.Context, jobs []func() error) error {
	errs := make([]error, len(jobs))
	sem := make(chan struct{}, max(runtime.GOMAXPROCS(0), 1))
	var wg sync.WaitGroup
	for n, job := range jobs {
		select {
		case sem <- struct{}{}:
		case <-ctx.Done():
		}
		if errs[n] = stopped(ctx); errs[n] != nil {
			continue
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() { <-sem }()
			errs[n] = job()
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// issuesText is an input error's problems on one line, for a sweep point's
// note.
func issuesText(ie *InputError) string {
	parts := make([]string, len(ie.Issues))
	for i, is := range ie.Issues {
		parts[i] = is.Error()
	}
	return strings.Join(parts, "; ")
}

// lowerScoreNotes explains each point that scores less than a point of a
// smaller budget: more money can only score less when targets are missed,
// where the plan first keeps the total shortfall least and the work that
// closes more of it (often done later, for a last year's target) can cost
// condition in the years between.
func lowerScoreNotes(points []SweepPoint) []string {
	var out []string
	for n, pt := range points {
		if !pt.Planned() {
			continue
		}
		for _, q := range points[:n] {
			if !q.Planned() || q.Budget >= pt.Budget || q.ConditionScore <= pt.ConditionScore+0.005 {
				continue
			}
			head := fmt.Sprintf("budget %s scores %.2f, less than %.2f at %s", money(pt.Budget), pt.ConditionScore, q.ConditionScore, money(q.Budget))
			if pt.Status == TargetsNotMet {
				out = append(out, fmt.Sprintf("%s: its plan misses targets (%d of %d met), so it first keeps their total shortfall least, and the work that closes more of it costs condition in other years", head, pt.TargetsMet, pt.Targets))
			} else {
				out = append(out, fmt.Sprintf("%s: there the plan misses targets (%d of %d met) and puts the money where it buys more condition; meeting them here costs condition", head, q.TargetsMet, q.Targets))
			}
			break
		}
	}
	return out
}
