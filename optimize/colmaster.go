package optimize

import (
	"errors"
	"fmt"
	"math"

	"github.com/draffensperger/golp"
)

// colMaster is the restricted master of a stage in its primal form, kept
// alive in lp_solve from round to round: each round's new policies are
// added as columns and newly violated target rows as rows, and lp_solve
// goes on from the last basis (a new column enters at zero, a new row's
// slack is basic, so the old basis stays a basis). The dual form
// (dualMaster) re-solves from its last basis too, but with one row per
// policy lp_solve refactorises a basis the size of the pool at every
// solve; the primal form's basis is one per linking, convexity and hold
// row, whatever the pool. On large networks (a pricing round of more than
// liveMasterMinWork rewards) that made the master, not pricing, the bulk
// of a solve.
//
// The working set is kept at most colsPerRow policies per row: past that,
// the master is rebuilt with the policies its basis holds or its plan
// uses and those of the last recentRounds rounds, and handed the old
// basis, so the rebuild costs no simplex iterations.
//
// Every answer is checked before it is used: the weights meet every row of
// this master (rowTolerance), the prices price every column in it at most
// zero (colDualTolerance), and the weights' value equals the prices' (the
// duality gap, masterDualityTolerance). An answer that fails is no answer:
// the master is rebuilt from scratch and solved with each of colPaths in
// turn.
type colMaster struct {
	dw *decomposer
	st *stage
	// The master is in lp_solve (lp) or, while its rows are few, in the
	// dense simplex (dense, when set is denseSettings).
	lp    *golp.LP
	dense *denseLP
	set   lpSettings
	// rows in lp_solve's order: per row, what it is (masterRow).
	rows    []masterRow
	linkRow []int // per link: lp row, or -1 while not in the master
	holdRow []int // per hold
	convRow []int // per class
	// cols in lp_solve's order: pool column j, -1-r for the shortfall of
	// link r, or -1-L-i for extra column i (L links); colOf is its
	// inverse for pool columns (-1: not in).
	cols     []int
	colOf    []int
	terms    []colTerms // per lp column, for checking answers
	in       []bool     // per pool column: wanted in the master
	policies int        // policy columns in the master
	relaxed  bool       // the holds were relaxed since the last bound
}

// masterRow is one row of a colMaster: a class's convexity row, a hold
// row or a linking row.
type masterRow struct {
	kind  masterRowKind
	index int // class, hold or link
}

type masterRowKind int

const (
	rowConvexity masterRowKind = iota
	rowHold
	rowLink
)

// colTerms are a master column's coefficients as the checks read them:
// its own objective, its held objectives (per hold) and its entries in
// the linking rows.
type colTerms struct {
	class int // -1 for a shortfall column
	own   float64
	held  []float64
	links []linkTerm
}

type linkTerm struct {
	link int
	val  float64
}

// colsPerRow bounds the working set (policy columns per master row)
// before it is pruned: the same bound as the dual form's working set
// (masterRowsPerLink).
const colsPerRow = 3

// colDualTolerance bounds a master column's reduced cost at the master's
// prices, relative to the largest term in it, for an answer to count as
// optimal.
const colDualTolerance = 1e-8

// colDualityTolerance bounds the difference between the values of the
// live master's weights and prices, relative to the stage's objective.
// It can be looser than the dual form's (masterDualityTolerance): here the
// value a stage stops on is the weights', which meet every row, and the
// bound it is compared with comes from pricing, valid at any prices. The
// check only keeps prices far from the master's optimum from steering
// pricing. At 1,000 classes lp_solve's answers came within 1.4e-10 and
// failed the dual form's 1e-10.
const colDualityTolerance = RelativeGap

// liveMasterMinWork is the pricing round (rewards evaluated) above which
// a decomposed solve keeps its master alive in lp_solve (colMaster). The
// live master is faster on small networks too (BenchmarkMasterForm: about
// half the time at 4x5x4x20 and 10x6x5x20 with targets), but where a plan
// has several optima (the tie-break leaves room at 1e-9) it lands on
// another one, which changes printed quantities of the demo and the test
// scenarios in their last digits; plans of networks this small keep the
// answers they gave before. 20x7x6x30 (12,900 rewards) is past it.
const liveMasterMinWork = 10000

// colPaths are the settings a colMaster tries in turn. The live master
// starts with mean scaling: with lp_solve's default (geometric) scaling,
// masters with target rows gave answers the checks rejected (12 restarts
// on one 20-class model), where mean scaling gave checked answers at once.
var colPaths = []lpSettings{settingsPaths[1], settingsPaths[0], settingsPaths[2], settingsPaths[3], settingsPaths[4]}

// denseSettings marks a live master solved by the dense simplex (denseLP)
// instead of lp_solve: the first way tried while the master has at most
// denseMasterRows rows.
var denseSettings = lpSettings{name: "dense simplex"}

// denseMasterRows is the most rows a live master has for the dense
// simplex to solve it. A class planned alone under a yearly score target
// (the renewal indicators' plans) has one per year and two more; there
// the dense simplex made the whole plan 1.6x faster than lp_solve
// (BenchmarkMasterForm, .../hold: 22.3 and 26.0 ms down to 13.5 and 15.6
// ms). Its work per pivot grows with the square of the rows: at 20x7x6x30
// with targets (about 60 rows) the two were level.
const denseMasterRows = 64

// goesOn reports whether a live master under these settings may go on
// from its basis after columns and rows are added (see
// lpSettings.incremental); under the others it is rebuilt before each
// solve.
func goesOn(s lpSettings) bool {
	return s.name == settingsPaths[0].name || s.name == settingsPaths[1].name || s.name == denseSettings.name
}

// paths are the ways a master is solved afresh when the way it was being
// solved gave no checked answer: the dense simplex while the master is
// small, then lp_solve's colPaths.
func (cm *colMaster) paths() []lpSettings {
	if len(cm.rows) <= denseMasterRows {
		return append([]lpSettings{denseSettings}, colPaths...)
	}
	return colPaths
}

func newColMaster(dw *decomposer, st *stage, keep []bool) *colMaster {
	cm := &colMaster{dw: dw, st: st, set: colPaths[0]}
	if dw.denseMaster {
		cm.set = denseSettings
	}
	cm.in = make([]bool, len(dw.pool))
	for j := range cm.in {
		cm.in[j] = keep == nil || (j < len(keep) && keep[j])
	}
	cm.build(nil, nil)
	return cm
}

// build makes the lp_solve model afresh: the rows (the current rows when
// rebuilding, else the convexity rows, the hold rows and the active links
// in order), then the columns cols (nil: every slack of an elastic active
// link, then every wanted pool column), then basis, when given, in the
// new model's numbering.
func (cm *colMaster) build(cols []int, basis []int32) {
	dw, st := cm.dw, cm.st
	L, K := len(dw.links), len(dw.classes)
	if cm.rows == nil {
		for k := 0; k < K; k++ {
			cm.rows = append(cm.rows, masterRow{rowConvexity, k})
		}
		for i := range st.holds {
			cm.rows = append(cm.rows, masterRow{rowHold, i})
		}
		for r := range dw.links {
			if dw.links[r].active {
				cm.rows = append(cm.rows, masterRow{rowLink, r})
			}
		}
	}
	if cm.set == denseSettings && len(cm.rows) > denseMasterRows {
		cm.set = colPaths[0]
	}
	cm.lp, cm.dense = nil, nil
	if cm.set == denseSettings {
		cm.dense = newDenseLP()
	} else {
		cm.lp = golp.NewLP(0, 0)
		cm.lp.SetAddRowMode(false)
		cm.lp.SetVerboseLevel(golp.NEUTRAL)
		cm.set.apply(cm.lp)
		cm.lp.SetMaximize()
	}
	cm.linkRow, cm.holdRow, cm.convRow = fill(L, -1), fill(len(st.holds), -1), fill(K, -1)
	for i, row := range cm.rows {
		switch row.kind {
		case rowConvexity:
			cm.convRow[row.index] = i
			cm.addRow(nil, nil, Equal, 1)
		case rowHold:
			cm.holdRow[row.index] = i
			cm.addRow(nil, nil, GreaterEq, st.holds[row.index].bound(st.holdRelax()))
		case rowLink:
			cm.linkRow[row.index] = i
			l := &dw.links[row.index]
			cm.addRow(nil, nil, l.sense, l.rhs)
		}
	}
	if cols == nil {
		for r := range dw.links {
			if cm.linkRow[r] >= 0 && dw.elastic(st, &dw.links[r]) {
				cols = append(cols, -1-r)
			}
		}
		for i := range dw.extras {
			cols = append(cols, -1-L-i)
		}
		for j, in := range cm.in {
			if in {
				cols = append(cols, j)
			}
		}
	}
	cm.cols, cm.terms, cm.policies = nil, nil, 0
	cm.colOf = fill(len(dw.pool), -1)
	for _, c := range cols {
		cm.addCol(c)
	}
	if basis != nil && cm.lp != nil {
		// A basis lp_solve refuses leaves it to start afresh.
		setBasis(cm.lp, basis)
	}
}

// addRow and addColumn add to the master in whichever solver holds it.
func (cm *colMaster) addRow(cols []int32, vals []float64, sense Sense, rhs float64) {
	if cm.dense != nil {
		cm.dense.addRow(cols, vals, sense, rhs)
		return
	}
	addRow(cm.lp, cols, vals, senseOf(sense), rhs)
}

func (cm *colMaster) addColumn(rows []int32, vals []float64) {
	if cm.dense != nil {
		cm.dense.addColumn(rows, vals)
		return
	}
	addColumn(cm.lp, rows, vals)
}

func fill(n, v int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = v
	}
	return out
}

func senseOf(s Sense) golp.ConstraintType {
	switch s {
	case GreaterEq:
		return golp.GE
	case Equal:
		return golp.EQ
	}
	return golp.LE
}

// addCol adds pool column c (or, for c < 0, the shortfall of link -1-c)
// as a column of the master.
func (cm *colMaster) addCol(c int) {
	dw, st := cm.dw, cm.st
	var rows []int32
	var vals []float64
	t := colTerms{class: -1, held: make([]float64, len(st.holds))}
	if c >= 0 {
		col := dw.pool[c]
		t.class = col.class
		t.own = dw.ownValue(st, col)
		rows, vals = append(rows, 0, int32(cm.convRow[col.class]+1)), append(vals, t.own, 1)
		for i := range st.holds {
			h := &st.holds[i]
			if h.obj == objSlack {
				continue
			}
			t.held[i] = h.sign * dw.objValue(h.obj, col)
			if t.held[i] != 0 {
				rows, vals = append(rows, int32(cm.holdRow[i]+1)), append(vals, t.held[i])
			}
		}
		for r := range dw.links {
			if cm.linkRow[r] < 0 {
				continue
			}
			if v := dw.coef(&dw.links[r], col); v != 0 {
				t.links = append(t.links, linkTerm{r, v})
				rows, vals = append(rows, int32(cm.linkRow[r]+1)), append(vals, v)
			}
		}
		cm.colOf[c] = len(cm.cols)
		cm.policies++
	} else if i := -1 - len(dw.links) - c; i >= 0 {
		t.own = dw.extraOwnValue(st, i)
		rows, vals = append(rows, 0), append(vals, t.own)
		for h := range st.holds {
			t.held[h] = dw.extraHeldValue(&st.holds[h], i)
			if t.held[h] != 0 {
				rows, vals = append(rows, int32(cm.holdRow[h]+1)), append(vals, t.held[h])
			}
		}
		for _, lt := range dw.extras[i].terms {
			if cm.linkRow[lt.link] >= 0 {
				t.links = append(t.links, lt)
				rows, vals = append(rows, int32(cm.linkRow[lt.link]+1)), append(vals, lt.val)
			}
		}
	} else {
		r := -1 - c
		l := &dw.links[r]
		t.own = st.ownSlackValue()
		rows, vals = append(rows, 0, int32(cm.linkRow[r]+1)), append(vals, t.own, slackSign(l))
		t.links = []linkTerm{{r, slackSign(l)}}
		for i := range st.holds {
			if st.holds[i].obj == objSlack && l.kind == linkTarget {
				t.held[i] = -1
				rows, vals = append(rows, int32(cm.holdRow[i]+1)), append(vals, -1)
			}
		}
	}
	cm.addColumn(rows, vals)
	cm.cols = append(cm.cols, c)
	cm.terms = append(cm.terms, t)
}

// addLink adds the row of link r, which has just become active, over the
// master's columns, and its shortfall column when the stage has one.
func (cm *colMaster) addLink(r int) {
	dw := cm.dw
	l := &dw.links[r]
	var cols []int32
	var vals []float64
	for c, j := range cm.cols {
		v := 0.0
		switch i := -1 - len(dw.links) - j; {
		case j >= 0:
			v = dw.coef(l, dw.pool[j])
		case i >= 0:
			v = dw.extraCoef(i, r)
		}
		if v != 0 {
			cols, vals = append(cols, int32(c)), append(vals, v)
			cm.terms[c].links = append(cm.terms[c].links, linkTerm{r, v})
		}
	}
	cm.linkRow[r] = len(cm.rows)
	cm.rows = append(cm.rows, masterRow{rowLink, r})
	cm.addRow(cols, vals, l.sense, l.rhs)
	if dw.elastic(cm.st, l) {
		cm.addCol(-1 - r)
	}
}

// sync brings the master up to date with the pool (every wanted column)
// and the active links.
func (cm *colMaster) sync() {
	dw := cm.dw
	for len(cm.in) < len(dw.pool) {
		cm.in = append(cm.in, true)
	}
	for len(cm.colOf) < len(dw.pool) {
		cm.colOf = append(cm.colOf, -1)
	}
	for r := range dw.links {
		if dw.links[r].active && cm.linkRow[r] < 0 {
			cm.addLink(r)
		}
	}
	for j, in := range cm.in {
		if in && cm.colOf[j] < 0 {
			cm.addCol(j)
		}
	}
}

func (cm *colMaster) include(j int) bool {
	if j >= len(cm.in) || cm.in[j] {
		return false
	}
	cm.in[j] = true
	return true
}

// solve brings the master up to date and solves it, going on from the
// last basis; failing that (no checked answer), from scratch with each of
// colPaths; failing that, in a stage that holds earlier optima, with its
// holds relaxed tenfold at a time (as holdMaster).
func (cm *colMaster) solve() (*masterResult, error) {
	dw, st := cm.dw, cm.st
	if !goesOn(cm.set) || (cm.set == denseSettings && len(cm.rows) > denseMasterRows) {
		cm.rows = nil
		cm.build(nil, nil)
	}
	cm.sync()
	res, err := cm.solveHere()
	if err == nil || halted(err) {
		return res, err
	}
	first := err
	for {
		for _, set := range cm.paths() {
			dw.stats.Restarts++
			cm.set, cm.rows = set, nil
			cm.build(nil, nil)
			res, err = cm.solveHere()
			if err == nil || halted(err) {
				return res, err
			}
		}
		if !st.weighted() || st.holdRelax() >= maxHoldRelax {
			break
		}
		// The earlier stage's plan meets every hold, so the master has an
		// answer; lp_solve misses it when the holds leave it less room
		// than its own tolerances (see holdMaster).
		st.relax = 10 * st.holdRelax()
		cm.relaxed = true
	}
	var se *SolverError
	if errors.As(first, &se) && se.Status == StatusStalled {
		return nil, fmt.Errorf("%w: %v", ErrStalled, first)
	}
	return nil, first
}

// solveHere solves the master as it stands, reads and checks its answer,
// and prunes the working set when it has grown past colsPerRow.
func (cm *colMaster) solveHere() (*masterResult, error) {
	dw := cm.dw
	if err := dw.p.stopped(); err != nil {
		return nil, err
	}
	limit := stallIterations(len(cm.rows), len(cm.cols))
	if cm.dense != nil {
		res, err := cm.solveDense(int(limit))
		if err != nil && cm.dense.pivots > 0 {
			// An answer off by rounding in the updated inverse: once more
			// from the same basis with the inverse computed afresh.
			cm.dense.valid = false
			res, err = cm.solveDense(int(limit))
		}
		return res, err
	}
	if t := dw.callTimeout(); t > 0 {
		cm.lp.SetTimeout(max(int(math.Ceil(t.Seconds())), 1))
	}
	setIterationLimit(cm.lp, limit)
	switch st := cm.lp.Solve(); st {
	case golp.OPTIMAL, accuracyError:
	case golp.TIMEOUT:
		if !dw.deadline.IsZero() {
			return nil, dw.timeoutError()
		}
		return nil, &SolverError{Status: StatusFailed, Advice: "lp_solve reported a time-out with no time limit set"}
	case golp.USERABORT, golp.SUBOPTIMAL:
		return nil, &SolverError{Status: StatusStalled, Advice: fmt.Sprintf("lp_solve took more than %d simplex iterations on the decomposition's master", limit)}
	default:
		return nil, &SolverError{Status: StatusFailed, Advice: fmt.Sprintf("lp_solve stopped on the decomposition's master with status %s", st)}
	}
	return cm.readAndPrune()
}

// solveDense solves the master in the dense simplex and reads its answer.
func (cm *colMaster) solveDense(limit int) (*masterResult, error) {
	switch st := cm.dense.solve(limit); st {
	case denseOptimal:
	case denseIterationLimit:
		return nil, &SolverError{Status: StatusStalled, Advice: fmt.Sprintf("the dense simplex took more than %d iterations on the decomposition's master", limit)}
	default:
		return nil, &SolverError{Status: StatusFailed, Advice: fmt.Sprintf("the dense simplex stopped on the decomposition's master: %s", st)}
	}
	return cm.readAndPrune()
}

// readAndPrune reads and checks the master's answer, and prunes the
// working set when it has grown past colsPerRow.
func (cm *colMaster) readAndPrune() (*masterResult, error) {
	res, err := cm.read()
	if err != nil {
		return nil, err
	}
	if cm.policies > colsPerRow*len(cm.rows) && goesOn(cm.set) {
		cm.prune(res)
	}
	return res, nil
}

// read reads the master's answer and checks it (see colMaster).
func (cm *colMaster) read() (*masterResult, error) {
	dw, st := cm.dw, cm.st
	L, K := len(dw.links), len(dw.classes)
	var x, duals []float64
	if cm.dense != nil {
		x, duals = cm.dense.variables(), cm.dense.duals()
	} else {
		x, duals = cm.lp.Variables(), cm.lp.Duals()
	}
	res := &masterResult{lambda: make([]float64, len(dw.pool)), slack: make([]float64, L), pi: make([]float64, L), mu: make([]float64, K), holdPrices: make([]float64, len(st.holds)), rows: len(cm.rows), cols: len(cm.cols)}
	if len(dw.extras) > 0 {
		res.extra = make([]float64, len(dw.extras))
	}
	for c, j := range cm.cols {
		*cm.valueIn(res, j) = math.Max(x[c], 0)
	}
	dual := 0.0
	for r, i := range cm.linkRow {
		if i < 0 {
			continue
		}
		pi := duals[i]
		// Lagrangian bounds need prices of the right sign; clip the noise.
		switch dw.links[r].sense {
		case LessEq:
			pi = math.Max(pi, 0)
		case GreaterEq:
			pi = math.Min(pi, 0)
		}
		res.pi[r] = pi
		dual += pi * dw.links[r].rhs
	}
	for k, i := range cm.convRow {
		res.mu[k] = duals[i]
		dual += res.mu[k]
	}
	for h, i := range cm.holdRow {
		res.holdPrices[h] = math.Max(-duals[i], 0)
		dual -= res.holdPrices[h] * st.holds[h].bound(st.holdRelax())
	}
	// The rows: convexity, holds, links.
	conv := make([]float64, K)
	held := make([]float64, len(st.holds))
	for c, t := range cm.terms {
		v := *cm.valueIn(res, cm.cols[c])
		if t.class >= 0 {
			conv[t.class] += v
		}
		for i, h := range t.held {
			held[i] += v * h
		}
	}
	for k, s := range conv {
		if !(math.Abs(s-1) <= rowTolerance) {
			return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition master's weights of class %d sum to %.12g, not 1", k+1, s)}
		}
	}
	for i, v := range held {
		b := st.holds[i].bound(st.holdRelax())
		if !(v >= b-rowTolerance*math.Max(1, math.Abs(b))) {
			return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition master's weights miss hold %d by %.2g", i+1, b-v)}
		}
	}
	if miss := dw.linkViolation(res); !(miss <= rowTolerance) {
		return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition master's weights miss a linking row by %.2g", miss)}
	}
	// The prices: no column of the master prices above zero.
	for c, t := range cm.terms {
		rc, size := t.own, math.Abs(t.own)
		for i, h := range t.held {
			rc += res.holdPrices[i] * h
			size = math.Max(size, math.Abs(res.holdPrices[i]*h))
		}
		if t.class >= 0 {
			rc -= res.mu[t.class]
			size = math.Max(size, math.Abs(res.mu[t.class]))
		}
		for _, lt := range t.links {
			rc -= res.pi[lt.link] * lt.val
			size = math.Max(size, math.Abs(res.pi[lt.link]*lt.val))
		}
		if !(rc <= colDualTolerance*math.Max(size, 1)) {
			return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition master's prices leave column %d a reduced cost of %.2g", c+1, rc)}
		}
	}
	res.z = dw.primalValue(st, res)
	if d := math.Abs(res.z - dual); !(d <= colDualityTolerance*dw.gapScale(st, res)) {
		return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition master's weights are worth %.12g, its prices %.12g", res.z, dual)}
	}
	st.setWeights(res.holdPrices)
	return res, nil
}

// valueIn is where res holds the value of master column c (in cols'
// coding): a pool column's weight, a link's shortfall or an extra.
func (cm *colMaster) valueIn(res *masterResult, c int) *float64 {
	L := len(cm.dw.links)
	switch {
	case c >= 0:
		return &res.lambda[c]
	case c >= -L:
		return &res.slack[-1-c]
	}
	return &res.extra[-1-L-c]
}

// prune rebuilds the master with the policies its basis holds or its plan
// uses, those of the last recentRounds rounds and every shortfall column,
// and hands it the old basis renumbered.
func (cm *colMaster) prune(res *masterResult) {
	dw := cm.dw
	if cm.dense != nil {
		cm.pruneDense(res)
		return
	}
	old := basisOf(cm.lp)
	if old == nil {
		return
	}
	R := len(cm.rows)
	keepCol := make([]bool, len(cm.cols))
	for _, v := range old[1 : R+1] {
		if i := int(abs32(v)); i > R {
			keepCol[i-R-1] = true
		}
	}
	recent := len(dw.pool) - recentRounds*len(dw.classes)
	var cols []int
	newIndex := fill(len(cm.cols), -1)
	for c, j := range cm.cols {
		if keepCol[c] || j < 0 || j >= recent || res.lambda[j] > 0 {
			newIndex[c] = len(cols)
			cols = append(cols, j)
		}
	}
	for c, j := range cm.cols {
		if j >= 0 && newIndex[c] < 0 {
			cm.in[j] = false
		}
	}
	basis := make([]int32, 0, 1+R+len(cols))
	basis = append(basis, 0)
	for _, v := range old[1:] {
		i := int(abs32(v))
		if i > R {
			n := newIndex[i-R-1]
			if n < 0 {
				continue
			}
			i = R + 1 + n
		}
		if v < 0 {
			basis = append(basis, int32(-i))
		} else {
			basis = append(basis, int32(i))
		}
	}
	cm.build(cols, basis)
}

func abs32(v int32) int32 {
	if v < 0 {
		return -v
	}
	return v
}

// pruneDense is prune for a master in the dense simplex, which drops
// columns in place and keeps its basis.
func (cm *colMaster) pruneDense(res *masterResult) {
	dw := cm.dw
	recent := len(dw.pool) - recentRounds*len(dw.classes)
	keep := make([]bool, len(cm.cols))
	for c, j := range cm.cols {
		keep[c] = j < 0 || j >= recent || res.lambda[j] > 0
	}
	newIndex := cm.dense.keepColumns(keep)
	cols, terms := cm.cols[:0], cm.terms[:0]
	cm.policies = 0
	for c, j := range cm.cols {
		n := newIndex[c]
		if j >= 0 {
			if n < 0 {
				cm.in[j], cm.colOf[j] = false, -1
				continue
			}
			cm.colOf[j] = n
			cm.policies++
		}
		cols, terms = append(cols, j), append(terms, cm.terms[c])
	}
	cm.cols, cm.terms = cols, terms
}
