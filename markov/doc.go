// Package markov models how an asset class deteriorates from one condition
// state to the next as a discrete-time Markov chain with a yearly step.
//
// States are ordered best first: state 0 is the best condition, state n-1 the
// worst. A Transition holds the one-year transition probability matrix P for
// an asset left untreated: P[i][j] is the probability that an asset in state i
// at the start of a year is in state j at its end. Each row sums to 1 and every
// entry lies in [0, 1]. Infrastructure does not mend itself, so entries below
// the diagonal (a move to a better state without work) are rejected unless the
// caller allows them explicitly.
//
// A matrix can also be built from the expected number of years an asset spends
// in each state before it drops to the next one, d_i. The time in a state of a
// chain that either stays (probability p_ii) or moves one state down is
// geometric with mean 1/(1-p_ii), so
//
//	p_ii = 1 - 1/d_i,   p_i,i+1 = 1/d_i,
//
// and the worst state is absorbing.
//
// With quantities instead of probabilities the chain becomes a flow: a row
// vector q of quantities by state (lane-km, m2, count) becomes q·P after one
// year and q·P^t after t years. Roll computes that, step by step.
//
// Expected years to reach the worst state come from the fundamental matrix of
// the chain with the worst state made absorbing (Kemeny and Snell, Finite
// Markov Chains, 1960): with Q the block of P among the other states,
// N = (I - Q)^-1 and the expected number of steps to absorption from each
// state is t = N·1. Its variance is (2N - I)t - t∘t.
//
// The steady state of a chain is the distribution π with π·P = π and Σπ = 1;
// SteadyState solves that linear system directly.
package markov
