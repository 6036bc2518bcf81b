package optimize

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"
	"time"
)

// Method is how a plan is solved.
type Method int

const (
	// Auto picks Flat for small models and Decomposed for large ones.
	Auto Method = iota
	// Flat solves the whole model as one LP with lp_solve (the reference).
	Flat
	// Decomposed solves it by Dantzig-Wolfe column generation.
	Decomposed
)

func (m Method) String() string {
	switch m {
	case Flat:
		return "flat"
	case Decomposed:
		return "decomposed"
	}
	return "auto"
}

// ParseMethod reads "auto", "flat" or "decomposed".
func ParseMethod(s string) (Method, error) {
	switch s {
	case "auto", "":
		return Auto, nil
	case "flat":
		return Flat, nil
	case "decomposed":
		return Decomposed, nil
	}
	return Auto, fmt.Errorf("solver %q: use auto, flat or decomposed", s)
}

// Options tune SolveWith.
type Options struct {
	Method Method
	// Warm, when not nil, seeds a decomposed solve with the policies of
	// earlier solves kept in it, and then keeps the policies that this
	// solve's final plans use (see Warm). The flat method ignores it. A
	// Warm belongs to one sequence of solves: it is not safe for
	// concurrent use.
	Warm *Warm
	// MaxIterations caps the column-generation rounds of each stage of a
	// decomposed solve; zero means DefaultMaxIterations.
	MaxIterations int
	// Master chooses the decomposition's master form; the zero value
	// chooses by the network's size (see MasterForm).
	Master MasterForm

	// lpSolveMaster keeps a live master in lp_solve even when it is small
	// enough for the dense simplex, so that tests reach both.
	lpSolveMaster bool
}

// MasterForm is the form of the decomposition's restricted master: the
// dual form re-solved from its last basis, or the primal form kept alive
// in lp_solve (the live master; see doc.go). Both reach the optimum; where
// a plan has several, they may land on different ones.
type MasterForm int

const (
	// MasterBySize: live when a pricing round evaluates more than
	// liveMasterMinWork rewards, else dual.
	MasterBySize MasterForm = iota
	MasterDual
	MasterLive
)

// LiveMaster reports whether a decomposed solve of p with MasterBySize
// keeps its master alive.
func LiveMaster(p *Problem) bool {
	return newDecomposer(p, Options{}).live
}

// DefaultMaxIterations caps the rounds of one decomposition stage.
const DefaultMaxIterations = 2000

// autoFlatColumns is the largest flat model (in columns) that Auto solves
// flat. Measured on generated models (best of 10, 2 shared cores), flat
// against decomposed: 40 columns 0.22 ms and 0.47 ms; 200 columns (with
// targets) 2.7 ms and 2.9 ms; 280 columns (one class, 20 years) 3.5 ms and
// 5.1 ms; 150 columns 0.97 ms and 0.72 ms; 540 columns 9.1 ms and 4.4 ms;
// 996 columns 27 ms and 2.4 ms.
const autoFlatColumns = 250

// RelativeGap is the proven optimality gap at which the decomposition stops:
// (bound - value) <= RelativeGap × max(|value|, 1e-6) in model units.
const RelativeGap = 1e-9

// ErrIterationCap is wrapped by the error of a decomposed solve that
// reached its iteration cap before proving the gap.
var ErrIterationCap = errors.New("decomposition iteration cap reached")

// SolveWith plans the problem with the chosen method (Auto: by size; see
// Chosen). Whatever the method, a solve that gives no checked answer (a
// solver failure on every path, a stall, the decomposition's iteration
// cap, a tie-break left unsettled) is tried again by the other method
// (the flat one only up to flatFallbackColumns), and the first complete
// answer is the plan; Stats.Path then says so. When
// neither method settles it, a plan that one of them did make comes back
// with a warning that says how far from the optimum it may be: the
// decomposition's plan proven within its gap when it reached the
// iteration cap, or a plan optimal in the primary objective whose
// tie-break was not settled. An error comes back only when neither method
// makes a plan, or when the caller's time limit ran out or p's context
// (see Problem.WithContext) was cancelled: a stopped solve is never retried
// by the other method.
func SolveWith(p *Problem, o Options) (*Plan, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	first := Chosen(p, o.Method)
	plan, err := solveBy(first, p, o)
	if err == nil && !plan.Stats.TieBreakMissed {
		return plan, nil
	}
	if halted(err) {
		return nil, err
	}
	if err == nil && first == Decomposed && flatColumns(p) > tieBreakFlatColumns {
		// Optimal in the primary objective; the flat model of a network
		// this large would take minutes to settle only the tie-break.
		plan.Warnings = append(plan.Warnings, tieBreakWarning(p))
		return plan, nil
	}
	second := Flat
	if first == Flat {
		second = Decomposed
	}
	var alt *Plan
	altErr := err
	flatWhy := "the flat model gave no answer"
	if second == Flat && flatColumns(p) > flatFallbackColumns {
		// The flat model of a network this large takes lp_solve longer
		// than anyone waits: the decomposition's own answer, or its error,
		// stands.
		flatWhy = fmt.Sprintf("the flat model (%d columns) is too large to try", flatColumns(p))
	} else {
		alt, altErr = solveBy(second, p, o)
	}
	if altErr == nil && !alt.Stats.TieBreakMissed {
		why := "did not settle the tie-break"
		if err != nil {
			why = "stopped: " + err.Error()
		}
		alt.Stats.Path = strings.TrimPrefix(alt.Stats.Path+"; after the "+first.String()+" method "+why, "; ")
		return alt, nil
	}
	for _, c := range []*Plan{plan, alt} {
		if c == nil {
			continue
		}
		switch {
		case c.Stats.TieBreakMissed:
			c.Warnings = append(c.Warnings, tieBreakWarning(p))
		case c.Stats.Gap > RelativeGap:
			c.Warnings = append(c.Warnings, fmt.Sprintf("the decomposition stopped at its limit of rounds with this plan proven within %.2g (relative) of the best possible, not %.0g, and %s", c.Stats.Gap, RelativeGap, flatWhy))
		default:
			continue
		}
		return c, nil
	}
	return nil, err
}

// flatFallbackColumns is the largest flat model SolveWith tries when the
// decomposition gave no checked answer: lp_solve solved the flat model of
// the benchmark's 20x7x6x30 network (12,900 columns) in 4.3 s and did not
// finish that of its 60x10x8x40 network (70,720) in 60 s.
const flatFallbackColumns = 20000

// tieBreakFlatColumns is the largest flat model SolveWith solves only to
// settle a tie-break the decomposition left open: the flat model of the
// benchmark's 4x5x4x20 network (1,140 columns) takes 35 ms, of its
// 20x7x6x30 network (12,900) 3.8 s.
const tieBreakFlatColumns = 5000

// tieBreakWarning says that a plan is optimal in the primary objective
// only.
func tieBreakWarning(p *Problem) string {
	return fmt.Sprintf("the solver could not settle the second objective (%s): the plan is optimal in the first (%s), but another plan as good in it may do better in the second", other(p.Objective), p.Objective)
}

// solveBy plans the problem by one method. A decomposed solve that reached
// its iteration cap returns its plan with the error.
func solveBy(m Method, p *Problem, o Options) (*Plan, error) {
	if m == Decomposed {
		return solveDecomposed(p, o)
	}
	plan, err := Solve(p)
	if plan != nil {
		plan.Stats.Method = Flat.String()
	}
	return plan, err
}

// Chosen is the method SolveWith uses for p when asked for m: Auto picks
// the flat LP up to autoFlatColumns columns and the decomposition above.
func Chosen(p *Problem, m Method) Method {
	if m != Auto {
		return m
	}
	if flatColumns(p) > autoFlatColumns {
		return Decomposed
	}
	return Flat
}

// flatColumns is the column count of the flat model.
func flatColumns(p *Problem) int {
	n := 0
	for k := range p.Classes {
		c := &p.Classes[k]
		for i := range c.Initial {
			for a := range c.Actions {
				if c.Actions[a].Applies[i] {
					n++
				}
			}
		}
	}
	return n * p.Horizon
}

// decomposer holds one decomposed solve.
type decomposer struct {
	p         *Problem
	b         *builder // the flat model's layout and terms (no model is built)
	classes   []*dwClass
	weights   []float64
	moneyUnit float64
	escFactor []float64 // (1+e)^t / money unit
	pvFactor  []float64 // (1+e)^t (1+r)^-t / money unit
	links     []link
	pool      []*column
	seen      []map[uint64]int // per class: pool index of each pooled policy, by key
	used      []bool           // per pool column: in some stage's final plan
	maxIter   int
	// leastShortfall is the least total target shortfall, when positive.
	leastShortfall float64
	// hardTargets: the targets can all be met, so target rows carry no
	// shortfall in the master.
	hardTargets bool
	deadline    time.Time
	stats       Stats
	// pricingWork is the number of (year, pair) rewards one pricing round
	// evaluates over all classes.
	pricingWork int
	// warmup: the next stage starts with a Lagrangian warm-up (a cold
	// solve of a model whose pricing is cheap beside a master solve).
	warmup bool
	// warmStarted: the pool was seeded from a Warm.
	warmStarted bool
	// seeded counts the pool's first columns, there before any stage: do
	// nothing and the Warm's policies.
	seeded int
	// primalPath is the settingsPaths index that last solved a primal
	// master.
	primalPath int
	// setOf is, per target, the index of its state set among its class's
	// sets (dwClass.sets); -1 for targets on groups or scores.
	setOf []int
	// live: the stages keep their masters alive in lp_solve (colMaster).
	live bool
	// denseMaster: a live master starts in the dense simplex while it is
	// small (denseMasterRows).
	denseMaster bool
	// extras are master columns no pricing problem makes (money added to
	// budget rows, for the funding questions); only a live master holds
	// them.
	extras []extra
}

func newDecomposer(p *Problem, o Options) *decomposer {
	b := newBuilder(p)
	p = b.p // with the caps that can bind
	dw := &decomposer{p: p, b: b, weights: b.weights, moneyUnit: b.moneyUnit, maxIter: o.MaxIterations}
	if dw.maxIter <= 0 {
		dw.maxIter = DefaultMaxIterations
	}
	if p.Timeout > 0 {
		dw.deadline = time.Now().Add(p.Timeout)
	}
	dw.escFactor = make([]float64, p.Horizon)
	dw.pvFactor = make([]float64, p.Horizon)
	for t := range dw.escFactor {
		dw.escFactor[t] = p.escalation(t) / b.moneyUnit
		dw.pvFactor[t] = p.escalation(t) * p.discount(t) / b.moneyUnit
	}
	dw.classes = make([]*dwClass, len(p.Classes))
	dw.seen = make([]map[uint64]int, len(p.Classes))
	for k := range p.Classes {
		dw.classes[k] = newDWClass(p, k, b.lay.pairs[k], b.terms[k], b.weights[k])
		dw.seen[k] = map[uint64]int{}
	}
	dw.setOf = make([]int, len(p.Targets))
	for n := range p.Targets {
		dw.setOf[n] = -1
		if tg := &p.Targets[n]; tg.States != nil {
			dw.setOf[n] = dw.classes[tg.Class].addSet(tg)
		}
	}
	dw.shutZeroCaps()
	dw.links = dw.linkRows()
	for _, d := range dw.classes {
		dw.pricingWork += len(d.pairs) * d.years
	}
	dw.live = o.Master == MasterLive || (o.Master == MasterBySize && dw.pricingWork > liveMasterMinWork)
	dw.denseMaster = !o.lpSolveMaster
	return dw
}

// callTimeout is what is left of the problem's time limit for one master
// solve (zero: no limit). Nothing else here is timed: a master that
// lp_solve cannot finish is caught by counting its simplex iterations
// (stallIterations), so that the answer does not depend on the machine's
// load.
func (dw *decomposer) callTimeout() time.Duration {
	if dw.deadline.IsZero() {
		return 0
	}
	return max(time.Until(dw.deadline), time.Millisecond)
}

// ErrStalled is wrapped by the error of a decomposed solve whose master LP
// lp_solve could not finish on any path within stallIterations.
var ErrStalled = errors.New("lp_solve stalled on the decomposition's master LP")

// timeoutError is the error of a master call that ran out of the caller's
// time.
func (dw *decomposer) timeoutError() error {
	return &SolverError{Status: StatusTimeout, Advice: fmt.Sprintf("no optimal plan within the time limit of %s; raise the limit", dw.p.Timeout)}
}

// shutZeroCaps marks, in each class, the treatments that cost money in a
// year whose spend a cap holds at zero (a zero yearly cap; with
// carry-over, caps that sum to zero up to that year): no plan takes them,
// and a master whose budget rows all read zero made lp_solve stall on its
// degenerate vertices. Do nothing stays open whatever it costs (with
// routine costs counted against a zero cap the budgets cannot hold, which
// stage 0 finds).
func (dw *decomposer) shutZeroCaps() {
	p := dw.p
	zero := func(caps []float64, t int) bool {
		if !p.CarryOver {
			return caps[t] == 0
		}
		for s := 0; s <= t; s++ {
			if caps[s] != 0 {
				return false
			}
		}
		return true
	}
	shut := func(k, t int) {
		d := dw.classes[k]
		if d.shut == nil {
			d.shut = make([]bool, d.years*len(d.pairs))
		}
		for n, pr := range d.pairs {
			c := d.terms.cost[n]
			if p.RoutineInBudget {
				c += d.terms.routine[n]
			}
			if pr.action != 0 && c > 0 {
				d.shut[t*len(d.pairs)+n] = true
			}
		}
	}
	for t := 0; t < p.Horizon; t++ {
		if p.Budget != nil && zero(p.Budget, t) {
			for k := range dw.classes {
				shut(k, t)
			}
		}
		for _, g := range p.GroupBudgets {
			if zero(g.Yearly, t) {
				for _, k := range g.Classes {
					shut(k, t)
				}
			}
		}
	}
}

// add puts a policy of class k into the pool unless the pool already holds
// one that acts the same on every state it reaches.
func (dw *decomposer) add(k int, pol policy) bool {
	return dw.addColumn(dw.classes[k].roll(k, pol))
}

func (dw *decomposer) addColumn(col *column) bool {
	k := col.class
	if _, ok := dw.seen[k][col.key]; ok {
		return false
	}
	dw.seen[k][col.key] = len(dw.pool)
	dw.pool = append(dw.pool, col)
	return true
}

func solveDecomposed(p *Problem, o Options) (*Plan, error) {
	dw := newDecomposer(p, o)
	dw.seed(o)
	res, capped, err := dw.stages(o, objKindOf(p.Objective), objKindOf(other(p.Objective)))
	if errors.Is(err, errBudgetsCannotHold) {
		dw.stats.Method = Decomposed.String()
		dw.stats.Columns = len(dw.pool)
		return &Plan{Status: Infeasible, Stats: dw.stats}, nil
	}
	if err != nil {
		return nil, err
	}
	plan, err := dw.plan(res)
	if err != nil {
		return nil, err
	}
	return plan, capped
}

// errBudgetsCannotHold: no plan keeps the budget rows (stage 0 of stages).
var errBudgetsCannotHold = errors.New("no plan keeps the budgets")

// seed fills the pool with each class's do nothing and, from a Warm, its
// policies.
func (dw *decomposer) seed(o Options) {
	for k, d := range dw.classes {
		dw.add(k, d.doNothing())
	}
	if o.Warm != nil {
		o.Warm.seed(dw)
		dw.warmStarted = true
	}
	dw.seeded = len(dw.pool)
	// A live master of one class goes without: the warm-up's steps serve
	// masters that coordinate many classes, and one class's master
	// converged in as many rounds without them, with the steps' pricing
	// saved (10-25% of the time of a class planned alone for the renewal
	// indicators, measured on 10 classes of each generated network).
	dw.warmup = (dw.pricingWork <= warmupMaxWork || dw.live) && len(dw.extras) == 0 && !(dw.live && len(dw.classes) == 1)
}

// stages runs the lexicographic stages of a decomposed solve, primary
// then secondary, and returns the last stage's master answer. A stage that
// reached the iteration cap still ends with a plan that meets its rows:
// the later stages go on from it, and the answer comes back with the
// cap's error as capped (see SolveWith). It returns errBudgetsCannotHold
// when no plan keeps the budget rows.
func (dw *decomposer) stages(o Options, primary, secondary objKind) (res *masterResult, capped error, err error) {
	p := dw.p
	sign := func(k objKind) float64 {
		if k == objCondition {
			return 1
		}
		return -1
	}

	// Stage 0, when doing nothing overspends a budget (routine costs
	// counted against it) or spends less than a least spend: the least
	// total spend over the caps and under the least spends. Above
	// infeasibleExcess no plan keeps the budgets, as the flat model would
	// report; otherwise the pool now holds policies that keep them, which
	// every later stage's first master needs.
	if dw.doNothingOverspends() {
		res, err := dw.generate(&stage{obj: objExcess, sign: 1})
		if err != nil {
			// At the cap the least overspend is not known: whether any
			// plan keeps the budgets is left to the flat model.
			return nil, nil, err
		}
		if -res.z > infeasibleExcess {
			return nil, nil, errBudgetsCannotHold
		}
	}

	run := func(st *stage) (*masterResult, error) {
		res, err := dw.generate(st)
		if errors.Is(err, ErrIterationCap) && res != nil {
			if capped == nil {
				capped = err
			}
			return res, nil
		}
		return res, err
	}

	// Stage 1, with targets: the least total shortfall.
	elastic := false
	if len(p.Targets) > 0 {
		res, err := run(&stage{obj: objSlack, sign: 1})
		if err != nil {
			return nil, nil, err
		}
		short := -res.z
		if short <= 1e-12 {
			// Every target can be met: the target rows stay hard.
			dw.hardTargets = true
		} else {
			elastic = true
			dw.leastShortfall = short
		}
	}
	if elastic && len(dw.extras) > 0 {
		return nil, nil, errFundingShort
	}
	// Stage 2: the primary objective, keeping the least shortfall.
	st := &stage{obj: primary, sign: sign(primary)}
	if elastic {
		st.holds = []hold{{obj: objSlack, sign: -1, held: -dw.leastShortfall}}
	}
	res, err = run(st)
	if err != nil {
		return nil, nil, err
	}
	// Stage 3: the tie-break, keeping the primary optimum (and with unmet
	// targets the least total shortfall too, as in the flat model's
	// lexicographic solves).
	held := dw.heldValue(&hold{obj: primary, sign: 1}, res)
	st3 := &stage{obj: secondary, sign: sign(secondary), holds: append(append([]hold(nil), st.holds...), hold{obj: primary, sign: sign(primary), held: sign(primary) * held}), tieBreak: true}
	res3, err := run(st3)
	switch {
	case err == nil:
		res = res3
	case halted(err):
		return nil, nil, err
	default:
		// lp_solve gave no answer to a tie-break master on any path:
		// stage 2's plan is optimal in the primary objective, and
		// SolveWith tries the flat model for the tie-break.
		dw.stats.TieBreakMissed = true
	}
	if o.Warm != nil {
		o.Warm.keep(dw)
	}
	return res, capped, nil
}

// infeasibleExcess is the least total spend over the budget rows (in model
// money units, where the largest cap is 1) above which a decomposed solve
// reports the budgets infeasible.
const infeasibleExcess = 1e-9

// doNothingOverspends reports whether doing nothing in every class spends
// more than some budget row allows (possible only with routine costs
// counted against the budget), or less than a least spend asks.
func (dw *decomposer) doNothingOverspends() bool {
	for r := range dw.links {
		l := &dw.links[r]
		if l.kind != linkBudget || (l.sense == LessEq && (!dw.p.RoutineInBudget || l.funded)) {
			continue
		}
		v := 0.0
		for k := range dw.classes {
			v += dw.coef(l, dw.pool[k]) // the pool starts with each class's do nothing
		}
		if (l.sense == LessEq && v > l.rhs+1e-12) || (l.sense == GreaterEq && v < l.rhs-1e-12) {
			return true
		}
	}
	return false
}

// generate runs column generation for one stage until the Lagrangian bound
// proves the master's value optimal within RelativeGap.
func (dw *decomposer) generate(st *stage) (*masterResult, error) {
	K := len(dw.classes)
	pc := &pricer{dw: dw, st: st, pr: make([]prices, K), pols: make([]policy, K), vals: make([]float64, K)}
	for k := range pc.pr {
		pc.pr[k] = newPrices(dw.p.Horizon, len(dw.classes[k].sets))
	}
	// A later stage starts from the policies the earlier stages' plans
	// use; pricing brings back any other it needs. A stage that holds an
	// earlier optimum solves its master in the primal form with the hold
	// as a row (see holdMaster).
	var dm master = newHoldMaster(dw, st)
	switch {
	case dw.live:
		dm = newColMaster(dw, st, dw.usedMask())
	case !st.weighted():
		dm = newDualMaster(dw, st, dw.usedMask())
	}
	// The stability centre of the dual smoothing (Wentges, 1997): the
	// prices with the best Lagrangian bound so far, the linking rows'
	// (one per link) followed by the hold rows' (one per hold).
	var center []float64
	bestBound := math.Inf(1)
	for iter := 1; ; iter++ {
		if !dw.deadline.IsZero() && time.Now().After(dw.deadline) {
			return nil, &SolverError{Status: StatusTimeout, Advice: fmt.Sprintf("the decomposition did not prove an optimal plan within the time limit of %s; raise the limit", dw.p.Timeout)}
		}
		if err := dw.p.stopped(); err != nil {
			return nil, err
		}
		res, err := dm.solve()
		dw.stats.Solves++
		if err != nil {
			return nil, fmt.Errorf("decomposition master: %w", err)
		}
		switch m := dm.(type) {
		case *holdMaster:
			if m.relaxed {
				m.relaxed = false
				center, bestBound = nil, math.Inf(1) // the bound was for tighter holds
			}
		case *colMaster:
			if m.relaxed {
				m.relaxed = false
				center, bestBound = nil, math.Inf(1)
			}
		}
		dw.stats.Rows, dw.stats.Cols = res.rows, res.cols
		if st.obj != objExcess && dw.activateViolated(st, res) {
			center, bestBound = nil, math.Inf(1) // the bound was for fewer rows
			continue
		}
		if (st.obj == objSlack || st.obj == objExcess) && res.z >= -1e-12 {
			// No shortfall (no excess) at all: nothing can do better.
			dw.markUsed(res)
			return res, nil
		}
		// From a Warm, two rounds of plain pricing first: the Warm's
		// policies often prove the optimum at once (the what-if page's
		// requests from the base plan's policies), and then the warm-up's
		// steps and policies would only add work.
		if dw.warmup && st.obj != objExcess && (!dw.warmStarted || iter > 2) {
			dw.warmup = false
			// The warm-up moves the linking rows' prices only; a stage
			// with holds keeps their weights at this master's prices,
			// which the centre carries.
			st.setWeights(res.holdPrices)
			bestBound, center = dw.lagrangeWarmup(pc, res)
			if center != nil {
				continue // the master now holds the warm-up's policies
			}
		}
		switch d := dm.(type) {
		case *dualMaster:
			if len(d.rowOf) > dw.masterRowLimit() {
				dm = newDualMaster(dw, st, dw.recentMask(res))
			}
		case *holdMaster:
			if d.size() > dw.masterRowLimit() {
				d.in = dw.recentMask(res)
			}
		}
		scale := dw.gapScale(st, res)
		added := 0
		// Price at the smoothed prices first; if that finds no policy
		// improving the master (a mispricing), price at the master's own.
		for _, alpha := range []float64{smoothing, 0} {
			// The prices: the linking rows' and, in a stage with holds,
			// the hold rows' (the weights on the held objectives), which
			// are smoothed alike.
			pi, w := res.pi, res.holdPrices
			if center != nil && alpha > 0 {
				pi = make([]float64, len(res.pi))
				for r := range pi {
					pi[r] = alpha*center[r] + (1-alpha)*res.pi[r]
				}
				w = make([]float64, len(res.holdPrices))
				for i := range w {
					w[i] = alpha*center[len(pi)+i] + (1-alpha)*res.holdPrices[i]
				}
			} else if alpha > 0 {
				continue
			}
			st.setWeights(w)
			bound := pc.price(pi, res)
			st.setWeights(res.holdPrices)
			dw.stats.Iterations++
			if bound < bestBound {
				bestBound, center = bound, append(append([]float64(nil), pi...), w...)
			}
			for k := 0; k < K; k++ {
				col := dw.classes[k].roll(k, pc.pols[k])
				if dw.reducedCost(st, col, res) <= 1e-12*math.Max(1, math.Abs(res.z)) {
					continue
				}
				// A policy the pool holds already may have been left out
				// of this master.
				if dw.addColumn(col) || dm.include(dw.seen[k][col.key]) {
					added++
				}
			}
			if added > 0 || bestBound-res.z <= RelativeGap*scale {
				break
			}
		}
		gap := bestBound - res.z
		if gap <= RelativeGap*scale || added == 0 {
			dw.stats.Gap = math.Max(dw.stats.Gap, math.Max(gap, 0)/scale)
			if st.obj != objExcess {
				res = dw.polish(st, res)
			}
			dw.markUsed(res)
			return res, nil
		}
		if iter >= dw.maxIter {
			// The master's plan meets the stage's rows; it is proven
			// within gap of the optimum, not within RelativeGap.
			dw.stats.Gap = math.Max(dw.stats.Gap, math.Max(gap, 0)/scale)
			if st.obj != objExcess {
				res = dw.polish(st, res)
			}
			dw.markUsed(res)
			return res, fmt.Errorf("%w: after %d rounds the plan is proven within %.2g (relative) of the optimum, not %.0g", ErrIterationCap, iter, gap/scale, RelativeGap)
		}
	}
}

// gapScale is what a stage's gap is measured against: the value of the
// stage's own objective (a stage that holds an earlier optimum measures
// only its own objective; see holdMaster), at least 1e-6 in the model's
// units.
func (dw *decomposer) gapScale(st *stage, res *masterResult) float64 {
	return math.Max(math.Abs(res.z), 1e-6)
}

// master is the restricted master of a stage: the dual form (dualMaster),
// which lp_solve re-solves from its last basis as rows are added, or, for
// a stage that holds an earlier optimum, the primal form with the hold as
// a row (holdMaster).
type master interface {
	solve() (*masterResult, error)
	// include puts pool column j back into a master that left it out,
	// and reports whether it did.
	include(j int) bool
}

// holdMaster is the restricted master of a stage that holds an earlier
// stage's optimum: maximise the stage's own objective over every pooled
// policy subject to the linking rows, the convexity rows and the hold
// row (held objective at least its optimum less holdTolerance), solved in
// the primal form from scratch each round. The hold row's price w is the
// weight the pricing problems put on the held objective, and the
// Lagrangian bound on the stage's own objective is the bound for the
// weighted objective less w × the held value (see pricer.price). Holding
// by a row rather than by a fixed large weight keeps the master's
// objective at the scale of the stage's own objective, so lp_solve's
// tolerances do not swamp the tie-break: with a weight of 1e4 on a cost
// near 8, lp_solve's answers carried errors near 1e-5 in a tie-break near
// 0.8.
//
// Like the dual form it holds a working set of the pool: the policies the
// earlier stages' plans use, every policy generated since, and any that
// pricing finds again. A master of the whole pool (861 policies, 94 rows
// on a 40-class model) made lp_solve cycle where the working set (67)
// solved at once.
type holdMaster struct {
	dw *decomposer
	st *stage
	in []bool // per pool column: in this master
	// relaxed: the last solve relaxed the holds, so bounds found before
	// were for a smaller problem.
	relaxed bool
}

func newHoldMaster(dw *decomposer, st *stage) *holdMaster {
	hm := &holdMaster{dw: dw, st: st, in: dw.usedMask()}
	if hm.in == nil {
		hm.in = make([]bool, len(dw.pool))
		for j := range hm.in {
			hm.in[j] = true
		}
	}
	return hm
}

func (hm *holdMaster) solve() (*masterResult, error) {
	for len(hm.in) < len(hm.dw.pool) {
		hm.in = append(hm.in, true)
	}
	res, err := hm.dw.solvePrimal(hm.st, hm.in)
	for err != nil && !halted(err) && hm.st.holdRelax() < maxHoldRelax {
		// The earlier stage's plan meets every hold, so the master has an
		// answer; lp_solve misses it when the holds leave it less room
		// than its own tolerances. Give them ten times more.
		hm.st.relax = 10 * hm.st.holdRelax()
		hm.relaxed = true
		res, err = hm.dw.solvePrimal(hm.st, hm.in)
	}
	if err != nil {
		return nil, err
	}
	hm.st.setWeights(res.holdPrices)
	return res, nil
}

// size is the number of policies in the master.
func (hm *holdMaster) size() int {
	n := 0
	for _, in := range hm.in {
		if in {
			n++
		}
	}
	return n
}

func (hm *holdMaster) include(j int) bool {
	if j >= len(hm.in) || hm.in[j] {
		return false
	}
	hm.in[j] = true
	return true
}

// smoothing is the weight of the stability centre in the prices handed to
// the pricing problems (Wentges' dual smoothing). Measured on the
// benchmark models: 0.7 took the fewest master solves of 0.3-0.9.
const smoothing = 0.7

// Master size: lp_solve refactorises the dual master's basis, one row per
// policy, at every solve, so its time per solve grows with the policies in
// it (about 100 µs at 50 rows against 50 µs at 10 on the benchmark's
// smallest model). When the master holds more than masterRowsPerLink
// times its linking and convexity rows, it is rebuilt with the policies
// the last plan uses and those of the last recentRounds rounds; the pool
// keeps every policy, and one priced again returns to the master.
const (
	masterRowsPerLink = 3
	recentRounds      = 3
)

// masterRowLimit is the row count above which the master is rebuilt.
func (dw *decomposer) masterRowLimit() int {
	n := len(dw.classes)
	for r := range dw.links {
		if dw.links[r].active {
			n++
		}
	}
	return masterRowsPerLink * n
}

// recentMask marks the pool columns a rebuilt master keeps: those the plan
// res uses and the newest recentRounds × classes.
func (dw *decomposer) recentMask(res *masterResult) []bool {
	keep := make([]bool, len(dw.pool))
	for j, w := range res.lambda {
		keep[j] = w > 0
	}
	for j := max(0, len(dw.pool)-recentRounds*len(dw.classes)); j < len(dw.pool); j++ {
		keep[j] = true
	}
	return keep
}

// usedMask marks the pool columns some earlier stage's plan used and those
// seeded before the first stage; nil (every column) before any stage has
// ended.
func (dw *decomposer) usedMask() []bool {
	for _, u := range dw.used {
		if u {
			keep := append([]bool(nil), dw.used...)
			for j := 0; j < dw.seeded && j < len(keep); j++ {
				keep[j] = true
			}
			return keep
		}
	}
	return nil
}

// pricer solves the pricing problems of a stage at given link prices.
type pricer struct {
	dw   *decomposer
	st   *stage
	pr   []prices
	pols []policy
	vals []float64
}

// price solves every class's pricing problem at link prices pi and returns
// the Lagrangian bound on the stage's optimum that they prove:
// Σ_r π_r b_r + Σ_k (best reward of class k) + the shortfalls' part.
func (pc *pricer) price(pi []float64, res *masterResult) float64 {
	dw, st := pc.dw, pc.st
	for k := range pc.pr {
		pc.pr[k].reset()
	}
	if st.obj != objSlack {
		dw.addObjective(pc.pr, st.obj, st.sign)
	}
	for i := range st.holds {
		if h := &st.holds[i]; h.obj != objSlack {
			dw.addObjective(pc.pr, h.obj, h.weight*h.sign)
		}
	}
	bound := 0.0
	for r := range dw.links {
		if pi[r] != 0 {
			dw.addRowPrice(pc.pr, &dw.links[r], pi[r])
			bound += pi[r] * dw.links[r].rhs
		}
	}
	dw.priceAll(pc.pr, pc.pols, pc.vals)
	for _, v := range pc.vals {
		bound += v
	}
	for i := range st.holds {
		// The hold rows' part: the bound is on the stage's own objective.
		h := &st.holds[i]
		bound -= h.weight * h.bound(st.holdRelax())
	}
	return bound + dw.slackBound(st, pi) + dw.extraBound(st, pi)
}

// extraBound is the extra columns' part of the Lagrangian bound: an extra
// column priced above zero has no limit (it is unbounded above), so the
// bound is infinite at such prices.
func (dw *decomposer) extraBound(st *stage, pi []float64) float64 {
	for i, e := range dw.extras {
		rc := dw.extraOwnValue(st, i)
		for h := range st.holds {
			rc += st.holds[h].weight * dw.extraHeldValue(&st.holds[h], i)
		}
		for _, t := range e.terms {
			rc -= pi[t.link] * t.val
		}
		if rc > 1e-12 {
			return math.Inf(1)
		}
	}
	return 0
}

// reducedCost is a policy's reduced cost at the master's prices.
func (dw *decomposer) reducedCost(st *stage, col *column, res *masterResult) float64 {
	rc := dw.colValue(st, col) - res.mu[col.class]
	for r := range dw.links {
		if res.pi[r] != 0 {
			rc -= res.pi[r] * dw.coef(&dw.links[r], col)
		}
	}
	return rc
}

// markUsed notes the policies a stage's final plan uses: a Warm keeps
// those (keeping every generated policy made warm sweeps slower than cold
// ones, the master growing with each point).
func (dw *decomposer) markUsed(res *masterResult) {
	for len(dw.used) < len(dw.pool) {
		dw.used = append(dw.used, false)
	}
	for j, w := range res.lambda {
		if w > 0 {
			dw.used[j] = true
		}
	}
}

// slackBound is the slacks' part of the Lagrangian bound: a slack column
// priced above zero could add its reduced cost times its largest useful
// value: 1 for a shortfall (shares and scores are on 0-1 in the model), no
// limit for a budget's excess (no finite bound at such prices).
func (dw *decomposer) slackBound(st *stage, pi []float64) float64 {
	s := 0.0
	for r := range dw.links {
		l := &dw.links[r]
		if !l.active || !dw.elastic(st, l) {
			continue
		}
		if rc := st.slackValue() - pi[r]*slackSign(l); rc > 0 {
			if l.kind == linkBudget {
				return math.Inf(1)
			}
			s += rc
		}
	}
	return s
}

// mix holds, per class and year, the expected end-of-year measures of a
// master's plan: score, group shares and state-set shares.
type mix struct {
	score [][]float64
	group [][][3]float64
	set   [][][]float64
}

// mixMeasures returns the measures of the master's plan.
func (dw *decomposer) mixMeasures(res *masterResult) *mix {
	T, K := dw.p.Horizon, len(dw.classes)
	m := &mix{score: make([][]float64, K), group: make([][][3]float64, K), set: make([][][]float64, K)}
	for k := range m.score {
		m.score[k] = make([]float64, T)
		m.group[k] = make([][3]float64, T)
		if ns := len(dw.classes[k].sets); ns > 0 {
			m.set[k] = make([][]float64, T)
			for t := range m.set[k] {
				m.set[k][t] = make([]float64, ns)
			}
		}
	}
	for j, w := range res.lambda {
		if w <= 0 {
			continue
		}
		col := dw.pool[j]
		k := col.class
		for t := 0; t < T; t++ {
			m.score[k][t] += w * col.score[t]
			for g := 0; g < 3; g++ {
				m.group[k][t][g] += w * col.group[t][g]
			}
			if col.set != nil {
				for s, v := range col.set[t] {
					m.set[k][t][s] += w * v
				}
			}
		}
	}
	return m
}

// targetValue is a target row's measure under the measures of mixMeasures.
func (dw *decomposer) targetValue(l *link, m *mix) float64 {
	tg := &dw.p.Targets[l.target]
	v := 0.0
	for k := range dw.classes {
		w := dw.targetWeight(tg, k)
		if w == 0 {
			continue
		}
		switch {
		case tg.Kind == MinScore || tg.Kind == Hold:
			v += w * m.score[k][l.year] / 100
		case tg.States != nil:
			v += w * m.set[k][l.year][dw.setOf[l.target]]
		default:
			v += w * m.group[k][l.year][tg.Group]
		}
	}
	return v
}

// activateViolated adds to the master every inactive target row that the
// master's current plan violates, and reports whether it added any. A
// hard row joins when the plan misses it by more than activateTol; an
// elastic row (unmet targets) when the plan misses it at all, so that the
// master's total shortfall is the plan's: a row left out while missed by
// even 1e-10 would be shortfall the stages that hold the least total
// shortfall cannot see, and with many target rows that came to 1e-7 of
// the least shortfall, which a min-cost plan traded for 1e-5 of its cost.
func (dw *decomposer) activateViolated(st *stage, res *masterResult) bool {
	var m *mix
	added := false
	for r := range dw.links {
		l := &dw.links[r]
		if l.active || l.kind != linkTarget {
			continue
		}
		if m == nil {
			m = dw.mixMeasures(res)
		}
		v := dw.targetValue(l, m)
		tol := activateTol
		if dw.elastic(st, l) {
			tol = 0
		}
		if (l.sense == LessEq && v > l.rhs+tol) || (l.sense == GreaterEq && v < l.rhs-tol) {
			l.active = true
			added = true
		}
	}
	return added
}

// priceAll solves every class's pricing problem, in parallel on the
// available cores; each class's answer lands in its own slot, so the result
// is the same whatever the core count.
func (dw *decomposer) priceAll(pr []prices, pols []policy, vals []float64) {
	K := len(dw.classes)
	workers := min(runtime.GOMAXPROCS(0), K)
	if dw.pricingWork < parallelPricingWork {
		workers = 1
	}
	run := func(w int) {
		var vNext, vCur []float64
		for k := w; k < K; k += workers {
			d := dw.classes[k]
			ns := d.states()
			if cap(vNext) < ns {
				vNext, vCur = make([]float64, ns), make([]float64, ns)
			}
			pol := make(policy, dw.p.Horizon*ns)
			vals[k] = d.price(&pr[k], pol, vNext[:ns], vCur[:ns])
			pols[k] = pol
		}
	}
	if workers == 1 {
		run(0)
		return
	}
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			run(w)
		}(w)
	}
	wg.Wait()
}

// parallelPricingWork is the pricing round (in rewards evaluated, as many
// as the flat model has columns) below which the classes are priced on one
// core: waking a second goroutine costs more than the dynamic programs of
// a few small classes. Measured on 2 cores, best of 10, one core against
// two: 4x5x4x20 (1,140 rewards) 4.5 and 4.8 ms, 20x7x6x30 (12,900) 25 and
// 30 ms, 60x10x8x40 (70,720) 139 and 139-142 ms.
const parallelPricingWork = 20000

// The Lagrangian warm-up. On a model whose pricing round costs little
// beside a master solve (at most warmupMaxWork rewards), the first stage
// starts with warmupSteps subgradient steps on the Lagrangian dual from the
// first master's prices (Held, Wolfe and Crowder, 1974: a step of θ ×
// (bound − target) / |subgradient|² towards a target warmupTarget of the
// way from the best bound down to the master's value, θ halved after five
// steps without a better bound; from a Warm the master's value is already
// near the optimum and is the target). The policies priced in the last
// warmupKeep steps join the pool, and the best prices found become the
// stability centre. Measured on 30 generated models of 2-6 classes (15-20
// years, half with targets): 1,555 master solves in all without the
// warm-up, 1,099 with the master's value as target, 993 with the target at
// 0.3 (929-1,106 for 0.1-0.5 and 60-150 steps). The benchmark's 4x5x4x20
// model is more sensitive: 83 master solves without, 18-50 with. A 20-point
// budget sweep of a 6-class model warm-started took 591 master solves with
// no warm-up, 188 with the cold target and 155 with the master's value
// (193 when the warm-up waits for two plain rounds, which leaves the
// what-if page's re-solve of the base plan at 2 rounds instead of 102).
const (
	warmupMaxWork = 5000
	warmupSteps   = 100
	warmupKeep    = 30
	// warmupKeepLarge is warmupKeep on networks past warmupMaxWork (those
	// with a live master): their masters grow by a policy per class per
	// kept step, and the last ten steps' policies served as well as the
	// last thirty.
	warmupKeepLarge = 10
	warmupTarget    = 0.3
)

// lagrangeWarmup runs the warm-up from the master result res and returns
// the best Lagrangian bound it proved with the prices that prove it, laid
// out as the stability centre (the linking rows' prices, then the hold
// rows' weights, which the steps leave at the stage's current weights; nil
// when no step was possible). With holds the bound stays a bound: any
// non-negative weight on a hold row relaxes it.
func (dw *decomposer) lagrangeWarmup(pc *pricer, res *masterResult) (float64, []float64) {
	K := len(dw.classes)
	pi := append([]float64(nil), res.pi...)
	g := make([]float64, len(pi))
	cols := make([]*column, K)
	best, theta, stale := math.Inf(1), 1.0, 0
	var bestPi []float64
	keep := warmupKeep
	if dw.pricingWork > warmupMaxWork {
		keep = warmupKeepLarge
	}
	for step := 0; step < warmupSteps; step++ {
		if dw.p.Context().Err() != nil {
			break // generate's next round returns the context's error
		}
		bound := pc.price(pi, res)
		dw.stats.Iterations++
		for k := 0; k < K; k++ {
			cols[k] = dw.classes[k].roll(k, pc.pols[k])
			if step >= warmupSteps-keep {
				dw.addColumn(cols[k])
			}
		}
		if bound < best {
			best, bestPi, stale = bound, append(bestPi[:0], pi...), 0
		} else if stale++; stale == 5 {
			theta, stale = theta/2, 0
		}
		// The subgradient of the Lagrangian at pi: each active row's
		// right-hand side less what the priced policies (and a shortfall
		// worth taking at these prices) put in it.
		norm := 0.0
		for r := range dw.links {
			l := &dw.links[r]
			g[r] = 0
			if !l.active {
				continue
			}
			g[r] = l.rhs
			for _, col := range cols {
				g[r] -= dw.coef(l, col)
			}
			if dw.elastic(pc.st, l) && pc.st.slackValue()-pi[r]*slackSign(l) > 0 {
				g[r] -= slackSign(l)
			}
			norm += g[r] * g[r]
		}
		if norm == 0 {
			break // the priced policies meet every row exactly: pi is optimal
		}
		target := best - warmupTarget*(best-res.z)
		if dw.warmStarted {
			target = res.z
		}
		h := theta * math.Max(bound-target, 0) / norm
		for r := range dw.links {
			l := &dw.links[r]
			if !l.active {
				continue
			}
			pi[r] -= h * g[r]
			switch l.sense {
			case LessEq:
				pi[r] = math.Max(pi[r], 0)
			case GreaterEq:
				pi[r] = math.Min(pi[r], 0)
			}
			// A slack column bounds its row's price (its reduced cost
			// stays at most zero).
			if dw.elastic(pc.st, l) {
				if slackSign(l) < 0 {
					pi[r] = math.Min(pi[r], -pc.st.slackValue())
				} else {
					pi[r] = math.Max(pi[r], pc.st.slackValue())
				}
			}
		}
	}
	if bestPi == nil {
		return best, nil
	}
	for i := range pc.st.holds {
		bestPi = append(bestPi, pc.st.holds[i].weight)
	}
	return best, bestPi
}

// plan turns the last master's weights into the flat model's column values
// and reads the plan the flat way, after checking those values against
// every row of the flat model (see verify).
func (dw *decomposer) plan(res *masterResult) (*Plan, error) {
	b := dw.b
	nx := b.structural()
	x := make([]float64, nx)
	dw.quantities(res, b, x)
	// Shortfalls are measured on the plan against the targets' own
	// bounds (readPlan reports those above shortfallFloor).
	var slacks []slackCol
	short := make(map[[2]int]float64) // by target and year (1-based)
	m := dw.mixMeasures(res)
	for r := range dw.links {
		l := &dw.links[r]
		if l.kind != linkTarget {
			continue
		}
		v := (dw.targetValue(l, m) - l.goal) * -slackSign(l)
		if v > 0 {
			short[[2]int{l.target, l.year + 1}] = v
			slacks = append(slacks, slackCol{col: len(x), target: l.target, year: l.year + 1})
			x = append(x, v)
		}
	}
	if err := dw.verify(res, x[:nx], short); err != nil {
		return nil, err
	}
	plan := b.readPlan(x, slacks)
	plan.Status = Optimal
	if len(plan.Shortfalls) > 0 {
		plan.Status = TargetsNotMet
	}
	dw.stats.Method = Decomposed.String()
	dw.stats.Columns = len(dw.pool)
	plan.Stats = dw.stats
	return plan, nil
}

// quantities adds the master plan res's treated and untreated quantities
// into x, laid out as b's flat model's columns.
func (dw *decomposer) quantities(res *masterResult, b *builder, x []float64) {
	for j, w := range res.lambda { // the pool may have grown since
		if w <= 0 {
			continue
		}
		col := dw.pool[j]
		k := col.class
		dw.classes[k].occupation(col.pol, w, x, func(t, n int) int { return b.lay.col(k, t, n) })
	}
}

// verify checks a decomposed plan against the flat model it stands for:
// the plan's quantities x, with each target row's shortfall (short, by
// target and 1-based year) in the elastic model's shortfall column, must
// meet every row of that model within rowTolerance, and the primary
// objective recomputed from x must equal the master's within
// objectiveTolerance. The rows are the flat model's own, whatever kinds it
// holds, so that rows added to the model are checked without more code
// here.
func (dw *decomposer) verify(res *masterResult, x []float64, short map[[2]int]float64) error {
	b := newBuilder(dw.p)
	b.anonymous = true
	m := b.build()
	em, cols := b.elastic()
	full := make([]float64, len(em.Cols))
	copy(full, x)
	for _, c := range cols {
		full[c.col] = short[[2]int{c.target, c.year}]
	}
	if v := violation(em.Rows, full); !(v <= rowTolerance) {
		return &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition's plan misses a row of the flat model by %.2g (relative), more than the %.0g accepted", v, rowTolerance)}
	}
	primary := objKindOf(dw.p.Objective)
	want := 0.0
	for j, w := range res.lambda {
		if w > 0 {
			want += w * dw.objValue(primary, dw.pool[j])
		}
	}
	if got := m.Value(x); !(math.Abs(got-want) <= objectiveTolerance*math.Max(math.Abs(want), 1e-12)) {
		return &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition's plan is worth %.12g in the flat model, its master says %.12g", got, want)}
	}
	return nil
}

// activateTol is how far the master's plan may miss a hard target row
// that is not in the master before the row is added, on the model's 0-1
// scale (elastic rows join when missed at all; see activateViolated).
const activateTol = 1e-10
