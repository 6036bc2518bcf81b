package treatments

import (
	"errors"
	"fmt"
	"math"

	"wearplan/markov"
)

// EffectKind says how a treatment's effect is written.
type EffectKind int

const (
	// ToState sends every treated unit to one state.
	ToState EffectKind = iota
	// Improve moves a treated unit up by a number of states, stopping at the best.
	Improve
	// Distribution gives, for each state treated, the distribution after treatment.
	Distribution
)

// Effect is the condition right after a treatment.
type Effect struct {
	Kind EffectKind
	// State is the target state of ToState (0 = best).
	State int
	// Steps is the number of states gained with Improve (at least 1).
	Steps int
	// Rows maps each state treated to its distribution after treatment
	// (Distribution only). Each row has one entry per state and sums to 1.
	Rows map[int][]float64
}

// Treatment is one entry of the catalogue.
type Treatment struct {
	Name string
	// Applies lists the states the treatment may be used on.
	Applies []int
	// Cost is the unit cost in each state; only entries of applicable states
	// are read. Costs are in the currency of the scenario, per unit of
	// quantity (lane-km, m2, ...), at start-year prices.
	Cost   []float64
	Effect Effect
	// SkipsAging is true when treated units do not also age during the year
	// of treatment (the year's transition is E instead of E·P).
	SkipsAging bool
	// Renewal marks a treatment whose spend renews the asset (capital
	// renewal in an asset management plan) rather than maintaining it; the
	// plan's renewal indicators count its spend. RestoresBest is the usual
	// default.
	Renewal bool
	// MinInterval is the number of years a quantity must wait after any
	// treatment before it may get this one (0 or 1: no wait; History
	// widens the states of classes that need it).
	MinInterval int
}

// RestoresBest says whether the treatment, for an n-state scale, puts
// every unit it treats in the best state from each state it applies to,
// and applies to at least one state other than the best: it renews the
// asset rather than holding or lifting its condition part way.
func (t *Treatment) RestoresBest(n int) bool {
	below := false
	for _, i := range t.Applies {
		row, err := t.EffectRow(i, n)
		if err != nil || row[0] < 1 {
			return false
		}
		below = below || i > 0
	}
	return below
}

// EffectRow returns row i of E for an n-state scale: the distribution right
// after treating a unit in state i. It fails when i is not a state of the
// scale or the effect does not fit the scale.
func (t *Treatment) EffectRow(i, n int) ([]float64, error) {
	if n < 1 {
		return nil, fmt.Errorf("treatment %q: a scale needs at least 1 state, got %d", t.Name, n)
	}
	if i < 0 || i >= n {
		return nil, fmt.Errorf("treatment %q: state %d is outside the %d-state scale", t.Name, i+1, n)
	}
	row := make([]float64, n)
	switch t.Effect.Kind {
	case ToState:
		if t.Effect.State < 0 || t.Effect.State >= n {
			return nil, fmt.Errorf("treatment %q: target state %d is outside the %d-state scale", t.Name, t.Effect.State+1, n)
		}
		row[t.Effect.State] = 1
	case Improve:
		if t.Effect.Steps < 1 {
			return nil, fmt.Errorf("treatment %q: improve by %d states; give 1 or more", t.Name, t.Effect.Steps)
		}
		row[max(i-t.Effect.Steps, 0)] = 1
	case Distribution:
		d, ok := t.Effect.Rows[i]
		if !ok {
			return nil, fmt.Errorf("treatment %q: no distribution given for state %d", t.Name, i+1)
		}
		if len(d) != n {
			return nil, fmt.Errorf("treatment %q: distribution for state %d has %d entries, want %d", t.Name, i+1, len(d), n)
		}
		copy(row, d)
	default:
		return nil, fmt.Errorf("treatment %q: unknown effect kind %d", t.Name, t.Effect.Kind)
	}
	return row, nil
}

// Validate checks a treatment against an n-state scale and returns every
// problem found.
func (t *Treatment) Validate(n int) error {
	var errs []error
	if len(t.Applies) == 0 {
		errs = append(errs, fmt.Errorf("treatment %q applies to no state; list at least one in applies_to", t.Name))
	}
	if len(t.Cost) != n {
		errs = append(errs, fmt.Errorf("treatment %q: %d costs for a %d-state scale", t.Name, len(t.Cost), n))
	}
	if t.MinInterval < 0 {
		errs = append(errs, fmt.Errorf("treatment %q: interval of %d years; give 0 or more", t.Name, t.MinInterval))
	}
	seen := map[int]bool{}
	// An effect that does not fit the scale (a target state outside it, a
	// step count below 1) fails the same way for every state; report it once.
	effectErrs := map[string]bool{}
	for _, i := range t.Applies {
		if i < 0 || i >= n {
			errs = append(errs, fmt.Errorf("treatment %q applies to state %d, outside the %d-state scale", t.Name, i+1, n))
			continue
		}
		if seen[i] {
			// The state's cost and effect were checked the first time.
			errs = append(errs, fmt.Errorf("treatment %q lists state %d twice in applies_to", t.Name, i+1))
			continue
		}
		seen[i] = true
		if len(t.Cost) == n {
			c := t.Cost[i]
			if math.IsNaN(c) || math.IsInf(c, 0) || c < 0 {
				errs = append(errs, fmt.Errorf("treatment %q: unit cost %g in state %d must be a finite number of zero or more", t.Name, c, i+1))
			}
		}
		row, err := t.EffectRow(i, n)
		if err != nil {
			if !effectErrs[err.Error()] {
				effectErrs[err.Error()] = true
				errs = append(errs, err)
			}
			continue
		}
		sum := 0.0
		for j, p := range row {
			if math.IsNaN(p) || p < 0 || p > 1 {
				errs = append(errs, fmt.Errorf("treatment %q: probability %g of reaching state %d from state %d is outside [0, 1]", t.Name, p, j+1, i+1))
			}
			sum += p
		}
		if math.Abs(sum-1) > markov.RowSumTolerance {
			errs = append(errs, fmt.Errorf("treatment %q: distribution after treating state %d sums to %.12g, want 1", t.Name, i+1, sum))
		}
	}
	return errors.Join(errs...)
}

// Action is something that can be done to a unit of a class in a year, with
// the transition it causes: doing nothing, or one treatment.
type Action struct {
	// Name is the treatment name; DoNothing for doing nothing.
	Name string
	// Applies[i] says whether the action can be taken in state i.
	Applies []bool
	// Cost[i] is the unit cost in state i (zero where it does not apply).
	Cost []float64
	// Rows[i] is the year's transition from state i (nil where it does not apply).
	Rows [][]float64
}

// DoNothing is the name of the action that leaves an asset to age.
const DoNothing = "do nothing"

// Actions returns the actions available to a class deteriorating under p
// with the given treatments: do nothing first, then each treatment in order.
// The rows are E_a·P, or E_a for treatments that skip ageing in their year.
func Actions(p *markov.Transition, ts []Treatment) ([]Action, error) {
	n := p.States()
	out := make([]Action, 0, len(ts)+1)
	nothing := Action{Name: DoNothing, Applies: make([]bool, n), Cost: make([]float64, n), Rows: p.Rows()}
	for i := range nothing.Applies {
		nothing.Applies[i] = true
	}
	out = append(out, nothing)
	for k := range ts {
		t := &ts[k]
		if err := t.Validate(n); err != nil {
			return nil, err
		}
		a := Action{Name: t.Name, Applies: make([]bool, n), Cost: make([]float64, n), Rows: make([][]float64, n)}
		for _, i := range t.Applies {
			e, err := t.EffectRow(i, n)
			if err != nil {
				return nil, err
			}
			a.Applies[i] = true
			a.Cost[i] = t.Cost[i]
			if t.SkipsAging {
				a.Rows[i] = e
			} else {
				a.Rows[i] = p.Step(e)
			}
		}
		out = append(out, a)
	}
	return out, nil
}
