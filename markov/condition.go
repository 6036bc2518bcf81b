package markov

import "fmt"

// ConditionPoint compares observed and predicted mean condition of the
// assets inspected a given number of years after their first inspection.
type ConditionPoint struct {
	Years    int
	Readings int
	// Observed is the mean of the readings' state values; Predicted the
	// mean the matrix expects for the same assets, from the state each was
	// in at its first inspection: Σ_j (P^years)_{start, j} · value_j.
	Observed, Predicted float64
}

// MeanCondition groups readings by years since the first inspection and
// returns, for each year with readings, the observed mean of values[state]
// and the mean the matrix predicts for the same assets. values holds one
// number per state (the representative index value of each state).
func MeanCondition(readings []Reading, p *Transition, values []float64) ([]ConditionPoint, error) {
	n := p.States()
	if len(values) != n {
		return nil, fmt.Errorf("mean condition: %d state values for a %d-state chain", len(values), n)
	}
	maxYears := -1
	for _, r := range readings {
		if r.Years < 0 || r.Start < 0 || r.Start >= n || r.State < 0 || r.State >= n {
			return nil, fmt.Errorf("mean condition: reading %+v outside a %d-state chain", r, n)
		}
		maxYears = max(maxYears, r.Years)
	}
	// by[t][s] counts readings t years on that started in s; sum[t] adds
	// their observed values.
	by := make([][]int, maxYears+1)
	sum := make([]float64, maxYears+1)
	for t := range by {
		by[t] = make([]int, n)
	}
	for _, r := range readings {
		by[r.Years][r.Start]++
		sum[r.Years] += values[r.State]
	}
	var out []ConditionPoint
	// pv = P^t · v, the expected value t years on from each start state.
	pv := append([]float64(nil), values...)
	for t := 0; t <= maxYears; t++ {
		if t > 0 {
			next := make([]float64, n)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					next[i] += p.At(i, j) * pv[j]
				}
			}
			pv = next
		}
		cnt := 0
		pred := 0.0
		for s, k := range by[t] {
			cnt += k
			pred += float64(k) * pv[s]
		}
		if cnt == 0 {
			continue
		}
		out = append(out, ConditionPoint{Years: t, Readings: cnt, Observed: sum[t] / float64(cnt), Predicted: pred / float64(cnt)})
	}
	return out, nil
}
