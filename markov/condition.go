package markov

import (
	"fmt"

	"gonum.org/v1/gonum/mat"
)

// ConditionPoint compares observed and predicted mean condition of the
// assets inspected a given number of years after their first inspection.
type ConditionPoint struct {
	Years    int
	Readings int
	// Observed is the mean of the readings' state values.
	Observed float64
	// FromFirst is the mean the matrix predicts for the same assets from
	// the state each was in at its first inspection,
	// Σ_j (P^years)_{start, j} · value_j: the deterioration curve.
	FromFirst float64
	// FromPrevious predicts each reading from the asset's previous
	// inspection instead, Σ_j (P^gap)_{prev, j} · value_j.
	FromPrevious float64
}

// MeanCondition groups readings by years since the first inspection and
// returns, for each year with readings, the observed mean of values[state]
// and the means the matrix predicts for the same readings, from each
// asset's first and from its previous inspection. values holds one number
// per state (the representative index value of each state).
//
// Readings stop at an asset's first recorded work, and work usually goes
// to assets in poor condition, so the assets left in later years are
// selected for having held up: when much work is recorded, the observed
// mean drifts above the prediction from the first inspection even under a
// correct matrix. The prediction from the previous inspection does not
// drift that way when work is decided on the condition found at
// inspection: the selection then depends only on the state it conditions
// on.
func MeanCondition(readings []Reading, p *Transition, values []float64) ([]ConditionPoint, error) {
	n := p.States()
	if len(values) != n {
		return nil, fmt.Errorf("mean condition: %d state values for a %d-state chain", len(values), n)
	}
	maxYears := -1
	for _, r := range readings {
		if r.Years < 0 || r.Gap < 0 || r.Start < 0 || r.Start >= n || r.State < 0 || r.State >= n || r.Prev < 0 || r.Prev >= n {
			return nil, fmt.Errorf("mean condition: reading %+v outside a %d-state chain", r, n)
		}
		maxYears = max(maxYears, r.Years)
	}
	// expect(t)[s] = (P^t · v)[s], the expected value t years on from s.
	cache := map[int][]float64{}
	v := mat.NewVecDense(n, append([]float64(nil), values...))
	expect := func(t int) []float64 {
		if e, ok := cache[t]; ok {
			return e
		}
		pt, _ := p.Power(t)
		var e mat.VecDense
		e.MulVec(pt, v)
		out := make([]float64, n)
		for i := range out {
			out[i] = e.AtVec(i)
		}
		cache[t] = out
		return out
	}
	type acc struct {
		n                   int
		obs, first, fromPre float64
	}
	by := make([]acc, maxYears+1)
	for _, r := range readings {
		a := &by[r.Years]
		a.n++
		a.obs += values[r.State]
		a.first += expect(r.Years)[r.Start]
		a.fromPre += expect(r.Gap)[r.Prev]
	}
	var out []ConditionPoint
	for t, a := range by {
		if a.n == 0 {
			continue
		}
		k := float64(a.n)
		out = append(out, ConditionPoint{Years: t, Readings: a.n, Observed: a.obs / k, FromFirst: a.first / k, FromPrevious: a.fromPre / k})
	}
	return out, nil
}
