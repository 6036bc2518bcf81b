// Package optimize chooses the yearly treatment mix for a network of asset
// classes with linear programming. It is the only package that talks to the
// solver (lp_solve 5.5 through golp).
//
// # The finite-horizon plan
//
// Classes k, condition states i, j (best first), actions a (do nothing and
// the class's treatments), years t = 1..T. The decision x[k,t,i,a] >= 0 is
// the quantity of class k in state i at the start of year t treated with a
// during year t, defined only where a applies to i. M[k,a] is the year's
// transition of action a (see package treatments). Then
//
//	Σ_a x[k,1,i,a] = n[k,i]                                 (today's condition)
//	Σ_a x[k,t+1,j,a] = Σ_{i,a} x[k,t,i,a]·M[k,a](i,j)        (flow, t < T)
//
// and the condition at the END of year t is q[k,t,j] = Σ_{i,a} x[k,t,i,a]·
// M[k,a](i,j): every report and target for year t means that. The model never
// holds q as variables; each use of q is written out through x, which keeps
// the column count at classes × years × (applicable state-action pairs).
//
// Money: treating in year t costs unit cost × (1+e)^(t-1) with escalation e;
// present values discount year t by (1+r)^-(t-1), so year-1 money is at face
// value. Yearly caps bind the network and optionally named groups of classes;
// with carry-over, money unspent in a year can be spent later, which turns
// the caps into caps on cumulative spend. Least spends (MinSpend: money
// ring-fenced for some classes) are rows of the other sense: the spend of
// their classes in each year, on its own, at least the amount.
//
// Condition is measured on a score from 0 (worst end of the scale) to 100
// (best end): each class's index values are mapped linearly onto it, so
// classes on different scales (PCI, IRI, bridge ratings) can be averaged.
// Network figures weight classes by the weights handed in (replacement value
// where known). Targets bound, for a class or the network and a range of
// years, the share of a group (good, fair, poor) from above or below, the
// average score from below, or hold the end-of-horizon score at today's. A
// share target of one class may measure a set of its states instead of a
// group (Target.States: "at most 5% Failed"), so that a class widened into
// more states maps a condition state onto all of its widened states.
//
// Objectives: MaxCondition maximises the mean over the T years of the
// network score; MinCost minimises the present value of spending. Ties are
// then broken lexicographically in a second solve that holds the first
// objective at its optimum (to 1e-9 relative): MaxCondition then spends as
// little as possible for that condition, MinCost buys the best condition for
// that cost. The primary optimum is therefore never traded away.
//
// Internally each class's quantities are divided by its total and money by
// a money unit near the largest budget, so that the coefficients stay near 1:
// lp_solve's scaling cannot be set through golp.
//
// When targets cannot all be met, an elastic model adds a non-negative slack
// to every target row, minimises the total slack, then optimises the
// objective with the total slack held at that minimum. Each positive slack is
// a Shortfall: which target, which year, by how much.
//
// States need not be condition states only: a class whose treatments must
// wait some years after any work, or that wears differently after work, is
// handed in over its condition states widened with the years since work
// (treatments.History), with each widened state scored and grouped as its
// condition. The model above is then the exact one of the widened chain and
// nothing here changes; Class.Labels name the widened states in exported
// legends, and callers sum results back to condition states.
//
// Routine cost: a class may give a yearly cost per unit left untreated, by
// state. It is charged on the do-nothing columns, escalates like treatment
// prices, always enters the MinCost objective (life-cycle cost), and enters
// the budget rows only when RoutineInBudget is set. Plans report it apart
// from treatment spend.
//
// Funding questions are LPs on the same model. LevelBudget replaces the
// network caps by one column L (spend of year t at most L, or with
// carry-over the spend to year t at most t·L) and minimises L subject to
// the targets. ClosingMoney adds a column e ≥ 0 to each cap row of each
// year (with carry-over to every later cumulative row as well) and
// minimises Σ e_t·(1+r)^-(t-1) subject to the targets: the extra money that
// makes the targets feasible at the least present value.
//
// The long-run policy (SolveLongRun) is the steady-state Markov decision
// LP of Golabi, Kulkarni and Way (1982). Columns w[k,i,a] ≥ 0 are the
// long-run shares of class k in state i treated with a each year:
//
//	Σ_a w[k,j,a] = Σ_{i,a} w[k,i,a]·M[k,a](i,j)   Σ_{i,a} w[k,i,a] = 1
//
// with targets on the long-run shares and scores, the first year's caps as
// annual caps, and the annual cost (treatment plus routine) minimised, or
// the long-run network score maximised. A basic optimal solution has one
// action per state for each class apart from the few states where a
// linking row (budget, network target) splits it.
//
// WorstFirst plays the common-practice rule (worst states first, cheapest
// improving treatment) under the same caps, for comparison.
//
// The model can be written as free MPS (WriteMPS) or CPLEX LP (WriteLP)
// from the model data, so that any solver reads it; MPS writes a
// maximisation as the minimisation of the negated objective, LP format keeps
// the sense. BuildModel fills the model's Notes with a legend of its columns,
// rows and units, which both writers print as comments.
//
// # Large networks: Dantzig-Wolfe decomposition
//
// Each class is an independent finite-horizon Markov decision process; only
// the linking rows (yearly and group budgets, targets) tie the classes
// together. SolveWith with Decomposed (Auto above 250 flat columns) uses
// that (Dantzig and Wolfe, 1960). With today's shares fixed, the flow rows
// of class k define a polytope X_k whose vertices are the occupation
// vectors of deterministic year-by-year policies (one action per year and
// state), so every plan of the class is a convex combination Σ_p λ_p x(p)
// of policies. The master LP has one weight λ_p per policy in a pool, the
// linking rows written through the policies' measures (a policy's spend,
// end-of-year score and group shares per year), and one convexity row
// Σ_p λ_p = 1 per class. The plan is Σ_p λ_p x(p), read like the flat one.
//
// Pricing. With the master's prices π_r on the linking rows and μ_k on the
// convexity rows, taking pair n = (i, a) in year t earns the reward
//
//	r_t(n) = c_t(n) - Σ_r π_r a_r,t(n)
//
// where c is the stage objective's coefficient (see Stages) and a_r,t(n)
// the pair's coefficient in row r: cost × (1+e)^(t-1) / money unit in the
// budget and least-spend rows of year t (of every year from t on in the
// caps, with carry-over), the class's weight × expected end-of-year score /
// 100, group share or state-set share in the target rows of year t. Each
// class carries one price per year for each state set its targets name, so
// classes without state targets price as before. A backward dynamic program over years and states,
//
//	V_{T+1}(j) = 0,   V_t(i) = max_a [ r_t(i,a) + Σ_j M_a(i,j)·V_{t+1}(j) ],
//
// finds the policy with the largest total reward V_k = Σ_i n_k(i)·V_1(i)
// (n_k: today's shares); ties keep the first action (do nothing first). Its
// reduced cost is V_k - μ_k; the policy joins the pool when that is
// positive and the pool does not already hold a policy acting the same on
// every state it reaches. Pricing runs on all cores, one class per task,
// each result in its class's slot, so that the outcome does not depend on
// the core count (small models are priced on one core: starting goroutines
// costs more than their dynamic programs).
//
// Bound and stopping rule. For any prices of the right signs (π_r ≥ 0 on at
// most rows, ≤ 0 on at least rows of a maximisation), the Lagrangian
// relaxation of the linking rows bounds the stage's optimum:
//
//	z* ≤ L(π) = Σ_r π_r b_r + Σ_k V_k(π) + Σ_s max(0, c_s - π·a_s)
//
// (the last sum over the shortfall columns, which are at most 1). The stage
// stops when the best bound found so far exceeds the master's value z by at
// most RelativeGap = 1e-9 × max(|z|, 1e-6), or when no new policy prices
// positive; after DefaultMaxIterations rounds it fails with
// ErrIterationCap and the gap it reached. Prices are smoothed (Wentges,
// 1997): the pricing problems see 0.7 × the prices of the best bound so far
// plus 0.3 × the master's, and when that finds nothing that improves the
// master, the master's own prices.
//
// Lagrangian warm-up. On small models a pricing round costs a tenth of a
// master solve, and most of the work is master solves spent learning the
// prices. There the first stage first takes 100 subgradient steps on L
// (Held, Wolfe and Crowder, 1974): from the first master's prices π, the
// step π ← proj(π - θ (L(π) - L°) g / |g|²) with g = b - Σ_k a(p_k) the
// subgradient at π (p_k the policies priced there), the target L° = L* -
// 0.3 (L* - z) between the best bound so far L* and the master's value z,
// and θ halved after five steps without a better bound (from a Warm, whose
// policies put z near the optimum, L° = z); proj restores the prices'
// signs. The policies priced in the last 30 steps join the pool,
// and the prices with the best bound become the stability centre. The
// bound stays valid whatever the steps do: only the work changes.
//
// Target rows that no plan of the master misses (most of them, in most
// years) stay out of the master: after each master solve the plan is
// measured against every missing target row, and the rows it misses by
// more than 1e-10 join. Budget rows are always in.
//
// Stages. When doing nothing overspends a budget (routine costs counted
// against it) or spends less than a least spend, a stage 0 first minimises
// the total spend over the caps and under the least spends, each row with
// an excess column of price -1 (its Lagrangian bound is
// finite only where every budget price is at most 1): above 1e-9 of the
// largest cap the plan is infeasible, as the flat model would say;
// otherwise the pool holds policies that keep the budgets, which the later
// stages' first masters need. The flat model's lexicographic order is kept:
// (1) with targets, the least total shortfall; if it is zero the target
// rows are hard from then on; (2) the primary objective (MaxCondition or
// MinCost); (3) the other one as tie-break. Stages 2 and 3 keep the earlier optimum not with
// a hold row, whose price at the optimum left the master's dual nearly
// unbounded (lp_solve then took seconds per round and reported it
// unbounded), but with a weight: stage 3 maximises tie-break + w × primary,
// stage 2 with unmet targets primary - w × shortfall, starting at w = 1e4
// (objectives are near 1 in the model's units) and multiplying w by 100
// while the stage's plan gives up more of the earlier objective than the
// flat model's hold tolerance. Before stage 3 with unmet targets, each
// target row is relaxed to what stage 2's plan reaches, so the shortfall
// per target and year stays where stage 2 put it. Shortfalls are reported
// by measuring the final plan against the targets.
//
// The master through golp. golp can add rows to a solved LP, which lp_solve
// then re-solves from the last basis, but cannot add columns; so the master
// is held as its dual, min Σ_r b_r π_r + Σ_k μ_k subject to one row
// a(p)·π + μ_k ≥ c(p) per policy (a cutting plane on the prices: Kelley,
// 1960), and each round only adds rows. The weights λ_p are that LP's duals;
// at the end of each stage they are re-solved in the primal form over the
// policies they use, which meets the rows to lp_solve's primal tolerance.
// When lp_solve gives no answer from the last basis, the master is rebuilt
// and solved from scratch, and failing that in the primal form.
//
// lp_solve refactorises the dual master's basis, one row per policy, at
// every solve, so a solve costs more the more policies the master holds.
// The pool keeps every policy; the master holds a working set: when it has
// more than three times as many rows as the primal master (active linking
// rows plus classes), it is rebuilt with the policies its last plan uses and
// those of the last three rounds, and a policy that prices positive again
// comes back. Each later stage starts from the policies the earlier stages'
// plans use.
//
// The live master. On networks whose pricing round evaluates more than
// 10,000 (year, state, treatment) rewards, the dual form's refactorisation
// of a basis the size of the pool made the master, not pricing, the bulk of
// a solve (187 s at 1,000 classes). There the master is kept in its primal
// form, alive in lp_solve from round to round through a small cgo call on
// the same library (add_columnex: golp cannot add columns): one row per
// active linking row, class and hold, one column per policy in the working
// set, shortfall and extra money; new policies enter as columns at zero
// and newly violated target rows as rows, so the last basis stays a basis
// and lp_solve goes on from it. Past three policy columns per row the
// working set is cut to the policies the basis holds or the plan uses and
// those of the last three rounds, and the rebuilt master is handed the old
// basis (get_basis and set_basis, renumbered), so the cut costs no
// simplex iterations. Every answer is checked: the weights against every
// row, the prices against every column's reduced cost (at most 1e-8 of
// its largest term) and the two values against each other (within the
// stopping gap); an answer that fails is solved again from scratch under
// each of lp_solve's other settings. The live master starts with mean
// scaling: under lp_solve's default geometric scaling, masters with
// target rows gave answers these checks rejected. Hold rows are rows of
// this master, as in the primal fallback; the Lagrangian warm-up runs on
// these networks too (keeping the last 10 steps' policies), since a
// pricing round is cheap beside the rounds it saves; a live master of a
// single class goes without it, having converged in as many rounds.
//
// A live master of at most 64 rows (a class planned alone under one
// target row a year, as the renewal indicators plan each class, has the
// horizon plus two) is not handed to lp_solve but solved in Go by a dense
// bounded primal simplex (Chvátal, Linear Programming, 1983; phase 1 by
// the sum of infeasibilities, Maros, Computational Techniques of the
// Simplex Method, 2003): logicals bounded by each row's sense, Dantzig's
// pricing with Bland's rule after a run of degenerate pivots, Harris's
// ratio test, an explicit inverse updated per pivot, bordered when a row
// is added, and computed afresh every 50 pivots. lp_solve's set-up cost
// per solve (about 0.1 ms) was most of such a master's time; the dense
// simplex took a 10-state, 8-treatment, 40-year class from 22 to 13.5 ms
// (BenchmarkMasterForm, .../hold). Its answers pass the same checks, and
// one that fails is solved again in lp_solve.
//
// Funding questions. The least level budget (LevelBudget) and the extra
// money that closes the targets (ClosingMoney) are one LP each: the plan's
// model plus money columns in the budget rows (the level L in every
// year's row, or extra money per cap and year). Past 5,000 flat columns
// they are solved by the same decomposition, the money columns being
// columns of the live master that no pricing problem makes (an unbounded
// column priced above zero makes the Lagrangian bound infinite, so such
// prices prove nothing): stages (1) least total shortfall, which must be
// zero, (2) least money, (3) least present value of spend with the money
// held. The answer is checked against every row of the flat funding model
// before it is used; when the targets cannot all be met, the flat model
// says which and why.
//
// A Warm carries the policies that the final plans used from one solve to
// the next (sweeps, what-if runs); they are re-rolled under the new data, so
// a Warm changes the work, not the optimum.
//
// The long-run (steady-state) LP has one column per class, state and action
// and no years, a few thousand columns at most: it is solved flat and needs
// no decomposition.
//
// # Robust plans
//
// SolveRobust (robust.go, where the model is written out) plans one work
// program whose targets hold under the problem's own matrices and under
// each of several sampled matrix sets: the treated quantities are columns
// shared by every sample, each sample has its own untreated quantities
// (never negative) and its own copy of the flow and target rows, and the
// objective is the plan's own under the point estimate. It is solved flat.
package optimize
