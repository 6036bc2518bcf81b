package scenarios

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"wearplan/treatments"
)

// WorklistCaution is the paragraph every worklist carries, after Caution.
const WorklistCaution = "This worklist is indicative: it spreads the network plan over the segment list in priority order. " +
	"Crews and engineers confirm each segment's condition and treatment by inspection before work is ordered; " +
	"years after the first are placed from expected, not observed, condition."

// Worklist is a plan's work assigned to named segments of the inventory.
type Worklist struct {
	Scenario  string `json:"scenario"`
	Source    string `json:"source"`
	Status    Status `json:"status"`
	Currency  string `json:"currency"`
	StartYear int    `json:"start_year"`
	// Years is the number of years listed; the first is the plan's own
	// year-1 work, the others indicative.
	Years int        `json:"years"`
	Items []WorkItem `json:"items"`
	// Checks compare, per year, class, state and treatment, the plan's
	// quantity with the quantity listed.
	Checks   []WorklistCheck `json:"checks"`
	Warnings []string        `json:"warnings"`
	Caution  string          `json:"caution"`
}

// WorkItem is one segment given one treatment in one year.
type WorkItem struct {
	Year int `json:"year"`
	// Basis is "plan" for the first year (today's condition from the
	// inventory) and "indicative" for later years (expected condition).
	Basis     string  `json:"basis"`
	Segment   string  `json:"segment"`
	Name      string  `json:"name,omitempty"`
	Class     string  `json:"class"`
	State     string  `json:"state"`
	Treatment string  `json:"treatment"`
	Quantity  float64 `json:"quantity"`
	Unit      string  `json:"unit"`
	// Cost is at that year's prices.
	Cost float64 `json:"cost"`
	// Rank is the segment's place in priority order among the segments of
	// its class and state that year (1 = first).
	Rank int `json:"rank"`
	// Condition is the index value the inventory gives, for year-1 items
	// of rows that gave a number.
	Condition *float64 `json:"condition,omitempty"`
	Priority  *float64 `json:"priority,omitempty"`
	// Line is the segment's line in the inventory CSV (File).
	File string `json:"file"`
	Line int    `json:"line"`
	// Geometry passed through from the inventory.
	WKT string   `json:"wkt,omitempty"`
	Lon *float64 `json:"lon,omitempty"`
	Lat *float64 `json:"lat,omitempty"`
}

// WorklistCheck compares the plan with the list for one year, class,
// state and treatment.
type WorklistCheck struct {
	Year      int     `json:"year"`
	Class     string  `json:"class"`
	State     string  `json:"state"`
	Treatment string  `json:"treatment"`
	Unit      string  `json:"unit"`
	Planned   float64 `json:"planned"`
	Listed    float64 `json:"listed"`
	Segments  int     `json:"segments"`
	// Tolerance is how far the listed quantity may be from the plan's: the
	// largest segment in the state, or in the class when the state holds
	// none (two for indicative years).
	Tolerance   float64 `json:"tolerance"`
	PlannedCost float64 `json:"planned_cost"`
	ListedCost  float64 `json:"listed_cost"`
}

// Within says whether the listed quantity is within the tolerance.
func (c WorklistCheck) Within() bool {
	return math.Abs(c.Listed-c.Planned) <= c.Tolerance*(1+1e-9)+1e-9*math.Abs(c.Planned)
}

// MakeWorklist assigns the plan's work of the first years to the segments
// of each class's inventory CSV.
//
// Year 1: the plan says how much of each class's state i gets treatment a.
// The segments in state i are taken in priority order (the inventory's
// priority expression, highest first; then worst condition index; then
// largest quantity; then id) and laid end to end; the plan's treatments of
// the state, costliest first, take consecutive stretches of that line as
// long as their planned quantities, and each segment goes, whole, to the
// stretch that holds its midpoint. So a segment is never split, appears at
// most once, and each treatment's listed quantity is within one segment
// (the state's largest) of the plan's.
//
// Years 2 to N are indicative. Each segment carries its expected state
// distribution: today's state, then each year the row of its year's
// transition (the treatment's when it was listed, else doing nothing).
// Segments are ranked by expected state (worst first; ties by today's
// index, worst first) and laid end to end against the plan's expected
// quantities per state for the start of the year, worst state first; each
// segment takes the state holding its midpoint. The year's work is then
// assigned as in year 1.
func MakeWorklist(sc *Scenario, r *Result, years int) (*Worklist, error) {
	if r.Kind != KindPlan {
		return nil, fmt.Errorf("a worklist needs a plan, got a %s", r.Kind)
	}
	if years < 1 || years > sc.Horizon || years > len(r.Years) {
		return nil, fmt.Errorf("years %d: list between 1 and %d years (the plan's horizon)", years, sc.Horizon)
	}
	w := &Worklist{Scenario: sc.Name, Source: sc.Source, Status: r.Status, Currency: sc.Currency, StartYear: sc.StartYear, Years: years,
		Items: []WorkItem{}, Checks: []WorklistCheck{}, Warnings: []string{}, Caution: Caution + " " + WorklistCaution}
	listed := 0
	for k := range sc.Classes {
		c := &sc.Classes[k]
		if c.Segments == nil {
			w.Warnings = append(w.Warnings, fmt.Sprintf("class %s has no segment list (its inventory is written in the scenario), so its work is not listed; give it an inventory_csv", c.Name))
			continue
		}
		if err := listClass(w, sc, r, k, years); err != nil {
			return nil, fmt.Errorf("class %q: %w", c.Name, err)
		}
		listed++
	}
	if listed == 0 {
		return nil, fmt.Errorf("%s: no class has a segment list; give classes an inventory_csv to list their work by segment", sc.Source)
	}
	slices.SortStableFunc(w.Items, func(a, b WorkItem) int { return cmp.Compare(a.Year, b.Year) })
	slices.SortStableFunc(w.Checks, func(a, b WorklistCheck) int { return cmp.Compare(a.Year, b.Year) })
	return w, nil
}

// classLister holds one class's segments while its years are listed.
type classLister struct {
	c       *Class
	actions []treatments.Action
	byName  map[string]int
	n       int
	// base is the segments' priority order (the tie-break everywhere).
	base []int32
	// rankOf[j] is segment j's place in base.
	rankOf []int32
	// score[j] is segment j's condition score today (0-100).
	score []float64
	// tie[j] orders segments of equal expected state: worst today first,
	// then priority order (set when first needed).
	tie []int32
	// state[j] is segment j's state at the start of the year listed.
	state []int
	// belief[j*n:(j+1)*n] is segment j's expected state distribution.
	belief []float64
	// treated[j] is the action given to segment j in the year (0 = none).
	treated []int
	// For a class with a History (history.go): the actions over its
	// widened states, their rows summed back to condition states
	// (folded[a][w], nil where a does not apply), and since[j], segment
	// j's years since its last treatment at the start of the year listed.
	history *treatments.History
	wide    []treatments.Action
	folded  [][][]float64
	since   []int
}

func listClass(w *Worklist, sc *Scenario, r *Result, k, years int) error {
	c := &sc.Classes[k]
	acts, err := treatments.Actions(c.Transition, c.Treatments)
	if err != nil {
		return err
	}
	l := &classLister{c: c, actions: acts, byName: map[string]int{}, n: len(c.Scale.States)}
	for a := range acts {
		l.byName[acts[a].Name] = a
	}
	segs := c.Segments
	m := len(segs)
	// Today's condition score of each segment (the state's representative
	// value when the row gave a state name).
	l.score = make([]float64, m)
	for j := range segs {
		v := segs[j].Index
		if math.IsNaN(v) {
			v = c.Scale.States[segs[j].State].Value
		}
		l.score[j] = c.Scale.Score(v)
	}
	// Priority order: sorting compact keys rather than indexes into the
	// segments keeps a million-row sort in cache.
	type baseKey struct {
		priority, score, quantity float64
		j                         int32
	}
	keys := make([]baseKey, m)
	for j := range segs {
		keys[j] = baseKey{segs[j].Priority, l.score[j], segs[j].Quantity, int32(j)}
	}
	slices.SortFunc(keys, func(a, b baseKey) int {
		if v := cmp.Compare(b.priority, a.priority); v != 0 {
			return v
		}
		if v := cmp.Compare(a.score, b.score); v != 0 {
			return v
		}
		if v := cmp.Compare(b.quantity, a.quantity); v != 0 {
			return v
		}
		return cmp.Compare(segs[a.j].ID, segs[b.j].ID)
	})
	l.base = make([]int32, m)
	l.rankOf = make([]int32, m)
	for r, k := range keys {
		l.base[r] = k.j
		l.rankOf[k.j] = int32(r)
	}
	l.state = make([]int, m)
	for j := range segs {
		l.state[j] = segs[j].State
	}
	l.treated = make([]int, m)
	if h := c.History; h != nil {
		if err := l.withHistory(sc, h); err != nil {
			return err
		}
	}
	for t := 1; t <= years; t++ {
		if t > 1 {
			l.expectedStates(r.Years[t-2].Classes[k].States, r.wideCondition(k, t-1))
		}
		if err := l.assignYear(w, sc, r.Years[t-1].Classes[k], t); err != nil {
			return err
		}
		if t < years {
			l.age()
		}
	}
	return nil
}

// assignYear lists year t's work of the class.
func (l *classLister) assignYear(w *Worklist, sc *Scenario, cc ClassCondition, t int) error {
	c := l.c
	segs := c.Segments
	year := sc.Year(t)
	basis := "plan"
	if t > 1 {
		basis = "indicative"
	}
	price := priceFactor(sc, t)
	// The segments of each state in priority order.
	byState := make([][]int32, l.n)
	largest := make([]float64, l.n)
	for _, j := range l.base {
		s := l.state[j]
		byState[s] = append(byState[s], j)
		largest[s] = math.Max(largest[s], segs[j].Quantity)
	}
	// The plan's work per state: (action, quantity, cost).
	type planned struct {
		a        int
		quantity float64
		cost     float64
	}
	work := make([][]planned, l.n)
	for _, wk := range cc.Work {
		i := c.Scale.StateIndex(wk.State)
		a, ok := l.byName[wk.Treatment]
		if i < 0 || !ok {
			return fmt.Errorf("the plan's work %s on %s does not match the scenario", wk.Treatment, wk.State)
		}
		work[i] = append(work[i], planned{a: a, quantity: wk.Quantity, cost: wk.Cost})
	}
	for j := range l.treated {
		l.treated[j] = 0
	}
	tolerance := 1.0
	if t > 1 {
		tolerance = 2
	}
	// An indicative year places whole segments on the plan's expected
	// quantities, so a state the plan puts less than a segment in may hold
	// none: its tolerance is then the class's largest segment.
	classLargest := slices.Max(largest)
	for i := range largest {
		if largest[i] == 0 {
			largest[i] = classLargest
		}
	}
	for i := 0; i < l.n; i++ {
		if len(work[i]) == 0 {
			continue
		}
		// Costliest treatment first, then the catalogue's order; with
		// intervals, the treatments with the longest wait first, since the
		// segments they may take are among those the others may take.
		slices.SortStableFunc(work[i], func(x, y planned) int {
			if v := cmp.Compare(l.wait(y.a), l.wait(x.a)); v != 0 {
				return v
			}
			return cmp.Compare(l.actions[y.a].Cost[i], l.actions[x.a].Cost[i])
		})
		checks := make([]WorklistCheck, len(work[i]))
		for p, pw := range work[i] {
			checks[p] = WorklistCheck{Year: year, Class: c.Name, State: c.Scale.States[i].Name, Treatment: l.actions[pw.a].Name, Unit: c.Unit,
				Planned: pw.quantity, PlannedCost: pw.cost, Tolerance: tolerance * largest[i]}
		}
		// Lay the state's segments end to end; each goes to the treatment
		// whose stretch holds its midpoint. A segment that may not have a
		// treatment yet (its interval since the last work has not passed)
		// is left out of that treatment's stretch and kept for the next.
		taken := make([]bool, len(byState[i]))
		first := 0 // segments before it are all taken
		end, at := 0.0, 0.0
		for p, pw := range work[i] {
			end += pw.quantity
			for rank := first; rank < len(byState[i]); rank++ {
				j := byState[i][rank]
				if taken[rank] || !l.eligible(j, i, pw.a) {
					continue
				}
				q := segs[j].Quantity
				if at+q/2 >= end {
					break
				}
				at += q
				taken[rank] = true
				for first < len(taken) && taken[first] {
					first++
				}
				l.treated[j] = pw.a
				cost := q * l.actions[pw.a].Cost[i] * price
				checks[p].Listed += q
				checks[p].ListedCost += cost
				checks[p].Segments++
				w.Items = append(w.Items, l.item(j, year, basis, i, pw.a, cost, rank+1, t == 1))
			}
		}
		w.Checks = append(w.Checks, checks...)
	}
	return nil
}

func (l *classLister) item(j int32, year int, basis string, state, action int, cost float64, rank int, first bool) WorkItem {
	s := &l.c.Segments[j]
	it := WorkItem{Year: year, Basis: basis, Segment: s.ID, Name: s.Name, Class: l.c.Name, State: l.c.Scale.States[state].Name,
		Treatment: l.actions[action].Name, Quantity: s.Quantity, Unit: l.c.Unit, Cost: cost, Rank: rank,
		File: l.c.Inventory.File, Line: s.Line, WKT: s.WKT}
	if first && !math.IsNaN(s.Index) {
		v := s.Index
		it.Condition = &v
	}
	if l.c.Inventory.Priority != "" {
		v := s.Priority
		it.Priority = &v
	}
	if s.HasPoint {
		lon, lat := s.Lon, s.Lat
		it.Lon, it.Lat = &lon, &lat
	}
	return it
}

// age moves every segment's expected distribution one year on: through the
// year transition of its treatment from the state it was listed in, or of
// doing nothing from its own distribution.
func (l *classLister) age() {
	n := l.n
	if l.belief == nil {
		l.belief = make([]float64, len(l.state)*n)
		for j, s := range l.state {
			l.belief[j*n+s] = 1
		}
	}
	p := l.actions[0].Rows
	next := make([]float64, n)
	for j := range l.state {
		b := l.belief[j*n : (j+1)*n]
		if a := l.treated[j]; a != 0 {
			copy(b, l.row(j, a, l.state[j]))
			continue
		}
		clear(next)
		for i, bi := range b {
			if bi == 0 {
				continue
			}
			row := p[i]
			if l.history != nil {
				row = l.row(j, 0, i)
			}
			for jj, pij := range row {
				next[jj] += bi * pij
			}
		}
		copy(b, next)
	}
	if l.history != nil {
		for j, a := range l.treated {
			if a != 0 {
				l.since[j] = 1
			} else {
				l.since[j] = min(l.since[j]+1, l.history.Span)
			}
		}
	}
}

// withHistory sets up the widened states of a class with a History: each
// segment's years since work from its last_treated year.
func (l *classLister) withHistory(sc *Scenario, h *treatments.History) error {
	c := l.c
	wide, err := h.Actions(c.Transition, c.AfterWork, c.Treatments)
	if err != nil {
		return err
	}
	l.history, l.wide = h, wide
	l.folded = make([][][]float64, len(wide))
	for a := range wide {
		l.folded[a] = make([][]float64, h.States())
		for w, r := range wide[a].Rows {
			if wide[a].Applies[w] {
				l.folded[a][w] = h.Fold(r)
			}
		}
	}
	l.since = make([]int, len(c.Segments))
	for j := range c.Segments {
		l.since[j] = c.yearsSinceWork(c.Segments[j].LastTreated, sc.StartYear)
	}
	return nil
}

// eligible says whether segment j, placed in state i, may be given action
// a this year: always, unless an interval since its last work has not
// passed.
func (l *classLister) eligible(j int32, i, a int) bool {
	return l.history == nil || l.wide[a].Applies[l.history.State(i, l.since[j])]
}

// wait is the years action a must wait after any work (0 without
// intervals).
func (l *classLister) wait(a int) int {
	if l.history == nil || a == 0 {
		return 0
	}
	return max(l.c.Treatments[a-1].MinInterval, 1)
}

// row is the year's transition of segment j, in state i, given action a,
// by condition state.
func (l *classLister) row(j, a, i int) []float64 {
	if l.history == nil {
		return l.actions[a].Rows[i]
	}
	return l.folded[a][l.history.State(i, l.since[j])]
}

// expectedStates places the segments in states for the start of a later
// year: ranked by expected state, worst first, against the plan's expected
// quantities q (end of the previous year), worst state first. For a class
// with a History, when the plan's quantities by widened state are known
// (wide), the segments with each number of years since work are placed
// against the plan's quantities with that number, so that the segments a
// treatment may have match the plan's.
func (l *classLister) expectedStates(q Quantities, wide []float64) {
	n := l.n
	m := len(l.state)
	if l.tie == nil {
		order := slices.Clone(l.base)
		slices.SortStableFunc(order, func(a, b int32) int { return cmp.Compare(l.score[a], l.score[b]) })
		l.tie = make([]int32, m)
		for r, j := range order {
			l.tie[j] = int32(r)
		}
	}
	type key struct {
		expected float64
		tie, j   int32
	}
	keys := make([]key, m)
	for j := range m {
		e := 0.0
		for i, bi := range l.belief[j*n : (j+1)*n] {
			e += float64(i) * bi
		}
		keys[j] = key{e, l.tie[j], int32(j)}
	}
	slices.SortFunc(keys, func(a, b key) int {
		if v := cmp.Compare(b.expected, a.expected); v != 0 {
			return v
		}
		return cmp.Compare(a.tie, b.tie)
	})
	groups, group := 1, func(int32) int { return 0 }
	quantity := func(s, _ int) float64 { return q[s].Quantity }
	if h := l.history; h != nil && wide != nil {
		groups, group = h.Span, func(j int32) int { return l.since[j] - 1 }
		quantity = func(s, g int) float64 { return wide[h.State(s, g+1)] }
	}
	for g := range groups {
		s := n - 1
		end := quantity(s, g)
		at := 0.0
		for _, k := range keys {
			if group(k.j) != g {
				continue
			}
			qj := l.c.Segments[k.j].Quantity
			mid := at + qj/2
			at += qj
			for s > 0 && mid >= end {
				s--
				end += quantity(s, g)
			}
			l.state[k.j] = s
		}
	}
}
