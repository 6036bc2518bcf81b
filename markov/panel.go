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
	// objective evaluations, over every start and round.
	Iterations, Evaluations int
	// Status says which stopping rule ended the search: "maximum" when
	// the KKT conditions hold and the log-likelihood settled.
	Status string
	// Starts is the number of starting matrices tried, StartsAtBest how
	// many of them ended within StartTolerance of the best log-likelihood.
	Starts, StartsAtBest int
	// Rounds counts the optimizer runs from the best start: a run that
	// stops with a move the likelihood would gain from (see below) is
	// followed by another from a point where that move has room.
	Rounds int
	// RelativeChange is the relative change of the log-likelihood over the
	// last iteration of the last round.
	RelativeChange float64
	// The Karush-Kuhn-Tucker conditions of the maximum over each row's
	// simplex, with g_ij = ∂(L/N)/∂p_ij (N pairs) and λ_i = Σ_j p_ij g_ij:
	// every allowed entry has g_ij <= λ_i (no move of probability into it
	// gains), and entries with g_ij < λ_i are zero. DualInfeasibility is
	// the largest g_ij - λ_i, Complementarity the largest p_ij·|g_ij - λ_i|.
	DualInfeasibility, Complementarity float64
	// KKT says both are within KKTTolerance.
	KKT bool
}

// maxIntervalYears bounds the interval between two inspections that
// IntervalMLE accepts; longer gaps carry almost no information about a
// one-year step and make P^gap expensive.
const maxIntervalYears = 50

// Stopping rules of IntervalMLE. The objective is the mean log-likelihood
// per pair.
const (
	// KKTTolerance bounds the Karush-Kuhn-Tucker residuals of an accepted
	// maximum (IntervalFit). Moving probability δ into an entry changes
	// the mean log-likelihood by δ(g_ij - λ_i) to first order, so at 1e-7
	// a move of 0.001 gains at most 1e-10 per pair: for a million pairs,
	// 1e-4 in the log-likelihood, far below what separates two matrices a
	// planner could tell apart.
	KKTTolerance = 1e-7
	// RelativeTolerance is the relative change of the log-likelihood over
	// a round's last iteration below which (with the KKT conditions) the
	// round is the last.
	RelativeTolerance = 1e-12
	// StartTolerance is how close to the best log-likelihood another
	// start must end to count as reaching the same maximum.
	StartTolerance = 1e-6
	// maxRounds bounds the optimizer runs from one start.
	maxRounds = 30
)

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
// A softmax entry's gradient is its probability times the gain of moving
// probability into it, so an entry that starts or drifts near zero hardly
// moves even where the likelihood would gain from it: the optimizer then
// stops short of the maximum. Three things keep it from doing so. Starts
// are well inside the simplex (no entry below 1% of its row's moves): the
// counting estimate from each state's nearest-interval pairs, the pooled
// guess of guessStart, and an even spread; the best ending is kept, and
// how many starts reached it is reported. After each run the KKT
// conditions of the maximum over the row simplices are checked (see
// IntervalFit); an entry the likelihood would gain from is given room (a
// share of its row) and the optimizer runs again. A start ends when the
// conditions hold and the log-likelihood changed by less than
// RelativeTolerance over the last iteration.
//
// start, when not nil, is the only starting matrix (a bootstrap replicate
// starts from the estimate). Pairs in cells the structure makes impossible
// are a *ForbiddenError; rows no pair informs are a *NoDataError.
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
	ev := newIntervalEval(c, m)
	var starts []*mat.Dense
	if start != nil {
		// A start near the maximum (a bootstrap replicate's, from the
		// estimate) moves little: floored lightly, since the KKT check
		// gives room to any entry that would gain.
		starts = append(starts, interior(start.p, s, 1e-4))
	} else {
		starts = append(starts, nearestStart(c, s), interior(guessStart(c, s).p, s, 0.01), evenStart(n, s))
	}
	var best *intervalRun
	var info IntervalFit
	var lls []float64
	for _, p0 := range starts {
		r, err := ev.maximise(p0)
		if err != nil {
			return nil, IntervalFit{}, err
		}
		info.Iterations += r.iterations
		info.Evaluations += r.evaluations
		lls = append(lls, r.ll)
		if best == nil || r.ll > best.ll {
			best = r
		}
	}
	info.LogLikelihood = best.ll
	info.Status = "maximum"
	info.Starts = len(starts)
	for _, ll := range lls {
		if best.ll-ll <= StartTolerance {
			info.StartsAtBest++
		}
	}
	info.Rounds, info.RelativeChange = best.rounds, best.relChange
	info.DualInfeasibility, info.Complementarity = best.kkt.dual, best.kkt.comp
	info.KKT = best.kkt.ok()
	if !info.KKT {
		return nil, IntervalFit{}, fmt.Errorf("interval estimate: the optimizer stopped short of a maximum after %d rounds (a move of probability would still raise the likelihood by %.2g per pair per unit moved)", best.rounds, best.kkt.dual)
	}
	return mustTransition(best.p, s), info, nil
}

// intervalRun is the outcome of maximising from one start.
type intervalRun struct {
	p                       *mat.Dense
	ll, relChange           float64
	rounds                  int
	iterations, evaluations int
	kkt                     kktResidual
}

type kktResidual struct{ dual, comp float64 }

func (k kktResidual) ok() bool { return k.dual <= KKTTolerance && k.comp <= KKTTolerance }

// maximise runs BFGS from p0 until the KKT conditions hold and the
// log-likelihood has settled (its relative change over the last major
// iteration at most RelativeTolerance), giving room to entries the
// likelihood would gain from between runs.
func (ev *intervalEval) maximise(p0 *mat.Dense) (*intervalRun, error) {
	prob := optimize.Problem{Func: ev.f, Grad: ev.grad}
	last := &lastIteration{}
	settings := &optimize.Settings{
		// The objective is a mean log-likelihood per pair: its gradient is
		// of order 1 away from the optimum. The KKT check below, not this
		// threshold, decides whether a point is accepted.
		GradientThreshold: 1e-11,
		Converger:         &optimize.FunctionConverge{Absolute: 1e-15, Relative: 1e-14, Iterations: 8},
		MajorIterations:   5000,
		Recorder:          last,
	}
	run := &intervalRun{}
	x := ev.m.params(p0)
	for round := 1; round <= maxRounds; round++ {
		res, err := optimize.Minimize(prob, x, settings, &optimize.BFGS{})
		if err != nil && res == nil {
			return nil, fmt.Errorf("interval estimate: the optimizer failed: %w", err)
		}
		run.rounds = round
		run.iterations += res.MajorIterations
		run.evaluations += res.FuncEvaluations
		x = res.X
		run.p = ev.m.matrix(x)
		run.ll = logLikelihood(ev.c, run.p)
		run.relChange = last.relativeChange()
		var gain *mat.Dense
		run.kkt, gain = ev.kkt(x)
		if run.kkt.ok() && run.relChange <= RelativeTolerance {
			break
		}
		if round == maxRounds {
			break
		}
		// Give room to every entry the likelihood would gain from: at
		// least 1% of its row's moves away from the diagonal (or 1e-3),
		// then renormalise the row.
		if run.kkt.dual > KKTTolerance {
			p := mat.DenseCopyOf(run.p)
			for i := 0; i < ev.m.n; i++ {
				bumped := false
				for _, j := range ev.m.moves[i] {
					if gain.At(i, j) > KKTTolerance {
						p.Set(i, j, math.Max(p.At(i, j), math.Max(0.01*(1-p.At(i, i)), 1e-3)))
						bumped = true
					}
				}
				if bumped {
					normaliseRow(p, i)
				}
			}
			x = ev.m.params(p)
		}
	}
	return run, nil
}

// lastIteration records the objective at the last two major iterations
// of a run (an optimize.Recorder).
type lastIteration struct {
	prev, last float64
	n          int
}

func (r *lastIteration) Init() error {
	r.n = 0
	return nil
}

func (r *lastIteration) Record(loc *optimize.Location, op optimize.Operation, _ *optimize.Stats) error {
	if op&optimize.MajorIteration != 0 || op == optimize.InitIteration {
		r.prev, r.last = r.last, loc.F
		r.n++
	}
	return nil
}

// relativeChange is the objective's relative change over the last major
// iteration (1 when there was none).
func (r *lastIteration) relativeChange() float64 {
	if r.n < 2 {
		return 1
	}
	return math.Abs(r.last-r.prev) / math.Max(math.Abs(r.last), 1e-300)
}

func normaliseRow(p *mat.Dense, i int) {
	_, n := p.Dims()
	sum := 0.0
	for j := 0; j < n; j++ {
		sum += p.At(i, j)
	}
	for j := 0; j < n; j++ {
		p.Set(i, j, p.At(i, j)/sum)
	}
}

// kkt returns the KKT residuals of the mean log-likelihood at p over the
// row simplices, and the gain g_ij - λ_i of every entry.
func (ev *intervalEval) kkt(x []float64) (kktResidual, *mat.Dense) {
	n := ev.m.n
	g := ev.gradP(x)
	p := ev.p
	gain := mat.NewDense(n, n, nil)
	var r kktResidual
	for i := 0; i < n; i++ {
		if len(ev.m.moves[i]) == 0 || ev.m.s.Fixed(i, n) {
			continue
		}
		cols := append([]int{i}, ev.m.moves[i]...)
		lambda := 0.0
		for _, j := range cols {
			lambda += p.At(i, j) * g.At(i, j)
		}
		for _, j := range cols {
			d := g.At(i, j) - lambda
			gain.Set(i, j, d)
			r.dual = math.Max(r.dual, d)
			r.comp = math.Max(r.comp, p.At(i, j)*math.Abs(d))
		}
	}
	return r, gain
}

// interior returns p with every allowed move at least share of its row's
// moves away from the diagonal (and 1e-6), so that a start is inside the
// simplex.
func interior(p *mat.Dense, s Structure, share float64) *mat.Dense {
	n, _ := p.Dims()
	out := mat.DenseCopyOf(p)
	for i := 0; i < n; i++ {
		if s.Fixed(i, n) {
			continue
		}
		off := 1 - out.At(i, i)
		changed := false
		for j := 0; j < n; j++ {
			if j != i && s.Allowed(i, j, n) {
				floor := math.Max(share*off, 1e-6)
				if out.At(i, j) < floor {
					out.Set(i, j, floor)
					changed = true
				}
			}
		}
		if out.At(i, i) < 1e-6 {
			out.Set(i, i, 1e-6)
			changed = true
		}
		if changed {
			normaliseRow(out, i)
		}
	}
	return out
}

// nearestStart is the counting estimate from each state's nearest-interval
// pairs: for the shortest interval g with pairs from state i, the share
// that stayed, to the power 1/g, on the diagonal, and the rest spread over
// the moves in proportion to where the pairs ended, each end j reached in
// steps of ceil((j-i)/g) states a year. With yearly pairs this is the
// counting estimate of Anderson and Goodman (1957).
func nearestStart(c *Counts, s Structure) *mat.Dense {
	n := c.states
	p := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		if s.Fixed(i, n) {
			p.Set(i, i, 1)
			continue
		}
		g := 0
		for _, gap := range c.gaps {
			if c.RowTotal(gap, i) > 0 {
				g = gap
				break
			}
		}
		if g == 0 {
			// No pair starts here (the row is informed by pairs passing
			// through): an even spread.
			even := evenStart(n, s)
			for j := 0; j < n; j++ {
				p.Set(i, j, even.At(i, j))
			}
			continue
		}
		tot := c.RowTotal(g, i)
		stay := math.Pow(c.At(g, i, i)/tot, 1/float64(g))
		ends := make([]float64, n)
		endTot := 0.0
		for j := 0; j < n; j++ {
			v := c.At(g, i, j)
			if j == i || v == 0 {
				continue
			}
			step := (j - i + sign(j-i)*(g-1)) / g // ceil for a drop, floor toward i for a rise
			if step == 0 {
				step = sign(j - i)
			}
			to := i + step
			if s.OneStep {
				to = i + sign(j-i)
			}
			if to >= 0 && to < n && s.Allowed(i, to, n) {
				ends[to] += v
				endTot += v
			}
		}
		p.Set(i, i, stay)
		for j := 0; j < n; j++ {
			if j != i && endTot > 0 {
				p.Set(i, j, (1-stay)*ends[j]/endTot)
			}
		}
		if endTot == 0 {
			p.Set(i, i, 1)
		}
	}
	return interior(p, s, 0.01)
}

func sign(v int) int {
	switch {
	case v > 0:
		return 1
	case v < 0:
		return -1
	}
	return 0
}

// evenStart stays with probability 0.8 and spreads the rest evenly over
// the allowed moves.
func evenStart(n int, s Structure) *mat.Dense {
	p := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		var moves []int
		for j := 0; j < n; j++ {
			if j != i && s.Allowed(i, j, n) {
				moves = append(moves, j)
			}
		}
		if s.Fixed(i, n) || len(moves) == 0 {
			p.Set(i, i, 1)
			continue
		}
		p.Set(i, i, 0.8)
		for _, j := range moves {
			p.Set(i, j, 0.2/float64(len(moves)))
		}
	}
	return p
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

// params returns the parameters of a matrix; entries are floored at 1e-300
// of the diagonal so that a zero becomes a large negative, finite value.
func (m *softmaxModel) params(p mat.Matrix) []float64 {
	x := make([]float64, m.size)
	for i := 0; i < m.n; i++ {
		d := math.Max(p.At(i, i), 1e-300)
		for k, j := range m.moves[i] {
			x[m.off[i]+k] = math.Log(math.Max(p.At(i, j), 1e-300*d) / d)
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
	dP := ev.gradP(x)
	n := ev.m.n
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
			grad[ev.m.off[i]+k] = -ev.p.At(i, c) * (dP.At(i, c) - avg)
		}
	}
}

// gradP returns ∂(L/N)/∂P at x, the gradient of the mean log-likelihood
// with respect to the matrix entries.
func (ev *intervalEval) gradP(x []float64) *mat.Dense {
	ev.at(x)
	n := ev.m.n
	dP := mat.NewDense(n, n, nil)
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
	dP.Scale(1/ev.total, dP)
	return dP
}
