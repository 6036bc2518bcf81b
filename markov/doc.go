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
// # Segment-level simulation
//
// The flow q·P^t is an average: it is what a network of infinitely many
// small pieces does. A town with 40 culverts sees whole culverts, so its
// poor share in ten years is a random number around the average. Simulate
// follows lots (segments, or lots cut from a class's quantity) one by one:
// in year t a lot in state i gets action a with probability π_t(i, a) (do
// nothing, or a treatment), then moves to state j with probability
// M_a(i, j), the action's year transition. Lots move independently. The
// expected quantity in each state then follows exactly the flow
// q_{t+1} = Σ_{i,a} q_t,i π_t(i,a) M_a(i,·) that the planning LP uses, and
// the spread around it is that of a sum of independent lots: for n equal
// lots with chance p of being in a group, a share with standard deviation
// sqrt(p(1-p)/n) (binomial). For a single lot left alone, the year it first
// reaches the worst state has the Kemeny and Snell mean and variance above.
//
// Each run draws from its own PCG generator (math/rand/v2) whose seed
// words are SplitMix64 hashes of (seed, run index, stream): per class, one
// stream for its lots, visited in the order given, and one for its matrix
// draws, so that changing one class leaves the others' numbers alone. Runs may
// then be spread over any number of goroutines and still give the same
// numbers bit for bit; the caller keeps each run's figures in the run's own
// slot and aggregates them in run order.
//
// # Matrix uncertainty
//
// A matrix estimated from inspections is uncertain. A MatrixSampler draws a
// matrix per run from the estimate's sampling distribution, so that the
// spread of a simulation also covers estimation error. Two are provided:
//
//   - Replicates: a set of bootstrap replicate matrices (the matrix
//     estimated again from resamples of the data); each run uses one drawn
//     uniformly at random.
//   - DirichletRows: each row drawn from the Bayesian posterior of its
//     transition probabilities given the observed one-year move counts c_j
//     from that state. With a symmetric Dirichlet(α) prior on the allowed
//     entries (Jeffreys' α = 1/2, or the uniform α = 1) the posterior is
//     Dirichlet(c_j + α) (multinomial-Dirichlet conjugacy), with mean
//     (c_j + α)/A and variance m_j(1 - m_j)/(A + 1), A = Σ(c + α). Entries
//     that are structurally impossible (by default every move to a better
//     state) are zero in every draw. A draw is a vector of independent
//     Gamma(c_j + α) variates divided by their sum (gonum's distuv.Gamma).
//
// With matrix draws the variance of a share has two parts (law of total
// variance): the spread of the drawn probabilities themselves, which does
// not shrink with the number of lots, plus the lots' own binomial spread.
package markov
