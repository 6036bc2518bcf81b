package optimize

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"time"

	"github.com/draffensperger/golp"
)

// SolverStatus names why lp_solve gave no usable answer.
type SolverStatus string

const (
	// StatusTimeout: the caller's own time limit ran out.
	StatusTimeout SolverStatus = "timeout"
	// StatusStalled: lp_solve took more simplex iterations than a model of
	// its size needs (stallIterations), which in practice means cycling.
	StatusStalled SolverStatus = "stalled"
	// StatusUnverified: lp_solve reported an answer that misses a row of
	// the model by more than rowTolerance, or whose objective is not the
	// one it reported.
	StatusUnverified SolverStatus = "unverified"
	// StatusUnbounded: lp_solve called a bounded model unbounded.
	StatusUnbounded SolverStatus = "unbounded"
	// StatusNumerical: lp_solve gave up on numerical grounds.
	StatusNumerical SolverStatus = "numerical failure"
	// StatusOutOfMemory: the model is too large for the machine.
	StatusOutOfMemory SolverStatus = "out of memory"
	// StatusFailed: any other way lp_solve can stop without an answer.
	StatusFailed SolverStatus = "failed"
)

// SolverError says why the solver gave no usable answer.
type SolverError struct {
	Status SolverStatus
	Advice string
}

func (e *SolverError) Error() string {
	return fmt.Sprintf("solver stopped with status %s: %s", e.Status, e.Advice)
}

// IsTimeout reports whether err is the caller's own time limit running out.
func IsTimeout(err error) bool {
	var se *SolverError
	return errors.As(err, &se) && se.Status == StatusTimeout
}

// ErrInfeasible is returned by a solve whose constraints cannot all be met.
var ErrInfeasible = errors.New("constraints cannot all be met")

// Checking an answer. lp_solve meets rows to tolerances it applies to its
// internally scaled model and reports them against the model as given, so
// every answer is checked here before it is used:
//
//   - each row, recomputed from the answer's columns, holds within
//     rowTolerance × max(1, |right-hand side|), and every column is at
//     least -rowTolerance;
//   - the objective recomputed from the columns equals the one lp_solve
//     reported within objectiveTolerance × max(|objective|, 1e-12).
//
// Rows of the models here are in units near 1: shares of a class (flow,
// balance), scores on 0-1 and shares (targets), money in a unit near the
// largest budget (budgets). 1e-7 is a ten-millionth of a class, of a score
// point range or of a budget: below any figure a report prints, and thirty
// times the largest miss measured on 400 models of the agreement test
// (3e-9). lp_solve's objective agreed with the recomputed one to 7e-13.
const (
	rowTolerance       = 1e-7
	objectiveTolerance = 1e-9
)

// accuracyError is lp_solve 5.5's ACCURACYERROR status (25), which golp
// does not name: lp_solve found a solution but its own final accuracy
// check failed. Such an answer goes through the same check as any other.
const accuracyError = golp.SolutionType(25)

// stallIterations is the simplex iteration count past which a solve of a
// model with the given rows and columns counts as stalled. On the 400
// models of the agreement test lp_solve took at most 3 iterations per row
// and column, on the benchmark's flat models 0.7, on the decomposition's
// masters less; a master that lp_solve cycled on (a tie-break master
// whose hold row is degenerate) ran 50 per row and column for 11 s before
// stopping. Ten per row and column, plus a floor for tiny models, is far
// beyond any solve that is making progress, and is counted, not timed, so
// that a busy machine stops the same solve at the same place.
func stallIterations(rows, cols int) int64 { return 1000 + 10*int64(rows+cols) }

// lpSolver holds one lp_solve instance built from a Model. Rows can be added
// and the objective replaced between solves.
type lpSolver struct {
	lp      *golp.LP
	ncols   int
	timeout time.Duration
	// ctx is checked before each solve: golp cannot interrupt lp_solve
	// inside one call, so cancellation is seen between calls.
	ctx context.Context
	// golp can switch lp_solve to maximising but not back; sign is -1 when
	// a minimisation is posed to a maximising instance as max -c·x.
	maxSet bool
	sign   float64
	// rows and obj are kept to check every answer.
	rows []Row
	obj  []float64
}

// violation returns the largest miss of any row by x, each relative to
// max(1, |right-hand side|), and of x >= 0.
func violation(rows []Row, x []float64) float64 {
	worst := rowViolation(rows, x)
	for _, v := range x {
		worst = math.Max(worst, -v)
	}
	return worst
}

// rowViolation is violation without the check of x's signs.
func rowViolation(rows []Row, x []float64) float64 {
	worst := 0.0
	for _, r := range rows {
		lhs := 0.0
		for _, e := range r.Entries {
			lhs += e.Val * x[e.Col]
		}
		worst = math.Max(worst, rowMiss(r.Sense, lhs, r.RHS))
	}
	return worst
}

// checkAnswer checks an answer x whose objective lp_solve reported as z
// against the rows and objective obj, and returns the recomputed objective.
func checkAnswer(rows []Row, obj, x []float64, z float64) (float64, error) {
	if len(x) != len(obj) {
		return 0, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("lp_solve returned %d values for %d columns", len(x), len(obj))}
	}
	return checkObjective(obj, x, z, violation(rows, x))
}

// checkObjective turns an answer's worst violation and its objective
// into checkAnswer's verdict.
func checkObjective(obj, x []float64, z, worst float64) (float64, error) {
	if !(worst <= rowTolerance) {
		return 0, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("lp_solve's answer misses a row by %.2g (relative), more than the %.0g accepted", worst, rowTolerance)}
	}
	got := 0.0
	for j, c := range obj {
		got += c * x[j]
	}
	if d := math.Abs(got - z); !(d <= objectiveTolerance*math.Max(math.Abs(got), 1e-12)) {
		return 0, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("lp_solve reported the objective %.12g for an answer worth %.12g", z, got)}
	}
	return got, nil
}

// checkAnswerFree is checkAnswer for a model whose columns carry sign
// rules of their own (signs[j]: +1 at least zero, -1 at most zero, 0 free,
// 2 fixed at zero) instead of all being at least zero.
func checkAnswerFree(rows []Row, obj, x []float64, z float64, signs []int) (float64, error) {
	if len(x) != len(obj) {
		return 0, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("lp_solve returned %d values for %d columns", len(x), len(obj))}
	}
	return checkObjective(obj, x, z, violationFree(rows, x, signs))
}

// rowMiss is by how much lhs misses a row of the sense and right-hand
// side, relative to max(1, |rhs|); zero or less when it holds.
func rowMiss(sense Sense, lhs, rhs float64) float64 {
	miss := 0.0
	switch sense {
	case LessEq:
		miss = lhs - rhs
	case GreaterEq:
		miss = rhs - lhs
	default:
		miss = math.Abs(lhs - rhs)
	}
	return miss / math.Max(1, math.Abs(rhs))
}

// violationFree is violation with per-column sign rules (see
// checkAnswerFree).
func violationFree(rows []Row, x []float64, signs []int) float64 {
	worst := rowViolation(rows, x)
	for j, v := range x {
		switch signs[j] {
		case 1:
			worst = math.Max(worst, -v)
		case -1:
			worst = math.Max(worst, v)
		case 2:
			worst = math.Max(worst, math.Abs(v))
		}
	}
	return worst
}

func newLPSolver(ctx context.Context, m *Model, timeout time.Duration, set lpSettings) (*lpSolver, error) {
	s := &lpSolver{lp: golp.NewLP(0, len(m.Cols)), ncols: len(m.Cols), timeout: timeout, ctx: ctx}
	s.lp.SetVerboseLevel(golp.NEUTRAL)
	set.apply(s.lp)
	for _, r := range m.Rows {
		if err := s.addRow(r); err != nil {
			return nil, err
		}
	}
	s.setObjective(m.Obj, m.Maximize)
	return s, nil
}

// errEmptyInfeasible marks an empty row that cannot hold (0 vs a non-zero rhs).
var errEmptyInfeasible = errors.New("empty row cannot hold")

func (s *lpSolver) addRow(r Row) error {
	s.rows = append(s.rows, r)
	if len(r.Entries) == 0 {
		// golp panics on an empty row; an empty row either always holds or never.
		ok := (r.Sense == LessEq && r.RHS >= -1e-12) || (r.Sense == GreaterEq && r.RHS <= 1e-12) || (r.Sense == Equal && math.Abs(r.RHS) <= 1e-12)
		if !ok {
			return fmt.Errorf("row %s: %w", r.Name, errEmptyInfeasible)
		}
		return nil
	}
	entries := make([]golp.Entry, len(r.Entries))
	for i, e := range r.Entries {
		entries[i] = golp.Entry{Col: e.Col, Val: e.Val}
	}
	ct := golp.LE
	switch r.Sense {
	case GreaterEq:
		ct = golp.GE
	case Equal:
		ct = golp.EQ
	}
	return s.lp.AddConstraintSparse(entries, ct, r.RHS)
}

func (s *lpSolver) setObjective(obj []float64, maximize bool) {
	if maximize && !s.maxSet {
		s.lp.SetMaximize()
		s.maxSet = true
	}
	s.sign = 1
	s.obj = obj
	if s.maxSet && !maximize {
		s.sign = -1
		neg := make([]float64, len(obj))
		for j, c := range obj {
			neg[j] = -c
		}
		obj = neg
	}
	s.lp.SetObjFn(obj)
}

// solve runs lp_solve, maps its status and checks its answer (see
// checkAnswer). It returns ErrInfeasible for a model lp_solve calls
// infeasible and a *SolverError for every other outcome without a checked
// answer; the objective and variables are read only after lp_solve says
// it has an answer (after a timeout its objective is meaningless). A done
// context stops it before lp_solve is called, with an error that wraps the
// context's.
func (s *lpSolver) solve() ([]float64, float64, error) {
	if err := stoppedBy(s.ctx); err != nil {
		return nil, 0, err
	}
	if s.timeout > 0 {
		secs := int(math.Ceil(s.timeout.Seconds()))
		s.lp.SetTimeout(max(secs, 1))
	}
	setIterationLimit(s.lp, stallIterations(len(s.rows), s.ncols))
	st := s.lp.Solve()
	switch st {
	case golp.OPTIMAL, accuracyError:
		x := s.lp.Variables()
		z, err := checkAnswer(s.rows, s.obj, x, s.sign*s.lp.Objective())
		if err != nil {
			return nil, 0, err
		}
		return x, z, nil
	case golp.INFEASIBLE:
		return nil, 0, ErrInfeasible
	case golp.USERABORT, golp.SUBOPTIMAL:
		// lp_solve reports a solve stopped by the iteration limit after
		// phase 1 as sub-optimal.
		return nil, 0, &SolverError{Status: StatusStalled, Advice: fmt.Sprintf("lp_solve took more than %d simplex iterations", stallIterations(len(s.rows), s.ncols))}
	case golp.UNBOUNDED:
		return nil, 0, &SolverError{Status: StatusUnbounded, Advice: "lp_solve called a model with bounded quantities unbounded"}
	case golp.TIMEOUT:
		if s.timeout <= 0 {
			return nil, 0, &SolverError{Status: StatusFailed, Advice: "lp_solve reported a time-out with no time limit set"}
		}
		return nil, 0, &SolverError{Status: StatusTimeout, Advice: fmt.Sprintf("no optimal plan within the time limit of %s; raise the limit or shorten the horizon", s.timeout)}
	case golp.NOMEMORY:
		return nil, 0, &SolverError{Status: StatusOutOfMemory, Advice: "the model is too large for this machine; plan fewer classes or years"}
	case golp.NUMFAILURE, golp.DEGENERATE:
		return nil, 0, &SolverError{Status: StatusNumerical, Advice: "lp_solve lost numerical accuracy"}
	default:
		return nil, 0, &SolverError{Status: StatusFailed, Advice: fmt.Sprintf("lp_solve stopped with status %s", st)}
	}
}

// objectiveSpec is one objective of a lexicographic solve.
type objectiveSpec struct {
	obj      []float64
	maximize bool
}

// holdTolerance is how much a held objective may give up in later stages
// of a lexicographic solve: 1e-9 of its optimum z. It is relative to the
// objective's own value, not to the model's largest coefficient, so that a
// prohibitive cost somewhere in the model (a common modelling device for
// an unacceptable state) does not loosen the hold on the rest. The
// objectives held here are sums of non-negative terms (score, spend,
// shortfall), so |z| is their scale; an optimum of exactly zero is held
// exactly.
func holdTolerance(z float64) float64 { return holdRelative * math.Abs(z) }

// holdRelative is holdTolerance's share of the held optimum. The
// reference tests compare objectives to 1e-6 and the machine-maintenance
// test to 1e-9, so a held objective may give up only a tenth of that.
const holdRelative = 1e-10

// solvePath is one way of handing a model to lp_solve: its settings and
// whether the rows and columns are re-ordered and the rows rescaled.
type solvePath struct {
	settings  lpSettings
	reordered bool
}

func (sp solvePath) String() string {
	if sp.reordered {
		return sp.settings.name + ", re-ordered and rescaled model"
	}
	return sp.settings.name
}

// solvePaths lists the paths a solve tries in turn: every settings path on
// the model as built, then on the re-ordered and rescaled model.
func solvePaths() []solvePath {
	var out []solvePath
	for _, reordered := range []bool{false, true} {
		for _, s := range settingsPaths {
			out = append(out, solvePath{settings: s, reordered: reordered})
		}
	}
	return out
}

// reorder returns m with its rows and columns in reverse order and each
// row divided by its largest coefficient (an exact change that leaves the
// columns' values alone), and perm, the column of m behind each of its
// columns. lp_solve's pivoting and scaling depend on the order and size of
// the rows, so a model it fails on as built is often solved this way.
func reorder(m *Model) (*Model, []int) {
	n := len(m.Cols)
	perm := make([]int, n)
	inv := make([]int, n)
	for j := range perm {
		perm[j] = n - 1 - j
		inv[n-1-j] = j
	}
	r := &Model{Name: m.Name, Cols: make([]string, n), Obj: make([]float64, n), Maximize: m.Maximize, Rows: make([]Row, 0, len(m.Rows))}
	for j := range perm {
		r.Cols[j] = m.Cols[perm[j]]
		r.Obj[j] = m.Obj[perm[j]]
	}
	for i := len(m.Rows) - 1; i >= 0; i-- {
		row := m.Rows[i]
		big := 0.0
		for _, e := range row.Entries {
			big = math.Max(big, math.Abs(e.Val))
		}
		if big == 0 {
			big = 1
		}
		entries := make([]Entry, len(row.Entries))
		for k, e := range row.Entries {
			entries[len(entries)-1-k] = Entry{Col: inv[e.Col], Val: e.Val / big}
		}
		r.Rows = append(r.Rows, Row{Name: row.Name, Entries: entries, Sense: row.Sense, RHS: row.RHS / big})
	}
	return r, perm
}

// lexResult is the outcome of a lexicographic solve.
type lexResult struct {
	x []float64
	// solves counts lp_solve calls over every path tried.
	solves int
	// path names the path that gave the answer, empty for the first.
	path string
	// partial: every path failed after the first objective; x is the
	// best answer to the earlier objectives alone.
	partial bool
}

// lexicographic optimises the objectives in turn, each later one subject to
// the earlier ones staying at their optimum (within holdTolerance). Each
// path of solvePaths is tried in turn until one gives answers that pass
// checkAnswer at every stage, and the final answer is checked once more
// against m's own rows. When every path fails, those that failed after the
// first objective are tried again with the holds given ten, then a hundred
// times their tolerance (the earlier answer meets them, so lp_solve failing
// there means they left it too little room). lp_solve's "infeasible" for the first
// objective is taken at its word unless feasible says the model is known
// to have a solution (a plan that does nothing, say), when it is one more
// failed path. The caller's time limit stops the search at once. When
// every path fails, the error is the first path's; when every path failed
// only after the first objective, the earliest complete answer is
// returned as partial. A done context (p.Context) stops the search at
// once too, and its error is returned (see halted): never a partial answer.
func lexicographic(m *Model, p *Problem, objs []objectiveSpec, feasible bool) (*lexResult, error) {
	res := &lexResult{}
	var firstErr error
	var fallback []float64
	fallbackStages := 0
	paths := solvePaths()
	later := make([]bool, len(paths)) // the path failed after the first objective
	for relax := 1.0; relax <= maxHoldRelax; relax *= 10 {
		for n, sp := range paths {
			if relax > 1 && !later[n] {
				continue // the first objective failed: holds play no part
			}
			mm, perm := m, []int(nil)
			os := objs
			if sp.reordered {
				mm, perm = reorder(m)
				os = make([]objectiveSpec, len(objs))
				for i, o := range objs {
					mo := make([]float64, len(o.obj))
					for j := range mo {
						mo[j] = o.obj[perm[j]]
					}
					os[i] = objectiveSpec{obj: mo, maximize: o.maximize}
				}
			}
			x, stages, solves, err := lexicographicOnce(p.Context(), mm, p.Timeout, os, sp.settings, relax)
			res.solves += solves
			if x != nil && perm != nil {
				back := make([]float64, len(x))
				for j, v := range x {
					back[perm[j]] = v
				}
				x = back
			}
			if err == nil {
				if v := violation(m.Rows, x); !(v <= rowTolerance) {
					err = &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the answer misses a row of the model as built by %.2g (relative)", v)}
				}
			}
			if err == nil {
				res.x = x
				if n > 0 {
					res.path = sp.String()
				}
				if relax > 1 {
					res.path = strings.TrimPrefix(fmt.Sprintf("%s, held objectives given %g times the tolerance", res.path, relax), ", ")
				}
				return res, nil
			}
			if halted(err) || (errors.Is(err, ErrInfeasible) && stages == 0 && !feasible) {
				return res, err
			}
			if firstErr == nil {
				firstErr = err
			}
			later[n] = stages > 0
			if stages > fallbackStages && x != nil && violation(m.Rows, x) <= rowTolerance {
				fallback, fallbackStages = x, stages
			}
		}
	}
	if fallback != nil {
		res.x, res.partial = fallback, true
		return res, nil
	}
	if errors.Is(firstErr, ErrInfeasible) {
		firstErr = &SolverError{Status: StatusFailed, Advice: "lp_solve called a model that has a solution infeasible on every path"}
	}
	return res, firstErr
}

// maxHoldRelax bounds how far a lexicographic solve relaxes its holds when
// lp_solve calls a later stage infeasible that the earlier stage's answer
// meets: ten, then a hundred times holdTolerance, which is still a hundred
// times below the 1e-6 to which the reference tests compare objectives.
const maxHoldRelax = 100

// lexicographicOnce is one path of lexicographic: it returns the answer
// of the last stage solved (nil before the first), how many stages were
// solved, the number of solver calls and the error that stopped it.
func lexicographicOnce(ctx context.Context, m *Model, timeout time.Duration, objs []objectiveSpec, set lpSettings, relax float64) ([]float64, int, int, error) {
	s, err := newLPSolver(ctx, m, timeout, set)
	if errors.Is(err, errEmptyInfeasible) {
		return nil, 0, 0, ErrInfeasible
	}
	if err != nil {
		return nil, 0, 0, err
	}
	var best []float64
	var held []heldObjective
	var holds []Row
	for n, o := range objs {
		if n > 0 && !set.incremental() {
			// Afresh, with the holds so far (see lpSettings.incremental).
			if s, err = newLPSolver(ctx, m, timeout, set); err != nil {
				return best, n, n, err
			}
			for _, h := range holds {
				if err := s.addRow(h); err != nil {
					return best, n, n, err
				}
			}
		}
		s.setObjective(o.obj, o.maximize)
		x, z, err := s.solve()
		if err != nil {
			return best, n, n + 1, err
		}
		for _, h := range held {
			if !h.kept(x) {
				return best, n, n + 1, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("lp_solve's answer to objective %d gives up more of objective %d than %.0g of it", n+1, h.stage+1, holdRelative)}
			}
		}
		best = x
		if n == len(objs)-1 {
			break
		}
		var entries []Entry
		for j, c := range o.obj {
			if c != 0 {
				entries = append(entries, Entry{j, c})
			}
		}
		if len(entries) == 0 {
			continue
		}
		tol := relax * holdTolerance(z)
		held = append(held, heldObjective{stage: n, spec: o, z: z, tol: tol})
		hold := Row{Name: fmt.Sprintf("hold%d", n+1), Entries: entries, Sense: LessEq, RHS: z + tol}
		if o.maximize {
			hold.Sense, hold.RHS = GreaterEq, z-tol
		}
		holds = append(holds, hold)
		if set.incremental() {
			if err := s.addRow(hold); err != nil {
				return best, n + 1, n + 1, err
			}
		}
	}
	return best, len(objs), len(objs), nil
}

// heldObjective is an earlier stage's objective held at its optimum z.
type heldObjective struct {
	stage int
	spec  objectiveSpec
	z     float64
	tol   float64
}

// kept reports whether x keeps the held objective within its tolerance
// (and lp_solve's own: twice the tolerance, or 1e-12 in the model's units
// near zero).
func (h heldObjective) kept(x []float64) bool {
	v := 0.0
	for j, c := range h.spec.obj {
		v += c * x[j]
	}
	slack := 2*h.tol + 1e-12
	if h.spec.maximize {
		return v >= h.z-slack
	}
	return v <= h.z+slack
}
