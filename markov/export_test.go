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

// OrderedGradientCheck compares the ordered model's exact gradient with
// central differences at theta, returning both.
func OrderedGradientCheck(pairs []Pair, states int, names []string, link Link, theta []float64) (exact, numeric []float64, err error) {
	m := &OrderedModel{Link: link, States: states, Names: names}
	d, err := m.standardise(pairs, len(names))
	if err != nil {
		return nil, nil, err
	}
	m.Drops = supportedDrops(pairs, states, Structure{})
	ev := &orderedEval{m: m, d: d}
	if theta == nil {
		theta = make([]float64, len(names)+m.thresholdCount())
		for k := range theta {
			theta[k] = 0.3 * float64(k%5-2)
		}
	}
	exact = make([]float64, len(theta))
	ev.eval(theta, exact)
	numeric = make([]float64, len(theta))
	for k := range theta {
		h := 1e-5
		up, down := append([]float64(nil), theta...), append([]float64(nil), theta...)
		up[k] += h
		down[k] -= h
		numeric[k] = (ev.eval(up, nil) - ev.eval(down, nil)) / (2 * h)
	}
	return exact, numeric, nil
}

// OrderedHessianCheck returns the closed-form Hessian of the ordered
// model's log-likelihood at theta and central differences of its exact
// gradient, for pairs one year apart.
func OrderedHessianCheck(pairs []Pair, states int, names []string, link Link, theta []float64) (exact, numeric [][]float64, err error) {
	m := &OrderedModel{Link: link, States: states, Names: names}
	d, err := m.standardise(pairs, len(names))
	if err != nil {
		return nil, nil, err
	}
	m.Drops = supportedDrops(pairs, states, Structure{})
	ev := &orderedEval{m: m, d: d}
	k := len(names) + m.thresholdCount()
	if theta == nil {
		theta = make([]float64, k)
		for i := range theta {
			theta[i] = 0.3 * float64(i%5-2)
		}
	}
	h := ev.hessian(theta)
	for a := 0; a < k; a++ {
		row := make([]float64, k)
		num := make([]float64, k)
		for b := 0; b < k; b++ {
			row[b] = h.At(a, b)
			step := 1e-5
			up, down := append([]float64(nil), theta...), append([]float64(nil), theta...)
			up[b] += step
			down[b] -= step
			gu, gd := make([]float64, k), make([]float64, k)
			ev.eval(up, gu)
			ev.eval(down, gd)
			num[b] = (gu[a] - gd[a]) / (2 * step)
		}
		exact, numeric = append(exact, row), append(numeric, num)
	}
	return exact, numeric, nil
}
