package markov

// NewWorkSelectionForTest builds a WorkSelection: per state, per interval
// of 1, 2, 3 years, the kept and work counts.
func NewWorkSelectionForTest(states int, keptWork [][3][2]float64) *WorkSelection {
	w := newWorkSelection(states)
	for i, byYears := range keptWork {
		for g, kw := range byYears {
			w.kept[i][g+1], w.work[i][g+1] = kw[0], kw[1]
		}
	}
	return w
}
