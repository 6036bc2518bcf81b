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
// state is t = N·1. Its variance is (2N - I)t - t∘t. TimeToAbsorption does
// the same for any set of absorbing states (the drunkard's walk of
// Grinstead and Snell, with both ends absorbing, is its test); the expected
// years to the worst state are the remaining life of the asset management
// plan indicators.
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
// gradient, from d(P^g) = Σ_k P^k (dP) P^(g-1-k). A softmax entry near zero
// barely moves, so the search starts from three interior matrices (the
// counting estimate of each state's nearest-interval pairs among them),
// checks the Karush-Kuhn-Tucker conditions of the maximum over each row's
// simplex after every run, gives room to any entry the likelihood would
// gain from, and stops when they hold and the log-likelihood's relative
// change over an iteration is below 1e-12. An upper-triangular matrix
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
