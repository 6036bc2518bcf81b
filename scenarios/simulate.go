package scenarios

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"time"

	"wearplan/markov"
	"wearplan/optimize"
	"wearplan/treatments"
)

// Policies a simulation can follow.
const (
	// PolicyPlan follows the optimised plan's treatment shares.
	PolicyPlan = "plan"
	// PolicyDoNothing leaves every class to age.
	PolicyDoNothing = "do-nothing"
)

// Sources of matrix uncertainty.
const (
	// MatrixNone uses every class's matrix as given in every run.
	MatrixNone = "none"
	// MatrixDirichlet draws each row from the Dirichlet posterior of the
	// class's transition counts (classes whose matrix comes from a fit).
	MatrixDirichlet = "dirichlet"
	// MatrixBootstrap draws one of the class's bootstrap replicate
	// matrices (classes whose matrix comes from a fit).
	MatrixBootstrap = "bootstrap"
)

// Limits that keep a simulation within reach of one machine.
const (
	// MaxLots bounds the lots of one simulation.
	MaxLots = 2_000_000
	// MaxRuns bounds the number of runs.
	MaxRuns = 100_000
	// maxFigures bounds the figures kept over all runs (8 bytes each):
	// classes+1 x years x 5 per run.
	maxFigures = 40_000_000
	// fewRuns is the number of runs below which percentiles are rough.
	fewRuns = 100
)

// PercentileMethod names the percentile definition used for every band.
const PercentileMethod = "Hyndman and Fan (1996) type 7: linear interpolation between order statistics at " +
	"position (runs - 1)·p, the definition of a spreadsheet's PERCENTILE.INC"

// PolicyRule says how a run treats a segment; every simulation result
// repeats it.
const PolicyRule = "In each year a segment in a state gets each treatment with the probability the plan gives it there: " +
	"the quantity the plan treats that way divided by the plan's quantity in that state at the start of the year. " +
	"Where the plan has no quantity in a state in a year (at most 1e-9 of the class), the shares of the nearest year " +
	"with quantity in that state are used (the earlier one on a tie); a state the plan never holds is left untreated."

// MatrixEvidence is what a fit result keeps about how a class's matrix was
// estimated: the one-year transition counts of each row and the bootstrap
// replicate matrices. Classes whose matrix is typed into the scenario have
// none; the fit command fills it in for classes that take their matrix from
// a fit result file.
type MatrixEvidence struct {
	// Source names where the evidence came from (the fit result file).
	Source string
	// Counts[i][j] is the number of observed one-year moves from state i
	// to state j.
	Counts [][]float64
	// Allowed marks the structurally possible entries; nil means no move
	// to a better state (markov.NoImprovement).
	Allowed [][]bool
	// Replicates are the bootstrap replicate matrices.
	Replicates []*markov.Transition
}

// Lot is a piece of a class's inventory that a simulation moves as one: a
// segment of the class's inventory list, or a lot cut from its quantity.
type Lot struct {
	// ID names the segment; empty for lots cut from quantities.
	ID    string
	Class string
	// State is the segment's state today (0 = best).
	State    int
	Quantity float64
	// LastTreated is the calendar year of the segment's last treatment, for
	// classes whose treatments keep intervals; 0 when not known (taken as
	// long ago).
	LastTreated int
}

// SimulateOptions set up a simulation.
type SimulateOptions struct {
	// Runs is the number of simulated runs; Seed fixes every random number.
	Runs int
	Seed uint64
	// Policy is PolicyPlan (default) or PolicyDoNothing.
	Policy string
	// Matrix is MatrixNone (default), MatrixDirichlet or MatrixBootstrap.
	Matrix string
	// Prior is the symmetric Dirichlet prior of MatrixDirichlet; 0 means
	// Jeffreys' prior, 1/2.
	Prior float64
	// LotSize is the size of the lots cut from each class's quantity, in
	// the class's unit; 0 means 1. ClassLotSize overrides it per class.
	LotSize      float64
	ClassLotSize map[string]float64
	// Lots, when not nil, are the lots to simulate instead of those the
	// scenario gives (see Simulate). Per class and state they must add up to
	// the class's inventory.
	Lots []Lot
	// Workers is the number of runs simulated at once; 0 means GOMAXPROCS.
	Workers int
	// Timeout bounds each solver call of the plan; zero means no limit.
	Timeout time.Duration
	// Solver picks how the plan is solved (optimize.Auto by default); both
	// methods reach the same optimum.
	Solver optimize.Method

	// ctx is the context of one call (SimulateContext sets it on its
	// copy); nil means context.Background().
	ctx context.Context
}

// OptionError is a simulation (or robust plan) option that cannot be used,
// with the fix.
type OptionError struct {
	// Option is the option's name: "runs", "policy", "matrix uncertainty",
	// "dirichlet prior", "lot size" or "segments"; for robust plans
	// "robust samples" or "robust matrices".
	Option string
	Msg    string
}

func (e *OptionError) Error() string { return e.Option + ": " + e.Msg }

// targetSlack is how far a run may miss a target and still meet it, the
// same allowance as the deterministic evaluation (evaluateTargets).
const targetSlack = 1e-6

// Simulate runs the scenario's plan (or do nothing) through opt.Runs
// random runs at segment level and returns the uncertainty bands.
func Simulate(sc *Scenario, opt SimulateOptions) (*SimulationResult, error) {
	return SimulateContext(context.Background(), sc, opt)
}

// SimulateContext is Simulate with a context: once ctx is done the plan's
// solve stops between solver calls, no further run starts (the runs under
// way finish), and it returns an error wrapping ctx.Err(), and no result.
func SimulateContext(ctx context.Context, sc *Scenario, opt SimulateOptions) (*SimulationResult, error) {
	opt.ctx = ctx
	res, _, err := simulate(sc, opt, nil)
	return finish(ctx, res, err)
}

// givenPlan is a plan a simulation follows instead of solving the
// scenario's: the problem it was solved for (targets may be tightened) and
// the plan.
type givenPlan struct {
	p    *optimize.Problem
	plan *optimize.Plan
}

// simulate is Simulate, following given when it is not nil, and returning
// every run's figures too.
func simulate(sc *Scenario, opt SimulateOptions, given *givenPlan) (*SimulationResult, *figures, error) {
	if err := opt.normalise(); err != nil {
		return nil, nil, err
	}
	if n := (len(sc.Classes) + 1) * sc.Horizon * figCount * opt.Runs; n > maxFigures {
		return nil, nil, &OptionError{"runs", fmt.Sprintf("%d runs of %d classes over %d years would keep %d MB of figures; use at most %d runs for this scenario",
			opt.Runs, len(sc.Classes), sc.Horizon, n*8>>20, maxFigures/((len(sc.Classes)+1)*sc.Horizon*figCount))}
	}
	ctx := orBackground(opt.ctx)
	if err := stopped(ctx); err != nil {
		return nil, nil, err
	}
	p, err := sc.Problem()
	if err != nil {
		return nil, nil, err
	}
	p = p.WithContext(ctx)
	res := &SimulationResult{
		Scenario: sc.Name, Source: sc.Source, Kind: KindSimulation, Policy: opt.Policy, Currency: sc.Currency,
		StartYear: sc.StartYear, Horizon: sc.Horizon, Runs: opt.Runs, Seed: opt.Seed,
		Percentiles: PercentileMethod, Weighting: string(sc.Weighting), Caution: Caution,
		Warnings: append([]string{}, sc.Notes...),
	}
	segs := opt.Lots
	from := make([]string, len(sc.Classes))
	sizes := make([]float64, len(sc.Classes))
	rules := make([]string, len(sc.Classes))
	if segs == nil {
		if segs, err = CutLots(sc, opt.LotSize, opt.ClassLotSize); err != nil {
			return nil, nil, err
		}
		for k := range sc.Classes {
			c := &sc.Classes[k]
			size, segments, why := piecesOf(c, opt.LotSize, opt.ClassLotSize)
			if segments {
				from[k] = fmt.Sprintf("the %d segments of the inventory list %s", len(c.Segments), c.Inventory.File)
				continue
			}
			sizes[k], rules[k] = size, why
			from[k] = fmt.Sprintf("pieces of %s %s cut from the quantity in each state (%s; one smaller piece takes any remainder)", num(size), c.Unit, why)
		}
	} else {
		for k := range from {
			from[k] = "pieces given by the caller"
		}
	}
	lots, counts, err := toLots(sc, segs)
	if err != nil {
		return nil, nil, err
	}
	for k := range sc.Classes {
		if w := pieceWarning(&sc.Classes[k], counts[k]); w != "" {
			res.Warnings = append(res.Warnings, w)
		}
	}

	simClasses := make([]markov.SimClass, len(sc.Classes))
	samplers := make([]markov.MatrixSampler, len(sc.Classes))
	if err := chooseSamplers(sc, opt, samplers, res); err != nil {
		return nil, nil, err
	}

	// The deterministic flow, once the options are known to work: the
	// plan, or the do-nothing forecast.
	var det *Result
	var work [][][][]float64
	if opt.Policy == PolicyPlan {
		p.Timeout = opt.Timeout
		var plan *optimize.Plan
		if given != nil {
			p, plan = given.p, given.plan
		} else if plan, err = optimize.SolveWith(p, optimize.Options{Method: opt.Solver}); err != nil {
			return nil, nil, err
		}
		if plan.Status == optimize.Infeasible {
			return nil, nil, fmt.Errorf("%s: the budgets cannot be kept even by doing nothing; check the budget lines", sc.Source)
		}
		det = assemble(sc, p, plan.Condition, plan.Work, plan.Spend)
		work = plan.Work
		res.PlanStatus = Status(plan.Status)
		res.PolicyRule = PolicyRule
	} else {
		det, err = Forecast(sc)
		if err != nil {
			return nil, nil, err
		}
	}
	res.Initial = det.Initial

	for k := range sc.Classes {
		c := &sc.Classes[k]
		oc := &p.Classes[k]
		info := SimClassInfo{Class: c.Name, Unit: c.Unit, Segments: counts[k], Quantity: c.Total(), LotSize: sizes[k], PieceRule: rules[k], SegmentsFrom: from[k], Matrix: "as given"}
		sim := markov.SimClass{Rows: make([][][]float64, len(oc.Actions))}
		for a := range oc.Actions {
			sim.Rows[a] = oc.Actions[a].Rows
		}
		if work != nil {
			sim.Policy, info.BorrowedShares, info.Untreated = planPolicy(work[k], c.Total(), len(oc.Actions))
		} else {
			sim.Policy = doNothingPolicy(sc.Horizon, len(oc.Initial), len(oc.Actions))
		}
		if s := samplers[k]; s != nil {
			info.Matrix = s.Method()
			ts, h, after := c.Treatments, c.History, c.AfterWork
			sim.Draw = func(rng *rand.Rand) ([][][]float64, error) {
				m, err := s.Draw(rng)
				if err != nil {
					return nil, err
				}
				var acts []treatments.Action
				if h != nil {
					acts, err = h.Actions(m, after, ts)
				} else {
					acts, err = treatments.Actions(m, ts)
				}
				if err != nil {
					return nil, err
				}
				rows := make([][][]float64, len(acts))
				for a := range acts {
					rows[a] = acts[a].Rows
				}
				return rows, nil
			}
		}
		simClasses[k] = sim
		res.Classes = append(res.Classes, info)
	}
	describeUncertainty(res, opt, counts)

	// Every run's figures go into its own slot; bands are computed in run
	// order afterwards, so nothing depends on which goroutine ran what.
	fig := newFigures(sc, p, opt.Runs, work != nil)
	err = markov.Simulate(simClasses, lots, markov.SimOptions{Years: sc.Horizon, Runs: opt.Runs, Seed: opt.Seed, Workers: opt.Workers},
		func(run int, o *markov.RunOutcome) error {
			// A failed run stops markov.Simulate from starting later
			// ones: the context's error stops the simulation after the
			// runs under way.
			if err := stopped(ctx); err != nil {
				return err
			}
			fig.record(run, o)
			return nil
		})
	if err != nil {
		return nil, nil, err
	}
	fig.bands(res, det)
	res.Targets = fig.targetChances(det)
	if opt.Runs < fewRuns {
		res.Warnings = append(res.Warnings, fmt.Sprintf("only %d runs: the 5th and 95th percentiles are rough; use --runs 1000 or more for figures to report", opt.Runs))
	}
	return res, fig, nil
}

func (o *SimulateOptions) normalise() error {
	if o.Runs < 1 || o.Runs > MaxRuns {
		return &OptionError{"runs", fmt.Sprintf("%d runs; give between 1 and %d (1000 is a good start)", o.Runs, MaxRuns)}
	}
	switch o.Policy {
	case "":
		o.Policy = PolicyPlan
	case PolicyPlan, PolicyDoNothing:
	default:
		return &OptionError{"policy", fmt.Sprintf("%q; choose %s or %s", o.Policy, PolicyPlan, PolicyDoNothing)}
	}
	switch o.Matrix {
	case "":
		o.Matrix = MatrixNone
	case MatrixNone, MatrixDirichlet, MatrixBootstrap:
	default:
		return &OptionError{"matrix uncertainty", fmt.Sprintf("%q; choose %s, %s or %s", o.Matrix, MatrixNone, MatrixDirichlet, MatrixBootstrap)}
	}
	if o.Prior == 0 {
		o.Prior = markov.JeffreysPrior
	}
	if math.IsNaN(o.Prior) || math.IsInf(o.Prior, 0) || o.Prior < 0 {
		return &OptionError{"dirichlet prior", fmt.Sprintf("%g; give a positive number (0.5 is Jeffreys' prior, 1 the uniform prior)", o.Prior)}
	}
	check := func(what string, v float64) error {
		if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
			return &OptionError{"lot size", fmt.Sprintf("%s%g; give a positive size in the class's unit, e.g. 1 or 0.5", what, v)}
		}
		return nil
	}
	if err := check("", o.LotSize); err != nil {
		return err
	}
	for _, name := range sortedKeys(o.ClassLotSize) {
		if v := o.ClassLotSize[name]; v == 0 {
			return &OptionError{"lot size", fmt.Sprintf("%s=0; give a positive size in the class's unit", name)}
		} else if err := check(name+"=", v); err != nil {
			return err
		}
	}
	return nil
}

// piecesOf says how a simulation cuts a class: into the segments of its
// segment list (segments true), or into pieces of size, with the reason in
// words. A size asked for the simulation (per class, then for all classes)
// comes first, then the class's segment_size, then its segment list, then
// the default of its unit (DefaultSegmentSize).
func piecesOf(c *Class, def float64, per map[string]float64) (size float64, segments bool, why string) {
	if v, ok := per[c.Name]; ok {
		return v, false, "the size asked for this class in this simulation"
	}
	if def > 0 {
		return def, false, "the size asked for every class in this simulation"
	}
	if c.SegmentSize > 0 {
		return c.SegmentSize, false, "the class's segment_size"
	}
	if len(c.Segments) > 0 {
		return 0, true, ""
	}
	size, why = DefaultSegmentSize(c.Unit, c.Initial)
	return size, false, why
}

// CutLots returns the pieces of a simulation. A class read from an
// inventory list moves segment by segment, unless a size is given for it
// (def for every class, per for one, or its segment_size). Other classes
// are cut into pieces of their segment_size or else of their unit's
// default size (DefaultSegmentSize): with size L, a quantity q becomes
// floor(q/L) pieces of L and, when more than 1e-9·L is left, one piece of
// the remainder q - floor(q/L)·L. Classes come in order, best state first.
func CutLots(sc *Scenario, def float64, per map[string]float64) ([]Lot, error) {
	for _, name := range sortedKeys(per) {
		if sc.classIndex(name) < 0 {
			names := make([]string, len(sc.Classes))
			for k := range sc.Classes {
				names[k] = sc.Classes[k].Name
			}
			return nil, &OptionError{"lot size", fmt.Sprintf("unknown class %q; classes are %s", name, strings.Join(names, ", "))}
		}
	}
	var out []Lot
	for k := range sc.Classes {
		c := &sc.Classes[k]
		size, segments, _ := piecesOf(c, def, per)
		if segments {
			for _, sg := range c.Segments {
				out = append(out, Lot{ID: sg.ID, Class: c.Name, State: sg.State, Quantity: sg.Quantity, LastTreated: sg.LastTreated})
			}
			continue
		}
		// Count before cutting, so that a size far too small for the
		// class fails at once with the numbers to fix it.
		if n := pieceCount(c.Initial, size); n+len(out) > MaxLots {
			return nil, &OptionError{"lot size", fmt.Sprintf("class %q: %s %s in pieces of %s would make %d pieces; a simulation takes at most %d in all: give a larger size for the class, e.g. %s=%s",
				c.Name, num(c.Total()), c.Unit, num(size), n, MaxLots, c.Name, num(suggestLot(c.Total(), MaxLots/10)))}
		}
		for _, pc := range c.pieces(sc.StartYear) {
			q := pc.Quantity
			whole := math.Floor(q/size + 1e-9)
			for range int(whole) {
				out = append(out, Lot{Class: c.Name, State: pc.State, Quantity: size, LastTreated: pc.LastTreated})
			}
			if rest := q - whole*size; rest > 1e-9*size {
				out = append(out, Lot{Class: c.Name, State: pc.State, Quantity: rest, LastTreated: pc.LastTreated})
			}
		}
	}
	return out, nil
}

// suggestLot returns a round lot size (1, 2 or 5 times a power of ten) that
// cuts total into at most n lots.
func suggestLot(total float64, n int) float64 {
	want := total / float64(n)
	for p := 1e-3; ; p *= 10 {
		for _, m := range []float64{1, 2, 5} {
			if m*p >= want {
				return m * p
			}
		}
	}
}

// toLots turns lots into the engine's, checking that they add up to each
// class's inventory, and counts them per class.
func toLots(sc *Scenario, segs []Lot) ([]markov.Lot, []int, error) {
	lots := make([]markov.Lot, len(segs))
	counts := make([]int, len(sc.Classes))
	sums := make([][]float64, len(sc.Classes))
	for k := range sums {
		sums[k] = make([]float64, len(sc.Classes[k].Initial))
	}
	wide := make([][]float64, len(sc.Classes)) // by widened state, for classes with a History
	for n, s := range segs {
		k := sc.classIndex(s.Class)
		name := s.ID
		if name == "" {
			name = fmt.Sprint(n + 1)
		}
		switch {
		case k < 0:
			return nil, nil, &OptionError{"segments", fmt.Sprintf("segment %s: unknown class %q", name, s.Class)}
		case s.State < 0 || s.State >= len(sums[k]):
			return nil, nil, &OptionError{"segments", fmt.Sprintf("segment %s: state %d outside the %d states of class %q", name, s.State+1, len(sums[k]), s.Class)}
		case math.IsNaN(s.Quantity) || math.IsInf(s.Quantity, 0) || s.Quantity < 0:
			return nil, nil, &OptionError{"segments", fmt.Sprintf("segment %s: quantity %g must be a finite number of zero or more", name, s.Quantity)}
		}
		state := s.State
		if h := sc.Classes[k].History; h != nil {
			if s.LastTreated != 0 {
				if msg := lastTreatedCheck(s.LastTreated, sc.StartYear); msg != "" {
					return nil, nil, &OptionError{"segments", fmt.Sprintf("segment %s: last treated %s", name, msg)}
				}
			}
			// The engine moves lots over the class's widened states.
			state = h.State(s.State, sc.Classes[k].yearsSinceWork(s.LastTreated, sc.StartYear))
			if wide[k] == nil {
				wide[k] = make([]float64, h.States())
			}
			wide[k][state] += s.Quantity
		}
		lots[n] = markov.Lot{Class: k, State: state, Quantity: s.Quantity}
		counts[k]++
		sums[k][s.State] += s.Quantity
	}
	for k := range sc.Classes {
		c := &sc.Classes[k]
		for i, want := range c.Initial {
			if math.Abs(sums[k][i]-want) > 1e-9*math.Max(c.Total(), 1) {
				return nil, nil, &OptionError{"segments", fmt.Sprintf("class %q, state %q: segments add up to %s %s but the inventory has %s; simulate the inventory the plan was made for",
					c.Name, c.Scale.States[i].Name, num(sums[k][i]), c.Unit, num(want))}
			}
		}
		if h := c.History; h != nil && wide[k] != nil {
			for w, want := range c.wideInitial(sc.StartYear) {
				if math.Abs(wide[k][w]-want) > 1e-9*math.Max(c.Total(), 1) {
					names := make([]string, len(c.Scale.States))
					for i := range names {
						names[i] = c.Scale.States[i].Name
					}
					return nil, nil, &OptionError{"segments", fmt.Sprintf("class %q, state %q: segments add up to %s %s but the inventory has %s; give the segments' last treatment years as the inventory does",
						c.Name, h.Label(names, w), num(wide[k][w]), c.Unit, num(want))}
				}
			}
		}
	}
	return lots, counts, nil
}

// chooseSamplers picks each class's matrix sampler for opt.Matrix.
func chooseSamplers(sc *Scenario, opt SimulateOptions, out []markov.MatrixSampler, res *SimulationResult) error {
	if opt.Matrix == MatrixNone {
		return nil
	}
	var fixed []string
	for k := range sc.Classes {
		c := &sc.Classes[k]
		ev := c.Evidence
		var s markov.MatrixSampler
		var err error
		n := len(c.Initial)
		switch {
		case opt.Matrix == MatrixDirichlet && ev != nil && ev.Counts != nil:
			var d *markov.DirichletRows
			if d, err = markov.NewDirichletRows(ev.Counts, opt.Prior, ev.Allowed); err == nil {
				if d.States() != n {
					err = fmt.Errorf("counts for %d states, the scale has %d", d.States(), n)
				}
				for _, i := range d.EmptyRows() {
					res.Warnings = append(res.Warnings, fmt.Sprintf("class %q: no observed moves from state %q; its rows come from the prior alone", c.Name, c.Scale.States[i].Name))
				}
				s = d
			}
		case opt.Matrix == MatrixBootstrap && ev != nil && ev.Replicates != nil:
			var b *markov.Replicates
			if b, err = markov.NewReplicates(ev.Replicates); err == nil {
				if b.States() != n {
					err = fmt.Errorf("replicates with %d states, the scale has %d", b.States(), n)
				}
				s = b
			}
		default:
			fixed = append(fixed, c.Name)
			continue
		}
		if err != nil {
			src := ev.Source
			if src == "" {
				src = "its fit result"
			}
			return fmt.Errorf("class %q: matrix evidence from %s: %w", c.Name, src, err)
		}
		out[k] = s
	}
	what := map[string]string{MatrixDirichlet: "transition counts", MatrixBootstrap: "bootstrap replicate matrices"}[opt.Matrix]
	if len(fixed) == len(sc.Classes) {
		return &OptionError{"matrix uncertainty", fmt.Sprintf("%s needs %s from a fit result, and no class of %s takes its matrix from one; a matrix typed into the scenario has no sampling distribution, so use %s",
			opt.Matrix, what, sc.Source, MatrixNone)}
	}
	if len(fixed) > 0 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("matrix uncertainty covers only the classes with %s; these keep their matrix as given: %s", what, strings.Join(fixed, ", ")))
	}
	return nil
}

func describeUncertainty(res *SimulationResult, opt SimulateOptions, counts []int) {
	total := 0
	for _, n := range counts {
		total += n
	}
	u := &res.Uncertainty
	u.Segments, u.Matrix = true, opt.Matrix
	u.Included = append(u.Included, fmt.Sprintf("piece-level randomness: each of %d pieces (segments of a list, or pieces cut from quantities) draws its treatment and its next state at random in every year, independently of the others", total))
	if opt.Matrix == MatrixNone {
		u.Excluded = append(u.Excluded, "matrix uncertainty: every run uses the transition matrices as given, so estimation error in them is not in the bands")
	} else {
		var names []string
		for _, c := range res.Classes {
			if c.Matrix != "as given" {
				names = append(names, c.Class)
			}
		}
		u.Included = append(u.Included, fmt.Sprintf("matrix uncertainty (%s): each run draws the matrices of %s from their sampling distribution", opt.Matrix, strings.Join(names, ", ")))
	}
	u.Excluded = append(u.Excluded,
		"common causes: pieces deteriorate independently here, while real assets share weather, traffic, materials and contractors, so real outcomes may spread wider",
		"uncertainty in costs, budgets and treatment effects")
	if opt.Policy == PolicyPlan {
		u.Excluded = append(u.Excluded, "budget discipline: runs follow the plan's shares, so their spend varies around the plan's instead of being held to the budget")
	}
}

// planPolicy turns a class's planned work (by year, state and action) into
// the probability of each action per year and state, following PolicyRule.
func planPolicy(work [][][]float64, total float64, actions int) (pol [][][]float64, borrowed, untreated int) {
	years := len(work)
	ns := len(work[0])
	floor := 1e-9 * total
	shares := make([][][]float64, years) // nil where the plan has no quantity
	for t := range work {
		shares[t] = make([][]float64, ns)
		for i, byAction := range work[t] {
			q := 0.0
			for _, v := range byAction {
				q += max(v, 0)
			}
			if q <= floor {
				continue
			}
			// Drop work too small to report (workOf's floor) unless that
			// would drop everything.
			kept := 0.0
			for _, v := range byAction {
				if v > floor {
					kept += v
				}
			}
			sh := make([]float64, actions)
			for a, v := range byAction {
				switch {
				case kept > 0 && v > floor:
					sh[a] = v / kept
				case kept == 0 && v > 0:
					sh[a] = v / q
				}
			}
			shares[t][i] = sh
		}
	}
	pol = make([][][]float64, years)
	for t := range pol {
		pol[t] = make([][]float64, ns)
		for i := range ns {
			if shares[t][i] != nil {
				pol[t][i] = shares[t][i]
				continue
			}
			found := false
			for d := 1; d < years && !found; d++ {
				for _, u := range []int{t - d, t + d} { // earlier first on a tie
					if u >= 0 && u < years && shares[u][i] != nil {
						pol[t][i] = shares[u][i]
						found = true
						break
					}
				}
			}
			if found {
				borrowed++
				continue
			}
			untreated++
			pol[t][i] = make([]float64, actions)
			pol[t][i][0] = 1
		}
	}
	return pol, borrowed, untreated
}

func doNothingPolicy(years, states, actions int) [][][]float64 {
	pol := make([][][]float64, years)
	for t := range pol {
		pol[t] = make([][]float64, states)
		for i := range pol[t] {
			pol[t][i] = make([]float64, actions)
			pol[t][i][0] = 1
		}
	}
	return pol
}

// Figures kept per run, class (and network) and year.
const (
	figGood = iota
	figFair
	figPoor
	figScore
	figSpend
	figCount
)

// figures holds every run's figures: vals[series][run], where a series is
// one figure of one class (or the network, index len(classes)) in one year.
type figures struct {
	sc        *Scenario
	p         *optimize.Problem
	years     int
	spend     bool
	vals      [][]float64
	esc       []float64
	weights   []float64
	scoreOf   [][]float64 // per class and state: condition score
	groupOf   [][]optimize.Group
	costOf    [][][]float64 // per class, action, state: unit cost
	numSeries int
	// stateVals[n][t][run] is the share of target n's class in the
	// target's states (Target.Spec.States) at the end of year t; nil for
	// targets on a group or the score.
	stateVals [][][]float64
}

func newFigures(sc *Scenario, p *optimize.Problem, runs int, spend bool) *figures {
	f := &figures{sc: sc, p: p, years: sc.Horizon, spend: spend}
	f.numSeries = (len(sc.Classes) + 1) * sc.Horizon * figCount
	f.vals = make([][]float64, f.numSeries)
	for s := range f.vals {
		f.vals[s] = make([]float64, runs)
	}
	f.stateVals = make([][][]float64, len(sc.Targets))
	for n, tg := range sc.Targets {
		if tg.Spec.States == nil {
			continue
		}
		f.stateVals[n] = make([][]float64, sc.Horizon)
		for t := range f.stateVals[n] {
			f.stateVals[n][t] = make([]float64, runs)
		}
	}
	for t := range sc.Horizon {
		f.esc = append(f.esc, math.Pow(1+sc.Escalation, float64(t)))
	}
	for k := range sc.Classes {
		oc := &p.Classes[k]
		f.weights = append(f.weights, sc.Classes[k].Weight)
		f.scoreOf = append(f.scoreOf, oc.Score)
		f.groupOf = append(f.groupOf, oc.Group)
		costs := make([][]float64, len(oc.Actions))
		for a := range oc.Actions {
			costs[a] = oc.Actions[a].Cost
		}
		f.costOf = append(f.costOf, costs)
	}
	return f
}

func (f *figures) series(k, t, fig int) int { return (k*f.years+t)*figCount + fig }

// record keeps one run's figures. It writes only the run's own slots.
func (f *figures) record(run int, o *markov.RunOutcome) {
	K := len(f.sc.Classes)
	for n, byYear := range f.stateVals {
		if byYear == nil {
			continue
		}
		spec := &f.sc.Targets[n].Spec
		for t := range f.years {
			in, tot := 0.0, 0.0
			for i, x := range o.Quantity[spec.Class][t+1] {
				tot += x
				if spec.States[i] {
					in += x
				}
			}
			if tot > 0 {
				in /= tot
			}
			byYear[t][run] = in
		}
	}
	for t := range f.years {
		var net [figCount]float64
		for k := range K {
			q := o.Quantity[k][t+1]
			var v [figCount]float64
			tot := 0.0
			for i, x := range q {
				tot += x
				v[figGood+int(f.groupOf[k][i])] += x
				v[figScore] += x * f.scoreOf[k][i]
			}
			if tot > 0 {
				v[figGood] /= tot
				v[figFair] /= tot
				v[figPoor] /= tot
				v[figScore] /= tot
			}
			if f.spend {
				for i, byAction := range o.Treated[k][t] {
					for a, x := range byAction {
						if a > 0 && x > 0 {
							v[figSpend] += x * f.costOf[k][a][i]
						}
					}
				}
				v[figSpend] *= f.esc[t]
			}
			for m := range figCount {
				f.vals[f.series(k, t, m)][run] = v[m]
				if m == figSpend {
					net[m] += v[m]
				} else {
					net[m] += f.weights[k] * v[m]
				}
			}
		}
		for m := range figCount {
			f.vals[f.series(K, t, m)][run] = net[m]
		}
	}
}

// band summarises one series over the runs.
func (f *figures) band(s int, plan float64, toIndex func(float64) float64) Band {
	xs := f.vals[s]
	sorted := make([]float64, len(xs))
	mean := 0.0
	for r, x := range xs {
		if toIndex != nil {
			x = toIndex(x)
		}
		sorted[r] = x
		mean += x
	}
	mean /= float64(len(xs))
	slices.Sort(sorted)
	return Band{P5: Percentile(sorted, 0.05), P50: Percentile(sorted, 0.50), P95: Percentile(sorted, 0.95), Mean: mean, Plan: plan}
}

func (f *figures) bands(res *SimulationResult, det *Result) {
	K := len(f.sc.Classes)
	shared := f.sc.SharedScale()
	for t := range f.years {
		dy := det.Years[t]
		y := BandYear{Year: dy.Year, Budget: dy.Budget}
		for k := range K {
			c := &f.sc.Classes[k]
			dc := dy.Classes[k]
			cb := ClassBands{Class: c.Name,
				Shares: ShareBands{
					Good: f.band(f.series(k, t, figGood), dc.Shares.Good, nil),
					Fair: f.band(f.series(k, t, figFair), dc.Shares.Fair, nil),
					Poor: f.band(f.series(k, t, figPoor), dc.Shares.Poor, nil),
				},
				AverageIndex: f.band(f.series(k, t, figScore), dc.AverageIndex, c.Scale.Index),
				Score:        f.band(f.series(k, t, figScore), dc.Score, nil),
			}
			if f.spend {
				b := f.band(f.series(k, t, figSpend), *dc.Spend, nil)
				cb.Spend = &b
			}
			y.Classes = append(y.Classes, cb)
		}
		dn := dy.Network
		y.Network = NetworkBands{
			Shares: ShareBands{
				Good: f.band(f.series(K, t, figGood), dn.Shares.Good, nil),
				Fair: f.band(f.series(K, t, figFair), dn.Shares.Fair, nil),
				Poor: f.band(f.series(K, t, figPoor), dn.Shares.Poor, nil),
			},
			Score: f.band(f.series(K, t, figScore), dn.Score, nil),
		}
		if shared != nil {
			b := f.band(f.series(K, t, figScore), *dn.AverageIndex, shared.Index)
			y.Network.AverageIndex = &b
		}
		if f.spend {
			b := f.band(f.series(K, t, figSpend), dy.Spend, nil)
			y.Network.Spend = &b
		}
		res.Years = append(res.Years, y)
	}
}

// targetValues returns, for target n, a function giving every run's
// measure at the end of year t (0-based: a group or state share, or the
// 0-100 score), and the limit it is held to on the same scale.
func (f *figures) targetValues(n int, initial *Snapshot) (func(t int) []float64, float64) {
	tg := &f.sc.Targets[n]
	spec := tg.Spec
	k := len(f.sc.Classes)
	if tg.Class != "" {
		k = f.sc.classIndex(tg.Class)
	}
	limit := spec.Value
	if spec.Kind == optimize.Hold {
		if k == len(f.sc.Classes) {
			limit = initial.Network.Score
		} else {
			limit = initial.Classes[k].Score
		}
	}
	if f.stateVals[n] != nil {
		return func(t int) []float64 { return f.stateVals[n][t] }, limit
	}
	fig := figScore
	if spec.Kind == optimize.MaxShare || spec.Kind == optimize.MinShare {
		fig = figGood + int(spec.Group)
	}
	return func(t int) []float64 { return f.vals[f.series(k, t, fig)] }, limit
}

// missBy is how far value v misses a target of the kind with the limit:
// positive when missed, zero or less when met.
func missBy(kind optimize.TargetKind, v, limit float64) float64 {
	if kind == optimize.MaxShare {
		return v - limit
	}
	return limit - v
}

// worstMiss returns, for each run, the most by which target n misses its
// limit in any year it covers (a share, or score points): the run meets
// the target in every year when it is at most targetSlack.
func (f *figures) worstMiss(n int, initial *Snapshot) []float64 {
	tg := &f.sc.Targets[n]
	values, limit := f.targetValues(n, initial)
	out := make([]float64, len(f.vals[0]))
	for r := range out {
		out[r] = math.Inf(-1)
	}
	for t := range f.years {
		if year := f.sc.Year(t + 1); year < tg.FromYear || year > tg.ToYear {
			continue
		}
		for r, v := range values(t) {
			out[r] = math.Max(out[r], missBy(tg.Spec.Kind, v, limit))
		}
	}
	return out
}

// targetChances measures each target in every run and year it covers.
func (f *figures) targetChances(det *Result) []TargetChance {
	sc := f.sc
	runs := len(f.vals[0])
	out := make([]TargetChance, 0, len(sc.Targets))
	for n := range sc.Targets {
		tg := &sc.Targets[n]
		values, limit := f.targetValues(n, &det.Initial)
		tc := TargetChance{Target: tg.Label, MetByPlan: det.Targets[n].Met}
		for t := range f.years {
			year := sc.Year(t + 1)
			if year < tg.FromYear || year > tg.ToYear {
				continue
			}
			hits := 0
			for _, v := range values(t) {
				if missBy(tg.Spec.Kind, v, limit) <= targetSlack {
					hits++
				}
			}
			tc.Years = append(tc.Years, YearChance{Year: year, Probability: float64(hits) / float64(runs)})
		}
		hits := 0
		for _, m := range f.worstMiss(n, &det.Initial) {
			if m <= targetSlack {
				hits++
			}
		}
		tc.AllYears = float64(hits) / float64(runs)
		out = append(out, tc)
	}
	return out
}

// Percentile returns the p-quantile (0 <= p <= 1) of sorted values by
// Hyndman and Fan's (1996) definition 7: with h = (n-1)·p, the value at
// position floor(h) (0-based) plus the fraction h - floor(h) of the step to
// the next one. It is the default of R's quantile and the definition of a
// spreadsheet's PERCENTILE.INC. sorted must be ascending; no values give NaN.
func Percentile(sorted []float64, p float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	h := float64(n-1) * p
	lo := math.Floor(h)
	i := int(lo)
	if i >= n-1 {
		return sorted[n-1]
	}
	if i < 0 {
		return sorted[0]
	}
	return sorted[i] + (h-lo)*(sorted[i+1]-sorted[i])
}
