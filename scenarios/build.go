package scenarios

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"wearplan/markov"
	"wearplan/optimize"
	"wearplan/treatments"
)

// Limits on scenario values that catch typing mistakes early.
const (
	maxHorizon = 100
	// maxInterval bounds min_interval and after_work years: each year
	// kept widens the class's states (treatments.History).
	maxInterval = 50
	minYear     = 1900
	maxYear     = 2300
)

// build checks the decoded file and turns it into a Scenario, recording
// every problem in is. The returned scenario is meaningful only when is
// stays empty.
func build(f *fileScenario, is *issues) *Scenario {
	sc := &Scenario{Name: strings.TrimSpace(f.Name), Description: f.Description, Currency: f.Currency}
	if sc.Name == "" {
		is.add(f.Lines.of(""), "name", "missing; give the scenario a name, e.g. name: Current funding")
	}
	if f.StartYear == nil {
		is.add(f.Lines.of(""), "start_year", "missing; give the first planning year, e.g. start_year: 2027")
	} else if *f.StartYear < minYear || *f.StartYear > maxYear {
		is.add(f.Lines.of("start_year"), "start_year", "%d is not a plausible calendar year", *f.StartYear)
	} else {
		sc.StartYear = *f.StartYear
	}
	if f.Horizon == nil {
		is.add(f.Lines.of(""), "horizon", "missing; give the number of years to plan, e.g. horizon: 20")
	} else if *f.Horizon < 1 || *f.Horizon > maxHorizon {
		is.add(f.Lines.of("horizon"), "horizon", "%d years; plan between 1 and %d years", *f.Horizon, maxHorizon)
	} else {
		sc.Horizon = *f.Horizon
	}
	sc.DiscountRate = rate(is, f.DiscountRate, f.Lines.of("discount_rate"), "discount_rate")
	sc.Escalation = rate(is, f.CostEscalation, f.Lines.of("cost_escalation"), "cost_escalation")

	scales, classScale := classScales(f, is)
	catalogue := indexTreatments(f, is)
	buildClasses(sc, f, scales, classScale, catalogue, is)
	splitFamilies(sc, f, is)
	buildBudget(sc, f, is)
	checkAmounts(sc, f, catalogue, is)
	buildTargets(sc, f, is)
	buildObjective(sc, f, is)
	buildClassWarnings(sc, f, is)
	return sc
}

// buildClassWarnings reads the thresholds of the warnings on what a plan
// does to each class; keys not given keep DefaultClassWarnings.
func buildClassWarnings(sc *Scenario, f *fileScenario, is *issues) {
	sc.ClassWarnings = DefaultClassWarnings
	cw := f.ClassWarnings
	if cw == nil {
		return
	}
	if v := cw.PoorShareRise; v != nil {
		if *v < 0 || *v > 1 {
			is.add(cw.Lines.of("poor_share_rise"), "class_warnings.poor_share_rise", "%g is outside 0-1; write 10 points as 0.10 (1 turns the warning off)", *v)
		}
		sc.ClassWarnings.PoorShareRise = *v
	}
	for _, g := range []struct {
		key string
		v   *float64
		to  *float64
	}{{"worst_state_growth", cw.WorstStateGrowth, &sc.ClassWarnings.WorstStateGrowth}, {"backlog_growth", cw.BacklogGrowth, &sc.ClassWarnings.BacklogGrowth}} {
		if g.v == nil {
			continue
		}
		if *g.v < 1 {
			is.add(cw.Lines.of(g.key), "class_warnings."+g.key, "%g: give a factor of 1 or more (2 warns when a figure more than doubles)", *g.v)
		}
		*g.to = *g.v
	}
}

func rate(is *issues, v *float64, line int, field string) float64 {
	if v == nil {
		return 0
	}
	if *v > 1 || *v <= -1 {
		is.add(line, field, "%g is not a yearly rate; write rates as fractions, e.g. 0.03 for 3%%", *v)
		return 0
	}
	return *v
}

func buildScales(f *fileScenario, is *issues) map[string]*Scale {
	out := map[string]*Scale{}
	if len(f.Scales) == 0 && !anyPresetClass(f) {
		is.add(f.Lines.of(""), "scales", "missing; define at least one condition scale with its states and groups, or use a preset (scale: preset:NAME in a class)")
	}
	for _, name := range sortedKeys(f.Scales) {
		fs := f.Scales[name]
		path := "scales." + name
		var s *Scale
		if fs.Preset != "" {
			if len(fs.States) > 0 {
				is.add(fs.Lines.of("states"), path+".states", "a preset scale takes no states; drop them, or drop preset: and write every state")
				continue
			}
			var groups map[string][]string
			if len(fs.Groups) > 0 {
				groups = fs.Groups
			}
			s = buildPreset(name, fs.Preset, fs.Lines.of("preset"), groups, path+".preset", is)
		} else {
			s = buildScale(name, &fs, path, is)
		}
		if s != nil {
			out[name] = s
		}
	}
	// Classes may name a preset directly (scale: preset:NAME); every class
	// naming the same preset shares one scale.
	for k := range f.Classes {
		fc := &f.Classes[k]
		name, ok := strings.CutPrefix(fc.Scale, PresetPrefix)
		if !ok || out[fc.Scale] != nil {
			continue
		}
		if s := buildPreset(fc.Scale, name, fc.Lines.of("scale"), nil, fmt.Sprintf("classes[%d].scale", k), is); s != nil {
			out[fc.Scale] = s
		}
	}
	return out
}

func anyPresetClass(f *fileScenario) bool {
	for k := range f.Classes {
		if strings.HasPrefix(f.Classes[k].Scale, PresetPrefix) {
			return true
		}
	}
	return false
}

func buildScale(name string, fs *fileScale, path string, is *issues) *Scale {
	ok := true
	bad := func(line int, field, format string, args ...any) {
		is.add(line, field, format, args...)
		ok = false
	}
	n := len(fs.States)
	if n < 2 {
		bad(fs.Lines.of("states"), path+".states", "%d states; a scale needs at least 2, best first", n)
		return nil
	}
	s := &Scale{Name: name, States: make([]State, n), Group: make([]optimize.Group, n)}
	seen := map[string]bool{}
	for i, st := range fs.States {
		field := fmt.Sprintf("%s.states[%d]", path, i)
		if strings.TrimSpace(st.Name) == "" {
			bad(st.Lines.of(""), field+".name", "missing; every state needs a name")
		} else if seen[st.Name] {
			bad(st.Lines.of("name"), field+".name", "state %q appears twice in the scale", st.Name)
		}
		seen[st.Name] = true
		if st.Min == nil || st.Max == nil || st.Value == nil {
			bad(st.Lines.of(""), field, "give min, max and value (the representative index of the state)")
			continue
		}
		if *st.Min > *st.Max {
			bad(st.Lines.of("min"), field, "min %g is above max %g", *st.Min, *st.Max)
		}
		if *st.Value < *st.Min || *st.Value > *st.Max {
			bad(st.Lines.of("value"), field+".value", "%g is outside the state's range %g-%g", *st.Value, *st.Min, *st.Max)
		}
		s.States[i] = State{Name: st.Name, Min: *st.Min, Max: *st.Max, Value: *st.Value}
	}
	if !ok {
		return nil
	}
	// Direction: higher index is better when the best state's value is the
	// larger (PCI, bridge ratings); lower is better otherwise (IRI).
	higherBetter := s.States[0].Value > s.States[1].Value
	for i := 0; i+1 < n; i++ {
		cur, next := s.States[i], s.States[i+1]
		hi, lo := cur, next // hi holds the larger index values
		if !higherBetter {
			hi, lo = next, cur
		}
		field := fmt.Sprintf("%s.states[%d]", path, i+1)
		line := fs.States[i+1].Lines.of("")
		switch {
		case hi.Value <= lo.Value:
			bad(line, field, "states must run best to worst with index values all falling or all rising; %q breaks the order", next.Name)
		case lo.Max > hi.Min:
			bad(line, field, "range %g-%g of %q overlaps %g-%g of %q", next.Min, next.Max, next.Name, cur.Min, cur.Max, cur.Name)
		case lo.Max < hi.Min && !(wholeNumbers(lo.Max, hi.Min) && hi.Min-lo.Max == 1):
			bad(line, field, "gap between %g and %g: the ranges of %q and %q must meet (shared end, or consecutive whole numbers)", lo.Max, hi.Min, cur.Name, next.Name)
		}
	}
	if higherBetter {
		s.Best, s.Worst = s.States[0].Max, s.States[n-1].Min
	} else {
		s.Best, s.Worst = s.States[0].Min, s.States[n-1].Max
	}
	// Groups: every state in exactly one of good, fair, poor, in that order.
	assigned := make([]int, n)
	for i := range assigned {
		assigned[i] = -1
	}
	if len(fs.Groups) == 0 {
		bad(fs.Lines.of(""), path+".groups", "missing; say which states are good, fair and poor, e.g. groups: {good: [A, B], fair: [C], poor: [D]}")
		return nil
	}
	for _, g := range sortedKeys(fs.Groups) {
		gi := groupByName(g)
		if gi < 0 {
			bad(fs.Lines.of("groups"), path+".groups."+g, "unknown group %q; use good, fair and poor", g)
			continue
		}
		for _, stName := range fs.Groups[g] {
			i := s.StateIndex(stName)
			switch {
			case i < 0:
				bad(fs.Lines.of("groups"), path+".groups."+g, "unknown state %q; states are %s", stName, stateList(s))
			case assigned[i] >= 0:
				bad(fs.Lines.of("groups"), path+".groups."+g, "state %q is already in group %s", stName, optimize.Group(assigned[i]))
			default:
				assigned[i] = int(gi)
			}
		}
	}
	for i, a := range assigned {
		if a < 0 {
			bad(fs.Lines.of("groups"), path+".groups", "state %q is in no group; put it in good, fair or poor", s.States[i].Name)
			continue
		}
		s.Group[i] = optimize.Group(a)
		if i > 0 && assigned[i-1] > a && assigned[i-1] >= 0 {
			bad(fs.Lines.of("groups"), path+".groups", "state %q is %s but a better state is %s; groups must run good, fair, poor down the scale", s.States[i].Name, optimize.Group(a), optimize.Group(assigned[i-1]))
		}
	}
	if !ok {
		return nil
	}
	return s
}

// num writes a number as typed, without exponent: 3000000, not 3e+06.
func num(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

func wholeNumbers(vs ...float64) bool {
	for _, v := range vs {
		if v != math.Trunc(v) {
			return false
		}
	}
	return true
}

func groupByName(g string) optimize.Group {
	for _, gr := range optimize.Groups {
		if gr.String() == g {
			return gr
		}
	}
	return -1
}

func stateList(s *Scale) string {
	names := make([]string, len(s.States))
	for i, st := range s.States {
		names[i] = st.Name
	}
	return strings.Join(names, ", ")
}

// catalogueEntry is a treatment as written, with its place in the file.
type catalogueEntry struct {
	ft    *fileTreatment
	index int
	used  bool
}

func indexTreatments(f *fileScenario, is *issues) map[string]*catalogueEntry {
	out := map[string]*catalogueEntry{}
	for i := range f.Treatments {
		ft := &f.Treatments[i]
		field := fmt.Sprintf("treatments[%d]", i)
		name := strings.TrimSpace(ft.Name)
		if name == "" {
			is.add(ft.Lines.of(""), field+".name", "missing; every treatment needs a name")
			continue
		}
		if name == treatments.DoNothing {
			is.add(ft.Lines.of("name"), field+".name", "%q is always available; do not list it", name)
			continue
		}
		if _, dup := out[name]; dup {
			is.add(ft.Lines.of("name"), field+".name", "treatment %q is defined twice; treatment names must be unique", name)
			continue
		}
		out[name] = &catalogueEntry{ft: ft, index: i}
		if len(ft.AppliesTo) == 0 {
			is.add(ft.Lines.of(""), field+".applies_to", "missing or empty; list the states the treatment may be used on")
		}
		if ft.Cost == nil {
			is.add(ft.Lines.of(""), field+".cost", "missing; give the unit cost (one number, or one per state)")
		}
		if ft.Effect == nil {
			is.add(ft.Lines.of(""), field+".effect", "missing; give one of to: STATE, improve: N or distribution: {...}")
		} else {
			e := ft.Effect
			forms := 0
			if e.To != "" {
				forms++
			}
			if e.Improve != nil {
				forms++
				if *e.Improve < 1 {
					is.add(e.Lines.of("improve"), field+".effect.improve", "%d states; improve by 1 or more", *e.Improve)
				}
			}
			if e.Distribution != nil {
				forms++
			}
			if forms != 1 {
				is.add(e.Lines.of(""), field+".effect", "give exactly one of to, improve or distribution (found %d)", forms)
			}
		}
	}
	return out
}

// treatmentFor resolves a catalogue treatment against a class's scale.
func treatmentFor(ce *catalogueEntry, s *Scale, is *issues) (treatments.Treatment, bool) {
	ft := ce.ft
	field := fmt.Sprintf("treatments[%d]", ce.index)
	n := len(s.States)
	t := treatments.Treatment{Name: ft.Name, Cost: make([]float64, n), SkipsAging: ft.AgesSameYear != nil && !*ft.AgesSameYear}
	ok := true
	bad := func(line int, fld, format string, args ...any) {
		is.add(line, fld, format, args...)
		ok = false
	}
	if ft.MinInterval != nil {
		if v := *ft.MinInterval; v < 0 || v > maxInterval {
			bad(ft.Lines.of("min_interval"), field+".min_interval", "%d years; give the least number of years between two treatments of the same quantity, 0 (no wait) to %d", v, maxInterval)
		} else {
			t.MinInterval = v
		}
	}
	stateOf := func(name string, line int, fld string) int {
		i := s.StateIndex(name)
		if i < 0 {
			bad(line, fld, "unknown state %q on scale %q; states are %s", name, s.Name, stateList(s))
		}
		return i
	}
	applies := make([]bool, n)
	for j, name := range ft.AppliesTo {
		if i := stateOf(name, ft.Lines.of("applies_to"), fmt.Sprintf("%s.applies_to[%d]", field, j)); i >= 0 {
			if applies[i] {
				bad(ft.Lines.of("applies_to"), field+".applies_to", "state %q listed twice", name)
			}
			applies[i] = true
			t.Applies = append(t.Applies, i)
		}
	}
	if ft.Cost != nil {
		switch {
		case ft.Cost.Single != nil:
			if *ft.Cost.Single < 0 {
				bad(ft.Cost.Line, field+".cost", "unit cost %s must be zero or more", num(*ft.Cost.Single))
			}
			for _, i := range t.Applies {
				t.Cost[i] = *ft.Cost.Single
			}
		case ft.Cost.ByState != nil:
			given := make([]bool, n)
			for _, e := range ft.Cost.ByState.Entries {
				fld := field + ".cost." + e.State
				i := stateOf(e.State, e.Line, fld)
				if i < 0 {
					continue
				}
				if !applies[i] {
					bad(e.Line, fld, "cost for state %q, which the treatment does not apply to; add it to applies_to or drop the cost", e.State)
				}
				if e.Value < 0 {
					bad(e.Line, fld, "unit cost %s must be zero or more", num(e.Value))
				}
				t.Cost[i] = e.Value
				given[i] = true
			}
			for _, i := range t.Applies {
				if !given[i] {
					bad(ft.Cost.Line, field+".cost", "no cost for state %q; give a cost for every state in applies_to", s.States[i].Name)
				}
			}
		}
	}
	if e := ft.Effect; e != nil {
		switch {
		case e.To != "":
			if i := stateOf(e.To, e.Lines.of("to"), field+".effect.to"); i >= 0 {
				t.Effect = treatments.Effect{Kind: treatments.ToState, State: i}
			}
		case e.Improve != nil:
			t.Effect = treatments.Effect{Kind: treatments.Improve, Steps: *e.Improve}
			if *e.Improve < 1 {
				ok = false // reported by indexTreatments; Validate would say it again
			}
		case e.Distribution != nil:
			t.Effect = treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{}}
			row := func(sn *stateNumbers, fld string) []float64 {
				r := make([]float64, n)
				sum := 0.0
				for _, en := range sn.Entries {
					if j := stateOf(en.State, en.Line, fld+"."+en.State); j >= 0 {
						if en.Value < 0 || en.Value > 1 {
							bad(en.Line, fld+"."+en.State, "probability %g is outside 0-1", en.Value)
						}
						r[j] = en.Value
						sum += en.Value
					}
				}
				if math.Abs(sum-1) > markov.RowSumTolerance {
					bad(sn.Line, fld, "probabilities sum to %.6g; they must sum to 1", sum)
				}
				return r
			}
			fld := field + ".effect.distribution"
			if e.Distribution.Same != nil {
				r := row(e.Distribution.Same, fld)
				for _, i := range t.Applies {
					t.Effect.Rows[i] = r
				}
			} else {
				for _, from := range e.Distribution.Order {
					sn := e.Distribution.ByState[from]
					i := stateOf(from, sn.Line, fld+"."+from)
					if i < 0 {
						continue
					}
					if !applies[i] {
						bad(sn.Line, fld+"."+from, "distribution for state %q, which the treatment does not apply to", from)
					}
					t.Effect.Rows[i] = row(sn, fld+"."+from)
				}
				for _, i := range t.Applies {
					if _, ok := t.Effect.Rows[i]; !ok {
						bad(e.Distribution.Line, fld, "no distribution for state %q; give one for every state in applies_to", s.States[i].Name)
					}
				}
			}
		}
	}
	if len(ft.AppliesTo) == 0 {
		ok = false // already reported by indexTreatments
	}
	if ok {
		if err := t.Validate(n); err != nil {
			bad(ft.Lines.of(""), field, "%v", err)
		}
	}
	if ok {
		t.Renewal = t.RestoresBest(n)
		if ft.Renewal != nil {
			t.Renewal = *ft.Renewal
		}
	}
	return t, ok
}

// treatmentSanity compares a treatment's year with doing nothing in each
// state it applies to, by the expected condition score at the end of the
// year. A treatment that ends the year worse than doing nothing in some
// state, or no better in any, is almost always a typing mistake (a to: or
// a distribution pointing down the scale); the plan would never pay for it
// to improve condition. It returns a note naming the treatment, its states
// and where it is written, or "".
func treatmentSanity(c *Class, t *treatments.Treatment, ce *catalogueEntry, is *issues) string {
	if c.Transition == nil {
		return ""
	}
	acts, err := treatments.Actions(c.Transition, []treatments.Treatment{*t})
	if err != nil {
		return ""
	}
	score := func(row []float64) float64 {
		s := 0.0
		for j, p := range row {
			s += p * c.Scale.Score(c.Scale.States[j].Value)
		}
		return s
	}
	var worse, same []string
	var worst string
	gap := 0.0
	for _, i := range t.Applies {
		d := score(acts[1].Rows[i]) - score(acts[0].Rows[i])
		name := c.Scale.States[i].Name
		switch {
		case d < -1e-9:
			worse = append(worse, name)
			if d < gap {
				gap, worst = d, fmt.Sprintf("from %s the year ends at average index %s, against %s with no work", name, trimNum(c.Scale.Index(score(acts[1].Rows[i]))), trimNum(c.Scale.Index(score(acts[0].Rows[i]))))
			}
		case d <= 1e-9:
			same = append(same, name)
		}
	}
	field := fmt.Sprintf("treatments[%d].effect", ce.index)
	line := ce.ft.Lines.of("effect")
	switch {
	case len(worse) > 0:
		return is.note(line, field, "treatment %q leaves %s of class %s worse than doing nothing (%s); it costs money and lowers condition: check its effect", t.Name, plural("state", worse), c.Name, worst)
	case len(same) == len(t.Applies):
		return is.note(line, field, "treatment %q improves nothing on class %s: in %s the year ends no better than with no work; check its effect and applies_to", t.Name, c.Name, plural("state", same))
	}
	return ""
}

// plural names one or more states: `state "Good"`, `states "Good", "Fair"`.
func plural(word string, names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = strconv.Quote(n)
	}
	if len(q) == 1 {
		return word + " " + q[0]
	}
	return word + "s " + strings.Join(q, ", ")
}

// trimNum writes an index value with at most two decimals.
func trimNum(v float64) string {
	return strconv.FormatFloat(math.Round(v*100)/100, 'f', -1, 64)
}

func buildClasses(sc *Scenario, f *fileScenario, scales map[string]*Scale, classScale []*Scale, catalogue map[string]*catalogueEntry, is *issues) {
	if len(f.Classes) == 0 {
		is.add(f.Lines.of(""), "classes", "missing; list at least one asset class")
		return
	}
	names := map[string]bool{}
	withWeight, withValue := 0, 0
	for k := range f.Classes {
		fc := &f.Classes[k]
		field := fmt.Sprintf("classes[%d]", k)
		c := Class{Name: strings.TrimSpace(fc.Name), Unit: strings.TrimSpace(fc.Unit)}
		if c.Name == "" {
			is.add(fc.Lines.of(""), field+".name", "missing; every class needs a name")
		} else {
			field = fmt.Sprintf("classes[%d] (%s)", k, c.Name)
			if names[c.Name] || strings.EqualFold(c.Name, "all") {
				is.add(fc.Lines.of("name"), field+".name", "class name %q is used twice or reserved; class names must be unique and not \"all\"", c.Name)
			}
			names[c.Name] = true
		}
		if c.Unit == "" {
			is.add(fc.Lines.of(""), field+".unit", "missing; give the quantity unit, e.g. lane-km, m2 or each")
		}
		c.Scale = classScale[k] // problems reported by classScales
		if fc.ReplacementCost != nil {
			if *fc.ReplacementCost < 0 {
				is.add(fc.Lines.of("replacement_cost"), field+".replacement_cost", "%s must be zero or more", num(*fc.ReplacementCost))
			}
			c.ReplacementCost = *fc.ReplacementCost
			if c.ReplacementCost > 0 {
				withValue++
			}
		}
		if fc.SegmentSize != nil {
			if v := *fc.SegmentSize; !(v > 0) || math.IsInf(v, 0) {
				is.add(fc.Lines.of("segment_size"), field+".segment_size", "%s: give the size of the pieces the class is managed in, a positive number in its unit (e.g. 0.5 for half a lane-km)", num(v))
			} else {
				c.SegmentSize = v
			}
		}
		if fc.Weight != nil {
			if *fc.Weight <= 0 {
				is.add(fc.Lines.of("weight"), field+".weight", "%g must be positive", *fc.Weight)
			}
			c.Weight = *fc.Weight
			withWeight++
		}
		if c.Scale != nil {
			switch {
			case fc.Inventory != nil && fc.InventoryCSV != nil:
				is.add(fc.Lines.of("inventory_csv"), field+".inventory_csv", "give inventory or inventory_csv, not both")
			case fc.Inventory == nil && (fc.InventoryCSV != nil || f.InventoryCSV != nil):
				c.Initial = make([]float64, len(c.Scale.States)) // read from the CSV below
			default:
				buildInventory(&c, fc, field, is)
			}
			buildDeterioration(&c, fc, field, is)
			buildRoutine(&c, fc, field, is)
			seen := map[string]bool{}
			for j, tn := range fc.Treatments {
				ce, ok := catalogue[tn]
				fld := fmt.Sprintf("%s.treatments[%d]", field, j)
				if !ok {
					is.add(fc.Lines.of("treatments"), fld, "unknown treatment %q; define it under treatments", tn)
					continue
				}
				if seen[tn] {
					is.add(fc.Lines.of("treatments"), fld, "treatment %q listed twice", tn)
					continue
				}
				seen[tn] = true
				ce.used = true
				if t, ok := treatmentFor(ce, c.Scale, is); ok {
					c.Treatments = append(c.Treatments, t)
					if note := treatmentSanity(&c, &t, ce, is); note != "" {
						sc.Notes = append(sc.Notes, note)
					}
				}
			}
			fromCSV := fc.Inventory == nil && (fc.InventoryCSV != nil || f.InventoryCSV != nil)
			buildHistory(sc, &c, fc, field, fromCSV, is)
		}
		sc.Classes = append(sc.Classes, c)
	}
	for _, name := range sortedKeys(catalogue) {
		if ce := catalogue[name]; !ce.used {
			// Check unused treatments against the one scale when unambiguous,
			// so that typos in them still surface.
			if len(scales) == 1 {
				for _, s := range scales {
					treatmentFor(ce, s, is)
				}
			}
		}
	}
	readInventories(sc, f, is)
	historyNotes(sc)
	switch {
	case withWeight > 0 && withWeight < len(f.Classes):
		is.add(f.Lines.of("classes"), "classes", "%d of %d classes give a weight; give weight for every class or for none", withWeight, len(f.Classes))
	case withWeight == len(f.Classes):
		sc.Weighting = WeightGiven
	case withValue == len(f.Classes):
		sc.Weighting = WeightByValue
		for k := range sc.Classes {
			sc.Classes[k].Weight = sc.Classes[k].ReplacementCost * sc.Classes[k].Total()
		}
	default:
		sc.Weighting = WeightEqual
		if withValue > 0 {
			sc.Notes = append(sc.Notes, fmt.Sprintf("only %d of %d classes give a replacement_cost, so network figures weight the classes equally; give it for every class to weight by replacement value", withValue, len(f.Classes)))
		}
		for k := range sc.Classes {
			sc.Classes[k].Weight = 1
		}
	}
	tot := 0.0
	for k := range sc.Classes {
		tot += sc.Classes[k].Weight
	}
	if tot > 0 {
		for k := range sc.Classes {
			sc.Classes[k].Weight /= tot
		}
	}
}

func buildInventory(c *Class, fc *fileClass, field string, is *issues) {
	n := len(c.Scale.States)
	c.Initial = make([]float64, n)
	if fc.Inventory == nil {
		is.add(fc.Lines.of(""), field+".inventory", "missing; give today's quantity in each state, e.g. inventory: {%s: 120, ...}, or a segment list with inventory_csv: FILE", c.Scale.States[0].Name)
		return
	}
	for _, e := range fc.Inventory.Entries {
		fld := field + ".inventory." + e.State
		i := c.Scale.StateIndex(e.State)
		if i < 0 {
			is.add(e.Line, fld, "unknown state %q on scale %q; states are %s", e.State, c.Scale.Name, stateList(c.Scale))
			continue
		}
		if e.Value < 0 {
			is.add(e.Line, fld, "quantity %s must be zero or more", num(e.Value))
			continue
		}
		c.Initial[i] = e.Value
	}
	if c.Total() <= 0 {
		is.add(fc.Inventory.Line, field+".inventory", "total quantity is zero; give today's quantity in at least one state")
	}
}

// buildRoutine reads routine_cost: a yearly cost per unit left untreated,
// by state; states not named cost nothing.
func buildRoutine(c *Class, fc *fileClass, field string, is *issues) {
	if fc.RoutineCost == nil {
		return
	}
	c.Routine = make([]float64, len(c.Scale.States))
	for _, e := range fc.RoutineCost.Entries {
		fld := field + ".routine_cost." + e.State
		i := c.Scale.StateIndex(e.State)
		if i < 0 {
			is.add(e.Line, fld, "unknown state %q on scale %q; states are %s", e.State, c.Scale.Name, stateList(c.Scale))
			continue
		}
		if e.Value < 0 {
			is.add(e.Line, fld, "routine cost %s must be zero or more", num(e.Value))
			continue
		}
		c.Routine[i] = e.Value
	}
}

func buildDeterioration(c *Class, fc *fileClass, field string, is *issues) {
	d := fc.Deterioration
	fld := field + ".deterioration"
	if d == nil {
		is.add(fc.Lines.of(""), fld, "missing; give matrix: (one row per state), years_in_state: (one value per state but the worst) or fit: (a fit file)")
		return
	}
	if t := transitionOf(d, c.Scale, fld, is); t != nil {
		c.Transition = t
		if d.Matrix != nil {
			c.Evidence = d.evidence
			c.split = d.split
		}
	}
}

// transitionOf checks a deterioration written as a matrix or as years in
// state against scale s and returns its matrix, or nil after recording
// its problems.
func transitionOf(d *fileDeterioration, s *Scale, fld string, is *issues) *markov.Transition {
	n := len(s.States)
	switch {
	case d.Matrix != nil && d.YearsInState != nil:
		is.add(d.Lines.of(""), fld, "give matrix or years_in_state, not both")
	case d.Matrix != nil:
		m := d.Matrix
		if len(m.Rows) != n {
			is.add(m.Line, fld+".matrix", "%d rows for the %d states of scale %q; give one row per state, best first", len(m.Rows), n, s.Name)
			return nil
		}
		t, err := markov.NewTransition(m.Rows, markov.Options{AllowImprovement: d.AllowImprovement})
		if err != nil {
			for _, e := range flatten(err) {
				var ee *markov.EntryError
				if errors.As(e, &ee) {
					line := m.Line
					if ee.Row < len(m.Lines) {
						line = m.Lines[ee.Row]
					}
					msg := ee.Reason
					if ee.Col >= 0 {
						msg = fmt.Sprintf("from %q to %q: %s", s.States[ee.Row].Name, s.States[ee.Col].Name, ee.Reason)
					}
					is.add(line, fmt.Sprintf("%s.matrix[%d]", fld, ee.Row), "%s", msg)
					continue
				}
				is.add(m.Line, fld+".matrix", "%v", e)
			}
			return nil
		}
		return t
	case d.YearsInState != nil:
		if len(d.YearsInState) != n-1 {
			is.add(d.Lines.of("years_in_state"), fld+".years_in_state", "%d values for %d states; give one per state except the worst (%d)", len(d.YearsInState), n, n-1)
			return nil
		}
		if d.AllowImprovement {
			is.add(d.Lines.of("allow_improvement"), fld+".allow_improvement", "only applies to matrix; years_in_state never improves")
		}
		t, err := markov.FromYearsInState(d.YearsInState)
		if err != nil {
			for _, e := range flatten(err) {
				var ee *markov.EntryError
				if errors.As(e, &ee) {
					is.add(d.Lines.of("years_in_state"), fmt.Sprintf("%s.years_in_state[%d]", fld, ee.Row), "%s", ee.Reason)
					continue
				}
				is.add(d.Lines.of("years_in_state"), fld+".years_in_state", "%v", e)
			}
			return nil
		}
		return t
	default:
		is.add(d.Lines.of(""), fld, "give matrix: (one row per state), years_in_state: (one value per state but the worst) or fit: (a fit file)")
	}
	return nil
}

// flatten undoes errors.Join.
func flatten(err error) []error {
	if j, ok := err.(interface{ Unwrap() []error }); ok {
		var out []error
		for _, e := range j.Unwrap() {
			out = append(out, flatten(e)...)
		}
		return out
	}
	return []error{err}
}

// yearlyAmounts expands a budget amount to one cap per year.
func yearlyAmounts(a *amounts, horizon int, field string, is *issues) []float64 {
	out := make([]float64, horizon)
	switch {
	case a.Single != nil:
		for i := range out {
			out[i] = *a.Single
		}
		if *a.Single < 0 {
			is.add(a.Line, field, "budget %s must be zero or more", num(*a.Single))
		}
	default:
		if len(a.List) != horizon {
			is.add(a.Line, field, "%d amounts for a %d-year horizon; give one number, or one per year", len(a.List), horizon)
			return out
		}
		for i, v := range a.List {
			if v < 0 {
				is.add(a.Line, fmt.Sprintf("%s[%d]", field, i), "budget %s must be zero or more", num(v))
			}
			out[i] = v
		}
	}
	return out
}

func buildBudget(sc *Scenario, f *fileScenario, is *issues) {
	b := f.Budget
	if b == nil || sc.Horizon == 0 {
		return
	}
	sc.CarryOver = b.CarryOver
	sc.RoutineInBudget = b.IncludesRoutine
	if b.Yearly != nil {
		sc.Budget = yearlyAmounts(b.Yearly, sc.Horizon, "budget.yearly", is)
	}
	names := map[string]bool{}
	for i, g := range b.Groups {
		field := fmt.Sprintf("budget.groups[%d]", i)
		if g.Name == "" {
			is.add(g.Lines.of(""), field+".name", "missing; name the budget group")
		} else if names[g.Name] {
			is.add(g.Lines.of("name"), field+".name", "budget group %q defined twice", g.Name)
		}
		names[g.Name] = true
		if len(g.Classes) == 0 {
			is.add(g.Lines.of(""), field+".classes", "missing; list the classes the group's budget pays for")
		}
		for j, cn := range g.Classes {
			if sc.classIndex(cn) < 0 {
				is.add(g.Lines.of("classes"), fmt.Sprintf("%s.classes[%d]", field, j), "unknown class %q", cn)
			}
		}
		if g.Yearly == nil {
			is.add(g.Lines.of(""), field+".yearly", "missing; give the group's yearly budget")
			continue
		}
		sc.BudgetGroups = append(sc.BudgetGroups, BudgetGroup{Name: g.Name, Classes: g.Classes, Yearly: yearlyAmounts(g.Yearly, sc.Horizon, field+".yearly", is)})
	}
	if b.Yearly == nil && len(b.Groups) == 0 && b.MinYearly == nil {
		is.add(b.Lines.of(""), "budget", "give yearly: (the network's yearly budget), groups: or min_yearly:")
	}
	if b.MinYearly != nil {
		buildMinSpends(sc, b.MinYearly, is)
	}
}

// buildMinSpends reads budget.min_yearly: money ring-fenced for a class or
// a budget group, one amount for every year or one per year. A least
// spend above a cap that covers it (the network budget, a budget group
// holding all its classes), or least spends of classes adding up to more
// than the network budget, can never be kept and are refused; with
// carry-over the caps are cumulative, and so are the sums compared.
func buildMinSpends(sc *Scenario, na *namedAmounts, is *issues) {
	groupOf := map[string]int{}
	for g, bg := range sc.BudgetGroups {
		groupOf[bg.Name] = g
	}
	for _, e := range na.Entries {
		field := "budget.min_yearly." + e.Name
		k := sc.classIndex(e.Name)
		g, isGroup := groupOf[e.Name]
		switch {
		case k >= 0 && isGroup:
			is.add(e.Line, field, "%q names both a class and a budget group; rename the group", e.Name)
			continue
		case k < 0 && !isGroup:
			is.add(e.Line, field, "unknown class or budget group %q; name a class (%s) or a budget group (%s)", e.Name, classList(sc), groupList(sc))
			continue
		}
		ms := MinSpend{Name: e.Name, Yearly: yearlyAmounts(&e.Amount, sc.Horizon, field, is)}
		ms.file, ms.line = is.where(e.Line)
		if isGroup {
			ms.Group, ms.Classes = true, sc.BudgetGroups[g].Classes
		} else {
			ms.Classes = []string{e.Name}
		}
		if y, least, most, ok := aboveSpendable(sc, ms); ok {
			is.add(e.Line, field, "min_yearly %s in %d is more than giving all of %s its dearest treatment would cost (%s at that year's prices); no plan can spend it", money(least), y, strings.Join(ms.Classes, ", "), money(most))
		}
		for _, msg := range ms.aboveCaps(sc) {
			is.add(e.Line, field, "%s", msg)
		}
		sc.MinSpends = append(sc.MinSpends, ms)
	}
	if msg := classMinsAboveBudget(sc); msg != "" {
		is.add(na.Line, "budget.min_yearly", "%s", msg)
	}
}

// aboveCaps says which caps of sc a least spend exceeds: the network
// budget, and the cap of every budget group that holds all its classes.
func (ms *MinSpend) aboveCaps(sc *Scenario) []string {
	var out []string
	if sc.Budget != nil {
		if y, least, cap, ok := aboveCap(sc, ms.Yearly, sc.Budget); ok {
			out = append(out, fmt.Sprintf("min_yearly %s in %d is above the network budget %s%s; lower it or raise budget.yearly", money(least), y, money(cap), cumulative(sc)))
		}
	}
	for _, bg := range sc.BudgetGroups {
		if !containsAll(bg.Classes, ms.Classes) {
			continue
		}
		if y, least, cap, ok := aboveCap(sc, ms.Yearly, bg.Yearly); ok {
			out = append(out, fmt.Sprintf("min_yearly %s in %d is above the cap %s of budget group %q%s; lower it or raise the group's yearly", money(least), y, money(cap), bg.Name, cumulative(sc)))
		}
	}
	return out
}

// classMinsAboveBudget says when the least spends of two or more single
// classes add up to more than the network budget ("" when they do not).
func classMinsAboveBudget(sc *Scenario) string {
	sum := make([]float64, sc.Horizon)
	classes := 0
	for _, ms := range sc.MinSpends {
		if ms.Group {
			continue
		}
		classes++
		for t, v := range ms.Yearly {
			sum[t] += v
		}
	}
	if sc.Budget == nil || classes < 2 {
		return ""
	}
	if y, least, cap, ok := aboveCap(sc, sum, sc.Budget); ok {
		return fmt.Sprintf("the classes' min_yearly add up to %s in %d, above the network budget %s%s; lower them or raise budget.yearly", money(least), y, money(cap), cumulative(sc))
	}
	return ""
}

// aboveSpendable returns the first year in which a least spend is more
// than its classes could spend at most: every unit given the dearest of
// its class's treatments (and the routine cost, when it counts), at that
// year's prices.
func aboveSpendable(sc *Scenario, ms MinSpend) (year int, least, most float64, found bool) {
	for _, name := range ms.Classes {
		k := sc.classIndex(name)
		if k < 0 {
			return 0, 0, 0, false
		}
		c := &sc.Classes[k]
		dear := 0.0
		for _, t := range c.Treatments {
			for _, i := range t.Applies {
				dear = math.Max(dear, t.Cost[i])
			}
		}
		if sc.RoutineInBudget {
			for _, r := range c.Routine {
				dear = math.Max(dear, r)
			}
		}
		most += c.Total() * dear
	}
	for t, v := range ms.Yearly {
		if m := most * math.Pow(1+sc.Escalation, float64(t)); v > m*(1+1e-9) {
			return sc.Year(t + 1), v, m, true
		}
	}
	return 0, 0, 0, false
}

// aboveCap returns the first year in which the least spends exceed the
// caps (both summed from the first year with carry-over), with the two
// amounts compared.
func aboveCap(sc *Scenario, least, caps []float64) (year int, l, c float64, found bool) {
	for t := range least {
		if t >= len(caps) {
			break
		}
		if sc.CarryOver {
			l, c = l+least[t], c+caps[t]
		} else {
			l, c = least[t], caps[t]
		}
		if l > c && !math.IsInf(c, 1) {
			return sc.Year(t + 1), l, c, true
		}
	}
	return 0, 0, 0, false
}

func cumulative(sc *Scenario) string {
	if sc.CarryOver {
		return " (summed from the first year, as carry_over does)"
	}
	return " of that year"
}

func containsAll(set, of []string) bool {
	for _, x := range of {
		if !slices.Contains(set, x) {
			return false
		}
	}
	return true
}

func classList(sc *Scenario) string {
	names := make([]string, len(sc.Classes))
	for k := range sc.Classes {
		names[k] = sc.Classes[k].Name
	}
	return strings.Join(names, ", ")
}

func groupList(sc *Scenario) string {
	if len(sc.BudgetGroups) == 0 {
		return "none defined"
	}
	names := make([]string, len(sc.BudgetGroups))
	for g := range sc.BudgetGroups {
		names[g] = sc.BudgetGroups[g].Name
	}
	return strings.Join(names, ", ")
}

func (s *Scenario) classIndex(name string) int {
	for k := range s.Classes {
		if s.Classes[k].Name == name {
			return k
		}
	}
	return -1
}

func buildTargets(sc *Scenario, f *fileScenario, is *issues) {
	for i := range f.Targets {
		ft := &f.Targets[i]
		field := fmt.Sprintf("targets[%d]", i)
		line := ft.Lines.of("")
		t := Target{Class: ft.Class, Spec: optimize.Target{Class: optimize.Network}}
		if ft.Class == "all" {
			t.Class = ""
		}
		who := "network"
		var scale *Scale
		if t.Class != "" {
			k := sc.classIndex(t.Class)
			if k < 0 {
				is.add(ft.Lines.of("class"), field+".class", "unknown class %q; name a class or write all for the network", ft.Class)
				continue
			}
			t.Spec.Class = k
			who = t.Class
			scale = sc.Classes[k].Scale
		} else {
			scale = sc.SharedScale()
		}
		first, last := sc.StartYear, sc.StartYear+sc.Horizon-1
		if ft.Confidence != nil {
			switch c := *ft.Confidence; {
			case ft.Hold:
				is.add(ft.Lines.of("confidence"), field+".confidence", "hold: true cannot take a confidence: it is the guard that the plan's expected condition in the last year is no worse than today's; for a level that must hold in a share of runs, give min_average_index with from_year set to the last year and the confidence")
				continue
			case !(c > 0 && c < 1):
				is.add(ft.Lines.of("confidence"), field+".confidence", "%s is outside (0, 1): give the share of simulated runs in which the target must hold, e.g. 0.9 for 90%%", num(c))
				continue
			}
			t.Confidence = *ft.Confidence
		}
		if ft.Hold {
			if ft.Group != "" || ft.State != "" || ft.MaxShare != nil || ft.MinShare != nil || ft.MinAverageIndex != nil || ft.FromYear != nil || ft.ToYear != nil {
				is.add(line, field, "hold: true takes only class; it always compares the last year with today")
				continue
			}
			t.Spec.Kind = optimize.Hold
			t.FromYear, t.ToYear = last, last
			t.Label = fmt.Sprintf("%s average condition in %d no worse than today", who, last)
			t.Spec.Label = t.Label
			sc.Targets = append(sc.Targets, t)
			continue
		}
		kinds := 0
		for _, p := range []*float64{ft.MaxShare, ft.MinShare, ft.MinAverageIndex} {
			if p != nil {
				kinds++
			}
		}
		if kinds != 1 {
			is.add(line, field, "give exactly one of max_share, min_share, min_average_index, or hold: true (found %d)", kinds)
			continue
		}
		t.FromYear, t.ToYear = first, last
		if ft.FromYear != nil {
			t.FromYear = *ft.FromYear
		}
		if ft.ToYear != nil {
			t.ToYear = *ft.ToYear
		}
		if sc.Horizon > 0 && (t.FromYear < first || t.ToYear > last || t.FromYear > t.ToYear) {
			switch {
			case t.FromYear < first || t.FromYear > last:
				is.add(ft.Lines.of("from_year"), field+".from_year", "%d is outside the plan %d-%d; targets apply to end-of-year condition within the horizon", t.FromYear, first, last)
			case t.ToYear < first || t.ToYear > last:
				is.add(ft.Lines.of("to_year"), field+".to_year", "%d is outside the plan %d-%d; targets apply to end-of-year condition within the horizon", t.ToYear, first, last)
			default:
				is.add(ft.Lines.of("to_year"), field+".to_year", "%d is before from_year %d; give the first year, then the last", t.ToYear, t.FromYear)
			}
			continue
		}
		t.Spec.From, t.Spec.To = t.FromYear-sc.StartYear+1, t.ToYear-sc.StartYear+1
		span := fmt.Sprintf("%d-%d", t.FromYear, t.ToYear)
		if t.FromYear == t.ToYear {
			span = fmt.Sprint(t.FromYear)
		}
		switch {
		case ft.MaxShare != nil || ft.MinShare != nil:
			v, word, kind := ft.MaxShare, "at most", optimize.MaxShare
			fld := "max_share"
			if ft.MinShare != nil {
				v, word, kind, fld = ft.MinShare, "at least", optimize.MinShare, "min_share"
			}
			if *v < 0 || *v > 1 {
				is.add(ft.Lines.of(fld), field+"."+fld, "share %g is outside 0-1; write 15%% as 0.15", *v)
				continue
			}
			t.Spec.Kind, t.Spec.Value = kind, *v
			if ft.State != "" {
				// One named condition state of one class.
				if !stateTarget(&t, ft, field, scale, is) {
					continue
				}
				t.Label = fmt.Sprintf("%s share in state %s %s %s in %s", who, t.State, word, pct(*v), span)
				break
			}
			g := groupByName(ft.Group)
			if g < 0 {
				is.add(ft.Lines.of("group"), field+".group", "want good, fair or poor, got %q", ft.Group)
				continue
			}
			t.Spec.Group = g
			t.Label = fmt.Sprintf("%s %s share %s %s in %s", who, g, word, pct(*v), span)
		default:
			if ft.State != "" {
				is.add(ft.Lines.of("state"), field+".state", "a state takes max_share or min_share (the share of the class in that state), not min_average_index")
				continue
			}
			if ft.Group != "" {
				is.add(ft.Lines.of("group"), field+".group", "min_average_index takes no group")
				continue
			}
			if scale == nil {
				if t.Class == "" && allScalesValid(sc) {
					is.add(ft.Lines.of("min_average_index"), field+".min_average_index", "the classes use different scales, so a network average index has no single unit; set the target per class")
				}
				// Otherwise a class's scale is missing or invalid, which is
				// already reported.
				continue
			}
			v := *ft.MinAverageIndex
			if v < math.Min(scale.Best, scale.Worst) || v > math.Max(scale.Best, scale.Worst) {
				is.add(ft.Lines.of("min_average_index"), field+".min_average_index", "%g is outside scale %q (%g-%g)", v, scale.Name, math.Min(scale.Best, scale.Worst), math.Max(scale.Best, scale.Worst))
				continue
			}
			t.Spec.Kind, t.Spec.Value = optimize.MinScore, scale.Score(v)
			word := "at least"
			if scale.Best < scale.Worst {
				word = "at most" // lower is better: "no worse than" means at most
			}
			t.Label = fmt.Sprintf("%s average index %s %g in %s", who, word, v, span)
		}
		t.Spec.Label = t.Label
		sc.Targets = append(sc.Targets, t)
	}
}

// stateTarget fills a target on the share of one named condition state of
// one class, recording any problem in is.
func stateTarget(t *Target, ft *fileTarget, field string, scale *Scale, is *issues) bool {
	switch {
	case ft.Group != "":
		is.add(ft.Lines.of("group"), field+".group", "give group or state, not both")
		return false
	case t.Class == "":
		is.add(ft.Lines.of("state"), field+".state", "a target on a state needs a class (each class has its own scale); name the class instead of all")
		return false
	case scale == nil:
		return false // the class's scale is missing or invalid, which is already reported
	}
	i := scale.StateIndex(ft.State)
	if i < 0 {
		is.add(ft.Lines.of("state"), field+".state", "unknown state %q on scale %q; states are %s", ft.State, scale.Name, stateList(scale))
		return false
	}
	t.State = scale.States[i].Name
	t.Spec.States = make([]bool, len(scale.States))
	t.Spec.States[i] = true
	return true
}

// allScalesValid says whether every class has a valid scale.
func allScalesValid(sc *Scenario) bool {
	for k := range sc.Classes {
		if sc.Classes[k].Scale == nil {
			return false
		}
	}
	return true
}

func pct(v float64) string {
	return strings.TrimSuffix(strings.TrimRight(fmt.Sprintf("%.2f", 100*v), "0"), ".") + "%"
}

func buildObjective(sc *Scenario, f *fileScenario, is *issues) {
	hasBudget := sc.Budget != nil || len(sc.BudgetGroups) > 0
	switch f.Objective {
	case "":
		sc.Objective = optimize.MinCost
		if hasBudget {
			sc.Objective = optimize.MaxCondition
		}
	case "max-condition":
		sc.Objective = optimize.MaxCondition
	case "min-cost":
		sc.Objective = optimize.MinCost
	default:
		is.add(f.Lines.of("objective"), "objective", "unknown objective %q; use max-condition or min-cost", f.Objective)
	}
}
