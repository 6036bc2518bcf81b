package optimize

import (
	"math"
	"slices"
)

// dwClass is one class as the decomposition sees it: its applicable
// (state, action) pairs in the flat model's order, their per-share terms,
// and each pair's year transition as a sparse row.
type dwClass struct {
	c      *Class
	pairs  []pair
	terms  classTerms
	first  []int     // pairs of state i are pairs[first[i]:first[i+1]]
	init   []float64 // today's shares of the class total
	weight float64   // normalised network weight
	next   [][]sparseEntry
	years  int
	// sets are the state sets of the class's state-share targets, and
	// endSet[n][s] the expected share of set s at the end of the year
	// for pair n; both empty when no target names states of the class.
	sets   [][]bool
	endSet [][]float64
	// shut[t*len(pairs)+n] marks pair n as unavailable in year t: it costs
	// money that a cap of zero (to that year, with carry-over) forbids
	// (see decomposer.shutZeroCaps); nil when none is.
	shut []bool
}

type sparseEntry struct {
	state int
	p     float64
}

func newDWClass(p *Problem, k int, pairs []pair, terms classTerms, weight float64) *dwClass {
	c := &p.Classes[k]
	ns := len(c.Initial)
	d := &dwClass{c: c, pairs: pairs, terms: terms, first: make([]int, ns+1), init: make([]float64, ns), weight: weight, next: make([][]sparseEntry, len(pairs)), years: p.Horizon}
	tot := c.Total()
	for i, q := range c.Initial {
		d.init[i] = q / tot
	}
	for n, pr := range pairs {
		d.first[pr.state+1] = n + 1
		for j, pj := range c.Actions[pr.action].Rows[pr.state] {
			if pj != 0 {
				d.next[n] = append(d.next[n], sparseEntry{j, pj})
			}
		}
	}
	// States with no applicable pair cannot occur (do nothing applies
	// everywhere), but keep first monotone regardless.
	for i := 1; i <= ns; i++ {
		if d.first[i] < d.first[i-1] {
			d.first[i] = d.first[i-1]
		}
	}
	return d
}

func (d *dwClass) states() int { return len(d.init) }

// addSet returns the index of a state set among the class's sets, adding
// it (with every pair's expected end-of-year share of it) when new.
func (d *dwClass) addSet(t *Target) int {
	for s, have := range d.sets {
		if slices.Equal(have, t.States) {
			return s
		}
	}
	d.sets = append(d.sets, t.States)
	if d.endSet == nil {
		d.endSet = make([][]float64, len(d.pairs))
	}
	for n, pr := range d.pairs {
		d.endSet[n] = append(d.endSet[n], t.endShare(d.c.Actions[pr.action].Rows[pr.state], d.c.Group))
	}
	return len(d.sets) - 1
}

// prices are the per-class, per-year multipliers of the pricing problem's
// reward: a pair n taken in year t earns
//
//	cost[t]·terms.cost[n] + routine[t]·terms.routine[n] + score[t]·terms.endScore[n]
//	  + Σ_g group[t][g]·terms.endGroup[n][g] + Σ_s set[t][s]·endSet[n][s]
//
// (all per share of the class). They collect the objective and the master's
// dual prices on the linking rows. Routine cost has its own multiplier
// because it always enters the cost objective but the budget rows only when
// the problem counts it against the budget.
type prices struct {
	cost    []float64
	routine []float64
	score   []float64
	group   [][3]float64
	set     [][]float64 // per year, per state set of the class
}

func newPrices(years, sets int) prices {
	pr := prices{cost: make([]float64, years), routine: make([]float64, years), score: make([]float64, years), group: make([][3]float64, years)}
	if sets > 0 {
		pr.set = make([][]float64, years)
		for t := range pr.set {
			pr.set[t] = make([]float64, sets)
		}
	}
	return pr
}

func (pr *prices) reset() {
	clear(pr.cost)
	clear(pr.routine)
	clear(pr.score)
	clear(pr.group)
	for _, s := range pr.set {
		clear(s)
	}
}

// policy is a deterministic year-by-year policy of one class: the pair
// taken in each (year, state), indexed t*states+i.
type policy []int32

// price solves the pricing problem of one class by backward dynamic
// programming: for each year from the last to the first and each state, the
// pair with the largest reward plus expected value of the next year's state.
// Ties keep the first pair in the class's order (do nothing first), so the
// result does not depend on anything but the inputs. It returns the policy
// and its value Σ_i init[i]·V_1(i), the largest total reward any policy of
// the class earns under these prices.
func (d *dwClass) price(pr *prices, pol policy, vNext, vCur []float64) float64 {
	ns := d.states()
	clear(vNext)
	for t := d.years - 1; t >= 0; t-- {
		ct, rt, st, gt := pr.cost[t], pr.routine[t], pr.score[t], pr.group[t]
		for i := 0; i < ns; i++ {
			best, bestN := math.Inf(-1), -1
			for n := d.first[i]; n < d.first[i+1]; n++ {
				if d.shut != nil && d.shut[t*len(d.pairs)+n] {
					continue
				}
				eg := &d.terms.endGroup[n]
				r := ct*d.terms.cost[n] + rt*d.terms.routine[n] + st*d.terms.endScore[n] + gt[0]*eg[0] + gt[1]*eg[1] + gt[2]*eg[2]
				if d.endSet != nil {
					for s, es := range d.endSet[n] {
						r += pr.set[t][s] * es
					}
				}
				for _, e := range d.next[n] {
					r += e.p * vNext[e.state]
				}
				if r > best {
					best, bestN = r, n
				}
			}
			vCur[i] = best
			pol[t*ns+i] = int32(bestN)
		}
		vNext, vCur = vCur, vNext
	}
	v := 0.0
	for i, q := range d.init {
		if q != 0 {
			v += q * vNext[i]
		}
	}
	return v
}

// column is one generated policy of a class with the measures the master's
// rows need: per year, the start-year-price cost of its work and the
// routine cost of what it leaves untreated (currency, for the whole class),
// the expected end-of-year score (0-100) and group shares.
type column struct {
	class   int
	pol     policy
	cost    []float64
	routine []float64
	score   []float64
	group   [][3]float64
	set     [][]float64 // per year, the expected share of each state set
	key     uint64      // hash of the policy on the states it reaches
}

// walk follows the policy forward from today's shares and calls visit for
// every (year, state) it reaches with the pair taken there and the share
// of the class in that state at the start of the year.
func (d *dwClass) walk(pol policy, visit func(t, i, n int, q float64)) {
	ns := d.states()
	cur := append([]float64(nil), d.init...)
	nxt := make([]float64, ns)
	for t := 0; t < d.years; t++ {
		clear(nxt)
		for i, q := range cur {
			if q == 0 {
				continue
			}
			n := int(pol[t*ns+i])
			visit(t, i, n, q)
			for _, e := range d.next[n] {
				nxt[e.state] += q * e.p
			}
		}
		cur, nxt = nxt, cur
	}
}

// roll returns the policy's column: its measures from today's shares on,
// and a key that hashes what it does on the states it reaches.
func (d *dwClass) roll(k int, pol policy) *column {
	ns := d.states()
	col := &column{class: k, pol: pol, cost: make([]float64, d.years), routine: make([]float64, d.years), score: make([]float64, d.years), group: make([][3]float64, d.years)}
	if d.sets != nil {
		col.set = make([][]float64, d.years)
		for t := range col.set {
			col.set[t] = make([]float64, len(d.sets))
		}
	}
	h := uint64(14695981039346656037)
	d.walk(pol, func(t, i, n int, q float64) {
		col.cost[t] += q * d.terms.cost[n]
		col.routine[t] += q * d.terms.routine[n]
		col.score[t] += q * d.terms.endScore[n]
		eg := &d.terms.endGroup[n]
		col.group[t][0] += q * eg[0]
		col.group[t][1] += q * eg[1]
		col.group[t][2] += q * eg[2]
		if col.set != nil {
			for s, es := range d.endSet[n] {
				col.set[t][s] += q * es
			}
		}
		h = (h ^ uint64(t*ns+i)) * 1099511628211
		h = (h ^ uint64(n)) * 1099511628211
	})
	col.key = h
	return col
}

// occupation writes the policy's quantities (shares of the class total)
// into x at the flat model's columns, scaled by weight: x[col(t, n)] +=
// weight × share of the class in the pair's state at the start of year t.
func (d *dwClass) occupation(pol policy, weight float64, x []float64, col func(t, n int) int) {
	d.walk(pol, func(t, _, n int, q float64) {
		x[col(t, n)] += weight * q
	})
}

// doNothing is the policy that never treats: pair of action 0 in every state.
func (d *dwClass) doNothing() policy {
	ns := d.states()
	pol := make(policy, d.years*ns)
	for t := 0; t < d.years; t++ {
		for i := 0; i < ns; i++ {
			pol[t*ns+i] = int32(d.first[i]) // do nothing is the first action of every state
		}
	}
	return pol
}
