package scenarios

import (
	"context"
	"fmt"
	"math"
	"time"

	"wearplan/optimize"
)

// Options tune a run.
type Options struct {
	// Timeout bounds each solver call (a decomposed solve as a whole);
	// zero means no limit.
	Timeout time.Duration
	// SkipFunding leaves out the funding answers (least level budget,
	// extra money) and the worst-first baseline: sweeps and comparisons
	// that need only the plan save their solves.
	SkipFunding bool
	// Solver picks the flat LP or the decomposition; the zero value is
	// optimize.Auto.
	Solver optimize.Method
	// Warm, when not nil, carries generated policies from one decomposed
	// run to the next (sweeps, what-if runs): see optimize.Warm.
	Warm *optimize.Warm
	// Confidence sets up the search for plans that meet targets with a
	// stated confidence (confidence.go); it matters only when a target
	// has one.
	Confidence ConfidenceOptions
	// BudgetFree, when not nil, keeps the funding answers that do not
	// depend on the network's yearly budget for the next plan of the same
	// scenario at another budget (see BudgetFree).
	BudgetFree *BudgetFree

	// ctx is the context of one call (PlanContext and the rest set it on
	// their copy); nil means context.Background().
	ctx context.Context
	// master is the decomposition's master form (the zero value chooses
	// by size): a class planned alone for the renewal indicators takes its
	// network's, so that the answers of small networks stay as they were
	// and large ones get the faster live master.
	master optimize.MasterForm
}

// Forecast rolls today's condition forward with no work done.
func Forecast(sc *Scenario) (*Result, error) {
	p, err := sc.Problem()
	if err != nil {
		return nil, err
	}
	cond := make([][][]float64, len(sc.Classes))
	for k := range sc.Classes {
		if sc.Classes[k].History != nil {
			// Quantities treated lately wear by the class's after-work
			// matrix: roll the widened states.
			cond[k] = rollRows(p.Classes[k].Actions[0].Rows, p.Classes[k].Initial, sc.Horizon)
			continue
		}
		cond[k], err = sc.Classes[k].Transition.Roll(sc.Classes[k].Initial, sc.Horizon)
		if err != nil {
			return nil, fmt.Errorf("class %q: %w", sc.Classes[k].Name, err)
		}
	}
	cond = foldCondition(sc, cond)
	r := assemble(sc, p, cond, nil, nil)
	addRoutine(sc, r, forecastRoutine(sc, cond))
	r.Kind, r.Status = KindForecast, DoNothing
	return r, nil
}

// Plan optimises the scenario's work program. When a target states a
// confidence, the plan is the one that meets it in that share of simulated
// runs (planConfident).
func Plan(sc *Scenario, opt Options) (*Result, error) {
	return PlanContext(context.Background(), sc, opt)
}

// PlanContext is Plan with a context: once ctx is done the plan stops
// between solver calls and returns an error wrapping ctx.Err(), and no
// result.
func PlanContext(ctx context.Context, sc *Scenario, opt Options) (*Result, error) {
	opt.ctx = ctx
	r, err := plan(sc, opt)
	return finish(ctx, r, err)
}

// plan is Plan under opt's context.
func plan(sc *Scenario, opt Options) (*Result, error) {
	if err := stopped(opt.context()); err != nil {
		return nil, err
	}
	if hasConfidence(sc) {
		return planConfident(sc, opt)
	}
	p, err := opt.problem(sc)
	if err != nil {
		return nil, err
	}
	p.Timeout = opt.Timeout
	plan, err := optimize.SolveWith(p, optimize.Options{Method: opt.Solver, Warm: opt.Warm, Master: opt.master})
	if err != nil {
		return nil, err
	}
	return planResult(sc, p, plan, opt)
}

// planResult turns a solved plan of problem p into the Result, with the
// funding answers and the baseline unless opt.SkipFunding.
func planResult(sc *Scenario, p *optimize.Problem, plan *optimize.Plan, opt Options) (*Result, error) {
	if plan.Status == optimize.Infeasible {
		if err := minSpendInfeasible(sc, p, planFeasible(opt)); err != nil {
			return nil, err
		}
		return nil, budgetInfeasible(sc, p)
	}
	r := assemble(sc, p, plan.Condition, plan.Work, plan.Spend)
	addRoutine(sc, r, plan.Routine)
	r.Kind, r.Status, r.Objective = KindPlan, Status(plan.Status), sc.Objective.String()
	r.Model = &ModelSize{Solver: plan.Stats.Method, Rows: plan.Stats.Rows, Columns: plan.Stats.Cols, Nonzeros: plan.Stats.Nonzeros, Solves: plan.Stats.Solves, Iterations: plan.Stats.Iterations, Policies: plan.Stats.Columns, Path: plan.Stats.Path}
	r.Warnings = append(r.Warnings, plan.Warnings...)
	// The solver's shortfalls replace the ones measured on the condition:
	// the same figures, from the model's own rows.
	for i := range r.Targets {
		r.Targets[i].Shortfalls = nil
	}
	for _, s := range plan.Shortfalls {
		t := &r.Targets[s.Target]
		amount := s.Amount
		if sc.Targets[s.Target].Spec.Kind == optimize.MinScore || sc.Targets[s.Target].Spec.Kind == optimize.Hold {
			amount = indexPoints(sc, sc.Targets[s.Target], s.Amount)
		}
		t.Shortfalls = append(t.Shortfalls, YearShortfall{Year: sc.Year(s.Year), Amount: amount})
		t.Met = false
	}
	if sc.Objective == optimize.MinCost && len(sc.Targets) == 0 {
		r.Warnings = append(r.Warnings, "min-cost with no targets: the cheapest plan does nothing; add targets or a budget with max-condition")
	}
	addMinYearly(sc, r)
	r.ClassWarnings = classWarnings(sc, r)
	for _, w := range r.ClassWarnings {
		r.Warnings = append(r.Warnings, w.Text)
	}
	if w := unspentWarning(sc, r); w != "" {
		r.Warnings = append(r.Warnings, w)
	}
	if !opt.SkipFunding {
		f, err := funding(sc, p, plan.Status, opt.BudgetFree)
		if err != nil {
			// The plan stands; only a funding answer is missing.
			r.Warnings = append(r.Warnings, "a funding answer could not be computed: "+err.Error())
		}
		if f == nil {
			f = &Funding{}
		}
		// The funding detail and the renewal the indicators compare with
		// are independent solves: run them side by side. Neither fails
		// the plan: a missing answer is a warning.
		var required [][]float64
		var notes []string
		var detailErr error
		if err := runParallel(opt.context(), []func() error{
			func() error { detailErr = fundingDetail(sc, p, r, f, opt.BudgetFree); return nil },
			func() (err error) {
				ropt := opt
				if optimize.LiveMaster(p) {
					ropt.master = optimize.MasterLive
				}
				required, notes, err = opt.BudgetFree.requiredRenewal(sc, ropt)
				return err
			},
		}); err != nil {
			return nil, err
		}
		if detailErr != nil {
			r.Warnings = append(r.Warnings, "a funding answer could not be computed: "+detailErr.Error())
		}
		if f.LevelBudget != nil || f.ExtraTotal != nil || f.Unreachable != "" || f.HeldBack != "" || f.HoldBudget != nil || len(f.Notes) > 0 {
			r.Funding = f
		}
		if err := stopped(opt.context()); err != nil {
			return nil, err // a funding answer cut short is no answer
		}
		if err := baseline(p, r); err != nil {
			return nil, err
		}
		addIndicators(sc, r, required, notes)
	}
	return r, nil
}

// targetScale is the scale a target's index values are on: its class's, or
// the network's shared scale (nil when the classes' scales differ, in which
// case values stay on the 0-100 score).
func (s *Scenario) targetScale(t Target) *Scale {
	if t.Class != "" {
		return s.Classes[s.classIndex(t.Class)].Scale
	}
	return s.SharedScale()
}

// indexPoints converts a shortfall in score points to index points of the
// target's scale.
func indexPoints(sc *Scenario, t Target, score float64) float64 {
	scale := sc.targetScale(t)
	if scale == nil {
		return score
	}
	return math.Abs(score / 100 * (scale.Best - scale.Worst))
}

// assemble builds a Result from condition, work and spend arrays indexed
// like optimize.Plan's. work and spend are nil for a forecast.
func assemble(sc *Scenario, p *optimize.Problem, cond [][][]float64, work [][][][]float64, spend [][]float64) *Result {
	// Everything reported is by condition state (history.go).
	wide := wideOnly(sc, cond)
	cond, work = foldCondition(sc, cond), foldWork(sc, work)
	views := conditionClasses(sc, p)
	r := &Result{
		wide:     wide,
		Scenario: sc.Name, Source: sc.Source, Currency: sc.Currency, StartYear: sc.StartYear, Horizon: sc.Horizon,
		DiscountRate: sc.DiscountRate, Escalation: sc.Escalation, Weighting: string(sc.Weighting),
		Caution: Caution, Warnings: append([]string{}, sc.Notes...),
	}
	for k := range sc.Classes {
		r.Weights = append(r.Weights, ClassWeight{Class: sc.Classes[k].Name, Weight: sc.Classes[k].Weight})
	}
	for _, g := range sc.BudgetGroups {
		r.GroupClasses = append(r.GroupClasses, GroupClasses{Name: g.Name, Classes: append([]string(nil), g.Classes...)})
	}
	shared := sc.SharedScale()
	bases := valueBases(sc)
	for k := range bases {
		r.BacklogRules = append(r.BacklogRules, bases[k].rules...)
	}
	snapshot := func(t int) ([]ClassCondition, NetworkCondition) {
		classes := make([]ClassCondition, len(sc.Classes))
		var net NetworkCondition
		for k := range sc.Classes {
			c := &sc.Classes[k]
			oc := views[k]
			q := cond[k][t]
			cc := ClassCondition{Class: c.Name, Unit: c.Unit, States: make(Quantities, len(q))}
			for i, v := range q {
				cc.States[i] = StateQuantity{State: c.Scale.States[i].Name, Quantity: v}
			}
			cc.Score = oc.ScoreOf(q)
			cc.AverageIndex = c.Scale.Index(cc.Score)
			sh := oc.SharesOf(q)
			cc.Shares = Shares{Good: sh[optimize.Good], Fair: sh[optimize.Fair], Poor: sh[optimize.Poor]}
			cc.ReplacementValue, cc.Backlog = bases[k].figures(c, q, priceFactor(sc, t))
			addTo(&net.ReplacementValue, cc.ReplacementValue, k == 0)
			addTo(&net.Backlog, cc.Backlog, k == 0)
			classes[k] = cc
			w := c.Weight
			net.Score += w * cc.Score
			net.Shares.Good += w * cc.Shares.Good
			net.Shares.Fair += w * cc.Shares.Fair
			net.Shares.Poor += w * cc.Shares.Poor
		}
		if shared != nil {
			v := shared.Index(net.Score)
			net.AverageIndex = &v
		}
		return classes, net
	}
	r.Initial.Classes, r.Initial.Network = snapshot(0)
	for t := 1; t <= sc.Horizon; t++ {
		y := Year{Year: sc.Year(t)}
		y.Classes, y.Network = snapshot(t)
		if sc.Budget != nil && !math.IsInf(sc.Budget[t-1], 1) {
			b := sc.Budget[t-1]
			y.Budget = &b
		}
		if work != nil {
			for k := range sc.Classes {
				cc := &y.Classes[k]
				cc.Work = workOf(&sc.Classes[k], views[k], work[k][t-1], p.Escalation, t-1)
				s := spend[k][t-1]
				cc.Spend = &s
				y.Spend += s
			}
			for _, g := range sc.BudgetGroups {
				gs := GroupSpend{Name: g.Name, Budget: g.Yearly[t-1]}
				for _, name := range g.Classes {
					gs.Spend += spend[sc.classIndex(name)][t-1]
				}
				y.Groups = append(y.Groups, gs)
			}
			r.TotalCost += y.Spend
			r.PresentValue += y.Spend * math.Pow(1+sc.DiscountRate, -float64(t-1))
		}
		r.ConditionScore += y.Network.Score / float64(sc.Horizon)
		r.Years = append(r.Years, y)
	}
	r.Targets = evaluateTargets(sc, r)
	addIndicators(sc, r, nil, nil)
	return r
}

// workOf lists the treatments applied in one year, best state first. It
// returns an empty list, not nil, for a year without work, so that plans
// always carry the work list of the JSON contract.
func workOf(c *Class, oc *optimize.Class, byState [][]float64, escalation float64, t int) []Work {
	out := []Work{}
	esc := math.Pow(1+escalation, float64(t))
	// The plan holds no work below the solver's tolerance (optimize's
	// readPlan cleans it out), so every positive quantity is reported.
	for i, byAction := range byState {
		for a, q := range byAction {
			if a == 0 || q <= 0 {
				continue
			}
			act := &oc.Actions[a]
			out = append(out, Work{Treatment: act.Name, State: c.Scale.States[i].Name, Quantity: q, Cost: q * act.Cost[i] * esc})
		}
	}
	return out
}

// evaluateTargets measures each target on the result's condition, so that
// forecasts report which targets doing nothing would break, by how much
// and in which years.
func evaluateTargets(sc *Scenario, r *Result) []TargetOutcome {
	out := make([]TargetOutcome, 0, len(sc.Targets))
	for _, t := range sc.Targets {
		o := TargetOutcome{Target: t.Label, Met: true, Measure: MeasureShare}
		spec := t.Spec
		if spec.Kind == optimize.MinScore || spec.Kind == optimize.Hold {
			o.Measure = MeasureScore
			if sc.targetScale(t) != nil {
				o.Measure = MeasureIndex
			}
		}
		measure := func(y Year, init bool) float64 {
			var cc *ClassCondition
			var net NetworkCondition
			if init {
				net = r.Initial.Network
			} else {
				net = y.Network
			}
			if t.Class != "" {
				k := sc.classIndex(t.Class)
				if init {
					cc = &r.Initial.Classes[k]
				} else {
					cc = &y.Classes[k]
				}
			}
			switch spec.Kind {
			case optimize.MaxShare, optimize.MinShare:
				if spec.States != nil {
					return stateShare(cc.States, spec.States)
				}
				sh := net.Shares
				if cc != nil {
					sh = cc.Shares
				}
				return [...]float64{sh.Good, sh.Fair, sh.Poor}[spec.Group]
			default:
				if cc != nil {
					return cc.Score
				}
				return net.Score
			}
		}
		limit := spec.Value
		if spec.Kind == optimize.Hold {
			limit = measure(Year{}, true)
		}
		worst := math.NaN()
		for _, y := range r.Years {
			if y.Year < t.FromYear || y.Year > t.ToYear {
				continue
			}
			v := measure(y, false)
			worse := math.IsNaN(worst)
			var miss float64
			switch spec.Kind {
			case optimize.MaxShare:
				worse = worse || v > worst
				miss = v - limit
			default:
				worse = worse || v < worst
				miss = limit - v
			}
			if worse {
				worst, o.WorstYear = v, y.Year
			}
			if miss > 1e-6 {
				o.Met = false
				if spec.Kind == optimize.MinScore || spec.Kind == optimize.Hold {
					miss = indexPoints(sc, t, miss)
				}
				o.Shortfalls = append(o.Shortfalls, YearShortfall{Year: y.Year, Amount: miss})
			}
		}
		o.WorstValue, o.Limit = worst, limit
		if spec.Kind == optimize.MinScore || spec.Kind == optimize.Hold {
			o.WorstValue, o.Limit = scoreToIndex(sc, t, worst), scoreToIndex(sc, t, limit)
		}
		out = append(out, o)
	}
	return out
}

// stateShare is the share of the quantities in the states marked in.
func stateShare(q Quantities, in []bool) float64 {
	tot, s := 0.0, 0.0
	for i, sq := range q {
		tot += sq.Quantity
		if in[i] {
			s += sq.Quantity
		}
	}
	if tot == 0 {
		return 0
	}
	return s / tot
}

func scoreToIndex(sc *Scenario, t Target, score float64) float64 {
	scale := sc.targetScale(t)
	if scale == nil {
		return score
	}
	return scale.Index(score)
}
