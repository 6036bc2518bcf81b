package scenarios

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"time"

	"wearplan/optimize"
	"wearplan/treatments"
)

// Treatment history: a class whose treatments keep intervals
// (min_interval) or that wears differently after work (after_work) is
// planned over its states widened with the years since its last treatment
// (treatments.History). The widening happens in one place, problemClass;
// everything a planner reads is summed back to condition states in one
// place too, the fold functions below, which assemble and the long run
// call. The widened states appear only in exported models (their legend)
// and, per segment, as the last_treated year.

// buildHistory reads a class's after_work, min_intervals and last_treated
// and sets its History. fromCSV says the class's inventory comes from a
// segment list.
func buildHistory(sc *Scenario, c *Class, fc *fileClass, field string, fromCSV bool, is *issues) {
	n := len(c.Scale.States)
	if mi := fc.MinIntervals; mi != nil {
		for _, e := range mi.Entries {
			fld := field + ".min_intervals." + e.Treatment
			if !slices.Contains(fc.Treatments, e.Treatment) {
				is.add(e.Line, fld, "the class does not list treatment %q; add it to the class's treatments, or drop its interval here", e.Treatment)
				continue
			}
			if e.Years < 0 || e.Years > maxInterval {
				is.add(e.Line, fld, "%d years; give the least number of years between two treatments of the same quantity, 0 (no wait) to %d", e.Years, maxInterval)
				continue
			}
			for t := range c.Treatments {
				if c.Treatments[t].Name == e.Treatment {
					c.Treatments[t].MinInterval = e.Years
				}
			}
		}
	}
	if aw := fc.AfterWork; aw != nil {
		buildAfterWork(c, aw, field+".after_work", is)
	}
	if lt := fc.LastTreated; lt != nil {
		if fromCSV {
			is.add(lt.Line, field+".last_treated", "the class's inventory comes from a segment list; give each segment's year in its last_treated column instead")
		} else {
			buildLastTreated(sc, c, lt, field+".last_treated", is)
		}
	}
	c.History = treatments.NewHistory(n, c.Treatments, c.AfterWork)
}

func buildAfterWork(c *Class, aw *fileAfterWork, fld string, is *issues) {
	ok := true
	years := 0
	switch {
	case aw.Years == nil:
		is.add(aw.Lines.of(""), fld+".years", "missing; give the number of years after the work that wear by this matrix, e.g. years: 3")
		ok = false
	case *aw.Years < 1 || *aw.Years > maxInterval:
		is.add(aw.Lines.of("years"), fld+".years", "%d years; give 1 to %d", *aw.Years, maxInterval)
		ok = false
	default:
		years = *aw.Years
	}
	d := aw.Deterioration
	switch {
	case d == nil:
		is.add(aw.Lines.of(""), fld+".deterioration", "missing; give the wear of those years as matrix: (one row per state) or years_in_state: (one value per state but the worst)")
		return
	case d.Fit != "" || d.FitClass != "":
		is.add(d.Lines.of("fit"), fld+".deterioration.fit", "fit files give a class's usual deterioration; give the wear after work as matrix: or years_in_state:")
		return
	}
	t := transitionOf(d, c.Scale, fld+".deterioration", is)
	if ok && t != nil {
		c.AfterWork = &treatments.AfterWork{Years: years, Transition: t}
	}
}

// buildLastTreated reads last_treated shares of a class typed as
// quantities.
func buildLastTreated(sc *Scenario, c *Class, lt *lastTreatedSpec, fld string, is *issues) {
	n := len(c.Scale.States)
	total := make([]float64, n)
	ok := true
	for _, e := range lt.Entries {
		efld := fmt.Sprintf("%s.%d", fld, e.Year)
		if msg := lastTreatedCheck(e.Year, sc.StartYear); msg != "" {
			is.add(e.Line, efld, "%s", msg)
			ok = false
			continue
		}
		share := make([]float64, n)
		checkShare := func(v float64, line int, f string) bool {
			if v < 0 || v > 1 {
				is.add(line, f, "share %s is outside 0-1; write 10%% as 0.1", num(v))
				ok = false
				return false
			}
			return true
		}
		if e.Share != nil {
			if checkShare(*e.Share, e.Line, efld) {
				for i := range share {
					share[i] = *e.Share
				}
			}
		} else {
			for _, sn := range e.ByState.Entries {
				sfld := efld + "." + sn.State
				i := c.Scale.StateIndex(sn.State)
				if i < 0 {
					is.add(sn.Line, sfld, "unknown state %q on scale %q; states are %s", sn.State, c.Scale.Name, stateList(c.Scale))
					ok = false
					continue
				}
				if checkShare(sn.Value, sn.Line, sfld) {
					share[i] = sn.Value
				}
			}
		}
		for i, v := range share {
			total[i] += v
		}
		c.LastTreated = append(c.LastTreated, LastTreated{Year: e.Year, Share: share})
	}
	for i, v := range total {
		if v > 1+1e-9 {
			is.add(lt.Line, fld, "the shares of state %q last treated in the years given add up to %s; they can add up to 1 at most (the rest counts as treated long ago)", c.Scale.States[i].Name, num(v))
			ok = false
		}
	}
	if !ok {
		c.LastTreated = nil
	}
}

// lastTreatedCheck says what is wrong with a year of last work for a plan
// starting in start ("" when nothing is; start 0 when unknown).
func lastTreatedCheck(year, start int) string {
	switch {
	case year < minYear || year > maxYear:
		return fmt.Sprintf("%d is not a plausible calendar year of the last work", year)
	case start > 0 && year >= start:
		return fmt.Sprintf("%d is not before start_year %d; the plan starts from the condition at the start of %d, so give the year of the last work before it", year, start, start)
	}
	return ""
}

// lastTreatedYear reads a segment's last_treated cell: empty (not known),
// a year (2024) or a date (2024-06-30). It returns the year, or a message
// for the planner.
func lastTreatedYear(cell string, start int) (int, string) {
	if cell == "" {
		return 0, ""
	}
	year := 0
	if len(cell) <= 4 && strings.Trim(cell, "0123456789") == "" {
		for _, r := range cell {
			year = 10*year + int(r-'0')
		}
	} else if d, err := time.Parse(time.DateOnly, cell); err == nil {
		year = d.Year()
	} else {
		return 0, fmt.Sprintf("%q is not a year; write the calendar year of the segment's last treatment (2024) or its date (2024-06-30), or leave it empty when not known", cell)
	}
	if msg := lastTreatedCheck(year, start); msg != "" {
		return 0, msg
	}
	return year, ""
}

// historyNotes says, for classes with a History, what was assumed about
// quantities whose last treatment is not known (one note for the classes
// typed as quantities, one for segment lists), and for the others that a
// last_treated they give changes nothing.
func historyNotes(sc *Scenario) {
	var typed, segs []string
	undated, listed := 0, 0
	after := false
	for k := range sc.Classes {
		c := &sc.Classes[k]
		if c.Scale == nil {
			continue
		}
		given, segments := len(c.LastTreated), 0
		if c.Inventory != nil {
			given, segments = c.datedSegments, c.inventorySegments()
		}
		if c.History == nil {
			if given > 0 {
				sc.Notes = append(sc.Notes, fmt.Sprintf("class %s gives when it was last treated, but none of its treatments has a min_interval and it has no after_work, so that changes nothing", c.Name))
			}
			continue
		}
		switch {
		case c.Inventory != nil && given < segments:
			segs = append(segs, c.Name)
			undated, listed = undated+segments-given, listed+segments
		case c.Inventory == nil && given == 0:
			typed = append(typed, c.Name)
		default:
			continue
		}
		after = after || c.AfterWork != nil
	}
	past := "free for every treatment interval"
	if after {
		past += " and past any wear after work"
	}
	if len(typed) > 0 {
		who, whose := "class "+typed[0]+" gives", "its"
		if len(typed) > 1 {
			who, whose = "classes "+strings.Join(typed, ", ")+" give", "their"
		}
		sc.Notes = append(sc.Notes, fmt.Sprintf("%s no last_treated, so all of %s quantity is taken as treated long ago: %s; give last_treated shares to say otherwise", who, whose, past))
	}
	if len(segs) > 0 {
		// Counts for the network, not per class, so that the note stays
		// one line in the summaries it heads.
		sc.Notes = append(sc.Notes, fmt.Sprintf("%s of %s segments (of %s) give no last_treated year and are taken as treated long ago: %s", money(float64(undated)), money(float64(listed)), strings.Join(segs, ", "), past))
	}
}

// inventorySegments is the number of segments the class took from its
// segment list.
func (c *Class) inventorySegments() int {
	for _, ic := range c.Inventory.Classes {
		if ic.Class == c.Name {
			return ic.Segments
		}
	}
	return 0
}

// yearsSinceWork is the years since the last work at the start of the plan
// of a quantity last treated in year last (0: not known, taken as long ago).
func (c *Class) yearsSinceWork(last, start int) int {
	if last == 0 {
		return c.History.Span
	}
	return start - last
}

// wideInitial is today's quantity by widened state: each state's quantity
// by the shares last treated in each year (as written, or summed from a
// segment list whether its segments are kept or only counted, so that
// both give the same plan); quantities whose last work is not known count
// as treated long ago.
func (c *Class) wideInitial(start int) []float64 {
	h := c.History
	out := make([]float64, h.States())
	for i, q := range c.Initial {
		rest := q
		for _, lt := range c.LastTreated {
			v := q * lt.Share[i]
			out[h.State(i, c.yearsSinceWork(lt.Year, start))] += v
			rest -= v
		}
		out[h.State(i, h.Span)] += math.Max(rest, 0)
	}
	return out
}

// piece is a quantity of a class in one state last treated in one year
// (0: not known).
type piece struct {
	State, LastTreated int
	Quantity           float64
}

// pieces is today's quantity of a class by state and, for a class with a
// History, by the year of its last treatment.
func (c *Class) pieces(start int) []piece {
	var out []piece
	if c.History == nil {
		for i, q := range c.Initial {
			out = append(out, piece{State: i, Quantity: q})
		}
		return out
	}
	h := c.History
	for w, q := range c.wideInitial(start) {
		pc := piece{State: h.Condition(w), Quantity: q}
		if y := h.Years(w); y < h.Span {
			pc.LastTreated = start - y
		}
		out = append(out, pc)
	}
	return out
}

// conditionClass is the class over its condition states.
func (c *Class) conditionClass() (optimize.Class, error) {
	acts, err := treatments.Actions(c.Transition, c.Treatments)
	if err != nil {
		return optimize.Class{}, err
	}
	score := make([]float64, len(c.Scale.States))
	for i, st := range c.Scale.States {
		score[i] = c.Scale.Score(st.Value)
	}
	return optimize.Class{
		Name: c.Name, Initial: c.Initial, Score: score, Group: c.Scale.Group, Weight: c.Weight, Actions: acts, Routine: c.Routine,
	}, nil
}

// problemClass is the class as the optimizer sees it: over its condition
// states, or over the widened states of its History, with today's
// quantities placed by their last treatment and each widened state scored,
// grouped and costed as its condition state.
func (c *Class) problemClass(start int) (optimize.Class, error) {
	oc, err := c.conditionClass()
	h := c.History
	if err != nil || h == nil {
		return oc, err
	}
	acts, err := h.Actions(c.Transition, c.AfterWork, c.Treatments)
	if err != nil {
		return optimize.Class{}, err
	}
	names := make([]string, len(c.Scale.States))
	for i, st := range c.Scale.States {
		names[i] = st.Name
	}
	wide := oc
	wide.Initial = c.wideInitial(start)
	wide.Score = treatments.Widen(h, oc.Score)
	wide.Group = treatments.Widen(h, oc.Group)
	if oc.Routine != nil {
		wide.Routine = treatments.Widen(h, oc.Routine)
	}
	wide.Actions = acts
	wide.Labels = make([]string, h.States())
	for w := range wide.Labels {
		wide.Labels[w] = h.Label(names, w)
	}
	return wide, nil
}

// conditionClasses returns p's classes over condition states, for
// reading results: p's own class where no History widens it, else a view
// with each condition state's score, group, routine cost and the action
// costs of its widened states (the same for every year since work).
func conditionClasses(sc *Scenario, p *optimize.Problem) []*optimize.Class {
	out := make([]*optimize.Class, len(p.Classes))
	for k := range p.Classes {
		wide := &p.Classes[k]
		out[k] = wide
		h := sc.Classes[k].History
		if h == nil || len(wide.Initial) != h.States() {
			continue
		}
		n := h.Conditions
		v := &optimize.Class{Name: wide.Name, Initial: h.Fold(wide.Initial), Score: make([]float64, n), Group: make([]optimize.Group, n), Weight: wide.Weight}
		if wide.Routine != nil {
			v.Routine = make([]float64, n)
		}
		v.Actions = make([]treatments.Action, len(wide.Actions))
		for a := range v.Actions {
			v.Actions[a] = treatments.Action{Name: wide.Actions[a].Name, Applies: make([]bool, n), Cost: make([]float64, n), Rows: make([][]float64, n)}
		}
		for w := range wide.Initial {
			i := h.Condition(w)
			v.Score[i], v.Group[i] = wide.Score[w], wide.Group[w]
			if v.Routine != nil {
				v.Routine[i] = wide.Routine[w]
			}
			for a := range wide.Actions {
				if act := &wide.Actions[a]; act.Applies[w] {
					v.Actions[a].Applies[i] = true
					v.Actions[a].Cost[i] = act.Cost[w]
				}
			}
		}
		out[k] = v
	}
	return out
}

// foldQuantities sums one class's quantities by widened state back to
// condition states; quantities already by condition state are returned as
// they are.
func foldQuantities(c *Class, q []float64) []float64 {
	if c.History == nil || len(q) != c.History.States() {
		return q
	}
	return c.History.Fold(q)
}

// foldCondition sums cond[k][t] (quantities by state) back to condition
// states, leaving cond itself as it is. cond[k][0] is today's condition:
// the class's quantities as read, exactly (a sum over the widened states
// could differ from them in the last digit).
func foldCondition(sc *Scenario, cond [][][]float64) [][][]float64 {
	out := slices.Clone(cond)
	for k := range out {
		c := &sc.Classes[k]
		if c.History == nil {
			continue
		}
		out[k] = make([][]float64, len(cond[k]))
		for t, q := range cond[k] {
			out[k][t] = foldQuantities(c, q)
		}
		if len(out[k]) > 0 {
			out[k][0] = slices.Clone(c.Initial)
		}
	}
	return out
}

// wideOnly keeps cond[k] of the classes whose quantities are by widened
// state (nil for the others, and nil when there are none).
func wideOnly(sc *Scenario, cond [][][]float64) [][][]float64 {
	var out [][][]float64
	for k := range cond {
		h := sc.Classes[k].History
		if h == nil || len(cond[k]) == 0 || len(cond[k][len(cond[k])-1]) != h.States() {
			continue
		}
		if out == nil {
			out = make([][][]float64, len(cond))
		}
		out[k] = cond[k]
	}
	return out
}

// foldWork sums work[k][t][i][a] (quantities by state and action) back to
// condition states, leaving work itself as it is.
func foldWork(sc *Scenario, work [][][][]float64) [][][][]float64 {
	if work == nil {
		return nil
	}
	out := slices.Clone(work)
	for k := range out {
		if sc.Classes[k].History == nil {
			continue
		}
		out[k] = make([][][]float64, len(work[k]))
		for t := range work[k] {
			out[k][t] = foldByAction(sc.Classes[k].History, work[k][t])
		}
	}
	return out
}

// foldByAction sums quantities by widened state and action back to
// condition states.
func foldByAction(h *treatments.History, byState [][]float64) [][]float64 {
	if len(byState) != h.States() {
		return byState
	}
	out := make([][]float64, h.Conditions)
	for w, byAction := range byState {
		i := h.Condition(w)
		if out[i] == nil {
			out[i] = make([]float64, len(byAction))
		}
		for a, q := range byAction {
			out[i][a] += q
		}
	}
	return out
}

// rollRows carries quantities q forward years years through the one-year
// rows of doing nothing (row i: the distribution a year after state i).
func rollRows(rows [][]float64, q []float64, years int) [][]float64 {
	out := make([][]float64, years+1)
	out[0] = slices.Clone(q)
	for t := 1; t <= years; t++ {
		next := make([]float64, len(q))
		for i, qi := range out[t-1] {
			if qi == 0 {
				continue
			}
			for j, p := range rows[i] {
				next[j] += qi * p
			}
		}
		out[t] = next
	}
	return out
}
