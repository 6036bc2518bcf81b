package scenarios

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"wearplan/optimize"
)

// Warnings on what a plan does to each class. An optimal plan serves the
// network figures and the targets it is given; nothing stops it from
// letting a class of little weight run down, or from holding a poor share
// at its target while the poor part slides into the worst state. After
// every plan each class is measured against today, year by year, and named
// when, in some year:
//
//   - its poor share is more than ClassWarningLimits.PoorShareRise above
//     today's;
//   - its share in its worst state is more than WorstStateGrowth times
//     today's, and above worstStateFloor of the class (unless the worst
//     state is the whole poor group, which the poor share covers);
//   - its backlog at today's prices (value.go; escalation taken out, so
//     that prices alone never trigger it) is more than BacklogGrowth times
//     today's;
//
// or when it gets no work in any year. The warning gives the figures (today,
// the year the measure is furthest out, its value there) and class targets,
// written as in the scenario file, that stop it: a poor share of at most
// today's plus the rise allowed, a worst-state share of at most the growth
// allowed (never below the floor). Both bound the very measure the warning
// tests in every year, so a plan that meets them cannot raise the warning
// again. A backlog has no target of its own; when only the backlog
// triggers, the suggestion holds the poor share at today's, which holds the
// backlog back unless the poor quantity moves into dearer states (a move
// the worst-state warning names).

// worstStateFloor is the share of a class below which its worst state is
// not named however fast it grows: 0.1% growing to 0.3% of a class is
// noise to a council.
const worstStateFloor = 0.01

// warnTolerance keeps solver tolerance from raising a warning on a plan
// that holds a suggested target exactly (shares are held to about 1e-9).
const warnTolerance = 1e-6

// ClassWarning says what a plan does to one class that a council should
// hear about.
type ClassWarning struct {
	Class string `json:"class"`
	// NoWork: the plan gives the class no work in any year.
	NoWork bool `json:"no_work,omitempty"`
	// PoorShare, WorstState and Backlog are set when that measure passes
	// its threshold: today's value and the year it is furthest out.
	PoorShare  *ClassChange `json:"poor_share,omitempty"`
	WorstState *ClassChange `json:"worst_state,omitempty"`
	Backlog    *ClassChange `json:"backlog,omitempty"`
	// Suggested are class targets that stop it, with the scenario file's
	// keys; Text says it all in words.
	Suggested []TargetSpec `json:"suggested_targets,omitempty"`
	Text      string       `json:"text"`
}

// ClassChange is a class measure today and in the year it is furthest
// from today: a share (0-1), or a backlog in money at today's prices.
type ClassChange struct {
	// State names the state measured (WorstState only).
	State string  `json:"state,omitempty"`
	Today float64 `json:"today"`
	Year  int     `json:"year"`
	Value float64 `json:"value"`
}

// classWarnings measures a plan's result class by class (see above).
// peakTie is how much a later year must exceed an earlier one (in share,
// or relative for the backlog) to be named as the worst year: a share
// that levels off would otherwise be reported at whichever year its last
// digits happen to peak, which reads as growth to that year.
const peakTie = 1e-4

func classWarnings(sc *Scenario, r *Result) []ClassWarning {
	if r.Kind != KindPlan {
		return nil // a forecast does no work by definition
	}
	lim := sc.ClassWarnings
	var out []ClassWarning
	for k := range sc.Classes {
		c := &sc.Classes[k]
		now := &r.Initial.Classes[k]
		w := ClassWarning{Class: c.Name, NoWork: true}
		worst := len(c.Scale.States) - 1
		worstToday := stateShare(now.States, only(len(c.Scale.States), worst))
		// When the worst state is the whole poor group, the poor share says it.
		poorIsWorst := c.Scale.Group[worst] == optimize.Poor && (worst == 0 || c.Scale.Group[worst-1] != optimize.Poor)
		var poor, state, backlog *ClassChange
		var poorBy, stateBy, backlogBy float64
		for t, y := range r.Years {
			cc := &y.Classes[k]
			if len(cc.Work) > 0 {
				w.NoWork = false
			}
			if d := cc.Shares.Poor - now.Shares.Poor; d > lim.PoorShareRise+warnTolerance && d > poorBy+peakTie {
				poorBy, poor = d, &ClassChange{Today: now.Shares.Poor, Year: y.Year, Value: cc.Shares.Poor}
			}
			v := stateShare(cc.States, only(len(c.Scale.States), worst))
			if !poorIsWorst && v > lim.WorstStateGrowth*worstToday+warnTolerance && v > worstStateFloor+warnTolerance && v-worstToday > stateBy+peakTie {
				stateBy, state = v-worstToday, &ClassChange{State: c.Scale.States[worst].Name, Today: worstToday, Year: y.Year, Value: v}
			}
			if cc.Backlog != nil && now.Backlog != nil && *now.Backlog > 0 {
				b := *cc.Backlog / priceFactor(sc, t+1)
				if b > lim.BacklogGrowth**now.Backlog*(1+warnTolerance) && b / *now.Backlog > backlogBy*(1+peakTie) {
					backlogBy, backlog = b / *now.Backlog, &ClassChange{Today: *now.Backlog, Year: y.Year, Value: b}
				}
			}
		}
		w.PoorShare, w.WorstState, w.Backlog = poor, state, backlog
		if !w.NoWork && poor == nil && state == nil && backlog == nil {
			continue
		}
		var held []string // the scenario's own targets that already ask as much
		suggest := func(t TargetSpec) {
			if label := heldBy(sc, k, t); label != "" {
				held = append(held, label)
				return
			}
			w.Suggested = append(w.Suggested, t)
		}
		if poor != nil {
			suggest(TargetSpec{Class: c.Name, Group: "poor", MaxShare: shareDown(now.Shares.Poor + lim.PoorShareRise)})
		}
		if state != nil {
			suggest(TargetSpec{Class: c.Name, State: state.State, MaxShare: shareDown(math.Max(lim.WorstStateGrowth*worstToday, worstStateFloor))})
		}
		if backlog != nil && poor == nil && state == nil {
			suggest(TargetSpec{Class: c.Name, Group: "poor", MaxShare: shareDown(now.Shares.Poor)})
		}
		w.Text = classWarningText(sc, r, &w, held)
		out = append(out, w)
	}
	return out
}

// heldBy returns the label of a target of the scenario on class k that
// asks at least as much as the suggested cap t in every year, or "".
func heldBy(sc *Scenario, k int, t TargetSpec) string {
	for _, tg := range sc.Targets {
		s := tg.Spec
		if s.Class != k || s.Kind != optimize.MaxShare || s.Value > *t.MaxShare || s.From != 1 || s.To != sc.Horizon {
			continue
		}
		if (t.State != "" && tg.State == t.State) || (t.Group != "" && s.States == nil && s.Group.String() == t.Group) {
			return tg.Label
		}
	}
	return ""
}

// only marks state i of n.
func only(n, i int) []bool {
	m := make([]bool, n)
	m[i] = true
	return m
}

// shareDown rounds a share down to a tenth of a percentage point, so that
// a suggested cap is never looser than the threshold it stands for.
func shareDown(v float64) *float64 {
	s := math.Floor(v*1000+1e-9) / 1000
	return &s
}

// classWarningText puts a class warning in words; held are the labels of
// the scenario's targets that would stop it if they were met.
func classWarningText(sc *Scenario, r *Result, w *ClassWarning, held []string) string {
	var b strings.Builder
	b.WriteString(w.Class + ": ")
	met := r.Status == Optimal && len(r.Targets) > 0
	if met {
		b.WriteString("the plan meets its targets, but ")
	} else {
		b.WriteString("the plan ")
	}
	var parts []string
	if w.NoWork {
		parts = append(parts, "gives it no work in any year")
	}
	// The last year's figure, when the furthest year is an earlier one: a
	// rise the plan later undoes reads differently from one it leaves.
	last := sc.Year(sc.Horizon)
	k := sc.classIndex(w.Class)
	lastCC := &r.Years[len(r.Years)-1].Classes[k]
	then := func(year int, v string) string {
		if year == last {
			return ""
		}
		return fmt.Sprintf("; %s in %d", v, last)
	}
	if p := w.PoorShare; p != nil {
		parts = append(parts, fmt.Sprintf("lets its poor share rise from %s today to %s in %d (+%.1f points%s)", pct1(p.Today), pct1(p.Value), p.Year, 100*(p.Value-p.Today), then(p.Year, pct1(lastCC.Shares.Poor))))
	}
	if s := w.WorstState; s != nil {
		growth := "from none"
		if s.Today > 0 {
			growth = fmt.Sprintf("%.1f times", s.Value/s.Today)
		}
		end := stateShare(lastCC.States, only(len(lastCC.States), len(lastCC.States)-1))
		parts = append(parts, fmt.Sprintf("lets its share in its worst state, %s, grow from %s today to %s in %d (%s%s)", s.State, pct1(s.Today), pct1(s.Value), s.Year, growth, then(s.Year, pct1(end))))
	}
	if b := w.Backlog; b != nil {
		end := ""
		if lastCC.Backlog != nil {
			end = then(b.Year, moneyIn(sc, *lastCC.Backlog/priceFactor(sc, sc.Horizon)))
		}
		parts = append(parts, fmt.Sprintf("lets its backlog grow from %s today to %s in %d at today's prices (%.1f times%s)", moneyIn(sc, b.Today), moneyIn(sc, b.Value), b.Year, b.Value/b.Today, end))
	}
	if len(parts) > 1 && w.NoWork {
		// "gives it no work in any year, and lets ..."
		b.WriteString(parts[0] + "; it ")
		parts = parts[1:]
	}
	b.WriteString(joinAnd(parts))
	if len(w.Suggested) > 0 {
		specs := make([]string, len(w.Suggested))
		for i, t := range w.Suggested {
			specs[i] = t.YAML()
		}
		switch {
		case w.PoorShare == nil && w.WorstState == nil:
			b.WriteString(". A class target that would hold it back: " + specs[0])
		case len(specs) == 1:
			b.WriteString(". A class target that would stop it: " + specs[0])
		default:
			b.WriteString(". Class targets that would stop them: " + strings.Join(specs, "; "))
		}
	}
	if len(held) > 0 {
		b.WriteString(". The scenario's target " + strings.Join(held, "; ") + " would stop it but is not met within the budget")
	}
	b.WriteString(".")
	return b.String()
}

func joinAnd(parts []string) string {
	switch len(parts) {
	case 0:
		return ""
	case 1:
		return parts[0]
	}
	return strings.Join(parts[:len(parts)-1], ", ") + " and " + parts[len(parts)-1]
}

// pct1 writes a share as a percentage with one decimal.
func pct1(v float64) string { return fmt.Sprintf("%.1f%%", 100*v) }

// moneyIn writes an amount in whole units with the scenario's currency.
func moneyIn(sc *Scenario, v float64) string {
	if sc.Currency == "" {
		return money(v)
	}
	return sc.Currency + " " + money(v)
}

// YAML writes the target as a flow mapping with the scenario file's keys,
// ready to paste under targets:.
func (t TargetSpec) YAML() string {
	var parts []string
	add := func(k, v string) { parts = append(parts, k+": "+v) }
	if t.Class != "" {
		add("class", flowScalar(t.Class))
	}
	if t.Group != "" {
		add("group", flowScalar(t.Group))
	}
	if t.State != "" {
		add("state", flowScalar(t.State))
	}
	for _, f := range []struct {
		k string
		v *float64
	}{{"max_share", t.MaxShare}, {"min_share", t.MinShare}, {"min_average_index", t.MinAverageIndex}} {
		if f.v != nil {
			add(f.k, strconv.FormatFloat(*f.v, 'f', -1, 64))
		}
	}
	if t.FromYear != nil {
		add("from_year", strconv.Itoa(*t.FromYear))
	}
	if t.ToYear != nil {
		add("to_year", strconv.Itoa(*t.ToYear))
	}
	if t.Hold {
		add("hold", "true")
	}
	return "{" + strings.Join(parts, ", ") + "}"
}

// flowScalar writes a name as a YAML scalar inside a flow mapping: plain
// when YAML reads it back as the same text, double-quoted otherwise (flow
// indicators, a leading indicator, words YAML reads as numbers or booleans).
func flowScalar(s string) string {
	var n yaml.Node
	plain := s != "" && !strings.ContainsAny(s, ",[]{}:#\"'\n") && strings.TrimSpace(s) == s &&
		yaml.Unmarshal([]byte("x: "+s), &n) == nil && len(n.Content) == 1 && len(n.Content[0].Content) == 2 &&
		n.Content[0].Content[1].Tag == "!!str" && n.Content[0].Content[1].Value == s
	if plain {
		return s
	}
	return strconv.Quote(s)
}
