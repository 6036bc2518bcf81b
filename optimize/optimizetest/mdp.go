package optimizetest

import (
	"errors"
	"math"
)

// MDP is a finite Markov decision process with costs, written out state by
// state, for checking optimizers against dynamic programming.
type MDP struct {
	// Choices[s] are the actions available in state s.
	Choices [][]Choice
}

// Choice is one action in one state: its cost per period and where it
// leads.
type Choice struct {
	Cost float64
	// Next lists the states reached with positive probability.
	Next []Move
}

// Move is one state reached and its probability.
type Move struct {
	State int
	P     float64
}

// AverageCost is the optimal long-run average cost per period of the MDP
// and the relative values that go with it.
type AverageCost struct {
	// Gain is the least long-run average cost per period.
	Gain float64
	// Bias[s] is the relative value of state s (Bias[0] = 0): with Gain it
	// solves the average-cost optimality equation
	// Gain + Bias[s] = min_a (cost(s,a) + Σ_j p(j|s,a)·Bias[j]).
	Bias []float64
	// Iterations is the number of value iterations taken.
	Iterations int
}

// Residual is how far choice a in state s is from attaining the minimum
// of the optimality equation: cost + Σ p·Bias - Bias[s] - Gain, zero (to
// the tolerance solved) for every action an optimal policy uses on its
// recurrent states.
func (r *AverageCost) Residual(m *MDP, s, a int) float64 {
	c := &m.Choices[s][a]
	v := c.Cost - r.Bias[s] - r.Gain
	for _, mv := range c.Next {
		v += mv.P * r.Bias[mv.State]
	}
	return v
}

// RelativeValueIteration solves the average-cost MDP by relative value
// iteration on the aperiodicity transform with τ = 1/2 (cost τ·c, moves
// τ·p plus staying put with probability 1-τ: the same optimal policies and
// relative values, τ times the gain), stopping when Odoni's bounds
// min_s (Th - h)(s) <= τ·gain <= max_s (Th - h)(s) are within tol of each
// other (Puterman, Markov Decision Processes, 1994, chapter 8; from memory,
// sections 8.5.4-8.5.5). It assumes the optimal gain is the same from every
// state (a communicating MDP: every state can reach every other under some
// policy), and fails after maxIter iterations.
func RelativeValueIteration(m *MDP, tol float64, maxIter int) (*AverageCost, error) {
	const tau = 0.5
	n := len(m.Choices)
	h := make([]float64, n)
	th := make([]float64, n)
	for it := 1; it <= maxIter; it++ {
		lo, hi := math.Inf(1), math.Inf(-1)
		for s := range m.Choices {
			best := math.Inf(1)
			for a := range m.Choices[s] {
				c := &m.Choices[s][a]
				v := tau*c.Cost + (1-tau)*h[s]
				for _, mv := range c.Next {
					v += tau * mv.P * h[mv.State]
				}
				best = math.Min(best, v)
			}
			if math.IsInf(best, 1) {
				return nil, errors.New("a state without actions")
			}
			th[s] = best
			lo, hi = math.Min(lo, best-h[s]), math.Max(hi, best-h[s])
		}
		ref := th[0]
		for s := range h {
			h[s] = th[s] - ref
		}
		if hi-lo <= tol {
			// The transform has the same relative values and τ times the
			// gain.
			return &AverageCost{Gain: (lo + hi) / 2 / tau, Bias: h, Iterations: it}, nil
		}
	}
	return nil, errors.New("relative value iteration did not converge")
}
