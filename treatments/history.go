package treatments

import (
	"errors"
	"fmt"

	"wearplan/markov"
)

// AfterWork is a class's wear in the first years after any treatment: a
// freshly treated asset usually wears more slowly than the class's usual
// matrix says.
type AfterWork struct {
	// Years is how many years after the year of the work Transition
	// applies (at least 1); the class's usual matrix applies after that.
	Years int
	// Transition is the one-year matrix of those years.
	Transition *markov.Transition
}

// History is the state space of a class widened with the years since its
// last treatment, for classes whose treatments must wait some years after
// any work (Treatment.MinInterval) or whose wear is slower for some years
// after it (AfterWork). Widened state w stands for condition state
// Condition(w) and Years(w) years since the year of the last work, counted
// at the start of a year: 1 means worked last year, Span means Span years
// or more (or never treated, or not known). With the widened state the
// rules become ordinary Markov transitions, so every engine that works on
// condition states works on widened ones unchanged; results are summed
// back to condition states with Fold.
//
// Widened states run condition-major: the Span ages of the best condition
// state first.
type History struct {
	// Conditions is the number of condition states.
	Conditions int
	// Span is the number of years-since-work values kept: the largest
	// interval, or one more than the after-work years, whichever is larger.
	Span int
}

// NewHistory returns the widened state space that an n-state class with
// treatments ts and wear after work (nil for none) needs, or nil when it
// needs none: every interval 1 year or less and no after-work wear. (An
// interval of one year is no constraint: a quantity gets one action a year.)
func NewHistory(n int, ts []Treatment, after *AfterWork) *History {
	span := 1
	for k := range ts {
		span = max(span, ts[k].MinInterval)
	}
	if after != nil && after.Years > 0 {
		span = max(span, after.Years+1)
	}
	if span < 2 {
		return nil
	}
	return &History{Conditions: n, Span: span}
}

// States is the number of widened states.
func (h *History) States() int { return h.Conditions * h.Span }

// State returns the widened state of condition state i with y years since
// the last work; y is clamped to 1..Span.
func (h *History) State(i, y int) int { return i*h.Span + min(max(y, 1), h.Span) - 1 }

// Condition returns the condition state of widened state w.
func (h *History) Condition(w int) int { return w / h.Span }

// Years returns the years since the last work of widened state w (Span
// stands for Span or more).
func (h *History) Years(w int) int { return w%h.Span + 1 }

// Fold sums quantities by widened state into quantities by condition state.
func (h *History) Fold(q []float64) []float64 {
	out := make([]float64, h.Conditions)
	for w, v := range q {
		out[w/h.Span] += v
	}
	return out
}

// Widen repeats a per-condition-state value for every widened state of
// its condition (scores, groups, routine costs, state masks).
func Widen[T any](h *History, v []T) []T {
	out := make([]T, h.States())
	for w := range out {
		out[w] = v[h.Condition(w)]
	}
	return out
}

// Label names widened state w for readers of exported models, given the
// condition states' names.
func (h *History) Label(names []string, w int) string {
	y := h.Years(w)
	switch {
	case y == h.Span:
		return fmt.Sprintf("%s, %d or more years since work", names[h.Condition(w)], y)
	case y == 1:
		return fmt.Sprintf("%s, worked last year", names[h.Condition(w)])
	}
	return fmt.Sprintf("%s, %d years since work", names[h.Condition(w)], y)
}

// Actions returns the actions of a class deteriorating under p, with wear
// after (nil for none) and treatments ts, over the widened states:
//
//   - doing nothing in (i, y) moves to (j, min(y+1, Span)) by the
//     after-work matrix while y <= after.Years, by p after that;
//   - treatment a applies in (i, y) where it applies to i and y is at
//     least its interval, and moves to (j, 1) by row i of E_a·Q, where Q is
//     the after-work matrix (the rest of the work year is after the work)
//     or p without after-work wear, or by row i of E_a for a treatment
//     that does not age in its year.
//
// Costs are the treatments' costs in condition state i.
func (h *History) Actions(p *markov.Transition, after *AfterWork, ts []Treatment) ([]Action, error) {
	n := p.States()
	if n != h.Conditions {
		return nil, fmt.Errorf("a %d-state matrix for a history of %d condition states", n, h.Conditions)
	}
	if err := after.validate(n); err != nil {
		return nil, err
	}
	fresh := p // the matrix of the years after work
	years := 0
	if after != nil {
		fresh, years = after.Transition, after.Years
	}
	plain, err := Actions(p, ts)
	if err != nil {
		return nil, err
	}
	var freshRows [][]float64
	if fresh != p {
		if freshRows, err = actionRows(fresh, ts); err != nil {
			return nil, err
		}
	}
	m := h.States()
	out := make([]Action, len(plain))
	for a := range plain {
		out[a] = Action{Name: plain[a].Name, Applies: make([]bool, m), Cost: make([]float64, m), Rows: make([][]float64, m)}
	}
	pRows, qRows := p.Rows(), fresh.Rows()
	for w := 0; w < m; w++ {
		i, y := h.Condition(w), h.Years(w)
		next := min(y+1, h.Span)
		row := pRows[i]
		if y <= years {
			row = qRows[i]
		}
		out[0].Applies[w] = true
		out[0].Rows[w] = h.spread(row, next)
		for a := 1; a < len(plain); a++ {
			t := &ts[a-1]
			if !plain[a].Applies[i] || y < t.MinInterval {
				continue
			}
			r := plain[a].Rows[i]
			if freshRows != nil && !t.SkipsAging {
				r = freshRows[(a-1)*n+i]
			}
			out[a].Applies[w] = true
			out[a].Cost[w] = plain[a].Cost[i]
			out[a].Rows[w] = h.spread(r, 1)
		}
	}
	return out, nil
}

// actionRows returns row i of E_a·Q for every treatment a and state i it
// applies to, at index a·n+i (nil elsewhere).
func actionRows(q *markov.Transition, ts []Treatment) ([][]float64, error) {
	n := q.States()
	out := make([][]float64, len(ts)*n)
	for a := range ts {
		for _, i := range ts[a].Applies {
			e, err := ts[a].EffectRow(i, n)
			if err != nil {
				return nil, err
			}
			out[a*n+i] = q.Step(e)
		}
	}
	return out, nil
}

// spread puts a distribution over condition states on the widened states
// with y years since work.
func (h *History) spread(row []float64, y int) []float64 {
	out := make([]float64, h.States())
	for j, v := range row {
		out[h.State(j, y)] = v
	}
	return out
}

func (a *AfterWork) validate(n int) error {
	if a == nil {
		return nil
	}
	var errs []error
	if a.Years < 1 {
		errs = append(errs, fmt.Errorf("wear after work for %d years; give 1 or more", a.Years))
	}
	if a.Transition == nil {
		errs = append(errs, errors.New("wear after work has no matrix"))
	} else if a.Transition.States() != n {
		errs = append(errs, fmt.Errorf("the matrix of wear after work has %d states, the class %d", a.Transition.States(), n))
	}
	return errors.Join(errs...)
}
