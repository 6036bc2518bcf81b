package markov

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// LogLikelihood is Σ_g Σ_ij n^g_ij log (P^g)_ij, the log-likelihood of the
// counts under the matrix (for one-year counts, Σ n_ij log p_ij).
func LogLikelihood(c *Counts, p *Transition) float64 { return logLikelihood(c, p.p) }

// Homogeneity tests whether several groups of assets (families: traffic
// bands, surfaces, districts) deteriorate by one matrix. Under the
// hypothesis the pooled estimate serves them all; against it each group
// has its own. Both statistics are asymptotically chi-square with DF
// degrees of freedom.
type Homogeneity struct {
	// LR is the likelihood-ratio statistic 2(Σ_f L_f - L_pooled), each
	// log-likelihood at its own maximum (Wilks, 1938).
	LR, LRPValue float64
	// Pearson is Anderson and Goodman's chi-square test that several
	// chains share one matrix (1957): Σ_f Σ_i Σ_j (n_fij - n_fi p_ij)² /
	// (n_fi p_ij) over the one-year counts, with p the pooled estimate.
	// NaN unless the groups were fitted by counting one-year pairs.
	Pearson, PearsonPValue float64
	// DF is Σ_i (F_i - 1)(m_i - 1) over the rows that are estimated,
	// with F_i the groups with pairs from state i and m_i the moves with a
	// positive pooled probability (Anderson and Goodman's count; a cell no
	// group uses carries no parameter).
	DF int
}

// TestHomogeneity compares groups fitted one by one (groupLL[f], the
// maximised log-likelihood of groups[f]) with the pooled fit (pooled,
// pooledLL, on all the groups' pairs together). yearly says the fits
// counted one-year pairs only: then the groups' one-year counts enter
// Pearson's statistic and the degrees of freedom.
func TestHomogeneity(groups []*Counts, groupLL []float64, pooled *Transition, pooledLL float64, s Structure, yearly bool) Homogeneity {
	n := pooled.States()
	var h Homogeneity
	sum := 0.0
	for _, ll := range groupLL {
		sum += ll
	}
	h.LR = math.Max(0, 2*(sum-pooledLL))
	starts := func(c *Counts, i int) float64 {
		if yearly {
			return c.RowTotal(1, i)
		}
		t := 0.0
		for _, g := range c.gaps {
			t += c.RowTotal(g, i)
		}
		return t
	}
	for i := 0; i < n; i++ {
		if s.Fixed(i, n) {
			continue
		}
		groupsHere, moves := 0, 0
		for _, c := range groups {
			if starts(c, i) > 0 {
				groupsHere++
			}
		}
		for j := 0; j < n; j++ {
			if s.Allowed(i, j, n) && pooled.At(i, j) > 0 {
				moves++
			}
		}
		if groupsHere > 0 && moves > 0 {
			h.DF += (groupsHere - 1) * (moves - 1)
		}
	}
	h.Pearson, h.PearsonPValue = math.NaN(), math.NaN()
	if yearly {
		x := 0.0
		for _, c := range groups {
			for i := 0; i < n; i++ {
				ni := c.RowTotal(1, i)
				if ni == 0 || s.Fixed(i, n) {
					continue
				}
				for j := 0; j < n; j++ {
					if e := ni * pooled.At(i, j); e > 0 {
						d := c.At(1, i, j) - e
						x += d * d / e
					}
				}
			}
		}
		h.Pearson = x
	}
	h.LRPValue = math.NaN()
	if h.DF > 0 {
		chi := distuv.ChiSquared{K: float64(h.DF)}
		h.LRPValue = chi.Survival(h.LR)
		if yearly {
			h.PearsonPValue = chi.Survival(h.Pearson)
		}
	}
	return h
}

// Pooled adds counts together.
func Pooled(groups ...*Counts) *Counts {
	if len(groups) == 0 {
		return nil
	}
	out := NewCounts(groups[0].states)
	for _, c := range groups {
		n := c.states
		for k, g := range c.gaps {
			b := c.data[k*n*n : (k+1)*n*n]
			dst := out.block(g, true)
			for i, v := range b {
				dst[i] += v
			}
		}
	}
	return out
}
