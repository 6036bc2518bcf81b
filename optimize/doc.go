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
// the caps into caps on cumulative spend.
//
// Condition is measured on a score from 0 (worst end of the scale) to 100
// (best end): each class's index values are mapped linearly onto it, so
// classes on different scales (PCI, IRI, bridge ratings) can be averaged.
// Network figures weight classes by the weights handed in (replacement value
// where known). Targets bound, for a class or the network and a range of
// years, the share of a group (good, fair, poor) from above or below, the
// average score from below, or hold the end-of-horizon score at today's.
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
package optimize
