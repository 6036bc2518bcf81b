package markov

import (
	"cmp"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// MinExpected is the smallest expected count of a cell in the transition
// chi-square table: cells and rows are pooled until every cell expects at
// least this many pairs (the rule of five for Pearson's statistic, Cochran,
// 1954).
const MinExpected = 5

// ChiSquareRow is one row of a contingency table: observed and expected
// counts of the same cells. Within a row the expected counts sum to the
// observed total.
type ChiSquareRow struct {
	Observed, Expected []float64
}

// ChiSquare is Pearson's goodness-of-fit statistic with its degrees of
// freedom and p-value.
type ChiSquare struct {
	Statistic float64
	// DF is the degrees of freedom; zero when nothing is left to test.
	DF int
	// PValue is the chance of a statistic at least this large if the model
	// were right; NaN when DF is zero.
	PValue float64
	// Rows and Cells count the table (after pooling).
	Rows, Cells int
	// Pairs is the number of observations in the table.
	Pairs float64
	// Pooled says that cells or rows were pooled to reach MinExpected.
	Pooled bool
}

// PearsonChiSquare computes X² = Σ (O - E)² / E over rows whose totals are
// fixed by the data, with Σ (cells in the row - 1) - params degrees of
// freedom, where params is the number of free parameters estimated from
// the same data, and the p-value from the upper tail of the chi-square
// distribution (gonum's distuv.ChiSquared). Cells are used as given: pool
// small ones first. Cells expecting zero are skipped.
func PearsonChiSquare(rows []ChiSquareRow, params int) ChiSquare {
	var out ChiSquare
	df := 0
	for _, r := range rows {
		cells := 0
		for j := range r.Observed {
			o, e := r.Observed[j], r.Expected[j]
			out.Pairs += o
			if e <= 0 {
				continue
			}
			cells++
			d := o - e
			out.Statistic += d * d / e
		}
		if cells == 0 {
			continue
		}
		out.Rows++
		out.Cells += cells
		df += cells - 1
	}
	return out.withDF(df - params)
}

func (c ChiSquare) withDF(df int) ChiSquare {
	if df < 1 {
		c.DF, c.PValue = 0, math.NaN()
		return c
	}
	c.DF = df
	c.PValue = distuv.ChiSquared{K: float64(df)}.Survival(c.Statistic)
	return c
}

// TransitionChiSquare compares observed transition counts with those the
// matrix p expects. Pairs fall into families by interval and starting
// state; within a family, rows are the calendar years of the first
// inspection, and a row's expected counts are its pairs times the
// family's row of P^years. With pairs one year apart this is Anderson and
// Goodman's (1957) test that the chain is the same in every year; with
// several intervals it also tests that multi-year moves follow P^years.
//
// Pooling, so that every cell expects at least MinExpected pairs: in each
// family, end states are pooled in order until half the family's pairs
// would expect MinExpected in each pooled cell (a short tail joins the
// cell before it); then calendar years are pooled in order until each row
// expects MinExpected in its smallest cell (a short last row joins the
// one before it). Pooling years before states keeps the moves apart,
// which is where the test has its power.
//
// Degrees of freedom: Σ over families of rows·(cells - 1), less, when p
// was fitted to these pairs, the parameters estimated. Row i of p counts
// its positive entries less one (entries estimated as zero carry no cell
// and no parameter, as in Anderson and Goodman; an absorbing row counts
// none), but no more than the pooled table can see of it: the most cells
// less one of any family starting in state i. So a counting estimate has
// Σ_i (years - 1)(cells_i - 1) degrees of freedom, Anderson and Goodman's
// count, and none when the pairs come from a single calendar year.
//
// The estimates come from the pairs before pooling, so when cells are
// pooled the statistic runs somewhat larger than the chi-square
// distribution says (Chernoff and Lehmann, 1954): with few pairs per
// state, small p-values are to be read with care.
func TransitionChiSquare(pairs []Pair, p *Transition, fitted bool) ChiSquare {
	n := p.States()
	type family struct{ years, from int }
	type row struct {
		group int
		obs   []float64
		total float64
	}
	byFamily := map[family]map[int][]float64{}
	for _, pr := range pairs {
		f := family{pr.Years, pr.From}
		m := byFamily[f]
		if m == nil {
			m = map[int][]float64{}
			byFamily[f] = m
		}
		r := m[pr.Group]
		if r == nil {
			r = make([]float64, n)
			m[pr.Group] = r
		}
		r[pr.To]++
	}
	families := make([]family, 0, len(byFamily))
	for f := range byFamily {
		families = append(families, f)
	}
	// Sorted so that the statistic is summed in the same order every run.
	slices.SortFunc(families, func(a, b family) int {
		return cmp.Or(cmp.Compare(a.years, b.years), cmp.Compare(a.from, b.from))
	})
	var out ChiSquare
	df := 0
	seen := make([]int, n) // per starting state, the most pooled cells - 1
	for _, f := range families {
		pw, _ := p.Power(f.years)
		pi := mat.Row(nil, f.from, pw)
		groups := make([]int, 0, len(byFamily[f]))
		for g := range byFamily[f] {
			groups = append(groups, g)
		}
		slices.Sort(groups)
		rows := make([]row, len(groups))
		famTotal := 0.0
		for k, g := range groups {
			rows[k] = row{group: g, obs: byFamily[f][g]}
			for _, v := range rows[k].obs {
				rows[k].total += v
			}
			famTotal += rows[k].total
			out.Pairs += rows[k].total
		}
		// Pool end states: cells[b] lists the states of pooled cell b.
		// Cells are sized for half the family, so that at least two rows
		// of calendar years can test them.
		avg := famTotal / 2
		var cells [][]int
		var cur []int
		curP := 0.0
		for j := 0; j < n; j++ {
			if pi[j] <= 0 {
				// Impossible under the model; observed pairs here would
				// have been excluded, but keep any with the current cell.
				if len(cur) > 0 || len(cells) == 0 {
					cur = append(cur, j)
				} else {
					cells[len(cells)-1] = append(cells[len(cells)-1], j)
				}
				continue
			}
			cur = append(cur, j)
			curP += pi[j]
			if avg*curP >= MinExpected {
				cells = append(cells, cur)
				cur, curP = nil, 0
			}
		}
		if len(cur) > 0 {
			if len(cells) > 0 {
				cells[len(cells)-1] = append(cells[len(cells)-1], cur...)
			} else {
				cells = append(cells, cur)
			}
		}
		if len(cells) < 2 {
			continue
		}
		prob := make([]float64, len(cells))
		minP := 1.0
		for b, st := range cells {
			for _, j := range st {
				prob[b] += pi[j]
			}
			minP = math.Min(minP, prob[b])
		}
		// Pool calendar years.
		var merged []row
		var acc row
		for _, r := range rows {
			if acc.obs == nil {
				acc = row{group: r.group, obs: make([]float64, n)}
			}
			for j, v := range r.obs {
				acc.obs[j] += v
			}
			acc.total += r.total
			if acc.total*minP >= MinExpected {
				merged = append(merged, acc)
				acc = row{}
			}
		}
		if acc.obs != nil {
			if len(merged) > 0 {
				last := &merged[len(merged)-1]
				for j, v := range acc.obs {
					last.obs[j] += v
				}
				last.total += acc.total
			} else {
				merged = append(merged, acc)
			}
		}
		positive := 0
		for _, v := range pi {
			if v > 0 {
				positive++
			}
		}
		if len(cells) < positive || len(merged) < len(rows) {
			out.Pooled = true
		}
		seen[f.from] = max(seen[f.from], len(cells)-1)
		df += len(merged) * (len(cells) - 1)
		out.Rows += len(merged)
		out.Cells += len(merged) * len(cells)
		for _, r := range merged {
			for b, st := range cells {
				o := 0.0
				for _, j := range st {
					o += r.obs[j]
				}
				e := r.total * prob[b]
				d := o - e
				out.Statistic += d * d / e
			}
		}
	}
	params := 0
	for i := 0; fitted && i < n; i++ {
		k := 0
		for j := 0; j < n; j++ {
			if p.At(i, j) > 0 {
				k++
			}
		}
		params += max(0, min(k-1, seen[i]))
	}
	return out.withDF(df - params)
}
