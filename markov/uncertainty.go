package markov

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/stat/distuv"
)

// MatrixSampler draws a one-year do-nothing matrix from the sampling
// distribution of an estimated matrix, so that a simulation run can use a
// matrix that the inspection data could as well have produced.
// Implementations only read their own data in Draw, so one sampler can
// serve many goroutines at once.
type MatrixSampler interface {
	// Draw returns one matrix, using only rng for randomness.
	Draw(rng *rand.Rand) (*Transition, error)
	// Method names the sampling distribution in one short phrase for
	// reports, e.g. "bootstrap replicates (200)".
	Method() string
}

// Replicates draws uniformly from a set of bootstrap replicate matrices:
// matrices estimated again from resamples of the inspection data (for
// example, assets drawn with replacement). Each replicate is equally
// likely in every draw.
type Replicates struct {
	ms []*Transition
}

// NewReplicates checks that the replicates are at least two matrices of
// one size and keeps them.
func NewReplicates(ms []*Transition) (*Replicates, error) {
	if len(ms) < 2 {
		return nil, fmt.Errorf("bootstrap replicates: %d matrices; need at least 2 to describe uncertainty", len(ms))
	}
	n := 0
	for r, m := range ms {
		if m == nil {
			return nil, fmt.Errorf("bootstrap replicates: replicate %d is missing", r+1)
		}
		if r == 0 {
			n = m.States()
		} else if m.States() != n {
			return nil, fmt.Errorf("bootstrap replicates: replicate %d has %d states, the first has %d", r+1, m.States(), n)
		}
	}
	return &Replicates{ms: append([]*Transition(nil), ms...)}, nil
}

// Draw returns one of the replicates, each with probability 1/len.
func (b *Replicates) Draw(rng *rand.Rand) (*Transition, error) {
	return b.ms[rng.IntN(len(b.ms))], nil
}

// Method describes the replicates.
func (b *Replicates) Method() string {
	return fmt.Sprintf("bootstrap replicates (%d matrices, one drawn at random per run)", len(b.ms))
}

// States is the number of condition states of the replicates.
func (b *Replicates) States() int { return b.ms[0].States() }

// Named priors for DirichletRows.
const (
	// JeffreysPrior is Dirichlet(1/2, ..., 1/2), Jeffreys' prior for
	// multinomial probabilities.
	JeffreysPrior = 0.5
	// UniformPrior is Dirichlet(1, ..., 1), uniform over the allowed rows.
	UniformPrior = 1.0
)

// DirichletRows draws each row of the matrix from the Bayesian posterior of
// its probabilities given the transition counts observed from that state:
// with counts c_j and a symmetric Dirichlet(α) prior on the allowed entries,
// the posterior of the row is Dirichlet(c_j + α) on the allowed entries
// (the multinomial-Dirichlet conjugate pair). Entries that are not allowed
// are zero in every draw, so a draw never moves an asset to a better state
// unless the caller allows it. Rows are drawn independently.
type DirichletRows struct {
	alpha   [][]float64 // posterior parameters per row, allowed entries only
	cols    [][]int     // the allowed entries of each row
	n       int
	prior   float64
	improve bool
	empty   []int // rows without a single count (0-based)
}

// NoImprovement is the default structure of DirichletRows: an asset may
// stay or move to any worse state, never to a better one.
func NoImprovement(n int) [][]bool {
	out := make([][]bool, n)
	for i := range out {
		out[i] = make([]bool, n)
		for j := i; j < n; j++ {
			out[i][j] = true
		}
	}
	return out
}

// NewDirichletRows builds the posterior from counts[i][j], the number of
// observed one-year moves from state i to state j, a symmetric prior α > 0
// (JeffreysPrior or UniformPrior, for example) and allowed[i][j], the
// entries that are structurally possible (nil for NoImprovement). A row
// with a single allowed entry is fixed at 1 there (an absorbing worst state,
// for example). A count on an entry that is not allowed is an error: such
// moves should have been excluded when the counts were made.
func NewDirichletRows(counts [][]float64, prior float64, allowed [][]bool) (*DirichletRows, error) {
	n := len(counts)
	if n < 2 {
		return nil, errors.New("transition counts: a matrix needs at least 2 states")
	}
	if math.IsNaN(prior) || math.IsInf(prior, 0) || prior <= 0 {
		return nil, fmt.Errorf("the Dirichlet prior %g: give a positive number (0.5 is Jeffreys' prior, 1 the uniform prior)", prior)
	}
	if allowed == nil {
		allowed = NoImprovement(n)
	}
	if len(allowed) != n {
		return nil, fmt.Errorf("transition counts: %d rows of allowed entries for %d states", len(allowed), n)
	}
	d := &DirichletRows{alpha: make([][]float64, n), cols: make([][]int, n), n: n, prior: prior}
	var errs []error
	for i, row := range counts {
		if len(row) != n || len(allowed[i]) != n {
			errs = append(errs, &EntryError{Row: i, Col: -1, Reason: fmt.Sprintf("%d counts and %d allowed entries, want %d (one per state)", len(row), len(allowed[i]), n)})
			continue
		}
		total := 0.0
		for j, c := range row {
			switch {
			case math.IsNaN(c) || math.IsInf(c, 0) || c < 0:
				errs = append(errs, &EntryError{Row: i, Col: j, Reason: fmt.Sprintf("count %g must be a finite number of zero or more", c)})
			case !allowed[i][j] && c > 0:
				errs = append(errs, &EntryError{Row: i, Col: j, Reason: fmt.Sprintf("%g observed moves to an entry that is not allowed; exclude them from the counts or allow the entry", c)})
			case allowed[i][j]:
				if j < i {
					d.improve = true
				}
				d.cols[i] = append(d.cols[i], j)
				d.alpha[i] = append(d.alpha[i], c+prior)
				total += c
			}
		}
		if len(d.cols[i]) == 0 {
			errs = append(errs, &EntryError{Row: i, Col: -1, Reason: "no entry allowed; allow at least staying in the state"})
		}
		if total == 0 && len(d.cols[i]) > 1 {
			d.empty = append(d.empty, i)
		}
	}
	if len(errs) > 0 {
		return nil, errors.Join(errs...)
	}
	return d, nil
}

// Draw returns one matrix with every row drawn from its posterior.
func (d *DirichletRows) Draw(rng *rand.Rand) (*Transition, error) {
	rows := make([][]float64, d.n)
	for i := range rows {
		rows[i] = make([]float64, d.n)
		if len(d.cols[i]) == 1 {
			rows[i][d.cols[i][0]] = 1
			continue
		}
		// A Dirichlet draw is a vector of independent Gamma(α_j, 1)
		// variates divided by their sum (a textbook construction).
		x := make([]float64, len(d.cols[i]))
		sum := 0.0
		for k, a := range d.alpha[i] {
			x[k] = distuv.Gamma{Alpha: a, Beta: 1, Src: rng}.Rand()
			sum += x[k]
		}
		// A sum of exactly zero would need every variate to underflow.
		if !(sum > 0) || math.IsInf(sum, 0) {
			return nil, fmt.Errorf("the Dirichlet draw for row %d underflowed; use a larger prior", i+1)
		}
		for k, j := range d.cols[i] {
			rows[i][j] = x[k] / sum
		}
	}
	return NewTransition(rows, Options{AllowImprovement: d.improve})
}

// Method names the posterior and its prior.
func (d *DirichletRows) Method() string {
	name := fmt.Sprintf("symmetric Dirichlet(%g) prior", d.prior)
	switch d.prior {
	case JeffreysPrior:
		name = "Jeffreys prior Dirichlet(1/2)"
	case UniformPrior:
		name = "uniform prior Dirichlet(1)"
	}
	return "Dirichlet posterior of each row's transition counts, " + name + " on the allowed entries"
}

// Mean returns the posterior mean of each row: (c_j + α) / Σ(c + α) on the
// allowed entries.
func (d *DirichletRows) Mean() [][]float64 {
	out := make([][]float64, d.n)
	for i := range out {
		out[i] = make([]float64, d.n)
		sum := 0.0
		for _, a := range d.alpha[i] {
			sum += a
		}
		for k, j := range d.cols[i] {
			out[i][j] = d.alpha[i][k] / sum
		}
	}
	return out
}

// EmptyRows lists the states (0-based) with more than one allowed entry but
// no count at all: their draws come from the prior alone.
func (d *DirichletRows) EmptyRows() []int { return append([]int(nil), d.empty...) }

// States is the number of condition states.
func (d *DirichletRows) States() int { return d.n }
