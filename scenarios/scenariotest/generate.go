// Package scenariotest writes random, invented scenario files for tests
// that check wearplan against a reference over many scenarios: every option
// of the scenario format that the planning model reads (both objectives,
// one or yearly budgets, budget groups, carry-over, routine costs in and
// out of the budget, discounting, escalation, higher- and lower-is-better
// scales, and every target kind) appears in some of them. It knows nothing
// of wearplan's packages: it writes the file format of
// docs/scenario-format.md (in JSON syntax, which YAML reads), so that the
// scenarios reach the model through the same reader a user's files do.
package scenariotest

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
)

// Spec bounds a generated scenario.
type Spec struct {
	// MaxClasses, MaxStates, MaxTreatments and MaxYears bound the size;
	// zero means 4, 6, 3 and 10.
	MaxClasses, MaxStates, MaxTreatments, MaxYears int
}

func (s Spec) or(v, d int) int {
	if v > 0 {
		return v
	}
	return d
}

// Generate writes scenario number n of a series drawn from rng. Options
// rotate with n (each appears in a fixed share of any long enough run) and
// sizes and numbers are random, so that a fixed seed gives a fixed set.
func Generate(rng *rand.Rand, n int, spec Spec) []byte {
	g := &gen{rng: rng, n: n}
	return g.scenario(spec)
}

type gen struct {
	rng *rand.Rand
	n   int
}

func (g *gen) between(lo, hi float64) float64 { return lo + (hi-lo)*g.rng.Float64() }

func round(v float64, places int) float64 {
	f := math.Pow(10, float64(places))
	return math.Round(v*f) / f
}

type obj = map[string]any

// class is what the generator remembers about a class it wrote.
type class struct {
	name, scale string
	states      []string
	lowerBetter bool
	best, worst float64
	quantity    []float64
	routine     []float64
	cheapest    []float64 // cheapest treatment per state, 0 where none
}

func (g *gen) scenario(spec Spec) []byte {
	rng := g.rng
	years := 3 + rng.IntN(spec.or(spec.MaxYears, 10)-2)
	start := 2030
	sc := obj{
		"name":       fmt.Sprintf("generated invented scenario %d", g.n),
		"start_year": start,
		"horizon":    years,
		"currency":   "CU",
	}
	if g.n%3 != 0 {
		sc["discount_rate"] = round(g.between(0, 0.06), 4)
		sc["cost_escalation"] = round(g.between(0, 0.04), 4)
	}
	nc := 1 + rng.IntN(spec.or(spec.MaxClasses, 4))
	scales := obj{}
	var classes []obj
	var treatments []obj
	var cls []*class
	for k := 0; k < nc; k++ {
		c, scale, cl, ts := g.class(k, spec)
		scales[c.scale] = scale
		classes = append(classes, cl)
		treatments = append(treatments, ts...)
		cls = append(cls, c)
	}
	sc["scales"], sc["classes"], sc["treatments"] = scales, classes, treatments

	// Money: the cost of treating the worse half of every class once, the
	// scale budgets are drawn on so that they bind.
	need := 0.0
	for _, c := range cls {
		for i := len(c.states) / 2; i < len(c.states); i++ {
			need += c.cheapest[i] * c.quantity[i]
		}
	}
	routineMost := 0.0
	for _, c := range cls {
		most := 0.0
		for _, r := range c.routine {
			most = math.Max(most, r)
		}
		tot := 0.0
		for _, q := range c.quantity {
			tot += q
		}
		routineMost += most * tot
	}
	budgeted := g.n%7 != 3
	includesRoutine := budgeted && g.n%4 == 0 && routineMost > 0
	if budgeted {
		level := need * g.between(0.03, 0.4)
		if includesRoutine {
			// Every other such case leaves too little for doing nothing
			// in some years: work keeps the budget, or nothing does.
			extra := routineMost * 1.2
			if g.n%8 == 4 {
				extra = routineMost * g.between(0.3, 1)
			}
			level += extra
		}
		b := obj{}
		if g.n%2 == 0 {
			b["yearly"] = round(level, 0)
		} else {
			var ys []float64
			for t := 0; t < years; t++ {
				ys = append(ys, round(level*g.between(0.6, 1.4), 0))
			}
			b["yearly"] = ys
		}
		if g.n%5 == 1 {
			b["carry_over"] = true
		}
		if includesRoutine {
			b["includes_routine"] = true
		}
		if nc > 1 && g.n%5 == 3 {
			var names []string
			for _, c := range cls[:1+rng.IntN(nc-1)] {
				names = append(names, c.name)
			}
			b["groups"] = []obj{{"name": "fund one", "classes": names, "yearly": round(level*g.between(0.1, 0.5), 0)}}
		}
		sc["budget"] = b
	}
	// Targets: every kind, on classes and on the network.
	var targets []obj
	if g.n%6 != 5 {
		nt := 1 + rng.IntN(3)
		for i := 0; i < nt; i++ {
			targets = append(targets, g.target(cls, start, years, (g.n+i)%5))
		}
	}
	if len(targets) > 0 {
		sc["targets"] = targets
	}
	switch {
	case !budgeted:
		sc["objective"] = "min-cost"
	case len(targets) > 0 && g.n%3 == 1:
		sc["objective"] = "min-cost"
	default:
		sc["objective"] = "max-condition"
	}
	out, err := json.MarshalIndent(sc, "", " ")
	if err != nil {
		panic(err) // maps of numbers and strings always encode
	}
	return out
}

// class writes one class: its scale, the class, and its treatments.
func (g *gen) class(k int, spec Spec) (*class, obj, obj, []obj) {
	rng := g.rng
	ns := 3 + rng.IntN(spec.or(spec.MaxStates, 6)-2)
	c := &class{name: fmt.Sprintf("class%d", k+1), scale: fmt.Sprintf("scale%d", k+1), lowerBetter: (g.n+k)%3 == 2}
	// Index ranges: 0-100 best first (higher is better), or 1-5 worst last
	// (lower is better, like a defect grade).
	lo, hi := 0.0, 100.0
	if c.lowerBetter {
		lo, hi = 1, 5
	}
	cuts := []float64{lo, hi}
	for len(cuts) < ns+1 {
		v := round(g.between(lo, hi), 3)
		dup := false
		for _, x := range cuts {
			dup = dup || math.Abs(x-v) < 1e-2*(hi-lo)
		}
		if !dup {
			cuts = append(cuts, v)
		}
	}
	sort.Float64s(cuts)
	var states []obj
	for i := 0; i < ns; i++ {
		// Best first: from the top of the range for higher-is-better,
		// from the bottom for lower-is-better.
		a, b := cuts[ns-1-i], cuts[ns-i]
		if c.lowerBetter {
			a, b = cuts[i], cuts[i+1]
		}
		name := fmt.Sprintf("S%d", i+1)
		c.states = append(c.states, name)
		states = append(states, obj{"name": name, "min": a, "max": b, "value": round((a+b)/2, 4)})
	}
	c.best, c.worst = hi, lo
	if c.lowerBetter {
		c.best, c.worst = lo, hi
	}
	groups := obj{"good": []string{}, "fair": []string{}, "poor": []string{}}
	for i, s := range c.states {
		g := "fair"
		switch {
		case i < (ns+1)/3:
			g = "good"
		case i >= 2*ns/3:
			g = "poor"
		}
		groups[g] = append(groups[g].([]string), s)
	}
	scale := obj{"states": states, "groups": groups}

	inv := obj{}
	c.quantity = make([]float64, ns)
	size := math.Pow(10, float64(rng.IntN(3)))
	for i, s := range c.states {
		if i == 0 || rng.IntN(5) > 0 {
			q := round(size*g.between(1, 100), 2)
			c.quantity[i] = q
			inv[s] = q
		}
	}
	cl := obj{"name": c.name, "scale": c.scale, "unit": "u", "inventory": inv, "replacement_cost": round(g.between(100, 5000), 0)}
	if rng.IntN(2) == 0 {
		var yis []float64
		for i := 0; i < ns-1; i++ {
			yis = append(yis, float64(2+rng.IntN(10)))
		}
		cl["deterioration"] = obj{"years_in_state": yis}
	} else {
		rows := make([][]float64, ns)
		for i := range rows {
			rows[i] = make([]float64, ns)
			if i == ns-1 {
				rows[i][i] = 1
				continue
			}
			stay := round(g.between(0.55, 0.95), 4)
			rows[i][i] = stay
			if i+2 < ns && rng.IntN(2) == 0 {
				two := round((1-stay)*g.between(0, 0.4), 4)
				rows[i][i+2] = two
				rows[i][i+1] = round(1-stay-two, 4)
			} else {
				rows[i][i+1] = round(1-stay, 4)
			}
		}
		cl["deterioration"] = obj{"matrix": rows}
	}
	if g.n%4 == 2 { // weights for every class or none
		cl["weight"] = round(g.between(0.5, 3), 2)
	}
	c.routine = make([]float64, ns)
	if (g.n+k)%4 == 0 {
		rc := obj{}
		for i := ns / 2; i < ns; i++ {
			c.routine[i] = round(g.between(1, 30)*float64(i), 1)
			rc[c.states[i]] = c.routine[i]
		}
		cl["routine_cost"] = rc
	}
	nt := 1 + rng.IntN(spec.or(spec.MaxTreatments, 3))
	c.cheapest = make([]float64, ns)
	var ts []obj
	var names []string
	for a := 0; a < nt; a++ {
		lo := min(1+a*(ns-1)/nt, ns-1)
		hi := min(lo+1+rng.IntN(2), ns-1)
		var applies []string
		for i := lo; i <= hi; i++ {
			applies = append(applies, c.states[i])
		}
		cost := round((20+60*float64(a*a)+10*float64(lo))*g.between(0.7, 1.3), 1)
		for i := lo; i <= hi; i++ {
			if c.cheapest[i] == 0 || cost < c.cheapest[i] {
				c.cheapest[i] = cost
			}
		}
		t := obj{"name": fmt.Sprintf("%s-t%d", c.name, a+1), "applies_to": applies, "cost": cost}
		switch rng.IntN(3) {
		case 0:
			t["effect"] = obj{"to": c.states[0]}
		case 1:
			t["effect"] = obj{"improve": 1 + rng.IntN(2)}
		default:
			best := max(lo-2, 0)
			d := obj{c.states[best]: 0.7}
			d[c.states[min(best+1, ns-1)]] = 0.3
			t["effect"] = obj{"distribution": d}
		}
		if rng.IntN(3) == 0 {
			t["ages_same_year"] = false
		}
		ts = append(ts, t)
		names = append(names, t["name"].(string))
	}
	cl["treatments"] = names
	return c, scale, cl, ts
}

// target writes a target of the given kind (0 max share, 1 min share, 2
// average index, 3 hold, 4 a strict poor share few plans meet) on a
// class or the network.
func (g *gen) target(cls []*class, start, years, kind int) obj {
	rng := g.rng
	from := start + rng.IntN(years)
	t := obj{"from_year": from, "to_year": from + rng.IntN(start+years-from)}
	c := cls[rng.IntN(len(cls))]
	t["class"] = c.name
	if rng.IntN(3) == 0 && kind != 2 {
		t["class"] = "all"
	}
	switch kind {
	case 0:
		t["group"], t["max_share"] = "poor", round(g.between(0.1, 0.5), 3)
	case 1:
		t["group"], t["min_share"] = "good", round(g.between(0.05, 0.4), 3)
	case 2:
		// An index between the scale's ends, nearer the worse one.
		t["min_average_index"] = round(c.worst+(c.best-c.worst)*g.between(0.2, 0.6), 3)
	case 3:
		return obj{"class": t["class"], "hold": true}
	default:
		t["group"], t["max_share"] = "poor", round(g.between(0, 0.02), 4)
	}
	return t
}
