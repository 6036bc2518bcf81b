// Package scenarios reads a planning scenario file, checks it, and runs it
// end to end into a Result that renderers print.
//
// A scenario file is YAML (see docs/scenario-format.md and the examples in
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
// A scenario may extend a base scenario (extends.go): the YAML node trees
// are merged before decoding, mappings key by key, lists replaced except
// classes and treatments, merged by name. Lines of the n-th file of the
// chain are shifted by n·2^24 so that every problem still names the file and
// line where the value was written.
//
// Funding answers (funding.go) come from optimize: the least level budget
// (min-cost plans and plans whose targets are not met), the extra money per
// year that closes every shortfall, and the worst-first rule's condition
// score under the same money. Sweep plans a list of level budgets and
// Compare a list of scenarios, in parallel (at most GOMAXPROCS at a time),
// results in input order. LongRun reports the steady-state policy.
//
// # Condition scale presets
//
// A class may name a built-in scale with scale: preset:NAME, or a scale
// under scales: may be written {preset: NAME, groups: {...}} to regroup its
// states. Presets (presets.go, each citing its source): pci-astm-d6433 (the
// seven PCI rating classes of ASTM D6433), iri-23cfr490-in-mi and
// iri-23cfr490-m-km (23 CFR 490 good/fair/poor roughness; lower is better),
// bridge-nbi-0-9 (National Bridge Inventory ratings 9-0, grouped per 23 CFR
// 490) and five-state. They pass the same tiling checks as written scales.
//
// An index value is placed in a state by Scale.StateOf: ranges include
// both ends; a value on an end shared by two states counts in the worse
// one, and a value between two ranges that meet at consecutive whole
// numbers (85.5 between 71-85 and 86-100) has not reached the better range
// and counts in the worse one too. A preset may say otherwise where its
// standard does: 170 in/mi is fair under 23 CFR 490.
//
// # Inventory CSV (segment lists)
//
// inventory_csv names a CSV of segments, one row each, in a class (rows
// whose class column names the class, or every row when the file has no
// class column) or at scenario level (rows split by the class column among
// the classes that give no inventory of their own). Columns, matched in
// any case: id, quantity (in the class's unit), condition (an index value,
// or a state name in any case), class; optional name, wkt or lon and lat
// (geometry passed through to the worklist); any others may be used by the
// priority expression. Options: file, delimiter, columns (map a role to
// the file's own column name), priority, skip_unrated. Quantities are
// summed exactly as decimals (in billionths of a unit), so totals do not
// depend on the order of the rows. Every problem is reported with the CSV's
// line and column (at most 50 per file), and a UTF-8 byte-order mark, CRLF
// line ends, quoted fields and blank lines are accepted. Scenario.Inventories
// says what was read. Paths are relative to the scenario's folder and must
// stay inside it; Parse cannot read files, Load and LoadFile can.
//
// The priority expression (github.com/expr-lang/expr syntax, e.g.
// "aadt * (100 - condition)") gives each segment a number; higher is listed
// first. Its variables: condition (the row's index value, or the state's
// representative value), quantity, state (1 = best), and every column by
// its name in lower case with other characters than letters and digits
// turned into underscores. Columns it uses must hold numbers.
//
// # Asset value and backlog
//
// Results carry, for today and the end of every year, each class's and
// the network's current replacement value (quantity times replacement unit
// cost) and backlog (the cost of the treatments that the quantities in poor
// states call for), both at that year's prices (start-year prices
// escalated by cost_escalation, as the year's work is costed; today's at
// start-year prices). A poor state calls for the cheapest of the class's
// treatments that applies to it and leaves nothing in a poor state right
// after treatment, or, when none does, replacement at the replacement unit
// cost. Result.BacklogRules lists the choice per state. A figure is nil when
// unknown (no replacement cost; a poor state nothing lifts and no
// replacement cost), and the network's is nil when any class's is.
//
// # Asset management plan indicators
//
// Results carry Indicators (indicators.go) per class and for the network,
// today and for each year, the ratios over the first ten years (or the
// horizon when shorter):
//
//   - remaining life of each state: the expected years to the worst state
//     with no work, the mean time to absorption from the fundamental matrix
//     of the chain with the worst state absorbing (Kemeny and Snell, Finite
//     Markov Chains, 1960), and its quantity-weighted mean per class;
//   - depreciated replacement cost: replacement value times each state's
//     remaining share of life (remaining life over the best state's), and
//     the asset consumption ratio, depreciated over current replacement
//     cost;
//   - consumption: the drop in depreciated replacement cost that a year
//     with no work would cause, at that year's prices; for a chain whose
//     worst state is absorbing it is straight-line depreciation over the
//     expected life, (quantity not in the worst state) / L_best;
//   - asset sustainability ratio: renewal spend over consumption; renewal
//     funding ratio: the present value of the plan's renewal spend over
//     that of the least-cost plan (no caps) that keeps each class's
//     condition score at today's or better in every year.
//
// The three ratios are the asset ratios of Australian local government
// asset management plans and financial sustainability indicators (IPWEA,
// Australian Infrastructure Financial Management Manual; from memory); the
// forms above, built on the chain, are this package's. Renewal spend is
// the spend on treatments marked renewal (by default those that put every
// unit they treat in the best state).
//
// # Worklists
//
// MakeWorklist assigns a plan's work to whole segments (see its comment
// for the method): year 1 within one segment's quantity of the plan per
// class, state and treatment, each segment at most once a year; years 2..N
// indicative, from each segment's expected state. Worklists carry Caution
// and WorklistCaution: the list is indicative and each segment is
// confirmed by inspection.
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
// A class read from a segment list moves segment by segment; otherwise (or
// when a size is given for it: its segment_size, or one for the run)
// CutLots cuts each class's quantity in each state into pieces of that size
// or of its unit's default (DefaultSegmentSize: a road section, a deck, one
// asset; at most MaxDefaultPieces a class): floor(q/L) pieces of L plus one
// piece of the remainder. The piece size sets the spread: n independent
// pieces with chance p of being poor give a poor share with standard
// deviation sqrt(p(1-p)/n), so pieces should match what really moves
// together; results warn outside FewPieces..ManyPieces.
//
// Targets with a confidence (confidence.go): a plan must meet such a target
// in at least that share of simulated runs; Plan finds it by tightening the
// target in the LP by a margin, raised by the runs' quantile of misses and
// then bisected down to the least that reaches the confidence, every plan
// measured on the same runs. Robust plans (robust.go) hold their targets
// under sampled fitted matrices at once (optimize.SolveRobust).
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
//
// What-if changes (whatif.go, for the `wearplan serve` page): an Editable
// keeps a loaded scenario's YAML tree; Changes (budget level and yearly
// steps, escalation, targets, objective) are laid over it as an overlay
// file and checked by the same decoder and build as a file, and the result
// can be written back out as one stand-alone scenario file.
package scenarios
