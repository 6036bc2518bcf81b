package markov

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// WorkSelection compares, state by state, the pairs of inspections left out
// because work was recorded between them with the pairs kept. Estimates
// use only the kept pairs, which is right when work was decided on the
// condition found at the first inspection of a pair: the estimate
// conditions on that state. When work instead follows deterioration
// between two inspections (an asset found failing is treated before its
// next inspection), the assets that dropped are the ones whose pairs are
// left out, and the kept pairs over-represent assets that held up: the
// staying probabilities come out too high and deterioration too slow.
// Prepare fills it.
type WorkSelection struct {
	states int
	// kept[i][g] and work[i][g] count pairs from state i over g years.
	kept, work [][]float64
	// workEnd[i][j] counts work pairs from i by their later state (after
	// the work).
	workEnd [][]float64
}

func newWorkSelection(states int) *WorkSelection {
	w := &WorkSelection{states: states}
	w.kept, w.work, w.workEnd = grid(states, MaxIntervalYears+1), grid(states, MaxIntervalYears+1), grid(states, states)
	return w
}

func grid(r, c int) [][]float64 {
	out := make([][]float64, r)
	for i := range out {
		out[i] = make([]float64, c)
	}
	return out
}

func (w *WorkSelection) addKept(from, years int) { w.kept[from][years]++ }

func (w *WorkSelection) addWork(from, to, years int) {
	w.work[from][years]++
	w.workEnd[from][to]++
}

// StateSelection is one starting state's comparison.
type StateSelection struct {
	State int
	// Kept and Work count the pairs from the state kept and left out for
	// work; WorkShare is Work / (Kept + Work).
	Kept, Work int
	WorkShare  float64
	// KeptYears and WorkYears are the mean intervals of the two kinds.
	KeptYears, WorkYears float64
	// WorkBetter, WorkSame and WorkWorse count the work pairs whose later
	// inspection (after the work) found the asset better than, as good as,
	// or worse than at the first.
	WorkBetter, WorkSame, WorkWorse int
	// Stay is the estimated one-year staying probability, StayIfLeft what
	// it would be if every work pair had left the state before the work
	// (the most the selection could bias it): over an interval of g years
	// the share staying would shrink by the factor (1 - WorkShare), so the
	// yearly one by (1 - WorkShare)^(1/g), g the mean interval of the
	// state's pairs. StayError is the estimate's binomial standard error
	// from the kept pairs, sqrt(p(1-p)/Kept).
	Stay, StayIfLeft, StayError float64
	// Flagged says the possible bias (Stay - StayIfLeft) exceeds two
	// standard errors and a twentieth of the state's pairs had work.
	Flagged bool
}

// TrendTest is a Cochran-Armitage test for a trend in proportions.
type TrendTest struct {
	// Z is the standardised statistic (positive: the proportion rises
	// with the score), PValue its one-sided upper tail under the standard
	// normal.
	Z, PValue float64
	// Groups counts the groups compared (over all strata); 0 when there
	// was nothing to test.
	Groups int
}

// SelectionDiagnosis is the outcome of WorkSelection.Diagnose.
type SelectionDiagnosis struct {
	States []StateSelection
	// ByState tests whether the share of pairs with work differs between
	// starting states (Pearson's chi-square test of homogeneity of the
	// 2 x states table of kept and work pairs, states - 1 degrees of
	// freedom less one for each state without pairs): work that depends on
	// condition in any way.
	ByState ChiSquare
	// ByYears tests, within each starting state, whether the share rises
	// with the interval between the inspections: work decided during the
	// interval rather than on the condition found at its start. Groups is
	// 0 when all pairs share one interval.
	ByYears TrendTest
	// ConditionDriven says the work share differs between states at the
	// SelectionLevel; Warn that it does and that for at least one state
	// the possible bias exceeds its sampling error.
	ConditionDriven, Warn bool
}

// SelectionLevel is the significance level at which work is taken to
// follow condition.
const SelectionLevel = 0.01

// Diagnose compares the kept and work pairs of each state, given the
// estimated one-year staying probability of each state (stay[i]).
//
// The trend over intervals is the Cochran-Armitage test for trend in
// proportions (Cochran, 1954; Armitage, 1955; in the form of Agresti,
// Categorical Data Analysis, 2002, section 5.3.5), stratified by starting
// state: with groups k (intervals) of n_k pairs, y_k of them with work,
// scores x_k (years) and the pooled share p̄ within a stratum,
// T = Σ x_k (y_k - n_k p̄) and V = p̄(1 - p̄)[Σ n_k x_k² - (Σ n_k x_k)²/N],
// summed over strata; Z = T/sqrt(V) is standard normal when the share does
// not depend on the interval, and the p-value is its upper tail.
func (w *WorkSelection) Diagnose(stay []float64) SelectionDiagnosis {
	var d SelectionDiagnosis
	n := w.states
	stateKept := make([]float64, n)
	stateWork := make([]float64, n)
	for i := 0; i < n; i++ {
		var ky, wy float64
		for g := range w.kept[i] {
			stateKept[i] += w.kept[i][g]
			stateWork[i] += w.work[i][g]
			ky += float64(g) * w.kept[i][g]
			wy += float64(g) * w.work[i][g]
		}
		if stateKept[i]+stateWork[i] == 0 {
			continue
		}
		s := StateSelection{State: i, Kept: int(stateKept[i]), Work: int(stateWork[i])}
		s.WorkShare = stateWork[i] / (stateKept[i] + stateWork[i])
		if stateKept[i] > 0 {
			s.KeptYears = ky / stateKept[i]
		}
		if stateWork[i] > 0 {
			s.WorkYears = wy / stateWork[i]
		}
		for j, v := range w.workEnd[i] {
			switch {
			case j < i:
				s.WorkBetter += int(v)
			case j == i:
				s.WorkSame += int(v)
			default:
				s.WorkWorse += int(v)
			}
		}
		if i < len(stay) {
			s.Stay = stay[i]
			meanYears := (ky + wy) / (stateKept[i] + stateWork[i])
			s.StayIfLeft = s.Stay * math.Pow(1-s.WorkShare, 1/meanYears)
			if stateKept[i] > 0 {
				s.StayError = math.Sqrt(s.Stay * (1 - s.Stay) / stateKept[i])
			}
			s.Flagged = s.Stay < 1 && s.WorkShare >= 0.05 && s.Stay-s.StayIfLeft > 2*s.StayError
		}
		d.States = append(d.States, s)
	}
	// Across states: a 2 x states table, the pooled share estimated.
	var all, allWork float64
	for i := 0; i < n; i++ {
		all += stateKept[i] + stateWork[i]
		allWork += stateWork[i]
	}
	if all > 0 && allWork > 0 && allWork < all {
		share := allWork / all
		var rows []ChiSquareRow
		for i := 0; i < n; i++ {
			if t := stateKept[i] + stateWork[i]; t > 0 {
				rows = append(rows, ChiSquareRow{Observed: []float64{stateKept[i], stateWork[i]}, Expected: []float64{t * (1 - share), t * share}})
			}
		}
		// Each state's row total is fixed; the columns' split (the pooled
		// share) is the one parameter estimated.
		d.ByState = PearsonChiSquare(rows, 1)
	}
	// Across intervals within each state.
	var strata []trendStratum
	for i := 0; i < n; i++ {
		var st trendStratum
		for g := range w.kept[i] {
			st.add(float64(g), w.kept[i][g]+w.work[i][g], w.work[i][g])
		}
		strata = append(strata, st)
	}
	d.ByYears = trend(strata)
	d.ConditionDriven = d.ByState.DF > 0 && d.ByState.PValue < SelectionLevel
	if d.ConditionDriven {
		for _, s := range d.States {
			d.Warn = d.Warn || s.Flagged
		}
	}
	return d
}

// trendStratum holds the groups of one stratum: score, pairs, pairs with
// work.
type trendStratum struct{ x, n, y []float64 }

func (s *trendStratum) add(x, n, y float64) {
	if n > 0 {
		s.x, s.n, s.y = append(s.x, x), append(s.n, n), append(s.y, y)
	}
}

func trend(strata []trendStratum) TrendTest {
	var t, v float64
	groups := 0
	for _, s := range strata {
		if len(s.n) < 2 {
			continue
		}
		var N, Y, nx, nxx float64
		for k := range s.n {
			N += s.n[k]
			Y += s.y[k]
			nx += s.n[k] * s.x[k]
			nxx += s.n[k] * s.x[k] * s.x[k]
		}
		p := Y / N
		if p == 0 || p == 1 {
			continue
		}
		for k := range s.n {
			t += s.x[k] * (s.y[k] - s.n[k]*p)
		}
		v += p * (1 - p) * (nxx - nx*nx/N)
		groups += len(s.n)
	}
	if v <= 0 {
		return TrendTest{}
	}
	z := t / math.Sqrt(v)
	return TrendTest{Z: z, PValue: distuv.UnitNormal.Survival(z), Groups: groups}
}
