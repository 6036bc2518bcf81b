package markov

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// RowSumTolerance is how far a row of a transition matrix may sum from 1.
// Probabilities typed with a few decimals add up exactly; 1e-9 leaves room
// only for floating-point rounding.
const RowSumTolerance = 1e-9

// Transition is a validated one-year transition probability matrix.
// The zero value is not usable; build one with NewTransition or
// FromYearsInState. A Transition is immutable and safe for concurrent use.
type Transition struct {
	p *mat.Dense
}

// Options relax the validation of NewTransition.
type Options struct {
	// AllowImprovement accepts entries below the diagonal, for classes whose
	// recorded condition can rise without work (seasonal index readings, for
	// example). Leave it false for physical deterioration.
	AllowImprovement bool
}

// EntryError reports a problem with one entry or one row of a matrix.
// Col is -1 when the problem concerns the whole row.
type EntryError struct {
	Row, Col int
	Reason   string
}

func (e *EntryError) Error() string {
	if e.Col < 0 {
		return fmt.Sprintf("row %d: %s", e.Row+1, e.Reason)
	}
	return fmt.Sprintf("row %d, column %d: %s", e.Row+1, e.Col+1, e.Reason)
}

// NewTransition validates rows as a one-year transition probability matrix.
// It returns every problem found, joined with errors.Join; each is an
// *EntryError naming the row (and column) so callers can point at the input.
func NewTransition(rows [][]float64, opt Options) (*Transition, error) {
	n := len(rows)
	if n < 2 {
		return nil, errors.New("a transition matrix needs at least 2 states")
	}
	var errs []error
	data := make([]float64, 0, n*n)
	for i, row := range rows {
		if len(row) != n {
			errs = append(errs, &EntryError{Row: i, Col: -1, Reason: fmt.Sprintf("has %d entries, want %d (one per state)", len(row), n)})
			data = append(data, make([]float64, n)...)
			continue
		}
		sum := 0.0
		for j, v := range row {
			switch {
			case math.IsNaN(v) || v < 0 || v > 1:
				errs = append(errs, &EntryError{Row: i, Col: j, Reason: fmt.Sprintf("probability %g is outside [0, 1]", v)})
			case j < i && v > 0 && !opt.AllowImprovement:
				errs = append(errs, &EntryError{Row: i, Col: j, Reason: fmt.Sprintf("probability %g of moving to a better state without work; set it to 0 or allow improvement for this class", v)})
			}
			sum += v
		}
		if math.Abs(sum-1) > RowSumTolerance {
			errs = append(errs, &EntryError{Row: i, Col: -1, Reason: fmt.Sprintf("sums to %.12g, want 1", sum)})
		}
		data = append(data, row...)
	}
	if len(errs) > 0 {
		return nil, errors.Join(errs...)
	}
	return &Transition{p: mat.NewDense(n, n, data)}, nil
}

// FromYearsInState builds the transition matrix of a chain that spends on
// average years[i] years in state i before dropping one state, for the n-1
// states above the worst; the worst state is absorbing. Every value must be
// at least 1 (a state cannot be left faster than the yearly step).
func FromYearsInState(years []float64) (*Transition, error) {
	if len(years) < 1 {
		return nil, errors.New("years in state: give one value for each state but the worst")
	}
	n := len(years) + 1
	rows := make([][]float64, n)
	var errs []error
	for i := range rows {
		rows[i] = make([]float64, n)
		if i == n-1 {
			rows[i][i] = 1
			continue
		}
		d := years[i]
		if math.IsNaN(d) || math.IsInf(d, 0) || d < 1 {
			errs = append(errs, &EntryError{Row: i, Col: -1, Reason: fmt.Sprintf("expected years in state %g must be a finite number of at least 1", d)})
			rows[i][i] = 1
			continue
		}
		rows[i][i] = 1 - 1/d
		rows[i][i+1] = 1 / d
	}
	if len(errs) > 0 {
		return nil, errors.Join(errs...)
	}
	return NewTransition(rows, Options{})
}

// States returns the number of condition states.
func (t *Transition) States() int {
	n, _ := t.p.Dims()
	return n
}

// At returns P[i][j].
func (t *Transition) At(i, j int) float64 { return t.p.At(i, j) }

// Row returns a copy of row i.
func (t *Transition) Row(i int) []float64 {
	return mat.Row(nil, i, t.p)
}

// Rows returns a copy of the matrix as rows.
func (t *Transition) Rows() [][]float64 {
	n := t.States()
	out := make([][]float64, n)
	for i := range out {
		out[i] = t.Row(i)
	}
	return out
}

// Matrix returns a copy of P as a gonum matrix.
func (t *Transition) Matrix() *mat.Dense {
	return mat.DenseCopyOf(t.p)
}
