package optimize

import (
	"errors"
	"fmt"
	"math"

	"github.com/draffensperger/golp"
)

// linkKind says what a linking row of the master measures.
type linkKind int

const (
	linkBudget linkKind = iota // spend of some classes in a year (or up to a year, with carry-over)
	linkTarget                 // a target's measure at the end of a year
)

// objKind is an objective the master can optimise or hold.
type objKind int

const (
	objCondition objKind = iota // mean network score over the horizon, 0-1
	objCost                     // present value of spend, money units
	objSlack                    // total target shortfall
	objExcess                   // total spend over the budget rows (budget feasibility)
	objFunding                  // money added to the budget rows (extra columns; see extra)
)

func objKindOf(o Objective) objKind {
	if o == MinCost {
		return objCost
	}
	return objCondition
}

// link is one linking row of the master: a row of the flat model that ties
// classes together (budgets, targets). Target rows enter the master only
// once the master's plan violates them.
type link struct {
	kind   linkKind
	name   string
	sense  Sense
	rhs    float64
	year   int   // 0-based: the budget's (last) year, the target's year
	from   int   // first year a budget row covers (earlier than year with carry-over)
	cls    []int // classes a budget covers; nil means all
	target int
	active bool
	// goal is the target's own bound; rhs may be relaxed from it by the
	// least shortfall once targets are known to be out of reach.
	goal float64
	// budget is the cap a budget row holds: Network, a group's index, or
	// leastSpendBudget.
	budget int
	// funded: an extra column (money added) enters the row.
	funded bool
}

// leastSpendBudget is link.budget for a least-spend row.
const leastSpendBudget = -2

// extra is a column of the master that no pricing problem makes: money
// added to budget rows, for the funding questions (fundingdw.go). It is
// non-negative and unbounded, costs cost in objFunding and enters the
// linking rows of terms.
type extra struct {
	cost  float64
	terms []linkTerm
}

// linkRows builds the linking rows of a problem in a fixed order: network
// budget rows, group budget rows, least-spend rows, then target rows by
// target and year.
// Budget rows start active, target rows inactive.
func (dw *decomposer) linkRows() []link {
	p := dw.p
	var out []link
	caps := func(name string, budget int, yearly []float64, cls []int) {
		cum := 0.0
		for t := 0; t < p.Horizon; t++ {
			c, from := yearly[t], t
			if p.CarryOver {
				cum += yearly[t]
				c, from = cum, 0
			}
			if math.IsInf(c, 1) {
				continue
			}
			if cls != nil && len(cls) == 0 {
				continue
			}
			out = append(out, link{kind: linkBudget, name: fmt.Sprintf("%s_%d", name, t+1), sense: LessEq, rhs: c / dw.moneyUnit, year: t, from: from, cls: cls, active: true, budget: budget})
		}
	}
	if p.Budget != nil {
		caps("budget", Network, p.Budget, nil)
	}
	for g, gb := range p.GroupBudgets {
		cls := gb.Classes
		if cls == nil {
			cls = []int{}
		}
		caps(fmt.Sprintf("groupbudget%d", g+1), g, gb.Yearly, cls)
	}
	// Least spends: budget rows of the other sense, each year on its own.
	for m, ms := range p.MinSpends {
		for t := 0; t < p.Horizon; t++ {
			if ms.Yearly[t] > 0 {
				out = append(out, link{kind: linkBudget, name: fmt.Sprintf("minspend%d_%d", m+1, t+1), sense: GreaterEq, rhs: ms.Yearly[t] / dw.moneyUnit, year: t, from: t, cls: ms.Classes, active: true, budget: leastSpendBudget})
			}
		}
	}
	b := &builder{p: p}
	for n := range p.Targets {
		tg := &p.Targets[n]
		from, to := tg.From, tg.To
		if tg.Kind == Hold {
			from, to = p.Horizon, p.Horizon
		}
		sense, rhs := b.targetBound(tg)
		for y := from; y <= to; y++ {
			out = append(out, link{kind: linkTarget, name: fmt.Sprintf("target%d_%d", n+1, y), sense: sense, rhs: rhs, goal: rhs, year: y - 1, target: n})
		}
	}
	return out
}

// covers reports whether a budget row covers class k.
func (l *link) covers(k int) bool {
	if l.cls == nil {
		return true
	}
	for _, c := range l.cls {
		if c == k {
			return true
		}
	}
	return false
}

// targetWeight is class k's weight in a target row's measure.
func (dw *decomposer) targetWeight(tg *Target, k int) float64 {
	if tg.Class == Network {
		return dw.weights[k]
	}
	if tg.Class == k {
		return 1
	}
	return 0
}

// objValue is a column's contribution to an objective (unsigned).
func (dw *decomposer) objValue(o objKind, col *column) float64 {
	s := 0.0
	switch o {
	case objCondition:
		for _, v := range col.score {
			s += v
		}
		return dw.weights[col.class] * s / 100 / float64(dw.p.Horizon)
	case objCost:
		// Life-cycle cost: treatments and routine cost alike.
		for t, v := range col.cost {
			s += (v + col.routine[t]) * dw.pvFactor[t]
		}
		return s
	}
	return 0
}

// coef is a column's coefficient in a linking row.
func (dw *decomposer) coef(l *link, col *column) float64 {
	switch l.kind {
	case linkBudget:
		if !l.covers(col.class) {
			return 0
		}
		s := 0.0
		for t := l.from; t <= l.year; t++ {
			c := col.cost[t]
			if dw.p.RoutineInBudget {
				c += col.routine[t]
			}
			s += c * dw.escFactor[t]
		}
		return s
	case linkTarget:
		tg := &dw.p.Targets[l.target]
		w := dw.targetWeight(tg, col.class)
		if w == 0 {
			return 0
		}
		if tg.Kind == MinScore || tg.Kind == Hold {
			return w * col.score[l.year] / 100
		}
		if tg.States != nil {
			return w * col.set[l.year][dw.setOf[l.target]]
		}
		return w * col.group[l.year][tg.Group]
	}
	return 0
}

// elastic reports whether link l has a slack column in stage st: the
// budget rows in the excess stage, the target rows while the targets may
// fall short.
func (dw *decomposer) elastic(st *stage, l *link) bool {
	if st.obj == objExcess {
		return l.kind == linkBudget
	}
	return l.kind == linkTarget && !dw.hardTargets
}

// slackSign is the coefficient of a slack (a target's shortfall, a
// budget's excess) in its row.
func slackSign(l *link) float64 {
	if l.sense == LessEq {
		return -1
	}
	return 1
}

// addObjective adds sign × objective o to every class's prices.
func (dw *decomposer) addObjective(pr []prices, o objKind, sign float64) {
	T := dw.p.Horizon
	for k := range pr {
		for t := 0; t < T; t++ {
			switch o {
			case objCondition:
				pr[k].score[t] += sign * dw.weights[k] / 100 / float64(T)
			case objCost:
				pr[k].cost[t] += sign * dw.pvFactor[t]
				pr[k].routine[t] += sign * dw.pvFactor[t]
			}
		}
	}
}

// addRowPrice subtracts dual price pi of a linking row from every class's
// prices: the reward of a pair is its objective coefficient minus Σ π_r a_r.
func (dw *decomposer) addRowPrice(pr []prices, l *link, pi float64) {
	switch l.kind {
	case linkBudget:
		for k := range pr {
			if !l.covers(k) {
				continue
			}
			for t := l.from; t <= l.year; t++ {
				pr[k].cost[t] -= pi * dw.escFactor[t]
				if dw.p.RoutineInBudget {
					pr[k].routine[t] -= pi * dw.escFactor[t]
				}
			}
		}
	case linkTarget:
		tg := &dw.p.Targets[l.target]
		for k := range pr {
			w := dw.targetWeight(tg, k)
			if w == 0 {
				continue
			}
			switch {
			case tg.Kind == MinScore || tg.Kind == Hold:
				pr[k].score[l.year] -= pi * w / 100
			case tg.States != nil:
				pr[k].set[l.year][dw.setOf[l.target]] -= pi * w
			default:
				pr[k].group[l.year][tg.Group] -= pi * w
			}
		}
	}
}

// stage is one lexicographic stage of a decomposed solve: maximise sign ×
// obj subject to the earlier stages' objectives (holds) each staying at
// least its optimum less holdTolerance. See doc.go and holdMaster.
type stage struct {
	obj   objKind
	sign  float64
	holds []hold
	// relax multiplies the holds' tolerance: 1, or more after lp_solve
	// called a master whose holds were met by the earlier stage's plan
	// infeasible on every path (see holdMaster).
	relax float64
	// tieBreak marks the last stage.
	tieBreak bool
}

// hold is an earlier stage's objective that a stage keeps at its optimum:
// sign × obj at least held less holdTolerance (for objSlack, minus the
// total shortfall). weight is the price of its row in the last master:
// pricing rewards weight × sign × obj on top of the stage's own objective.
type hold struct {
	obj    objKind
	sign   float64
	held   float64
	weight float64
}

// bound is the least value the held objective may take: its optimum less
// holdTolerance. For the total shortfall that needs every target row the
// earlier stage's plan missed to be in its master (see activateViolated),
// so that its master's shortfall is the plan's.
func (h *hold) bound(relax float64) float64 {
	return h.held - relax*holdTolerance(h.held)
}

// holdRelax is the stage's relax, 1 when unset.
func (st *stage) holdRelax() float64 { return max(st.relax, 1) }

// setWeights sets the holds' weights (nil or empty: none to set).
func (st *stage) setWeights(w []float64) {
	for i := range st.holds {
		if i < len(w) {
			st.holds[i].weight = w[i]
		}
	}
}

// weighted reports whether the stage holds earlier optima.
func (st *stage) weighted() bool { return len(st.holds) > 0 }

// colValue is a policy's coefficient in the stage objective that pricing
// maximises: its own plus each hold's weight times the held objective.
func (dw *decomposer) colValue(st *stage, col *column) float64 {
	v := dw.ownValue(st, col)
	for i := range st.holds {
		h := &st.holds[i]
		v += h.weight * h.sign * dw.objValue(h.obj, col)
	}
	return v
}

// ownValue is a policy's coefficient in the stage's own objective (without
// the held ones).
func (dw *decomposer) ownValue(st *stage, col *column) float64 {
	return st.sign * dw.objValue(st.obj, col)
}

// ownSlackValue is each shortfall's (excess's) coefficient in the stage's
// own objective.
func (st *stage) ownSlackValue() float64 {
	if st.obj == objSlack || st.obj == objExcess {
		return -1
	}
	return 0
}

// slackValue is each shortfall's coefficient in the stage objective that
// pricing maximises (see colValue).
func (st *stage) slackValue() float64 {
	v := st.ownSlackValue()
	for i := range st.holds {
		if h := &st.holds[i]; h.obj == objSlack {
			v -= h.weight
		}
	}
	return v
}

// masterResult is one solve of the restricted master.
type masterResult struct {
	z      float64
	lambda []float64 // per pool column (the pool may grow after the solve)
	slack  []float64 // per link (zero where the link has no shortfall column)
	pi     []float64 // per link (zero for inactive links)
	mu     []float64 // per class
	extra  []float64 // per extra column (dw.extras)
	// holdPrices are the prices of a holdMaster's hold rows (at least
	// zero), the weights pricing puts on the held objectives.
	holdPrices []float64
	rows       int
	cols       int
}

// dualMaster is the restricted master of one stage, held and solved as its
// dual LP:
//
//	min Σ_r b_r π_r + Σ_k μ_k
//	    Σ_r a_r(p) π_r + μ_k ≥ c(p)     for every pooled policy p of class k
//	    ±π_r ≥ c_s                        for the shortfall of every target row r
//	    π_r ≥ 0 (at most rows), ≤ 0 (at least rows), fixed at 0 (rows not
//	    yet in the master)
//
// Each new policy is a new row (a cutting plane on the prices: Kelley,
// 1960), which golp can add to a solved LP so that lp_solve goes on from the
// last basis; golp cannot add columns. The policies' weights λ_p and the
// shortfalls are the duals of these rows. The primal form is the fallback:
// lp_solve's default scaling, which golp cannot change, stopped it 1e-5
// short of the optimum on masters with nearly parallel target rows (the same
// target in successive years of a settled policy), as glpsol confirmed.
type dualMaster struct {
	lp       *golp.LP
	dw       *decomposer
	st       *stage
	nvar     int
	rowOf    []int     // per cut row: pool column j, or -1-r for the shortfall of link r
	rowScale []float64 // per cut row: the factor it was multiplied by
	pooled   int       // pool columns already considered
	in       []bool    // per considered pool column: it is a row of this master
	bound    []bool    // per link: its price is free to move (the row is in the master)
	synced   bool
	settings lpSettings
	// solved: lp_solve has solved this master at least once.
	solved bool
	// cuts holds the master's rows as written (scaled), to check answers.
	cuts []Row
}

const lpInfinity = 1e30

// newDualMaster returns the master of stage st over the pool columns marked
// in keep (every pool column beyond keep's length, and all of them when
// keep is nil). Leaving out policies no recent plan used keeps the master
// small: lp_solve's time per solve grows with its rows (see generate).
func newDualMaster(dw *decomposer, st *stage, keep []bool) *dualMaster {
	return newDualMasterWith(dw, st, keep, settingsPaths[0])
}

// newDualMasterWith is newDualMaster with the given lp_solve settings.
func newDualMasterWith(dw *decomposer, st *stage, keep []bool, set lpSettings) *dualMaster {
	L, K := len(dw.links), len(dw.classes)
	dm := &dualMaster{dw: dw, st: st, nvar: L + K, bound: make([]bool, L), settings: set}
	dm.lp = golp.NewLP(0, dm.nvar)
	dm.lp.SetVerboseLevel(golp.NEUTRAL)
	set.apply(dm.lp)
	for r := range dw.links {
		l := &dw.links[r]
		if !dw.elastic(st, l) {
			continue
		}
		dm.addCut(Row{Entries: []Entry{{Col: r, Val: slackSign(l)}}, Sense: GreaterEq, RHS: st.slackValue()}, -1-r, 1)
	}
	for ; dm.pooled < min(len(keep), len(dw.pool)); dm.pooled++ {
		dm.in = append(dm.in, false)
		if keep[dm.pooled] {
			dm.addRow(dm.pooled)
		}
	}
	dm.addPool()
	obj := make([]float64, dm.nvar)
	for r := range dw.links {
		obj[r] = dw.links[r].rhs
	}
	for k := 0; k < K; k++ {
		obj[L+k] = 1
		dm.lp.SetUnbounded(L + k)
	}
	dm.lp.SetObjFn(obj)
	dm.syncBounds()
	return dm
}

// addPool adds a row for every pool column generated since the master
// last looked.
func (dm *dualMaster) addPool() {
	for ; dm.pooled < len(dm.dw.pool); dm.pooled++ {
		dm.in = append(dm.in, false)
		dm.addRow(dm.pooled)
	}
}

// include puts pool column j back into the master when a rebuild left it
// out, and reports whether it did.
func (dm *dualMaster) include(j int) bool {
	if j >= dm.pooled || dm.in[j] {
		return false
	}
	dm.addRow(j)
	return true
}

// addRow adds pool column j as a row of the dual master.
func (dm *dualMaster) addRow(j int) {
	dw, L := dm.dw, len(dm.dw.links)
	dm.in[j] = true
	col := dw.pool[j]
	e := make([]Entry, 0, 16)
	for r := range dw.links {
		if v := dw.coef(&dw.links[r], col); v != 0 {
			e = append(e, Entry{Col: r, Val: v})
		}
	}
	e = append(e, Entry{Col: L + col.class, Val: 1})
	// Each row is scaled so its largest coefficient is 1 (an exact
	// change: the row's dual, the policy's weight, is scaled back).
	big := 0.0
	for _, x := range e {
		big = math.Max(big, math.Abs(x.Val))
	}
	f := 1 / big
	for i := range e {
		e[i].Val *= f
	}
	dm.addCut(Row{Entries: e, Sense: GreaterEq, RHS: f * dw.colValue(dm.st, col)}, j, f)
}

// addCut adds one row of the dual master: a policy's (of pool column j
// >= 0, scaled by f) or a shortfall's (j = -1-r for link r).
func (dm *dualMaster) addCut(r Row, j int, f float64) {
	e := make([]golp.Entry, len(r.Entries))
	for i, x := range r.Entries {
		e[i] = golp.Entry{Col: x.Col, Val: x.Val}
	}
	dm.lp.AddConstraintSparse(e, golp.GE, r.RHS)
	dm.cuts = append(dm.cuts, r)
	dm.rowOf = append(dm.rowOf, j)
	dm.rowScale = append(dm.rowScale, f)
}

// syncBounds frees the price of every link that has entered the master
// (with the sign its sense needs) and holds the others at zero.
func (dm *dualMaster) syncBounds() {
	for r := range dm.dw.links {
		l := &dm.dw.links[r]
		if dm.synced && l.active == dm.bound[r] {
			continue
		}
		dm.bound[r] = l.active
		switch {
		case !l.active:
			dm.lp.SetBounds(r, 0, 0)
		case l.sense == LessEq:
			dm.lp.SetBounds(r, 0, lpInfinity)
		case l.sense == GreaterEq:
			dm.lp.SetBounds(r, -lpInfinity, 0)
		default:
			dm.lp.SetUnbounded(r)
		}
	}
	dm.synced = true
}

// solve brings the master up to date with the pool and the active links
// and solves it. When lp_solve gives no checked answer going on from the
// last basis (see read), the same master is rebuilt and solved from
// scratch with each of settingsPaths in turn, and failing that solved in
// its primal form.
func (dm *dualMaster) solve() (*masterResult, error) {
	dw := dm.dw
	if dm.solved && !dm.settings.incremental() {
		// lp_solve 5.5 crashed (in its primal simplex loop) going on from
		// the last basis under these settings: start afresh.
		*dm = *newDualMasterWith(dw, dm.st, dm.in, dm.settings)
	}
	dm.addPool()
	dm.syncBounds()
	dm.solved = true
	res, err := dm.solveHere()
	if err == nil || halted(err) {
		return res, err
	}
	first := err
	dw.stats.Restarts++
	for _, set := range settingsPaths {
		fresh := newDualMasterWith(dw, dm.st, dm.in, set)
		fresh.solved = true
		res, err = fresh.solveHere()
		if err == nil || halted(err) {
			*dm = *fresh
			return res, err
		}
	}
	res, err = dw.solvePrimal(dm.st, nil)
	if err == nil || halted(err) {
		return res, err
	}
	var se *SolverError
	if errors.As(first, &se) && se.Status == StatusStalled {
		return nil, fmt.Errorf("%w: %v", ErrStalled, first)
	}
	return nil, first
}

// solveHere solves the master as it stands and reads its answer.
func (dm *dualMaster) solveHere() (*masterResult, error) {
	dw := dm.dw
	if t := dw.callTimeout(); t > 0 {
		dm.lp.SetTimeout(max(int(math.Ceil(t.Seconds())), 1))
	}
	if err := dw.p.stopped(); err != nil {
		return nil, err // golp cannot interrupt lp_solve once it has started
	}
	setIterationLimit(dm.lp, stallIterations(len(dm.rowOf), dm.nvar))
	st := dm.lp.Solve()
	switch st {
	case golp.OPTIMAL, accuracyError:
		return dm.read()
	case golp.TIMEOUT:
		if !dw.deadline.IsZero() {
			return nil, dw.timeoutError()
		}
		return nil, &SolverError{Status: StatusFailed, Advice: "lp_solve reported a time-out with no time limit set"}
	case golp.USERABORT, golp.SUBOPTIMAL:
		// lp_solve reports a solve stopped by the iteration limit after
		// phase 1 as sub-optimal.
		return nil, &SolverError{Status: StatusStalled, Advice: fmt.Sprintf("lp_solve took more than %d simplex iterations on the decomposition's master", stallIterations(len(dm.rowOf), dm.nvar))}
	default:
		return nil, &SolverError{Status: StatusFailed, Advice: fmt.Sprintf("lp_solve stopped on the decomposition's master with status %s", st)}
	}
}

// read reads a solved master's answer and checks it: the prices meet every
// row of the dual master (checkAnswer), the weights read from its duals
// meet every active linking row, and the weights' value (the primal
// master's objective) equals the prices' (the dual's) within
// masterDualityTolerance: an answer that fails is no answer.
func (dm *dualMaster) read() (*masterResult, error) {
	dw := dm.dw
	L, K := len(dw.links), len(dw.classes)
	v := dm.lp.Variables()
	obj := make([]float64, dm.nvar)
	for r := range dw.links {
		obj[r] = dw.links[r].rhs
	}
	for k := 0; k < K; k++ {
		obj[L+k] = 1
	}
	dual, err := checkAnswerFree(dm.cuts, obj, v, dm.lp.Objective(), dm.signs())
	if err != nil {
		return nil, err
	}
	duals := dm.lp.Duals()
	// Sizes as the primal master would have them: a row per active link
	// and per class, a column per policy and shortfall.
	rows := K
	for r := range dw.links {
		if dm.bound[r] {
			rows++
		}
	}
	res := &masterResult{lambda: make([]float64, dm.pooled), slack: make([]float64, L), pi: make([]float64, L), mu: make([]float64, K), rows: rows, cols: len(dm.rowOf)}
	for r := range dw.links {
		if dm.bound[r] {
			res.pi[r] = v[r]
		}
	}
	copy(res.mu, v[L:])
	for i, j := range dm.rowOf {
		d := math.Max(duals[i]*dm.rowScale[i], 0) // weights and shortfalls are non-negative
		if j >= 0 {
			res.lambda[j] = d
		} else {
			res.slack[-1-j] = d
		}
	}
	// The weights of each class are a convex combination; lp_solve's duals
	// meet that only to its tolerances, so rescale them to sum to one.
	sum := make([]float64, K)
	for j, w := range res.lambda {
		sum[dw.pool[j].class] += w
	}
	for j := range res.lambda {
		if s := sum[dw.pool[j].class]; s > 0 {
			res.lambda[j] /= s
		}
	}
	for k, s := range sum {
		if !(s > 0) {
			return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition's master gave class %d no policy", k+1)}
		}
	}
	res.z = dw.primalValue(dm.st, res)
	if miss := dw.linkViolation(res); !(miss <= rowTolerance) {
		return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition master's weights miss a linking row by %.2g", miss)}
	}
	if d := math.Abs(res.z - dual); !(d <= masterDualityTolerance*math.Max(dw.gapScale(dm.st, res), math.Abs(res.z)*1e-3)) {
		return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition master's weights are worth %.12g, its prices %.12g", res.z, dual)}
	}
	return res, nil
}

// masterDualityTolerance bounds the difference between the values of a
// master's weights and of its prices, relative to the stage's own
// objective (see gapScale): a tenth of the gap at which a stage stops, so
// that a wrong answer cannot end a stage early.
const masterDualityTolerance = RelativeGap / 10

// signs returns the sign each dual master variable may take: +1 for a
// price of an at-most row (at least zero), -1 for an at-least row, 0 for
// a price held at zero or free (a class's μ, an equality row).
func (dm *dualMaster) signs() []int {
	out := make([]int, dm.nvar)
	for r := range dm.dw.links {
		l := &dm.dw.links[r]
		switch {
		case !dm.bound[r]:
			out[r] = 2 // held at zero
		case l.sense == LessEq:
			out[r] = 1
		case l.sense == GreaterEq:
			out[r] = -1
		}
	}
	return out
}

// linkViolation is the largest miss of an active linking row by a master
// plan's weights and shortfalls, relative to max(1, |rhs|).
func (dw *decomposer) linkViolation(res *masterResult) float64 {
	worst := 0.0
	for r := range dw.links {
		l := &dw.links[r]
		if !l.active {
			continue
		}
		lhs := 0.0
		for j, w := range res.lambda {
			if w > 0 {
				lhs += w * dw.coef(l, dw.pool[j])
			}
		}
		lhs += slackSign(l) * res.slack[r]
		if l.funded {
			for i := range dw.extras {
				lhs += res.extra[i] * dw.extraCoef(i, r)
			}
		}
		worst = math.Max(worst, rowMiss(l.sense, lhs, l.rhs))
	}
	return worst
}

// primalValue is the stage's own objective at the master's plan.
func (dw *decomposer) primalValue(st *stage, res *masterResult) float64 {
	z := 0.0
	for j, w := range res.lambda {
		if w > 0 {
			z += w * dw.ownValue(st, dw.pool[j])
		}
	}
	for _, s := range res.slack {
		z += s * st.ownSlackValue()
	}
	for i, v := range res.extra {
		z += v * dw.extraOwnValue(st, i)
	}
	return z
}

// extraCoef is extra column i's coefficient in link r.
func (dw *decomposer) extraCoef(i, r int) float64 {
	for _, t := range dw.extras[i].terms {
		if t.link == r {
			return t.val
		}
	}
	return 0
}

// extraOwnValue is extra column i's coefficient in the stage's own
// objective.
func (dw *decomposer) extraOwnValue(st *stage, i int) float64 {
	if st.obj == objFunding {
		return st.sign * dw.extras[i].cost
	}
	return 0
}

// extraHeldValue is extra column i's coefficient in hold h's row.
func (dw *decomposer) extraHeldValue(h *hold, i int) float64 {
	if h.obj == objFunding {
		return h.sign * dw.extras[i].cost
	}
	return 0
}

// solvePrimal solves the restricted master of a stage in its primal form,
// from scratch: one column per pooled policy (those marked in keep, all
// when keep is nil) and per shortfall of an active target row, the active
// links and one convexity row per class as rows. It is the fallback when
// lp_solve fails on the dual form, and polishes a stage's final weights.
func (dw *decomposer) solvePrimal(st *stage, keep []bool) (*masterResult, error) {
	m := &Model{Name: "master", Maximize: true}
	L, K := len(dw.links), len(dw.classes)
	slackCol := make([]int, L)
	for r := range dw.links {
		slackCol[r] = -1
		if l := &dw.links[r]; l.active && dw.elastic(st, l) {
			slackCol[r] = m.addCol(fmt.Sprintf("short_%s", l.name), st.ownSlackValue())
		}
	}
	colOf := make([]int, len(dw.pool)) // model column of each pool column, -1 when left out
	for j, col := range dw.pool {
		colOf[j] = -1
		if keep == nil || (j < len(keep) && keep[j]) {
			colOf[j] = m.addCol(fmt.Sprintf("p%d", j), dw.ownValue(st, col))
		}
	}
	rowOf := make([]int, L)
	for r := range dw.links {
		rowOf[r] = -1
		l := &dw.links[r]
		if !l.active {
			continue
		}
		row := Row{Name: l.name, Sense: l.sense, RHS: l.rhs}
		if slackCol[r] >= 0 {
			row.Entries = append(row.Entries, Entry{slackCol[r], slackSign(l)})
		}
		for j, col := range dw.pool {
			if colOf[j] < 0 {
				continue
			}
			if v := dw.coef(l, col); v != 0 {
				row.Entries = append(row.Entries, Entry{colOf[j], v})
			}
		}
		if len(row.Entries) == 0 {
			row.Entries = []Entry{{0, 0}} // keep the row numbering of the duals
		}
		rowOf[r] = m.addRow(row)
	}
	conv := make([][]Entry, K)
	for j, col := range dw.pool {
		if colOf[j] >= 0 {
			conv[col.class] = append(conv[col.class], Entry{colOf[j], 1})
		}
	}
	convRow := len(m.Rows)
	for k := 0; k < K; k++ {
		m.addRow(Row{Name: fmt.Sprintf("convex%d", k+1), Entries: conv[k], Sense: Equal, RHS: 1})
	}
	holdRows := make([]int, len(st.holds))
	for i := range st.holds {
		h := &st.holds[i]
		row := Row{Name: fmt.Sprintf("hold%d", i+1), Sense: GreaterEq, RHS: h.bound(st.holdRelax())}
		if h.obj == objSlack {
			for r, c := range slackCol {
				if c >= 0 && dw.links[r].kind == linkTarget {
					row.Entries = append(row.Entries, Entry{c, -1})
				}
			}
		} else {
			for j, col := range dw.pool {
				if colOf[j] >= 0 {
					if v := h.sign * dw.objValue(h.obj, col); v != 0 {
						row.Entries = append(row.Entries, Entry{colOf[j], v})
					}
				}
			}
		}
		holdRows[i] = -1
		if len(row.Entries) > 0 {
			holdRows[i] = m.addRow(row)
		}
	}
	// The settings that last solved a primal master go first: a model
	// that made lp_solve cycle once tends to again in the next round.
	var s *lpSolver
	var x []float64
	var z float64
	var err error
	for n := range settingsPaths {
		set := settingsPaths[(dw.primalPath+n)%len(settingsPaths)]
		if s, err = newLPSolver(dw.p.Context(), m, dw.callTimeout(), set); err != nil {
			return nil, err
		}
		// A master that holds earlier optima has an answer (the earlier
		// stage's plan), so "infeasible" is one more failed path there.
		x, z, err = s.solve()
		if err == nil || halted(err) || (errors.Is(err, ErrInfeasible) && !st.weighted()) {
			if err == nil {
				dw.primalPath = (dw.primalPath + n) % len(settingsPaths)
			}
			break
		}
	}
	if IsTimeout(err) {
		return nil, dw.timeoutError()
	}
	if err != nil {
		return nil, err
	}
	duals := s.lp.Duals()
	res := &masterResult{z: z, lambda: make([]float64, len(dw.pool)), slack: make([]float64, L), pi: make([]float64, L), mu: make([]float64, K), rows: len(m.Rows), cols: len(m.Cols)}
	for j, c := range colOf {
		if c >= 0 {
			res.lambda[j] = math.Max(x[c], 0)
		}
	}
	for r := range dw.links {
		if slackCol[r] >= 0 {
			res.slack[r] = x[slackCol[r]]
		}
		if rowOf[r] < 0 {
			continue
		}
		pi := duals[rowOf[r]]
		// Lagrangian bounds need prices of the right sign; clip the noise.
		if dw.links[r].sense == LessEq {
			pi = math.Max(pi, 0)
		} else if dw.links[r].sense == GreaterEq {
			pi = math.Min(pi, 0)
		}
		res.pi[r] = pi
	}
	for k := 0; k < K; k++ {
		res.mu[k] = duals[convRow+k]
	}
	res.holdPrices = make([]float64, len(st.holds))
	for i, r := range holdRows {
		if r >= 0 {
			res.holdPrices[i] = math.Max(-duals[r], 0)
		}
	}
	return res, nil
}

// overspend returns, per linking row, how far a master plan's weights
// overspend each budget row beyond 1e-9 of its cap (nil when none does),
// with a margin of the same size. Least-spend rows are not caps.
func (dw *decomposer) overspend(res *masterResult) []float64 {
	var over []float64
	for r := range dw.links {
		l := &dw.links[r]
		if l.kind != linkBudget || !l.active || l.sense != LessEq {
			continue
		}
		v := 0.0
		for j, w := range res.lambda {
			if w > 0 {
				v += w * dw.coef(l, dw.pool[j])
			}
		}
		tol := 1e-9 * math.Max(math.Abs(l.rhs), 1e-3)
		if v > l.rhs+tol {
			if over == nil {
				over = make([]float64, len(dw.links))
			}
			over[r] = v - l.rhs + tol
		}
	}
	return over
}

// polish re-solves a stage's final master in the primal form over the
// policies its plan uses. The weights read from the dual form's duals meet
// the rows only to lp_solve's tolerances (1e-8 was measured: enough for a
// later stage, which relaxes targets to what this plan reaches, to trade
// that much more shortfall for condition); a primal simplex on these few
// columns gives weights that meet them to its feasibility tolerance. The
// polished plan replaces the master's only when it is as good.
func (dw *decomposer) polish(st *stage, res *masterResult) *masterResult {
	if len(dw.extras) > 0 {
		// The primal form below knows no extra columns; a master with
		// them is a live one, whose weights are a primal simplex answer.
		return res
	}
	if dw.live && dw.overspend(res) == nil && dw.meetsHolds(st, res) {
		// The live master's weights are a primal simplex answer already.
		return res
	}
	keep := make([]bool, len(res.lambda))
	for j, w := range res.lambda {
		keep[j] = w > 0
	}
	p, err := dw.solvePrimal(st, keep)
	if err != nil || p.z < res.z-holdTolerance(res.z) {
		return res
	}
	// lp_solve meets rows to tolerances it applies to its scaled model,
	// which on a master of whole-class policies came to 6e-6 of a budget
	// (seen on the demo with unmet targets). A plan must not spend more
	// than the budget: tighten each overspent cap by its overspend and
	// solve once more.
	if over := dw.overspend(p); over != nil {
		saved := make([]float64, len(dw.links))
		cut := make([]float64, len(dw.links))
		for r := range dw.links {
			saved[r] = dw.links[r].rhs
		}
		for try := 0; try < 4 && over != nil; try++ {
			for r := range dw.links {
				cut[r] += over[r]
				dw.links[r].rhs = saved[r] - cut[r]
			}
			q, err := dw.solvePrimal(st, keep)
			for r := range dw.links {
				dw.links[r].rhs = saved[r]
			}
			if err != nil {
				break
			}
			if over = dw.overspend(q); over == nil {
				p = q
			}
		}
	}
	if !dw.meetsHolds(st, p) {
		// lp_solve met the rows of this smaller master only to its own
		// tolerances, which on a hold can be far more than the hold's:
		// a tie-break polish once came back with 1.5e-7 more than the
		// least total shortfall, bought for 3.4e-6 of the cost it held.
		return res
	}
	p.pi, p.mu = res.pi, res.mu
	return p
}

// meetsHolds checks a master plan against the stage's holds, measured on
// the plan itself (the total shortfall over every target row, not the
// master's slack columns): each held objective at least its bound, less
// one more holdTolerance for the arithmetic of measuring it.
func (dw *decomposer) meetsHolds(st *stage, res *masterResult) bool {
	for i := range st.holds {
		h := &st.holds[i]
		if dw.heldValue(h, res) < h.bound(st.holdRelax())-holdTolerance(h.held) {
			return false
		}
	}
	return true
}

// heldValue is sign × the held objective of a master plan; for the total
// shortfall, measured on every target row against the target's own bound.
func (dw *decomposer) heldValue(h *hold, res *masterResult) float64 {
	v := 0.0
	if h.obj == objSlack {
		m := dw.mixMeasures(res)
		for r := range dw.links {
			l := &dw.links[r]
			if l.kind != linkTarget {
				continue
			}
			if miss := (dw.targetValue(l, m) - l.goal) * -slackSign(l); miss > 0 {
				v += miss
			}
		}
		return h.sign * v
	}
	for j, w := range res.lambda {
		if w > 0 {
			v += w * dw.objValue(h.obj, dw.pool[j])
		}
	}
	if h.obj == objFunding {
		for i, e := range res.extra {
			v += e * dw.extras[i].cost
		}
	}
	return h.sign * v
}
