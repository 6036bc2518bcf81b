package markov

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
)

// Structure says which one-year moves a fitted matrix may contain.
// The zero value is the usual deterioration model: any move to the same or a
// worse state, and the worst state absorbing.
type Structure struct {
	// OneStep restricts a year's move to at most one state (down, or up as
	// well when Improvement is set).
	OneStep bool
	// Improvement allows moves to better states without work; the worst
	// state's row is then estimated too instead of being absorbing.
	Improvement bool
}

// Allowed reports whether a one-year move from state i to state j may have
// a positive probability in an n-state matrix.
func (s Structure) Allowed(i, j, n int) bool {
	if i < 0 || j < 0 || i >= n || j >= n {
		return false
	}
	if j < i && !s.Improvement {
		return false
	}
	if s.OneStep && (j > i+1 || j < i-1) {
		return false
	}
	return true
}

// Possible reports whether a move from i to j over the given whole number
// of years can have a positive probability: the (i, j) entry of P^years.
func (s Structure) Possible(years, i, j, n int) bool {
	if i < 0 || j < 0 || i >= n || j >= n || years < 1 {
		return false
	}
	if j < i && !s.Improvement {
		return false
	}
	if s.OneStep && (j-i > years || i-j > years) {
		return false
	}
	return true
}

// Fixed reports whether row i is fixed by the structure rather than
// estimated: the worst state is absorbing unless improvement is allowed.
func (s Structure) Fixed(i, n int) bool { return i == n-1 && !s.Improvement }

// FreeParameters is the number of probabilities estimated for an n-state
// matrix: for each row that is not fixed, its allowed moves less one
// (the row sums to 1).
func (s Structure) FreeParameters(n int) int {
	k := 0
	for i := 0; i < n; i++ {
		if s.Fixed(i, n) {
			continue
		}
		for j := 0; j < n; j++ {
			if s.Allowed(i, j, n) {
				k++
			}
		}
		k--
	}
	return k
}

func (s Structure) String() string {
	var parts []string
	if s.OneStep {
		parts = append(parts, "one state per year at most")
	} else {
		parts = append(parts, "any number of states per year")
	}
	if s.Improvement {
		parts = append(parts, "improvement without work allowed")
	} else {
		parts = append(parts, "no improvement without work, worst state absorbing")
	}
	return strings.Join(parts, "; ")
}

// Counts holds observed transitions between pairs of inspections, by the
// whole number of years between them: how many assets in state i at one
// inspection were in state j at the next, Years later. Counts may be
// fractional (weights).
type Counts struct {
	states int
	gaps   []int     // ascending
	data   []float64 // len(gaps) blocks of states*states, row-major
}

// NewCounts returns empty counts for an n-state scale.
func NewCounts(states int) *Counts { return &Counts{states: states} }

// States is the number of condition states.
func (c *Counts) States() int { return c.states }

// Gaps returns the intervals (whole years) that have counts, ascending.
func (c *Counts) Gaps() []int { return slices.Clone(c.gaps) }

func (c *Counts) block(years int, create bool) []float64 {
	k, found := slices.BinarySearch(c.gaps, years)
	if !found {
		if !create {
			return nil
		}
		c.gaps = slices.Insert(c.gaps, k, years)
		nn := c.states * c.states
		c.data = slices.Insert(c.data, k*nn, make([]float64, nn)...)
	}
	nn := c.states * c.states
	return c.data[k*nn : (k+1)*nn]
}

// Add records w transitions from state from to state to over years whole
// years. It panics on states outside the scale or years < 1, which are
// programming errors: callers check their data first.
func (c *Counts) Add(years, from, to int, w float64) {
	if from < 0 || to < 0 || from >= c.states || to >= c.states || years < 1 {
		panic(fmt.Sprintf("markov: Counts.Add(%d, %d, %d) outside a %d-state scale", years, from, to, c.states))
	}
	c.block(years, true)[from*c.states+to] += w
}

// At returns the count from i to j over years years.
func (c *Counts) At(years, i, j int) float64 {
	b := c.block(years, false)
	if b == nil {
		return 0
	}
	return b[i*c.states+j]
}

// Matrix returns the counts over years years as rows (zeros when none).
func (c *Counts) Matrix(years int) [][]float64 {
	out := make([][]float64, c.states)
	b := c.block(years, false)
	for i := range out {
		out[i] = make([]float64, c.states)
		if b != nil {
			copy(out[i], b[i*c.states:(i+1)*c.states])
		}
	}
	return out
}

// RowTotal is the number of pairs starting in state i over years years.
func (c *Counts) RowTotal(years, i int) float64 {
	b := c.block(years, false)
	s := 0.0
	if b == nil {
		return 0
	}
	for _, v := range b[i*c.states : (i+1)*c.states] {
		s += v
	}
	return s
}

// Total is the number of pairs of every interval.
func (c *Counts) Total() float64 {
	s := 0.0
	for _, v := range c.data {
		s += v
	}
	return s
}

// NoDataError reports states whose row of the matrix cannot be estimated
// because no pair of inspections informs it. Rows are 0-based.
type NoDataError struct {
	Rows []int
}

func (e *NoDataError) Error() string {
	rows := make([]string, len(e.Rows))
	for k, r := range e.Rows {
		rows[k] = fmt.Sprint(r + 1)
	}
	return fmt.Sprintf("no pairs of inspections inform the row of state %s; the row cannot be estimated", strings.Join(rows, ", "))
}

// ForbiddenError reports counts in cells the structure does not allow,
// such as a move to a better state when improvement is not allowed.
type ForbiddenError struct {
	Years, From, To int
	Count           float64
}

func (e *ForbiddenError) Error() string {
	return fmt.Sprintf("%g pairs move from state %d to state %d in %d year(s), which the model does not allow; exclude them first", e.Count, e.From+1, e.To+1, e.Years)
}

// CountingMLE estimates the one-year matrix from pairs of inspections one
// year apart by counting (Anderson and Goodman, 1957): p_ij = n_ij / n_i,
// the share of the assets in state i at one inspection that were in state j
// a year later. It is the maximum likelihood estimate of an unrestricted row;
// with OneStep it is the same share among the allowed moves. Counts over
// other intervals are ignored. Rows fixed by the structure are absorbing.
// Every other row needs at least one pair, else a *NoDataError names it.
func CountingMLE(c *Counts, s Structure) (*Transition, error) {
	n := c.states
	if n < 2 {
		return nil, errors.New("counting estimate: a scale needs at least 2 states")
	}
	rows := make([][]float64, n)
	var missing []int
	for i := range rows {
		rows[i] = make([]float64, n)
		if s.Fixed(i, n) {
			rows[i][i] = 1
			continue
		}
		total := 0.0
		for j := 0; j < n; j++ {
			v := c.At(1, i, j)
			if v == 0 {
				continue
			}
			if !s.Allowed(i, j, n) {
				return nil, &ForbiddenError{Years: 1, From: i, To: j, Count: v}
			}
			total += v
		}
		if total <= 0 {
			missing = append(missing, i)
			rows[i][i] = 1
			continue
		}
		for j := 0; j < n; j++ {
			rows[i][j] = c.At(1, i, j) / total
		}
	}
	if missing != nil {
		return nil, &NoDataError{Rows: missing}
	}
	return NewTransition(rows, Options{AllowImprovement: s.Improvement})
}

// YearsInState returns the expected number of years an asset stays in each
// state once there, 1/(1 - p_ii) (the mean of a geometric sojourn); +Inf
// for a state it never leaves.
func (t *Transition) YearsInState() []float64 {
	n := t.States()
	out := make([]float64, n)
	for i := range out {
		leave := 1 - t.At(i, i)
		if leave <= 0 {
			out[i] = math.Inf(1)
			continue
		}
		out[i] = 1 / leave
	}
	return out
}

// Rounded returns the matrix with every entry rounded to the given number
// of decimals such that each row still sums to exactly 1 in decimal: the
// row's units of 10^-decimals are shared by the largest remainder method
// (Hamilton's apportionment), so zeros stay zero and no entry moves by more
// than one unit. Estimates are reported this way so that a matrix pasted
// into a scenario is valid as written.
func (t *Transition) Rounded(decimals int) *Transition {
	n := t.States()
	scale := math.Pow(10, float64(decimals))
	rows := make([][]float64, n)
	improvement := false
	for i := range rows {
		units := make([]int64, n)
		rem := make([]float64, n)
		var total int64
		for j := 0; j < n; j++ {
			v := t.At(i, j) * scale
			units[j] = int64(math.Floor(v))
			rem[j] = v - float64(units[j])
			total += units[j]
		}
		whole := int64(math.Round(scale))
		for left := whole - total; left > 0; left-- {
			best := -1
			for j := 0; j < n; j++ {
				if rem[j] > 0 && (best < 0 || rem[j] > rem[best]) {
					best = j
				}
			}
			if best < 0 {
				best = i // no remainder left: the diagonal takes the unit
			}
			units[best]++
			rem[best] = 0
		}
		rows[i] = make([]float64, n)
		for j := range rows[i] {
			rows[i][j] = float64(units[j]) / scale
			if j < i && units[j] > 0 {
				improvement = true
			}
		}
	}
	r, err := NewTransition(rows, Options{AllowImprovement: improvement})
	if err != nil {
		panic("markov: rounded matrix is not stochastic: " + err.Error())
	}
	return r
}
