// Package treatments holds the catalogue of maintenance and renewal
// treatments and turns each one into the transition it causes in a year.
//
// A treatment applies to some condition states, costs a given amount per unit
// of quantity (one figure, or one per state), and has an effect: the
// distribution of condition right after the work. Three forms cover practice:
//
//   - to state s: everything treated ends in state s (reconstruction to new);
//   - improve by k states: state i goes to state max(i-k, best);
//   - an explicit distribution for each state it applies to, for treatments
//     whose outcome varies (a thin overlay on a weak base).
//
// Written as a matrix E_a (row i: the distribution after treating state i),
// the year's transition for an asset in state i treated with a is row i of
// E_a·P: it is treated early in the year and then ages under the do-nothing
// matrix P for the rest of it. A treatment that takes the whole season (or
// whose result is assessed at completion) can say it does not age in its
// year; its year's transition is then row i of E_a. Doing nothing is always
// available, with E = I and no cost.
//
// An Action bundles what an optimizer needs: for each state whether the
// action applies, its unit cost there, and its year's transition row.
//
// # Treatment history
//
// A condition-state chain forgets what was done to an asset, so on its own
// it lets a seal that holds the state be repeated every year, for ever. Two
// rules of practice need the years since the last work: a treatment may
// have to wait N years after any treatment of the same quantity
// (Treatment.MinInterval), and a freshly treated asset may wear by another
// matrix Q for its first K years (AfterWork). History widens the state to
// (i, y), condition i and y years since the year of the last work (1 = last
// year), with y kept up to a span S = max(largest N, K+1), where S stands
// for "S or more". The rules then become ordinary transitions:
//
//	do nothing in (i, y):  to (j, min(y+1, S)) with Q(i, j) if y <= K, else P(i, j)
//	treatment a in (i, y): allowed if a applies to i and y >= N_a;
//	                       to (j, 1) with (E_a·Q)(i, j), or E_a(i, j) if a skips ageing
//
// (with Q = P when there is no after-work wear). So the K years of Q are the
// K years after the work year; a treatment that ages in its year also wears
// by Q in the rest of that year. This is the state augmentation used to
// keep the Markov property when a decision depends on history (Puterman,
// Markov Decision Processes, 1994, section 2.1); the widened chain is a
// plain Markov chain over n·S states, so the optimizer's linear programs
// and dynamic programs apply unchanged and stay exact. With no interval and
// no after-work wear the widened chain lumps back to the plain one (Kemeny
// and Snell, Finite Markov Chains, 1960, section 6.3), so classes that need
// no history are not widened (NewHistory returns nil). Fold sums quantities
// by widened state back to condition states for everything reported.
package treatments
