package markov_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"wearplan/markov"
)

// panel is a synthetic inspection history generated in the test from a
// known matrix (invented data): assets seen every 1, 2 or 3 years.
type panel struct {
	truth  [][]float64
	counts *markov.Counts
}

// randomMatrix draws an upper-triangular five-state matrix with some small
// and some zero entries far from the diagonal, the shape that leaves
// never-observed moves in a sample.
func randomMatrix(r *rand.Rand, n int) [][]float64 {
	p := make([][]float64, n)
	for i := range p {
		p[i] = make([]float64, n)
		if i == n-1 {
			p[i][i] = 1
			continue
		}
		stay := 0.6 + 0.35*r.Float64()
		p[i][i] = stay
		left := 1 - stay
		for j := i + 1; j < n; j++ {
			var w float64
			switch {
			case j == n-1 || j == i+1 && r.IntN(4) > 0:
				w = left
			default:
				w = left * [...]float64{0, 0.01, 0.05, 0.2, 0.5}[r.IntN(5)]
			}
			p[i][j] = w
			left -= w
		}
	}
	return p
}

func generatePanel(seed uint64) panel {
	r := rand.New(rand.NewPCG(seed, 1985))
	const n = 5
	truth := randomMatrix(r, n)
	assets := 150 + r.IntN(500)
	c := markov.NewCounts(n)
	for a := 0; a < assets; a++ {
		s := r.IntN(n - 1)
		every := 1 + r.IntN(3)
		for k := 0; k < 2+r.IntN(4); k++ {
			from := s
			for range every {
				s = draw(r, truth[s])
			}
			c.Add(every, from, s, 1)
		}
	}
	return panel{truth: truth, counts: c}
}

// emMaximum maximises the interval log-likelihood by expectation-maximisation
// (the chain's unobserved yearly states between two inspections are the
// missing data, as in Baum and Welch's algorithm): the expected number of
// one-year moves a -> b on the way from i to j in g years is
// n^g_ij Σ_k (P^k)_ia p_ab (P^(g-1-k))_bj / (P^g)_ij, and the M-step divides
// each row's expected moves by their total. Each step raises the
// likelihood (Dempster, Laird and Rubin, 1977), and zero entries stay zero,
// so every allowed entry starts positive. Several starts; the best is kept.
func emMaximum(c *markov.Counts, starts [][][]float64) ([][]float64, float64) {
	var best [][]float64
	bestLL := math.Inf(-1)
	for _, p := range starts {
		ll := math.Inf(-1)
		for it := 0; it < 200000; it++ {
			next, cur := emStep(c, p)
			p = next
			if cur-ll < 1e-12*math.Abs(cur) && it > 10 {
				break
			}
			ll = cur
		}
		if l := panelLL(c, p); l > bestLL {
			best, bestLL = p, l
		}
	}
	return best, bestLL
}

func matPow(p [][]float64, g int) [][]float64 {
	n := len(p)
	out := make([][]float64, n)
	for i := range out {
		out[i] = make([]float64, n)
		out[i][i] = 1
	}
	for range g {
		next := make([][]float64, n)
		for i := range next {
			next[i] = make([]float64, n)
			for k := range n {
				for j := range n {
					next[i][j] += out[i][k] * p[k][j]
				}
			}
		}
		out = next
	}
	return out
}

func panelLL(c *markov.Counts, p [][]float64) float64 {
	ll := 0.0
	for _, g := range c.Gaps() {
		pg := matPow(p, g)
		for i, row := range c.Matrix(g) {
			for j, v := range row {
				if v > 0 {
					ll += v * math.Log(pg[i][j])
				}
			}
		}
	}
	return ll
}

// emStep returns the next matrix and the log-likelihood of p.
func emStep(c *markov.Counts, p [][]float64) ([][]float64, float64) {
	n := len(p)
	exp := make([][]float64, n)
	for i := range exp {
		exp[i] = make([]float64, n)
	}
	ll := 0.0
	for _, g := range c.Gaps() {
		pows := make([][][]float64, g+1)
		for k := range pows {
			pows[k] = matPow(p, k)
		}
		for i, row := range c.Matrix(g) {
			for j, v := range row {
				if v == 0 {
					continue
				}
				tot := pows[g][i][j]
				ll += v * math.Log(tot)
				for k := 0; k < g; k++ {
					for a := range n {
						if pows[k][i][a] == 0 {
							continue
						}
						for b := range n {
							if p[a][b] == 0 {
								continue
							}
							exp[a][b] += v * pows[k][i][a] * p[a][b] * pows[g-1-k][b][j] / tot
						}
					}
				}
			}
		}
	}
	next := make([][]float64, n)
	for a := range next {
		next[a] = append([]float64(nil), p[a]...)
		tot := 0.0
		for _, v := range exp[a] {
			tot += v
		}
		if tot == 0 {
			continue
		}
		for b := range next[a] {
			next[a][b] = exp[a][b] / tot
		}
	}
	return next, ll
}

// Thirty panels generated in the test from known matrices (invented
// data: 150-650 assets each seen every 1, 2 or 3 years, two to five
// times), each maximised twice: by IntervalMLE, and independently in this
// test by expectation-maximisation (a different algorithm on the matrix
// itself, not its softmax parameters) from three starts. The two
// log-likelihoods must agree within 1e-6, and no single move of 0.001 of
// probability between two adjacent entries of a row of the estimate may
// raise its log-likelihood (beyond 1e-9 of rounding): the estimate is the
// maximum, not a point where the optimizer stalled. The panels have moves
// that a sample may never show (entries of 0.01 or 0.05 of a row's
// departures), where a softmax entry starting near zero cannot grow.
func TestIntervalMLEReachesMaximum(t *testing.T) {
	for seed := uint64(1); seed <= 30; seed++ {
		pn := generatePanel(seed)
		got, info, err := markov.IntervalMLE(pn.counts, markov.Structure{}, nil)
		if err != nil {
			t.Errorf("panel %d: %v", seed, err)
			continue
		}
		_, ref := emMaximum(pn.counts, [][][]float64{evenRows(5, 0.5), evenRows(5, 0.8), evenRows(5, 0.95)})
		if d := info.LogLikelihood - ref; math.Abs(d) > 1e-6 {
			t.Errorf("panel %d: log-likelihood %.8f, EM reaches %.8f (difference %.2g; %d of %d starts at the best, KKT residuals %.2g, %.2g)",
				seed, info.LogLikelihood, ref, d, info.StartsAtBest, info.Starts, info.DualInfeasibility, info.Complementarity)
		}
		if !info.KKT {
			t.Errorf("panel %d: KKT conditions not met: %+v", seed, info)
		}
		p := got.Rows()
		ll := panelLL(pn.counts, p)
		for i := 0; i < 4; i++ {
			for b := i; b+1 < 5; b++ {
				for _, mv := range [][2]int{{b, b + 1}, {b + 1, b}} {
					from, to := mv[0], mv[1]
					if p[i][from] < 0.001 {
						continue
					}
					q := make([][]float64, 5)
					for r := range q {
						q[r] = append([]float64(nil), p[r]...)
					}
					q[i][from] -= 0.001
					q[i][to] += 0.001
					if l := panelLL(pn.counts, q); l > ll+1e-9 {
						t.Errorf("panel %d: moving 0.001 in row %d from column %d to %d raises the log-likelihood by %.3g", seed, i, from, to, l-ll)
					}
				}
			}
		}
	}
}

// evenRows is a start for EM: stay with probability stay, the rest spread
// evenly over the worse states.
func evenRows(n int, stay float64) [][]float64 {
	p := make([][]float64, n)
	for i := range p {
		p[i] = make([]float64, n)
		if i == n-1 {
			p[i][i] = 1
			continue
		}
		p[i][i] = stay
		for j := i + 1; j < n; j++ {
			p[i][j] = (1 - stay) / float64(n-1-i)
		}
	}
	return p
}
