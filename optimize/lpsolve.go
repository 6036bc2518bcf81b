package optimize

import (
	"errors"
	"fmt"
	"math"
	"time"

	"github.com/draffensperger/golp"
)

// SolverError says why the solver gave no usable answer.
type SolverError struct {
	Status string
	Advice string
}

func (e *SolverError) Error() string {
	return fmt.Sprintf("solver stopped with status %s: %s", e.Status, e.Advice)
}

// ErrInfeasible is returned by a solve whose constraints cannot all hold.
var ErrInfeasible = errors.New("constraints cannot all be met")

// lpSolver holds one lp_solve instance built from a Model. Rows can be added
// and the objective replaced between solves.
type lpSolver struct {
	lp      *golp.LP
	ncols   int
	timeout time.Duration
	// golp can switch lp_solve to maximising but not back; sign is -1 when
	// a minimisation is posed to a maximising instance as max -c·x.
	maxSet bool
	sign   float64
	// rows and obj are kept to check an answer lp_solve flags as
	// inaccurate (accuracyError).
	rows []Row
	obj  []float64
}

// accuracyError is lp_solve 5.5's ACCURACYERROR status (25), which golp
// does not name: a solution was found but lp_solve's own final accuracy
// check failed. Such an answer is used only when it passes verify.
const accuracyError = golp.SolutionType(25)

// accuracyTolerance is the largest row violation accepted from an answer
// lp_solve flags as inaccurate: rows are scaled near 1 (shares of a class,
// money in units near the budget), so 1e-5 is a hundred-thousandth of a
// class's quantity or of a budget, below the one-decimal precision of any
// report. Seen on elastic models at the edge of feasibility (violations
// near 4e-6 in flow rows); without it such a plan would fail outright.
const accuracyTolerance = 1e-5

// verify returns the largest violation of any row (and of x >= 0) by x.
func (s *lpSolver) verify(x []float64) float64 {
	worst := 0.0
	for _, v := range x {
		worst = math.Max(worst, -v)
	}
	for _, r := range s.rows {
		lhs := 0.0
		for _, e := range r.Entries {
			lhs += e.Val * x[e.Col]
		}
		switch r.Sense {
		case LessEq:
			worst = math.Max(worst, lhs-r.RHS)
		case GreaterEq:
			worst = math.Max(worst, r.RHS-lhs)
		default:
			worst = math.Max(worst, math.Abs(lhs-r.RHS))
		}
	}
	return worst
}

func newLPSolver(m *Model, timeout time.Duration) (*lpSolver, error) {
	s := &lpSolver{lp: golp.NewLP(0, len(m.Cols)), ncols: len(m.Cols), timeout: timeout}
	s.lp.SetVerboseLevel(golp.NEUTRAL)
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

// solve runs lp_solve and maps its status. It returns ErrInfeasible for an
// infeasible model and a *SolverError for every other non-optimal outcome;
// the objective and variables are read only after an OPTIMAL status (after a
// timeout lp_solve's objective is meaningless).
func (s *lpSolver) solve() ([]float64, float64, error) {
	if s.timeout > 0 {
		secs := int(math.Ceil(s.timeout.Seconds()))
		s.lp.SetTimeout(max(secs, 1))
	}
	st := s.lp.Solve()
	switch st {
	case golp.OPTIMAL:
		return s.lp.Variables(), s.sign * s.lp.Objective(), nil
	case accuracyError:
		// The answer is there but lp_solve doubts it: check it against
		// every row ourselves and take it when it holds.
		x := s.lp.Variables()
		if len(x) == s.ncols && s.verify(x) <= accuracyTolerance {
			z := 0.0
			for j, c := range s.obj {
				z += c * x[j]
			}
			return x, z, nil
		}
		return nil, 0, &SolverError{Status: "inaccurate", Advice: "lp_solve found an answer it could not confirm; check for costs or quantities that differ by many orders of magnitude"}
	case golp.INFEASIBLE:
		return nil, 0, ErrInfeasible
	case golp.UNBOUNDED:
		return nil, 0, &SolverError{Status: "unbounded", Advice: "the plan model has bounded quantities, so this points to a defect in wearplan; please report it with the scenario"}
	case golp.TIMEOUT, golp.SUBOPTIMAL:
		return nil, 0, &SolverError{Status: "timeout", Advice: fmt.Sprintf("no optimal plan within the time limit of %s; raise the limit or shorten the horizon", s.timeout)}
	case golp.NOMEMORY:
		return nil, 0, &SolverError{Status: "out of memory", Advice: "the model is too large for this machine; plan fewer classes or years"}
	case golp.NUMFAILURE, golp.DEGENERATE:
		return nil, 0, &SolverError{Status: "numerical failure", Advice: "check for costs or quantities that differ by many orders of magnitude (for example a cost typed in cents next to one in millions)"}
	default:
		return nil, 0, &SolverError{Status: st.String(), Advice: "lp_solve gave up without an answer; please report it with the scenario"}
	}
}
