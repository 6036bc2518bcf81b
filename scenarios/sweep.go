package scenarios

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"

	"wearplan/optimize"
)

// SweepResult is the trade-off between a level yearly budget and condition.
type SweepResult struct {
	Scenario string       `json:"scenario"`
	Source   string       `json:"source"`
	Kind     string       `json:"kind"` // "sweep"
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

// SweepPoint is one yearly budget's max-condition plan.
type SweepPoint struct {
	Budget         float64 `json:"budget"`
	Status         string  `json:"status"`
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

// sweepChains is the number of warm-started chains a decomposed sweep is
// cut into: enough to keep a few cores busy, few enough that most points
// start from a neighbour's policies. It is fixed, not the core count, so
// that results are the same on every machine.
const sweepChains = 4

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
// one that meets the targets. Points are solved in parallel, at most
// runtime.GOMAXPROCS at a time, and returned in the order of budgets.
func Sweep(sc *Scenario, budgets []float64, opt Options) (*SweepResult, error) {
	if len(budgets) == 0 {
		return nil, errors.New("sweep: no budgets given")
	}
	for _, b := range budgets {
		if math.IsNaN(b) || math.IsInf(b, 0) || b < 0 {
			return nil, fmt.Errorf("sweep: budget %g must be a finite amount of zero or more", b)
		}
	}
	r := &SweepResult{Scenario: sc.Name, Source: sc.Source, Kind: "sweep", Currency: sc.Currency, Points: make([]SweepPoint, len(budgets)), Caution: Caution, Warnings: append([]string{}, sc.Notes...)}
	jobs := make([]func() error, 0, len(budgets)+2)
	point := func(n int, b float64, o Options) error {
		pt, err := sweepPoint(sc, b, o)
		if err != nil {
			return fmt.Errorf("budget %s: %w", money(b), err)
		}
		r.Points[n] = *pt
		return nil
	}
	p, err := sc.Problem()
	if err != nil {
		return nil, err
	}
	if optimize.Chosen(p, opt.Solver) == optimize.Decomposed {
		// Decomposed points run in sweepChains chains of neighbouring
		// budgets, each point starting from the policies of the one
		// before it in its chain (a warm start), the chains in parallel.
		// The chains are cut the same way on any machine, so results do
		// not depend on the core count.
		chains := min(sweepChains, len(budgets))
		for c := 0; c < chains; c++ {
			lo, hi := c*len(budgets)/chains, (c+1)*len(budgets)/chains
			jobs = append(jobs, func() error {
				o := opt
				o.Warm = &optimize.Warm{}
				if opt.Warm != nil {
					o.Warm = opt.Warm.Clone()
				}
				for n := lo; n < hi; n++ {
					if err := point(n, budgets[n], o); err != nil {
						return err
					}
				}
				return nil
			})
		}
	} else {
		for n, b := range budgets {
			jobs = append(jobs, func() error { return point(n, b, opt) })
		}
	}
	level := func(targets []optimize.Target, out **float64) func() error {
		return func() error {
			p, err := sc.Problem()
			if err != nil {
				return err
			}
			p.Timeout, p.Targets = opt.Timeout, targets
			v, err := optimize.LevelBudget(p)
			if errors.Is(err, optimize.ErrUnreachable) {
				return nil
			}
			if err != nil {
				return fmt.Errorf("least level budget: %w", err)
			}
			*out = &v
			return nil
		}
	}
	jobs = append(jobs, level([]optimize.Target{{Label: "hold", Class: optimize.Network, Kind: optimize.Hold}}, &r.HoldBudget))
	if len(sc.Targets) > 0 {
		// The problem's targets: on widened classes they hold every
		// widened state of the states they name.
		jobs = append(jobs, level(p.Targets, &r.TargetsBudget))
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
	if err := runParallel(jobs); err != nil {
		return nil, err
	}
	if r.HoldBudget == nil {
		r.Warnings = append(r.Warnings, "no level budget holds today's network condition: the treatments cannot keep it up")
	}
	if len(sc.Targets) > 0 && r.TargetsBudget == nil {
		r.Warnings = append(r.Warnings, unreachableText)
	}
	return r, nil
}

func sweepPoint(sc *Scenario, budget float64, opt Options) (*SweepPoint, error) {
	s := *sc
	s.Budget = make([]float64, sc.Horizon)
	for t := range s.Budget {
		s.Budget[t] = budget
	}
	s.Objective = optimize.MaxCondition
	opt.SkipFunding = true
	res, err := Plan(&s, opt)
	if err != nil {
		return nil, err
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
	return pt, nil
}

// runParallel runs the jobs on at most runtime.GOMAXPROCS goroutines and
// returns the error of the first job (in job order) that failed. Jobs write
// their results into their own slots, so the outcome does not depend on
// the number of cores or on which job finishes first.
func runParallel(jobs []func() error) error {
	errs := make([]error, len(jobs))
	sem := make(chan struct{}, max(runtime.GOMAXPROCS(0), 1))
	var wg sync.WaitGroup
	for n, job := range jobs {
		wg.Add(1)
		sem <- struct{}{}
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
