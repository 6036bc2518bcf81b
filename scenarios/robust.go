package scenarios

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"

	"wearplan/markov"
	"wearplan/optimize"
	"wearplan/treatments"
)

// Robust plans: a work program whose targets hold under the point
// estimate of the fitted matrices and under each of N matrix sets drawn
// from their sampling distribution at once (optimize.SolveRobust), beside
// the ordinary (point-estimate) plan, with the price of robustness and how
// the point-estimate plan fares under the same samples.

// shortOfWork is the share of a class a work program must ask for beyond
// what a sample holds for the sample to count as one where the work cannot
// be done as written.
const shortOfWork = 1e-3

// MaxRobustSamples bounds the samples of a robust plan: each adds a copy
// of every fitted class's flow and target rows to one flat LP.
const MaxRobustSamples = 200

// RobustOptions set up a robust plan.
type RobustOptions struct {
	// Samples is the number of matrix sets drawn (2 to MaxRobustSamples).
	Samples int
	// From is MatrixBootstrap (the fit's replicate matrices, drawn at
	// random) or MatrixDirichlet (each row from the posterior of its
	// counts); Prior is the Dirichlet prior (0: Jeffreys').
	From  string
	Prior float64
	// Seed fixes the draws.
	Seed uint64
}

// SamePlan says what "the same plan" means across samples; every robust
// result repeats it.
const SamePlan = "The same plan under every sample means the same work program: the same quantity of each treatment in each " +
	"state and year, so the same spend; what is left untreated in a state is whatever each sample's matrices leave there, " +
	"and a state is never treated for more than it holds under any sample. Each sample's condition is then a linear " +
	"function of the work quantities, so the robust plan is one linear program (a scenario-based robust LP: Mulvey, " +
	"Vanderbei and Zenios, 1995). It is the quantities and money a council approves and a crew carries out; keeping each " +
	"state's treatment shares the same instead would multiply unknown shares by unknown quantities, which is not linear."

// RobustMethod says how the robust plan is made and compared.
const RobustMethod = "The robust plan meets every target, in every year it covers, under the point estimate of the matrices and " +
	"under each sampled set at once, and is otherwise the best plan under the point estimate (the scenario's own objective); " +
	"following Kuhn and Madanat (2005), Model uncertainty and the management of a system of infrastructure facilities, " +
	"Transportation Research Part C, who show that plans built on point estimates can cost much more than expected when the " +
	"matrices are off. The price of robustness is what it gives up against the point-estimate plan under the point estimate: " +
	"condition score, or money. Both plans' work programs are then forecast under each sample (a state treated for more than " +
	"it holds under a sample is treated as far as it holds), and each target is checked in every sample."

// Robust is the robust plan's comparison with the point-estimate plan.
type Robust struct {
	Samples int    `json:"samples"`
	From    string `json:"matrices_from"`
	Seed    uint64 `json:"seed"`
	// Drawn are the classes whose matrices are drawn; Fixed keep theirs.
	Drawn    []string `json:"classes_drawn"`
	Fixed    []string `json:"classes_as_given,omitempty"`
	SamePlan string   `json:"same_plan"`
	Method   string   `json:"method"`
	// HoldsUnderSamples says that every target holds under every sample;
	// otherwise the plan meets the targets as far as the point estimate
	// allows and keeps the total shortfall over the samples as small as
	// the budgets allow (optimize.SolveRobust).
	HoldsUnderSamples bool `json:"holds_under_every_sample"`
	// Plans are the robust plan (when one exists within the budget), then
	// the point-estimate plan.
	Plans []RobustFigures `json:"plans"`
	// LevelBudget is the least level yearly budget under which a robust
	// plan exists (nil when no amount will do: Unreachable says why), and
	// PointLevelBudget the least that meets the targets under the point
	// estimate only; their difference is the price of robustness in money.
	LevelBudget      *float64 `json:"robust_level_budget,omitempty"`
	PointLevelBudget *float64 `json:"point_level_budget,omitempty"`
	Unreachable      string   `json:"unreachable,omitempty"`
	// PriceScore is the point-estimate plan's condition score less the
	// robust plan's, and PricePresentValue the robust plan's present value
	// of spend less the point-estimate plan's, both under the point
	// estimate (zero without a robust plan).
	PriceScore        float64        `json:"price_condition_score"`
	PricePresentValue float64        `json:"price_present_value"`
	Targets           []RobustTarget `json:"targets"`
}

// RobustFigures are one plan's figures under the point estimate and the
// samples.
type RobustFigures struct {
	Plan string `json:"plan"` // "robust" or "point estimate"
	// ConditionScore, TotalCost and PresentValue are under the point
	// estimate.
	ConditionScore float64 `json:"condition_score"`
	TotalCost      float64 `json:"total_cost"`
	PresentValue   float64 `json:"present_value"`
	// MeanSampleScore and WorstSampleScore are the condition score's mean
	// and least over the samples.
	MeanSampleScore  float64 `json:"mean_sample_score"`
	WorstSampleScore float64 `json:"worst_sample_score"`
	// SamplesMeetingAll counts the samples under which every target holds;
	// SamplesShortOfWork those under which the work asks to treat more of
	// a state than it holds.
	SamplesMeetingAll  int `json:"samples_meeting_all_targets"`
	SamplesShortOfWork int `json:"samples_short_of_work"`
}

// RobustTarget is one target under the samples, for both plans.
type RobustTarget struct {
	Target string  `json:"target"`
	Limit  float64 `json:"limit"`
	// Index says that Limit and the worst values are index values of the
	// target's scale; otherwise they are shares.
	Index bool `json:"index,omitempty"`
	// SamplesMet counts the samples under which the target holds in every
	// year; Worst is its worst value over the samples and years.
	// The robust plan's figures are absent when there is no robust plan.
	RobustSamplesMet *int     `json:"robust_samples_met,omitempty"`
	RobustWorst      *float64 `json:"robust_worst,omitempty"`
	PointSamplesMet  int      `json:"point_samples_met"`
	PointWorst       float64  `json:"point_worst"`
}

func (ro *RobustOptions) normalise() error {
	if ro.Samples < 2 || ro.Samples > MaxRobustSamples {
		return &OptionError{"robust samples", fmt.Sprintf("%d samples; give between 2 and %d (20 to 50 is a good start)", ro.Samples, MaxRobustSamples)}
	}
	switch ro.From {
	case "":
		ro.From = MatrixBootstrap
	case MatrixBootstrap, MatrixDirichlet:
	default:
		return &OptionError{"robust matrices", fmt.Sprintf("%q; choose %s or %s", ro.From, MatrixBootstrap, MatrixDirichlet)}
	}
	if ro.Prior == 0 {
		ro.Prior = markov.JeffreysPrior
	}
	return nil
}

// RobustModel returns the robust LP that PlanRobust solves, for export.
func RobustModel(sc *Scenario, ro RobustOptions) (*optimize.Model, error) {
	if err := ro.normalise(); err != nil {
		return nil, err
	}
	samples, _, _, err := drawSamples(sc, ro)
	if err != nil {
		return nil, err
	}
	p, err := sc.Problem()
	if err != nil {
		return nil, err
	}
	return optimize.BuildRobustModel(p, samples)
}

// drawSamples draws ro.Samples matrix sets for the classes whose matrix
// comes from a fit: sample s uses its own generator seeded (ro.Seed, s).
func drawSamples(sc *Scenario, ro RobustOptions) ([]optimize.MatrixSample, []string, []string, error) {
	samplers := make([]markov.MatrixSampler, len(sc.Classes))
	var drawn, fixed []string
	for k := range sc.Classes {
		c := &sc.Classes[k]
		ev := c.Evidence
		var err error
		switch {
		case ev == nil:
			fixed = append(fixed, c.Name)
			continue
		case ro.From == MatrixBootstrap && len(ev.Replicates) >= 2:
			samplers[k], err = markov.NewReplicates(ev.Replicates)
		case ro.From == MatrixDirichlet && ev.Counts != nil:
			samplers[k], err = markov.NewDirichletRows(ev.Counts, ro.Prior, ev.Allowed)
		default:
			fixed = append(fixed, c.Name)
			continue
		}
		if err != nil {
			return nil, nil, nil, fmt.Errorf("class %q: matrix evidence from %s: %w", c.Name, ev.Source, err)
		}
		drawn = append(drawn, c.Name)
	}
	if len(drawn) == 0 {
		what := map[string]string{MatrixBootstrap: "bootstrap replicate matrices", MatrixDirichlet: "transition counts"}[ro.From]
		return nil, nil, nil, &OptionError{"robust samples", fmt.Sprintf("%s: no class takes its matrix from a fit file with %s (deterioration: {fit: FILE}); a matrix typed into the scenario has no sampling distribution to draw from, so a robust plan needs fitted matrices",
			sc.Source, what)}
	}
	out := make([]optimize.MatrixSample, ro.Samples)
	for s := range out {
		rng := rand.New(rand.NewPCG(ro.Seed, uint64(s)+1))
		out[s].Rows = make([][][][]float64, len(sc.Classes))
		for k, smp := range samplers {
			if smp == nil {
				continue
			}
			m, err := smp.Draw(rng)
			if err != nil {
				return nil, nil, nil, fmt.Errorf("class %q: matrix sample %d: %w", sc.Classes[k].Name, s+1, err)
			}
			acts, err := treatments.Actions(m, sc.Classes[k].Treatments)
			if err != nil {
				return nil, nil, nil, fmt.Errorf("class %q: matrix sample %d: %w", sc.Classes[k].Name, s+1, err)
			}
			rows := make([][][]float64, len(acts))
			for a := range acts {
				rows[a] = acts[a].Rows
			}
			out[s].Rows[k] = rows
		}
	}
	return out, drawn, fixed, nil
}

// PlanRobust plans the scenario so that its targets hold under the point
// estimate and under ro.Samples matrix sets drawn for the classes whose
// matrix comes from a fit (the others keep theirs), and compares the plan
// with the point-estimate plan under the same samples. The result is the
// robust plan, with its condition under the point estimate, and Robust.
func PlanRobust(sc *Scenario, ro RobustOptions, opt Options) (*Result, error) {
	return PlanRobustContext(context.Background(), sc, ro, opt)
}

// PlanRobustContext is PlanRobust with a context: once ctx is done the
// solves stop between solver calls and it returns an error wrapping
// ctx.Err(), and no result.
func PlanRobustContext(ctx context.Context, sc *Scenario, ro RobustOptions, opt Options) (*Result, error) {
	opt.ctx = ctx
	r, err := planRobust(sc, ro, opt)
	return finish(ctx, r, err)
}

// planRobust is PlanRobust under opt's context.
func planRobust(sc *Scenario, ro RobustOptions, opt Options) (*Result, error) {
	// Kept answers belong to the point plan's problem: none are shared.
	opt.BudgetFree = nil
	if err := ro.normalise(); err != nil {
		return nil, err
	}
	if hasConfidence(sc) {
		return nil, &OptionError{"robust samples", "a target states a confidence, which is met by simulation; a robust plan meets every target under every sample instead: plan one or the other"}
	}
	samples, drawn, fixed, err := drawSamples(sc, ro)
	if err != nil {
		return nil, err
	}
	p, err := opt.problem(sc)
	if err != nil {
		return nil, err
	}
	p.Timeout = opt.Timeout
	point, err := optimize.SolveWith(p, optimize.Options{Method: opt.Solver, Warm: opt.Warm})
	if err != nil {
		return nil, err
	}
	if point.Status == optimize.Infeasible {
		return nil, budgetInfeasible(sc, p)
	}
	rp, err := optimize.SolveRobust(p, samples)
	if err != nil {
		return nil, err
	}
	if rp.Status == optimize.Infeasible {
		return nil, budgetInfeasible(sc, p)
	}
	rb := &Robust{Samples: ro.Samples, From: map[string]string{MatrixBootstrap: "bootstrap replicates of the fit, one drawn at random per sample", MatrixDirichlet: "Dirichlet posterior of each row's transition counts"}[ro.From],
		Seed: ro.Seed, Drawn: drawn, Fixed: fixed, SamePlan: SamePlan, Method: RobustMethod, HoldsUnderSamples: rp.HoldsUnderSamples}
	// The result is the robust plan under the point estimate when one
	// exists within the budget; otherwise the ordinary plan, with what it
	// would take to plan robustly.
	var r *Result
	pointFig := robustFigures(sc, p, "point estimate", point, samples)
	if rp.HoldsUnderSamples {
		o := opt
		o.SkipFunding = true
		if r, err = planResult(sc, p, rp.Plan, o); err != nil {
			return nil, err
		}
		r.Model = &ModelSize{Solver: rp.Stats.Method, Rows: rp.Stats.Rows, Columns: rp.Stats.Cols, Nonzeros: rp.Stats.Nonzeros, Solves: rp.Stats.Solves}
		if !opt.SkipFunding {
			if err := baseline(p, r); err != nil {
				return nil, err
			}
		}
		robust := robustFigures(sc, p, "robust", rp.Plan, samples)
		rb.Plans = []RobustFigures{robust.figures, pointFig.figures}
		rb.PriceScore = pointFig.figures.ConditionScore - robust.figures.ConditionScore
		rb.PricePresentValue = robust.figures.PresentValue - pointFig.figures.PresentValue
		rb.Targets = robustTargets(sc, p, &robust, &pointFig)
	} else {
		if r, err = planResult(sc, p, point, opt); err != nil {
			return nil, err
		}
		rb.Plans = []RobustFigures{pointFig.figures}
		rb.Targets = robustTargets(sc, p, nil, &pointFig)
		r.Warnings = append(r.Warnings, fmt.Sprintf("no plan within the budget meets every target under every one of the %d matrix samples with the same work; this is the ordinary plan, and the robust plan section says what budget a robust plan needs", ro.Samples))
	}
	if len(sc.Targets) > 0 {
		if err := robustBudgets(rb, p, samples); err != nil {
			return nil, err
		}
	}
	r.Robust = rb
	if len(fixed) > 0 {
		r.Warnings = append(r.Warnings, "the robust plan draws the matrices of "+strings.Join(drawn, ", ")+" only; these keep their matrix as given in every sample: "+strings.Join(fixed, ", "))
	}
	return r, nil
}

// robustBudgets fills the least level budgets that meet every target under
// the point estimate only and under every sample too.
func robustBudgets(rb *Robust, p *optimize.Problem, samples []optimize.MatrixSample) error {
	level, err := optimize.RobustLevelBudget(p, samples)
	switch {
	case errors.Is(err, optimize.ErrUnreachable):
		rb.Unreachable = "no amount of money meets every target under every sample with the same work (a budget group's cap, or a target the treatments cannot reach in time under some sample)"
	case err != nil:
		return fmt.Errorf("robust level budget: %w", err)
	default:
		rb.LevelBudget = &level
	}
	plain, err := optimize.LevelBudget(p)
	if err == nil {
		rb.PointLevelBudget = &plain
	} else if !errors.Is(err, optimize.ErrUnreachable) {
		return fmt.Errorf("least level budget: %w", err)
	}
	return nil
}

// robustTargets reports each target under the samples, for the robust plan
// (nil when there is none) and the point-estimate plan.
func robustTargets(sc *Scenario, p *optimize.Problem, robust, point *planUnderSamples) []RobustTarget {
	var out []RobustTarget
	for n, t := range sc.Targets {
		rt := RobustTarget{Target: t.Label, Limit: t.Spec.Value, PointSamplesMet: point.met[n], PointWorst: point.worst[n]}
		if robust != nil {
			rt.RobustSamplesMet, rt.RobustWorst = &robust.met[n], &robust.worst[n]
		}
		if t.Spec.Kind == optimize.MinScore || t.Spec.Kind == optimize.Hold {
			rt.Index = true
			limit := t.Spec.Value
			if t.Spec.Kind == optimize.Hold {
				limit = p.InitialScore(t.Spec.Class)
			}
			rt.Limit = scoreToIndex(sc, t, limit)
			rt.PointWorst = scoreToIndex(sc, t, rt.PointWorst)
			if robust != nil {
				w := scoreToIndex(sc, t, *rt.RobustWorst)
				rt.RobustWorst = &w
			}
		}
		out = append(out, rt)
	}
	return out
}

// planUnderSamples is one plan's figures under the samples, and per
// target the samples it holds under and its worst value (share or score).
type planUnderSamples struct {
	figures RobustFigures
	met     []int
	worst   []float64
}

func robustFigures(sc *Scenario, p *optimize.Problem, name string, plan *optimize.Plan, samples []optimize.MatrixSample) planUnderSamples {
	out := planUnderSamples{figures: RobustFigures{Plan: name, ConditionScore: plan.ConditionScore, TotalCost: plan.TotalCost, PresentValue: plan.PresentValue, WorstSampleScore: math.Inf(1)},
		met: make([]int, len(sc.Targets)), worst: make([]float64, len(sc.Targets))}
	for n, t := range sc.Targets {
		if t.Spec.Kind == optimize.MaxShare {
			out.worst[n] = math.Inf(-1)
		} else {
			out.worst[n] = math.Inf(1)
		}
	}
	weights := p.Weights()
	for s := range samples {
		cond, undone := optimize.RollWork(p, plan.Work, &samples[s])
		for k, u := range undone {
			// A thousandth of the class: less is rounding, not a work
			// program that cannot be done.
			if u > shortOfWork*p.Classes[k].Total() {
				out.figures.SamplesShortOfWork++
				break
			}
		}
		score := 0.0
		for y := 1; y <= p.Horizon; y++ {
			for k := range p.Classes {
				score += weights[k] * p.Classes[k].ScoreOf(cond[k][y]) / float64(p.Horizon)
			}
		}
		out.figures.MeanSampleScore += score / float64(len(samples))
		out.figures.WorstSampleScore = math.Min(out.figures.WorstSampleScore, score)
		all := true
		for n := range sc.Targets {
			ok := true
			tg := &p.Targets[n]
			limit := tg.Value
			if tg.Kind == optimize.Hold {
				limit = p.InitialScore(tg.Class)
			}
			for y := sc.Targets[n].FromYear; y <= sc.Targets[n].ToYear; y++ {
				v := targetMeasure(p, cond, tg, y-sc.StartYear+1, weights)
				if tg.Kind == optimize.MaxShare {
					out.worst[n] = math.Max(out.worst[n], v)
				} else {
					out.worst[n] = math.Min(out.worst[n], v)
				}
				if missBy(tg.Kind, v, limit) > targetSlack {
					ok = false
				}
			}
			if ok {
				out.met[n]++
			}
			all = all && ok
		}
		if all {
			out.figures.SamplesMeetingAll++
		}
	}
	return out
}

// measureOf is a target's measure on one class's quantities q by state:
// the score (0-100), the share of the target's states, or of its group.
func measureOf(c *optimize.Class, tg *optimize.Target, q []float64) float64 {
	switch {
	case tg.Kind == optimize.MinScore || tg.Kind == optimize.Hold:
		return c.ScoreOf(q)
	case tg.States != nil:
		in, tot := 0.0, 0.0
		for i, v := range q {
			tot += v
			if tg.States[i] {
				in += v
			}
		}
		if tot == 0 {
			return 0
		}
		return in / tot
	}
	return c.SharesOf(q)[tg.Group]
}

// targetMeasure is a target's measure at the end of year y (1-based): a
// group share, or the score (0-100).
func targetMeasure(p *optimize.Problem, cond [][][]float64, tg *optimize.Target, y int, weights []float64) float64 {
	one := func(k int) float64 {
		return measureOf(&p.Classes[k], tg, cond[k][y])
	}
	if tg.Class != optimize.Network {
		return one(tg.Class)
	}
	v := 0.0
	for k := range p.Classes {
		v += weights[k] * one(k)
	}
	return v
}
