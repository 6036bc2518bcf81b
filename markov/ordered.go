package markov

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"strings"
	"sync"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
	"gonum.org/v1/gonum/stat/distuv"
)

// Link is the distribution of the latent deterioration in an ordered
// model: logistic (ordered logit) or standard normal (ordered probit).
type Link string

const (
	Logit  Link = "logit"
	Probit Link = "probit"
)

func (l Link) cdf(z float64) float64 {
	if l == Probit {
		return 0.5 * math.Erfc(-z/math.Sqrt2)
	}
	if z >= 0 {
		return 1 / (1 + math.Exp(-z))
	}
	e := math.Exp(z)
	return e / (1 + e)
}

// both returns F(z) and its density f(z); for the logistic f = F(1 - F),
// from the one exponential.
func (l Link) both(z float64) (float64, float64) {
	if l == Probit {
		return l.cdf(z), l.pdf(z)
	}
	f := l.cdf(z)
	return f, f * (1 - f)
}

func (l Link) pdf(z float64) float64 {
	if l == Probit {
		return math.Exp(-z*z/2) / math.Sqrt(2*math.Pi)
	}
	e := math.Exp(-math.Abs(z))
	return e / ((1 + e) * (1 + e))
}

// OrderedModel is an ordered logit or probit model of the yearly drop in
// condition state (Madanat, Mishalani and Wan Ibrahim, "Estimation of
// infrastructure transition probabilities from condition rating data",
// Journal of Infrastructure Systems 1(2), 1995, with an ordered probit): an
// asset in state i with covariates x (traffic, age...) deteriorates in a
// year by a latent amount y* = x·β + ε, ε logistic or standard normal,
// and drops k states when μ_i,k-1 < y* <= μ_i,k, so that
//
//	P(drop <= k | i, x) = F(μ_i,k - x·β),   k = 0, ..., D_i - 1,
//
// with thresholds μ_i,0 < μ_i,1 < ... of its own for each starting state
// and the largest drop D_i taking the rest. A positive coefficient makes
// larger drops likelier: the asset wears faster as the covariate grows.
// Row i of the yearly matrix at x is then p_i,i+k = F(μ_i,k - x·β) -
// F(μ_i,k-1 - x·β), and a pair of inspections g years apart has
// probability (P(x)^g)_ij with the covariates of its first inspection
// held for the g years.
type OrderedModel struct {
	Link Link
	// States is the number of condition states; Drops[i] is D_i, the
	// largest yearly drop from state i (0 for the absorbing worst state).
	States int
	Drops  []int
	// Names, Mean and SD describe the covariates: the model is fitted on
	// standardised values (x - Mean)/SD, and Coef holds β per unit of the
	// covariate as given, with its standard error CoefSE.
	Names        []string
	Mean, SD     []float64
	Coef, CoefSE []float64
	// Thresholds[i][k] is μ_i,k for the covariates at their means, with
	// standard errors ThresholdSE (delta method).
	Thresholds, ThresholdSE [][]float64
	// LogLikelihood is the maximised log-likelihood, Null the
	// log-likelihood of the same model without covariates (β = 0, its own
	// thresholds at their maximum), and LR = 2(LogLikelihood - Null), on
	// len(Names) degrees of freedom, tests the covariates together.
	LogLikelihood, Null, LR, LRPValue float64
	// Pairs is the number of pairs fitted; Iterations and GradientNorm say
	// how the maximisation ended (the largest component of the gradient of
	// the mean log-likelihood per pair, over the standardised parameters).
	Pairs        int
	Iterations   int
	GradientNorm float64
	// Covariance is the estimated covariance of the standardised
	// parameters (β per standard deviation, then the raw thresholds), the
	// inverse of the observed information.
	Covariance *mat.SymDense
	theta      []float64
}

// CollinearError reports covariates that cannot be estimated apart: one is
// constant over the pairs, or a linear combination of others.
type CollinearError struct {
	// Names are the covariates involved; Constant says the first takes a
	// single value (Value).
	Names    []string
	Constant bool
	Value    float64
}

func (e *CollinearError) Error() string {
	if e.Constant {
		return fmt.Sprintf("covariate %s takes the single value %g on every pair, so its effect cannot be estimated; drop it", e.Names[0], e.Value)
	}
	return fmt.Sprintf("covariates %s are collinear (one is a linear combination of the others over the pairs), so their effects cannot be told apart; drop one of them", strings.Join(e.Names, ", "))
}

// orderedPairs holds the pairs in columns, covariates standardised; w,
// when not nil, weighs each row (a row then stands for w pairs alike).
type orderedPairs struct {
	from, to, years []int32
	x               []float64 // pairs x p, standardised
	w               []float64
	p               int
}

// aggregate returns the pairs without covariates, one row per distinct
// (from, to, years) weighed by how many pairs share it: the model without
// covariates depends on nothing else.
func (d *orderedPairs) aggregate() *orderedPairs {
	type key struct{ from, to, years int32 }
	at := map[key]int{}
	out := &orderedPairs{}
	for k := range d.from {
		kk := key{d.from[k], d.to[k], d.years[k]}
		i, ok := at[kk]
		if !ok {
			i = len(out.from)
			at[kk] = i
			out.from, out.to, out.years, out.w = append(out.from, kk.from), append(out.to, kk.to), append(out.years, kk.years), append(out.w, 0)
		}
		out.w[i]++
	}
	// A fixed order, whatever the map's.
	idx := make([]int, len(out.from))
	for i := range idx {
		idx[i] = i
	}
	slices.SortFunc(idx, func(a, b int) int {
		ka := [3]int32{out.from[a], out.to[a], out.years[a]}
		kb := [3]int32{out.from[b], out.to[b], out.years[b]}
		for c := range ka {
			if ka[c] != kb[c] {
				return int(ka[c] - kb[c])
			}
		}
		return 0
	})
	sorted := &orderedPairs{}
	for _, i := range idx {
		sorted.from, sorted.to, sorted.years, sorted.w = append(sorted.from, out.from[i]), append(sorted.to, out.to[i]), append(sorted.years, out.years[i]), append(sorted.w, out.w[i])
	}
	return sorted
}

// OrderedMLE fits an ordered model of the yearly drop to pairs of
// inspections (Pair.X holds each pair's covariates, names their names) by
// maximum likelihood: gonum's BFGS with the exact gradient, on covariates
// standardised to mean 0 and standard deviation 1; thresholds are
// parametrised μ_0 = r_0, μ_k = μ_k-1 + exp(r_k) so that they stay in
// order. The model without covariates is fitted first (its maximum is the
// matrix's over the drops the model allows) and starts the full one.
// Standard errors come from the inverse of the observed information, the
// Hessian of the negative log-likelihood: in closed form when every pair
// is one year apart (then the maximisation is Newton's method too), else
// by central differences of the exact gradient. The largest drop from each state is the largest any pair
// shows from it (drops over several years shared out evenly), at least
// one, at most what the structure allows; improvement is not modelled.
func OrderedMLE(pairs []Pair, states int, names []string, link Link, s Structure) (*OrderedModel, error) {
	if s.Improvement {
		return nil, errors.New("ordered model: it models drops in condition; improvement without work cannot be kept with covariates")
	}
	if link != Logit && link != Probit {
		return nil, fmt.Errorf("ordered model: unknown link %q; use logit or probit", link)
	}
	if len(pairs) == 0 {
		return nil, errors.New("ordered model: no pairs of inspections")
	}
	p := len(names)
	m := &OrderedModel{Link: link, States: states, Names: slices.Clone(names), Pairs: len(pairs)}
	data, err := m.standardise(pairs, p)
	if err != nil {
		return nil, err
	}
	m.Drops = supportedDrops(pairs, states, s)
	var missing []int
	for i := 0; i < states; i++ {
		if !s.Fixed(i, states) && !startsIn(pairs, i) && !passesThrough(pairs, i) {
			missing = append(missing, i)
		}
	}
	if missing != nil {
		return nil, &NoDataError{Rows: missing}
	}
	ev := &orderedEval{m: m, d: data}
	// The model without covariates, from the thresholds of the pooled
	// shares of each drop.
	null := &orderedEval{m: m, d: data.aggregate()}
	r0 := m.startThresholds(pairs)
	thNull, llNull, _, _, err := null.maximise(r0)
	if err != nil {
		return nil, fmt.Errorf("ordered model without covariates: %w", err)
	}
	m.Null = llNull
	start := append(make([]float64, p), thNull...)
	theta, ll, iters, gnorm, err := ev.maximise(start)
	if err != nil {
		return nil, err
	}
	m.theta, m.LogLikelihood, m.Iterations, m.GradientNorm = theta, ll, iters, gnorm
	m.LR = math.Max(0, 2*(ll-llNull))
	m.LRPValue = math.NaN()
	if p > 0 {
		m.LRPValue = distuv.ChiSquared{K: float64(p)}.Survival(m.LR)
	}
	if err := m.covariance(ev); err != nil {
		return nil, err
	}
	return m, nil
}

func startsIn(pairs []Pair, i int) bool {
	for _, pr := range pairs {
		if pr.From == i {
			return true
		}
	}
	return false
}

func passesThrough(pairs []Pair, i int) bool {
	for _, pr := range pairs {
		if pr.From < i && pr.To > i {
			return true
		}
	}
	return false
}

// standardise checks the covariates and returns the pairs in columns with
// standardised covariates.
func (m *OrderedModel) standardise(pairs []Pair, p int) (*orderedPairs, error) {
	n := len(pairs)
	d := &orderedPairs{from: make([]int32, n), to: make([]int32, n), years: make([]int32, n), p: p}
	m.Mean, m.SD = make([]float64, p), make([]float64, p)
	for k, pr := range pairs {
		if len(pr.X) != p {
			return nil, fmt.Errorf("ordered model: pair %d has %d covariates, want %d", k+1, len(pr.X), p)
		}
		if pr.To < pr.From {
			return nil, fmt.Errorf("ordered model: a pair moves from state %d to the better state %d", pr.From+1, pr.To+1)
		}
		d.from[k], d.to[k], d.years[k] = int32(pr.From), int32(pr.To), int32(pr.Years)
		for c, v := range pr.X {
			m.Mean[c] += v
		}
	}
	for c := range m.Mean {
		m.Mean[c] /= float64(n)
	}
	for _, pr := range pairs {
		for c, v := range pr.X {
			m.SD[c] += (v - m.Mean[c]) * (v - m.Mean[c])
		}
	}
	for c := range m.SD {
		m.SD[c] = math.Sqrt(m.SD[c] / float64(n))
		if m.SD[c] <= 1e-12*math.Max(1, math.Abs(m.Mean[c])) {
			return nil, &CollinearError{Names: []string{m.Names[c]}, Constant: true, Value: m.Mean[c]}
		}
	}
	d.x = make([]float64, n*p)
	for k, pr := range pairs {
		for c, v := range pr.X {
			d.x[k*p+c] = (v - m.Mean[c]) / m.SD[c]
		}
	}
	if p > 1 {
		// The correlation matrix of the standardised covariates is
		// singular exactly when some combination of them is constant.
		corr := mat.NewSymDense(p, nil)
		for k := 0; k < n; k++ {
			row := d.x[k*p : (k+1)*p]
			for a := 0; a < p; a++ {
				for b := a; b < p; b++ {
					corr.SetSym(a, b, corr.At(a, b)+row[a]*row[b]/float64(n))
				}
			}
		}
		var eig mat.EigenSym
		if eig.Factorize(corr, true) {
			vals := eig.Values(nil)
			if vals[0] < 1e-8*vals[p-1] {
				var vecs mat.Dense
				eig.VectorsTo(&vecs)
				var involved []string
				for c := 0; c < p; c++ {
					if math.Abs(vecs.At(c, 0)) > 0.1 {
						involved = append(involved, m.Names[c])
					}
				}
				return nil, &CollinearError{Names: involved}
			}
		}
	}
	return d, nil
}

// supportedDrops is the largest yearly drop from each state the model
// allows: the largest a one-year pair shows from it, and for a pair over
// several years, ceil(drop/years) from every state it passes, so that
// some path of allowed drops explains every pair. A state no pair drops
// from gets none (its row stays put).
func supportedDrops(pairs []Pair, n int, s Structure) []int {
	d := make([]int, n)
	for _, pr := range pairs {
		drop := pr.To - pr.From
		switch {
		case drop <= 0:
		case pr.Years == 1:
			d[pr.From] = max(d[pr.From], drop)
		default:
			step := (drop + pr.Years - 1) / pr.Years
			for m := pr.From; m < pr.To; m++ {
				d[m] = max(d[m], step)
			}
		}
	}
	for i := range d {
		limit := n - 1 - i
		if s.OneStep {
			limit = min(limit, 1)
		}
		d[i] = min(d[i], limit)
	}
	return d
}

func (m *OrderedModel) thresholdCount() int {
	t := 0
	for _, d := range m.Drops {
		t += d
	}
	return t
}

// startThresholds puts each state's thresholds at the link's quantiles of
// the cumulative shares of its pairs' yearly drops (plus a half pair in
// every drop, so none is at 0 or 1).
func (m *OrderedModel) startThresholds(pairs []Pair) []float64 {
	out := make([]float64, 0, m.thresholdCount())
	counts := make([][]float64, m.States)
	for i, d := range m.Drops {
		counts[i] = make([]float64, d+1)
		for k := range counts[i] {
			counts[i][k] = 0.5
		}
	}
	for _, pr := range pairs {
		if d := m.Drops[pr.From]; d > 0 {
			k := min((pr.To-pr.From+pr.Years-1)/pr.Years, d)
			counts[pr.From][k]++
		}
	}
	quantile := func(q float64) float64 {
		if m.Link == Probit {
			return distuv.UnitNormal.Quantile(q)
		}
		return math.Log(q / (1 - q))
	}
	for i, d := range m.Drops {
		if d == 0 {
			continue
		}
		tot := 0.0
		for _, c := range counts[i] {
			tot += c
		}
		cum, prev := 0.0, 0.0
		for k := 0; k < d; k++ {
			cum += counts[i][k]
			mu := quantile(cum / tot)
			if k == 0 {
				out = append(out, mu)
			} else {
				out = append(out, math.Log(math.Max(mu-prev, 1e-3)))
			}
			prev = mu
		}
	}
	return out
}

// orderedEval evaluates the negative mean log-likelihood and its gradient.
type orderedEval struct {
	m *OrderedModel
	d *orderedPairs
}

// thresholds turns the raw parameters r into μ, row by row.
func (ev *orderedEval) thresholds(r []float64) [][]float64 {
	mu := make([][]float64, ev.m.States)
	at := 0
	for i, d := range ev.m.Drops {
		mu[i] = make([]float64, d)
		for k := 0; k < d; k++ {
			if k == 0 {
				mu[i][k] = r[at]
			} else {
				mu[i][k] = mu[i][k-1] + math.Exp(r[at])
			}
			at++
		}
	}
	return mu
}

// chunk is the share of the pairs one goroutine evaluates, in a fixed
// layout so that sums do not depend on scheduling.
const orderedChunk = 1 << 14

// eval returns Σ log L_p and, when grad is not nil, adds its gradient
// with respect to (β standardised, r) into grad.
func (ev *orderedEval) eval(theta []float64, grad []float64) float64 {
	d := ev.d
	p := d.p
	beta, r := theta[:p], theta[p:]
	mu := ev.thresholds(r)
	n := len(d.from)
	chunks := (n + orderedChunk - 1) / orderedChunk
	lls := make([]float64, chunks)
	var grads [][]float64
	if grad != nil {
		grads = make([][]float64, chunks)
	}
	workers := min(runtime.GOMAXPROCS(0), chunks)
	var wg sync.WaitGroup
	next := make(chan int, chunks)
	for c := 0; c < chunks; c++ {
		next <- c
	}
	close(next)
	for range workers {
		wg.Go(func() {
			w := newOrderedWork(ev.m, p)
			for c := range next {
				lo, hi := c*orderedChunk, min((c+1)*orderedChunk, n)
				var g []float64
				if grad != nil {
					g = make([]float64, p+ev.m.thresholdCount())
				}
				lls[c] = w.run(d, beta, mu, lo, hi, g)
				if grad != nil {
					grads[c] = g
				}
			}
		})
	}
	wg.Wait()
	ll := 0.0
	for c := range lls {
		ll += lls[c]
		if grad != nil {
			for k, v := range grads[c] {
				grad[k] += v
			}
		}
	}
	if grad != nil {
		// ∂/∂r: μ_i,k = r_i,0 + Σ_{m=1..k} exp(r_i,m), so ∂μ_i,k/∂r_i,0 = 1
		// and ∂μ_i,k/∂r_i,m = exp(r_i,m) for 1 <= m <= k. grad holds
		// ∂/∂μ in the threshold slots until here.
		at := p
		for _, dd := range ev.m.Drops {
			gmu := slices.Clone(grad[at : at+dd])
			for m := 0; m < dd; m++ {
				s := 0.0
				for k := m; k < dd; k++ {
					s += gmu[k]
				}
				if m > 0 {
					s *= math.Exp(r[at+m-p])
				}
				grad[at+m] = s
			}
			at += dd
		}
	}
	return ll
}

// orderedWork holds one goroutine's scratch space.
type orderedWork struct {
	m    *OrderedModel
	p    int
	rows [][]float64 // P(x) rows
	cdf  [][]float64 // F(μ_i,k - η)
	pdf  [][]float64
	fw   [][]float64 // forward row vectors e_i P^t
	bw   [][]float64 // backward column vectors P^t e_j
	off  []int       // offset of row i's thresholds in the gradient
}

func newOrderedWork(m *OrderedModel, p int) *orderedWork {
	n := m.States
	w := &orderedWork{m: m, p: p, off: make([]int, n)}
	w.rows, w.cdf, w.pdf = make([][]float64, n), make([][]float64, n), make([][]float64, n)
	at := p
	for i, d := range m.Drops {
		w.rows[i] = make([]float64, d+1)
		w.cdf[i], w.pdf[i] = make([]float64, d), make([]float64, d)
		w.off[i] = at
		at += d
	}
	return w
}

// row fills row i of P at η: p_i,i+k for k = 0..D_i.
func (w *orderedWork) row(i int, mu []float64, eta float64) {
	d := w.m.Drops[i]
	prev := 0.0
	for k := 0; k < d; k++ {
		z := mu[k] - eta
		c := w.m.Link.cdf(z)
		w.cdf[i][k], w.pdf[i][k] = c, w.m.Link.pdf(z)
		w.rows[i][k] = c - prev
		prev = c
	}
	w.rows[i][d] = 1 - prev
}

// at returns P_ab from the filled rows (b - a beyond the drops is 0).
func (w *orderedWork) at(a, b int) float64 {
	if b < a {
		return 0
	}
	k := b - a
	if k >= len(w.rows[a]) {
		return 0
	}
	return w.rows[a][k]
}

// addRow adds to g the gradient of Σ_k weight_k log-contribution through
// row a: with w_k the weight on p_a,a+k (k = 0..D), c_k = w_k - w_k+1
// multiplies dF_k = f_k (dμ_k - dη) (summation by parts), and dη = x·dβ.
func (w *orderedWork) addRow(a int, weights []float64, x []float64, g []float64) {
	d := w.m.Drops[a]
	deta := 0.0
	for k := 0; k < d; k++ {
		c := (weights[k] - weights[k+1]) * w.pdf[a][k]
		g[w.off[a]+k] += c
		deta -= c
	}
	for c := 0; c < w.p; c++ {
		g[c] += deta * x[c]
	}
}

func (w *orderedWork) run(d *orderedPairs, beta []float64, mu [][]float64, lo, hi int, g []float64) float64 {
	p := w.p
	n := w.m.States
	ll := 0.0
	weights := make([]float64, n+1)
	link := w.m.Link
	for k := lo; k < hi; k++ {
		i, j, years := int(d.from[k]), int(d.to[k]), int(d.years[k])
		x := d.x[k*p : (k+1)*p]
		wt := 1.0
		if d.w != nil {
			wt = d.w[k]
		}
		eta := 0.0
		for c := 0; c < p; c++ {
			eta += beta[c] * x[c]
		}
		if years == 1 {
			// p_ij = F(μ_k - η) - F(μ_k-1 - η), k = j - i: two values of
			// the link, with the ends F = 1 above the largest drop and
			// F = 0 below no drop.
			dd, kk := w.m.Drops[i], j-i
			if kk > dd {
				ll += wt * math.Log(math.SmallestNonzeroFloat64)
				continue
			}
			fHi, dHi, fLo, dLo := 1.0, 0.0, 0.0, 0.0
			if kk < dd {
				fHi, dHi = link.both(mu[i][kk] - eta)
			}
			if kk > 0 {
				fLo, dLo = link.both(mu[i][kk-1] - eta)
			}
			pr := fHi - fLo
			if pr <= 0 {
				ll += wt * math.Log(math.SmallestNonzeroFloat64)
				continue
			}
			ll += wt * math.Log(pr)
			if g != nil {
				if kk < dd {
					g[w.off[i]+kk] += wt * dHi / pr
				}
				if kk > 0 {
					g[w.off[i]+kk-1] -= wt * dLo / pr
				}
				deta := wt * (dLo - dHi) / pr
				for c := 0; c < p; c++ {
					g[c] += deta * x[c]
				}
			}
			continue
		}
		// Several years: rows i..j of P(x), forward vectors f_t = e_i P^t
		// and backward vectors b_t = P^t e_j over the states i..j.
		for a := i; a <= j && a < n; a++ {
			if w.m.Drops[a] > 0 {
				w.row(a, mu[a], eta)
			}
		}
		span := j - i + 1
		w.fw = grow(w.fw, years+1, span)
		w.bw = grow(w.bw, years+1, span)
		clear(w.fw[0])
		w.fw[0][0] = 1
		for t := 1; t <= years; t++ {
			clear(w.fw[t])
			for a := 0; a < span; a++ {
				if v := w.fw[t-1][a]; v != 0 {
					for b := a; b < span; b++ {
						w.fw[t][b] += v * w.pAt(i+a, i+b)
					}
				}
			}
		}
		clear(w.bw[0])
		w.bw[0][span-1] = 1
		for t := 1; t <= years; t++ {
			clear(w.bw[t])
			for a := 0; a < span; a++ {
				s := 0.0
				for b := a; b < span; b++ {
					s += w.pAt(i+a, i+b) * w.bw[t-1][b]
				}
				w.bw[t][a] = s
			}
		}
		pr := w.fw[years][span-1]
		if pr <= 0 {
			ll += wt * math.Log(math.SmallestNonzeroFloat64)
			continue
		}
		ll += wt * math.Log(pr)
		if g == nil {
			continue
		}
		// ∂(P^g)_ij/∂P_ab = Σ_t (e_i P^t)_a (P^(g-1-t) e_j)_b.
		for a := 0; a < span; a++ {
			if w.m.Drops[i+a] == 0 {
				continue
			}
			dd := w.m.Drops[i+a]
			clear(weights[:dd+1])
			nonzero := false
			for k := 0; k <= dd && a+k < span; k++ {
				s := 0.0
				for t := 0; t < years; t++ {
					s += w.fw[t][a] * w.bw[years-1-t][a+k]
				}
				weights[k] = wt * s / pr
				nonzero = nonzero || s != 0
			}
			if nonzero {
				w.addRow(i+a, weights, x, g)
			}
		}
	}
	return ll
}

// pAt is P_ab for the absorbing worst state too.
func (w *orderedWork) pAt(a, b int) float64 {
	if w.m.Drops[a] == 0 {
		if a == b {
			return 1
		}
		return 0
	}
	return w.at(a, b)
}

func grow(v [][]float64, rows, cols int) [][]float64 {
	for len(v) < rows {
		v = append(v, nil)
	}
	for t := 0; t < rows; t++ {
		if cap(v[t]) < cols {
			v[t] = make([]float64, cols)
		}
		v[t] = v[t][:cols]
	}
	return v
}

// maximise runs BFGS on the negative mean log-likelihood from theta0.
func (ev *orderedEval) maximise(theta0 []float64) ([]float64, float64, int, float64, error) {
	total := float64(len(ev.d.from))
	if ev.d.w != nil {
		total = 0
		for _, v := range ev.d.w {
			total += v
		}
	}
	prob := optimize.Problem{
		Func: func(x []float64) float64 { return -ev.eval(x, nil) / total },
		Grad: func(g, x []float64) {
			clear(g)
			ev.eval(x, g)
			for k := range g {
				g[k] /= -total
			}
		},
	}
	settings := &optimize.Settings{
		GradientThreshold: 1e-9,
		Converger:         &optimize.FunctionConverge{Absolute: 1e-14, Relative: 1e-14, Iterations: 30},
		MajorIterations:   2000,
	}
	// With every pair one year apart the Hessian has a closed form, and
	// Newton's method needs a handful of passes over the pairs where BFGS
	// needs dozens.
	var method optimize.Method = &optimize.BFGS{}
	if ev.d.yearly() {
		prob.Hess = func(h *mat.SymDense, x []float64) {
			h.CopySym(ev.hessian(x))
			h.ScaleSym(-1/total, h)
		}
		method = &optimize.Newton{}
		settings.Converger = &optimize.FunctionConverge{Absolute: 1e-14, Relative: 1e-14, Iterations: 3}
	}
	x := theta0
	iters := 0
	for attempt := 0; ; attempt++ {
		res, err := optimize.Minimize(prob, x, settings, method)
		if err != nil && res == nil {
			return nil, 0, 0, 0, fmt.Errorf("ordered model: the optimizer failed: %w", err)
		}
		iters += res.MajorIterations
		x = res.X
		g := make([]float64, len(x))
		prob.Grad(g, x)
		norm := 0.0
		for _, v := range g {
			norm = math.Max(norm, math.Abs(v))
		}
		if norm < 1e-6 {
			return x, -res.F * total, iters, norm, nil
		}
		if attempt == 3 {
			return nil, 0, 0, 0, fmt.Errorf("ordered model: the optimizer stopped without converging (%v after %d iterations, largest gradient %.2g)", res.Status, iters, norm)
		}
	}
}

// covariance inverts the observed information at the maximum and fills
// the coefficients, thresholds and their standard errors.
func (m *OrderedModel) covariance(ev *orderedEval) error {
	k := len(m.theta)
	p := len(m.Names)
	jac := mat.NewDense(k, k, nil)
	if ev.d.yearly() {
		// The observed information in closed form.
		h := ev.hessian(m.theta)
		for a := 0; a < k; a++ {
			for b := 0; b < k; b++ {
				jac.Set(a, b, -h.At(a, b))
			}
		}
	} else {
		fd.Jacobian(jac, func(g, x []float64) {
			clear(g)
			ev.eval(x, g)
			for i := range g {
				g[i] = -g[i]
			}
		}, m.theta, &fd.JacobianSettings{Formula: fd.Central, Step: 1e-5})
	}
	// Thresholds the maximum puts at the edge (a drop no pair shows from a
	// state, so that its probability tends to zero and its threshold to
	// infinity) carry no information; they are left out of the inverse,
	// and their standard errors are not given (NaN).
	free := []int{}
	for a := 0; a < k; a++ {
		if a < p || !m.atEdge(a-p) {
			free = append(free, a)
		}
	}
	info := mat.NewSymDense(len(free), nil)
	for a, fa := range free {
		for b := a; b < len(free); b++ {
			fb := free[b]
			info.SetSym(a, b, (jac.At(fa, fb)+jac.At(fb, fa))/2)
		}
	}
	var chol mat.Cholesky
	if !chol.Factorize(info) {
		if p > 1 {
			return &CollinearError{Names: m.Names}
		}
		return errors.New("ordered model: the information matrix is singular at the maximum; the standard errors cannot be computed (too few pairs, or a covariate with no effect on any pair)")
	}
	inv := mat.NewSymDense(len(free), nil)
	if err := chol.InverseTo(inv); err != nil {
		return fmt.Errorf("ordered model: %w", err)
	}
	cov := mat.NewSymDense(k, nil)
	for a := 0; a < k; a++ {
		cov.SetSym(a, a, math.NaN())
	}
	for a, fa := range free {
		for b := a; b < len(free); b++ {
			cov.SetSym(fa, free[b], inv.At(a, b))
		}
	}
	m.Covariance = cov
	m.Coef, m.CoefSE = make([]float64, p), make([]float64, p)
	for c := 0; c < p; c++ {
		m.Coef[c] = m.theta[c] / m.SD[c]
		m.CoefSE[c] = math.Sqrt(math.Max(cov.At(c, c), 0)) / m.SD[c]
	}
	mu := ev.thresholds(m.theta[p:])
	m.Thresholds = mu
	m.ThresholdSE = make([][]float64, m.States)
	at := p
	for i, d := range m.Drops {
		m.ThresholdSE[i] = make([]float64, d)
		for kk := 0; kk < d; kk++ {
			// ∇μ_i,k over the row's raw thresholds: 1, then exp(r_m).
			grad := make([]float64, d)
			grad[0] = 1
			for mm := 1; mm <= kk; mm++ {
				grad[mm] = math.Exp(m.theta[at+mm])
			}
			v := 0.0
			for a := 0; a < d; a++ {
				for b := 0; b < d; b++ {
					v += grad[a] * grad[b] * cov.At(at+a, at+b)
				}
			}
			m.ThresholdSE[i][kk] = math.Sqrt(math.Max(v, 0))
		}
		at += d
	}
	return nil
}

// atEdge says raw threshold t is at the edge of the parameter space: the
// first of its row beyond ±12 on the latent scale, or a later one that
// adds less than exp(-12) to the one before (the drop between them has
// vanishing probability).
func (m *OrderedModel) atEdge(t int) bool {
	r := m.theta[len(m.Names):]
	at := 0
	for _, d := range m.Drops {
		if t < at+d {
			if t == at {
				return math.Abs(r[t]) > 12
			}
			return r[t] < -12
		}
		at += d
	}
	return false
}

// Matrix returns the yearly matrix at covariates x (as given, not
// standardised).
func (m *OrderedModel) Matrix(x []float64) (*Transition, error) {
	if len(x) != len(m.Names) {
		return nil, fmt.Errorf("ordered model: %d covariate values for %d covariates", len(x), len(m.Names))
	}
	eta := 0.0
	for c, v := range x {
		eta += m.Coef[c] * (v - m.Mean[c])
	}
	w := newOrderedWork(m, len(m.Names))
	rows := make([][]float64, m.States)
	for i := range rows {
		rows[i] = make([]float64, m.States)
		if m.Drops[i] == 0 {
			rows[i][i] = 1
			continue
		}
		w.row(i, m.Thresholds[i], eta)
		for k, v := range w.rows[i] {
			rows[i][i+k] = v
		}
	}
	return NewTransition(rows, Options{})
}
