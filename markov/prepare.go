package markov

import (
	"fmt"
	"math"
)

// Inspection is one condition record of an asset.
type Inspection struct {
	// Time is when the asset was inspected, in years: 2021.5 is mid-2021.
	Time float64
	// State is the condition state, 0 = best.
	State int
	// Work says that work was recorded between the previous inspection of
	// the asset and this one.
	Work bool
	// Ref is the caller's reference for messages, such as a line number.
	Ref int
	// Stratum is the caller's label for the inspection, such as the index
	// of a family of assets; Prepare passes it on to the pair that starts
	// here.
	Stratum int
	// X holds the covariates of the asset at this inspection (traffic,
	// age...), passed on to the pair that starts here; nil when there are
	// none. OrderedMLE models the pair's change from them.
	X []float64
}

// Pair is two consecutive inspections of one asset kept for estimation.
type Pair struct {
	From, To int
	// Years is the whole number of years between the two inspections.
	Years int
	// Group is the calendar year of the first inspection; goodness of fit
	// compares observed and expected counts group by group.
	Group int
	// Stratum and X are the first inspection's.
	Stratum int
	X       []float64
}

// Reading is one inspection of an asset before any recorded work, seen
// from its first inspection: Years after it, in State, having started in
// Start; and from its previous inspection, Gap years earlier in state
// Prev (for the first inspection, itself with a gap of 0). Readings compare
// observed and predicted mean condition.
type Reading struct {
	Years, Start, State int
	Prev, Gap           int
}

// MaxIntervalYears is the longest interval between two inspections that is
// used; longer ones are counted and left out.
const MaxIntervalYears = 50

// RefPair names the two inspections of an excluded pair by their Refs.
type RefPair struct{ First, Second int }

// maxExamples bounds the examples kept for each kind of exclusion.
const maxExamples = 5

// Preparation counts every step from inspections to the pairs used.
type Preparation struct {
	Assets      int
	Inspections int
	// Pairs is the number of consecutive pairs of inspections.
	Pairs int
	// WithWork pairs had work recorded between them: excluded.
	WithWork int
	// TooClose pairs are less than half a year apart (0 whole years):
	// excluded.
	TooClose int
	// TooFar pairs are more than MaxIntervalYears apart: excluded.
	TooFar int
	// Improved pairs moved to a better state without recorded work, a
	// probable data error: excluded unless the structure allows improvement
	// (then ImprovedKept).
	Improved     int
	ImprovedKept bool
	// Impossible pairs moved further than the structure allows in their
	// interval (more states than years under OneStep): excluded.
	Impossible int
	// Used is the number of pairs kept, and ByYears their split by interval.
	Used    int
	ByYears []YearsCount
	// Examples of excluded pairs, at most a few of each kind.
	ImprovedExamples, ImpossibleExamples, TooCloseExamples []RefPair
	// Selection compares the pairs left out for work (one to
	// MaxIntervalYears apart) with the pairs kept, by starting state.
	Selection *WorkSelection
}

// YearsCount is the number of pairs used with a given interval.
type YearsCount struct {
	Years, Pairs int
}

// Prepare turns inspection histories (one per asset, each in time order)
// into the pairs used for estimation, grouped by asset for the bootstrap,
// and the readings before any work. It counts each exclusion in the
// Preparation. States must lie in [0, states); a history out of time
// order is an error.
func Prepare(histories [][]Inspection, states int, s Structure) (*Sample, []Reading, Preparation, error) {
	var prep Preparation
	prep.ImprovedKept = s.Improvement
	prep.Selection = newWorkSelection(states)
	// Sized once: a million pairs grown by appending spend more time
	// copying than preparing.
	total := 0
	for _, h := range histories {
		total += len(h)
	}
	sample := &Sample{states: states, pairs: make([]Pair, 0, total), starts: make([]int, 1, len(histories)+1)}
	readings := make([]Reading, 0, total)
	byYears := map[int]int{}
	unit := make([]Pair, 0, 16)
	for a, h := range histories {
		if len(h) == 0 {
			continue
		}
		prep.Assets++
		prep.Inspections += len(h)
		unit = unit[:0]
		working := false
		for k, cur := range h {
			if cur.State < 0 || cur.State >= states {
				return nil, nil, Preparation{}, fmt.Errorf("asset %d, inspection %d (ref %d): state %d outside a %d-state scale", a+1, k+1, cur.Ref, cur.State, states)
			}
			if k > 0 && h[k-1].Time > cur.Time {
				return nil, nil, Preparation{}, fmt.Errorf("asset %d: inspections (refs %d, %d) are not in time order", a+1, h[k-1].Ref, cur.Ref)
			}
			if cur.Work && k > 0 {
				working = true
			}
			if !working {
				rd := Reading{Years: int(math.Round(cur.Time - h[0].Time)), Start: h[0].State, State: cur.State, Prev: cur.State}
				if k > 0 {
					rd.Prev, rd.Gap = h[k-1].State, int(math.Round(cur.Time-h[k-1].Time))
				}
				readings = append(readings, rd)
			}
			if k == 0 {
				continue
			}
			prev := h[k-1]
			prep.Pairs++
			years := int(math.Round(cur.Time - prev.Time))
			refs := RefPair{prev.Ref, cur.Ref}
			switch {
			case cur.Work:
				prep.WithWork++
				if years >= 1 && years <= MaxIntervalYears {
					prep.Selection.addWork(prev.State, cur.State, years)
				}
				continue
			case years < 1:
				prep.TooClose++
				prep.TooCloseExamples = example(prep.TooCloseExamples, refs)
				continue
			case years > MaxIntervalYears:
				prep.TooFar++
				continue
			}
			if cur.State < prev.State {
				prep.Improved++
				prep.ImprovedExamples = example(prep.ImprovedExamples, refs)
				if !s.Improvement {
					continue
				}
			}
			if !s.Possible(years, prev.State, cur.State, states) {
				prep.Impossible++
				prep.ImpossibleExamples = example(prep.ImpossibleExamples, refs)
				continue
			}
			unit = append(unit, Pair{From: prev.State, To: cur.State, Years: years, Group: int(math.Floor(prev.Time)), Stratum: prev.Stratum, X: prev.X})
			byYears[years]++
			prep.Used++
			prep.Selection.addKept(prev.State, years)
		}
		sample.AddUnit(unit...)
	}
	for y := 1; y <= MaxIntervalYears; y++ {
		if n := byYears[y]; n > 0 {
			prep.ByYears = append(prep.ByYears, YearsCount{Years: y, Pairs: n})
		}
	}
	return sample, readings, prep, nil
}

func example(list []RefPair, r RefPair) []RefPair {
	if len(list) < maxExamples {
		list = append(list, r)
	}
	return list
}
