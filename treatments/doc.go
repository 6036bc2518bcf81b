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
package treatments
