// Package scenarios reads a planning scenario file, checks it, and runs it
// end to end into a Result that renderers print.
//
// A scenario file is YAML (see DESIGN.md section 3 and the examples in
// scenarios/examples). It is parsed strictly: unknown keys, wrong types and
// duplicate keys are errors, and every problem is reported at once with its
// file, line and the dotted path of the field, in an *InputError.
//
// Condition scales list states best first, each with the index range it
// covers and a representative value. Index values are mapped linearly onto
// a condition score from 0 (the worst end of the scale) to 100 (the best
// end), so that classes on different scales can be averaged into network
// figures; for scales where lower is better (IRI) the mapping runs the other
// way, and a min_average_index target then means "no worse than".
//
// Network figures weight classes by the weights given when every class
// gives one (these win over replacement costs), else by replacement value
// (quantity times replacement unit cost) when every class gives one, and
// equally otherwise; the Result says which, and warns when only some
// classes give a replacement cost.
//
// # Uncertainty bands
//
// Simulate runs a plan (or doing nothing) many times at segment level with
// markov.Simulate. The plan's LP result is a randomised policy at network
// level; a run applies it segment by segment. With x[t,i,a] the quantity
// the plan treats with action a in state i in year t and q[t,i] the plan's
// quantity in state i at the start of year t, a segment in state i gets a
// with probability x[t,i,a]/q[t,i]. The expected quantities of the runs are
// then exactly the plan's (linearity of expectation); the runs scatter
// around them. Where q[t,i] is zero (at most 1e-9 of the class) the shares
// of the nearest year with quantity in state i are used, the earlier on a
// tie, and a state the plan never holds is left untreated (PolicyRule).
//
// Until inventories give segment lists, CutLots cuts each class's quantity
// in each state into lots of a given size (1 unit by default): floor(q/L)
// lots of L plus one lot of the remainder. The lot size sets the spread:
// n independent lots with chance p of being poor give a poor share with
// standard deviation sqrt(p(1-p)/n), so lots should match the pieces that
// really move together (a deck, a block of road).
//
// Each run's figures (group shares, condition score, average index, spend
// per class and for the network, per year) are kept in the run's own slot;
// bands are the 5th, 50th and 95th percentiles over the runs by Hyndman and
// Fan's (1996) definition 7 (linear interpolation at (runs-1)·p, as a
// spreadsheet's PERCENTILE.INC), with the mean and the plan's own value
// beside them. A target's probability in a year is the share of runs that
// meet it (with the same 1e-6 allowance as the deterministic check), and
// its all-years probability the share that meet it in every year it covers.
//
// Matrix uncertainty comes from MatrixEvidence, which a class carries when
// its matrix comes from a fit result: the Dirichlet posterior of each row's
// counts (Jeffreys' prior by default) or the bootstrap replicates. Classes
// without evidence keep their matrix in every run, and the result says so.
package scenarios
