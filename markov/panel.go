package markov

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
)

// IntervalFit describes how an IntervalMLE run went.
type IntervalFit struct {
	// LogLikelihood is the maximised log-likelihood of the pairs.
	LogLikelihood float64
	// Iterations and Evaluations count the optimizer's major iterations and
	// objective evaluations.
	Iterations, Evaluations int
	// Status is gonum's termination status (GradientThreshold or
	// FunctionConvergence on success).
	Status string
}

// maxIntervalYears bounds the interval between two inspections that
// IntervalMLE accepts; longer gaps carry almost no information about a
// one-year step and make P^gap expensive.
const maxIntervalYears = 50

// IntervalMLE estimates the one-year matrix P from pairs of inspections any
// whole number of years apart: a pair from state i to state j over g years
// has probability (P^g)_ij, and the estimate maximises
//
//	L(P) = Σ_g Σ_ij n^g_ij · log (P^g)_ij
//
// over the matrices the structure allows (Kalbfleisch and Lawless, 1985,
// for panel data observed at unequal times; here in discrete yearly steps).
// Each row is a softmax of free parameters over its allowed moves, with the
// diagonal as reference, so the matrix stays stochastic; gonum's BFGS
// minimises -L/N with the exact gradient
//
//	∂L/∂P = Σ_g Σ_{k=0}^{g-1} (P^k)^T W_g (P^{g-1-k})^T,  W_g = n^g ⊘ P^g.
//
// start, when not nil, is the starting matrix (else one is guessed from the
// counts). Pairs in cells the structure makes impossible are a
// *ForbiddenError; rows no pair informs are a *NoDataError.
func IntervalMLE(c *Counts, s Structure, start *Transition) (*Transition, IntervalFit, error) {
	n := c.states
	if n < 2 {
		return nil, IntervalFit{}, errors.New("interval estimate: a scale needs at least 2 states")
	}
	if c.Total() <= 0 {
		return nil, IntervalFit{}, errors.New("interval estimate: no pairs of inspections")
	}
	for k, g := range c.gaps {
		if g > maxIntervalYears {
			return nil, IntervalFit{}, fmt.Errorf("interval estimate: pairs %d years apart; at most %d years are used", g, maxIntervalYears)
		}
		b := c.data[k*n*n : (k+1)*n*n]
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if v := b[i*n+j]; v != 0 && !s.Possible(g, i, j, n) {
					return nil, IntervalFit{}, &ForbiddenError{Years: g, From: i, To: j, Count: v}
				}
			}
		}
	}
	if missing := uninformedRows(c, s); missing != nil {
		return nil, IntervalFit{}, &NoDataError{Rows: missing}
	}
	m := newSoftmaxModel(n, s)
	if start == nil {
		start = guessStart(c, s)
	}
	x0 := m.params(start)
	ev := newIntervalEval(c, m)
	prob := optimize.Problem{
		Func: ev.f,
		Grad: ev.grad,
	}
	settings := &optimize.Settings{
		// The objective is a mean log-likelihood per pair: its gradient is
		// of order 1 away from the optimum, and 1e-9 leaves the estimate
		// accurate far beyond the 6 decimals it is reported with.
		GradientThreshold: 1e-9,
		Converger:         &optimize.FunctionConverge{Absolute: 1e-13, Relative: 1e-13, Iterations: 40},
		MajorIterations:   5000,
	}
	// BFGS's line search can fail to improve a point that is already at
	// the maximum to floating-point precision; a point whose gradient is
	// below acceptGradient is accepted then. Otherwise BFGS restarts from
	// where it stopped, with a fresh Hessian estimate, a few times.
	const acceptGradient = 1e-7
	var res *optimize.Result
	x := x0
	for attempt := 0; ; attempt++ {
		var err error
		res, err = optimize.Minimize(prob, x, settings, &optimize.BFGS{})
		if err != nil && res == nil {
			return nil, IntervalFit{}, fmt.Errorf("interval estimate: the optimizer failed: %w", err)
		}
		ok := false
		switch res.Status {
		case optimize.GradientThreshold, optimize.FunctionConvergence, optimize.StepConvergence, optimize.Success, optimize.MethodConverge:
			ok = true
		case optimize.Failure:
			ok = ev.gradientNorm(res.X) < acceptGradient
		}
		if ok {
			break
		}
		if attempt == 3 {
			return nil, IntervalFit{}, fmt.Errorf("interval estimate: the optimizer stopped without converging (%v after %d iterations, largest gradient %.2g)", res.Status, res.MajorIterations, ev.gradientNorm(res.X))
		}
		x = res.X
	}
	p := m.matrix(res.X)
	info := IntervalFit{
		LogLikelihood: logLikelihood(c, p),
		Iterations:    res.MajorIterations,
		Evaluations:   res.FuncEvaluations,
		Status:        res.Status.String(),
	}
	return mustTransition(p, s), info, nil
}

// mustTransition wraps a matrix the softmax built: rows sum to 1 up to
// rounding, entries are in [0, 1] and zero where the structure says.
func mustTransition(p *mat.Dense, s Structure) *Transition {
	n, _ := p.Dims()
	rows := make([][]float64, n)
	for i := range rows {
		rows[i] = mat.Row(nil, i, p)
		sum := 0.0
		for _, v := range rows[i] {
			sum += v
		}
		for j := range rows[i] {
			rows[i][j] /= sum
		}
	}
	t, err := NewTransition(rows, Options{AllowImprovement: s.Improvement})
	if err != nil {
		panic("markov: softmax matrix is not stochastic: " + err.Error())
	}
	return t
}

// uninformedRows lists the rows (not fixed) that no pair bears on. Without
// improvement a pair from a to b passes through every state a..b; with
// improvement any state a pair starts or ends in counts.
func uninformedRows(c *Counts, s Structure) []int {
	n := c.states
	informed := make([]bool, n)
	for k := range c.gaps {
		b := c.data[k*n*n : (k+1)*n*n]
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if b[i*n+j] == 0 {
					continue
				}
				lo, hi := min(i, j), max(i, j)
				if s.Improvement {
					informed[i], informed[j] = true, true
					continue
				}
				for r := lo; r <= hi; r++ {
					informed[r] = true
				}
			}
		}
	}
	var out []int
	for i := 0; i < n; i++ {
		if !informed[i] && !s.Fixed(i, n) {
			out = append(out, i)
		}
	}
	return out
}

// guessStart builds a starting matrix from the counts: for each row the
// share of pairs that stayed, taken to the power 1/years per interval,
// pooled, and the rest spread over the allowed moves in proportion to where
// pairs ended (plus a little everywhere allowed, so that every parameter
// starts finite).
func guessStart(c *Counts, s Structure) *Transition {
	n := c.states
	rows := make([][]float64, n)
	for i := 0; i < n; i++ {
		rows[i] = make([]float64, n)
		if s.Fixed(i, n) {
			rows[i][i] = 1
			continue
		}
		stayW, stayN := 0.0, 0.0
		ends := make([]float64, n)
		for _, g := range c.gaps {
			tot := c.RowTotal(g, i)
			if tot == 0 {
				continue
			}
			stay := c.At(g, i, i) / tot
			stayW += tot * math.Pow(stay, 1/float64(g))
			stayN += tot
			for j := 0; j < n; j++ {
				if j != i {
					ends[j] += c.At(g, i, j)
				}
			}
		}
		stay := 0.8
		if stayN > 0 {
			stay = stayW / stayN
		}
		stay = math.Min(math.Max(stay, 0.05), 0.98)
		var allowed []int
		endTot := 0.0
		for j := 0; j < n; j++ {
			if j != i && s.Allowed(i, j, n) {
				allowed = append(allowed, j)
				endTot += ends[j]
			}
		}
		rows[i][i] = stay
		if len(allowed) == 0 {
			rows[i][i] = 1
			continue
		}
		for _, j := range allowed {
			w := 0.1 / float64(len(allowed))
			if endTot > 0 {
				w += 0.9 * ends[j] / endTot
			} else {
				w = 1 / float64(len(allowed))
			}
			rows[i][j] = (1 - stay) * w
		}
	}
	t, err := NewTransition(rows, Options{AllowImprovement: s.Improvement})
	if err != nil {
		panic("markov: starting matrix is not stochastic: " + err.Error())
	}
	return t
}

// softmaxModel maps free parameters to a stochastic matrix: row i (not
// fixed) is p_ij = exp(θ_ij) / Σ_k exp(θ_ik) over its allowed moves, with
// θ_ii = 0.
type softmaxModel struct {
	n     int
	s     Structure
	moves [][]int // per row, allowed columns other than the diagonal
	off   []int   // per row, offset of its parameters in x
	size  int
}

func newSoftmaxModel(n int, s Structure) *softmaxModel {
	m := &softmaxModel{n: n, s: s, moves: make([][]int, n), off: make([]int, n)}
	for i := 0; i < n; i++ {
		m.off[i] = m.size
		if s.Fixed(i, n) {
			continue
		}
		for j := 0; j < n; j++ {
			if j != i && s.Allowed(i, j, n) {
				m.moves[i] = append(m.moves[i], j)
			}
		}
		m.size += len(m.moves[i])
	}
	return m
}

// params returns the parameters of a matrix; entries are floored at 1e-6 of
// the diagonal so that a zero start becomes a large negative, finite value.
func (m *softmaxModel) params(t *Transition) []float64 {
	x := make([]float64, m.size)
	for i := 0; i < m.n; i++ {
		d := math.Max(t.At(i, i), 1e-6)
		for k, j := range m.moves[i] {
			x[m.off[i]+k] = math.Log(math.Max(t.At(i, j), 1e-6*d) / d)
		}
	}
	return x
}

func (m *softmaxModel) fill(p *mat.Dense, x []float64) {
	p.Zero()
	for i := 0; i < m.n; i++ {
		if m.s.Fixed(i, m.n) || len(m.moves[i]) == 0 {
			p.Set(i, i, 1)
			continue
		}
		// Subtract the largest exponent to avoid overflow.
		top := 0.0
		for k := range m.moves[i] {
			top = math.Max(top, x[m.off[i]+k])
		}
		sum := math.Exp(-top)
		for k := range m.moves[i] {
			sum += math.Exp(x[m.off[i]+k] - top)
		}
		p.Set(i, i, math.Exp(-top)/sum)
		for k, j := range m.moves[i] {
			p.Set(i, j, math.Exp(x[m.off[i]+k]-top)/sum)
		}
	}
}

func (m *softmaxModel) matrix(x []float64) *mat.Dense {
	p := mat.NewDense(m.n, m.n, nil)
	m.fill(p, x)
	return p
}

// logLikelihood is Σ n^g_ij log (P^g)_ij over the counts.
func logLikelihood(c *Counts, p *mat.Dense) float64 {
	n := c.states
	ll := 0.0
	var pg mat.Dense
	for k, g := range c.gaps {
		pg.Pow(p, g)
		b := c.data[k*n*n : (k+1)*n*n]
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if v := b[i*n+j]; v != 0 {
					ll += v * math.Log(math.Max(pg.At(i, j), math.SmallestNonzeroFloat64))
				}
			}
		}
	}
	return ll
}

// intervalEval evaluates -L/N and its gradient, caching P and its powers
// for the last x seen (gonum asks for the value and the gradient at the
// same point).
type intervalEval struct {
	c      *Counts
	m      *softmaxModel
	total  float64
	last   []float64
	p      *mat.Dense
	powers []*mat.Dense // powers[k] = P^k, k = 0..max gap
}

func newIntervalEval(c *Counts, m *softmaxModel) *intervalEval {
	maxGap := c.gaps[len(c.gaps)-1]
	ev := &intervalEval{c: c, m: m, total: c.Total(), p: mat.NewDense(m.n, m.n, nil)}
	ev.powers = make([]*mat.Dense, maxGap+1)
	for k := range ev.powers {
		ev.powers[k] = mat.NewDense(m.n, m.n, nil)
	}
	return ev
}

func (ev *intervalEval) at(x []float64) {
	if ev.last != nil && equalSlices(ev.last, x) {
		return
	}
	ev.last = append(ev.last[:0], x...)
	ev.m.fill(ev.p, x)
	n := ev.m.n
	ev.powers[0].Zero()
	for i := 0; i < n; i++ {
		ev.powers[0].Set(i, i, 1)
	}
	for k := 1; k < len(ev.powers); k++ {
		ev.powers[k].Mul(ev.powers[k-1], ev.p)
	}
}

func equalSlices(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func (ev *intervalEval) f(x []float64) float64 {
	ev.at(x)
	n := ev.m.n
	ll := 0.0
	for k, g := range ev.c.gaps {
		b := ev.c.data[k*n*n : (k+1)*n*n]
		pg := ev.powers[g]
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if v := b[i*n+j]; v != 0 {
					ll += v * math.Log(math.Max(pg.At(i, j), math.SmallestNonzeroFloat64))
				}
			}
		}
	}
	return -ll / ev.total
}

func (ev *intervalEval) grad(grad, x []float64) {
	ev.at(x)
	n := ev.m.n
	dP := mat.NewDense(n, n, nil) // ∂L/∂P
	w := mat.NewDense(n, n, nil)
	var tmp, term mat.Dense
	for k, g := range ev.c.gaps {
		b := ev.c.data[k*n*n : (k+1)*n*n]
		pg := ev.powers[g]
		w.Zero()
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if v := b[i*n+j]; v != 0 {
					w.Set(i, j, v/math.Max(pg.At(i, j), math.SmallestNonzeroFloat64))
				}
			}
		}
		// d(P^g)_ij = Σ_k (P^k dP P^(g-1-k))_ij, so
		// ∂/∂P_ab Σ_ij W_ij (P^g)_ij = Σ_k ((P^k)^T W (P^(g-1-k))^T)_ab.
		for e := 0; e < g; e++ {
			tmp.Mul(ev.powers[e].T(), w)
			term.Mul(&tmp, ev.powers[g-1-e].T())
			dP.Add(dP, &term)
		}
	}
	// Chain rule through the softmax: ∂p_ij/∂θ_ic = p_ij(δ_jc - p_ic).
	for i := 0; i < n; i++ {
		moves := ev.m.moves[i]
		if len(moves) == 0 || ev.m.s.Fixed(i, n) {
			continue
		}
		avg := ev.p.At(i, i) * dP.At(i, i)
		for _, j := range moves {
			avg += ev.p.At(i, j) * dP.At(i, j)
		}
		for k, c := range moves {
			grad[ev.m.off[i]+k] = -ev.p.At(i, c) * (dP.At(i, c) - avg) / ev.total
		}
	}
}

// gradientNorm is the largest absolute component of the gradient at x.
func (ev *intervalEval) gradientNorm(x []float64) float64 {
	g := make([]float64, len(x))
	ev.grad(g, x)
	norm := 0.0
	for _, v := range g {
		norm = math.Max(norm, math.Abs(v))
	}
	return norm
}
