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
//
// # Estimation from inspections
//
// Prepare turns each asset's inspections, in time order, into consecutive
// pairs (state at one inspection, state at the next, whole years between:
// the difference of the dates rounded to the nearest year). It leaves out,
// and counts, pairs with work recorded between them, pairs less than half a
// year apart, pairs that move to a better state without recorded work (a
// probable data error; kept when the structure allows improvement), and
// pairs that move further than the structure allows in their interval.
//
// CountingMLE uses the pairs one year apart. Given the state at the first
// inspection, the next state is a draw from that row of P, so the
// likelihood is Π p_ij^n_ij and its maximum is p_ij = n_ij / n_i
// (Anderson and Goodman, 1957). Each entry is a binomial proportion with
// standard error sqrt(p_ij(1 - p_ij)/n_i).
//
// IntervalMLE uses pairs of any interval: a pair from i to j over g years
// has probability (P^g)_ij, and the log-likelihood Σ_g Σ_ij n^g_ij log
// (P^g)_ij is maximised numerically (Kalbfleisch and Lawless, 1985, did
// this for continuous-time chains observed at unequal times; here the step
// stays one year). Rows are softmax functions of free parameters over the
// moves the Structure allows (any worse state, or one state a year), so
// every candidate is a stochastic matrix; gonum's BFGS uses the exact
// gradient, from d(P^g) = Σ_k P^k (dP) P^(g-1-k). An upper-triangular matrix
// with a positive diagonal is determined by P^2 (solve the diagonal, then
// one diagonal above it at a time), so assets inspected every second year
// identify the yearly matrix.
//
// FromYearsInState is the third route, for expert judgement alone.
//
// TransitionChiSquare measures goodness of fit: Pearson's X² of observed
// against expected transition counts, with pairs grouped by interval,
// starting state and the calendar year of the first inspection (for
// one-year pairs, Anderson and Goodman's test that the chain is the same
// every year). Cells and years are pooled until every cell expects at
// least five pairs; the degrees of freedom are the free cells less the
// parameters estimated (positive entries less one per row, as far as the
// pooled table can see them), and the p-value is the chi-square upper tail.
//
// BootstrapAssets measures uncertainty by refitting resamples of whole
// assets (Efron and Tibshirani, 1993): an asset's pairs are not
// independent of each other, assets are. Replicate r draws from its own
// generator seeded (seed, r), so results do not depend on scheduling.
//
// MeanCondition compares, year by year since each asset's first
// inspection, the observed mean condition with the mean the matrix
// predicts for the same assets from the state each started in.
package markov
