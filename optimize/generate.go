package optimize

import (
	"fmt"
	"math"
	"math/rand/v2"

	"wearplan/markov"
	"wearplan/treatments"
)

// GenSpec bounds a randomly generated planning problem (Generate): the
// benchmark sizes are written classes x states x treatments x years.
type GenSpec struct {
	Classes, States, Treatments, Years int
	// Targets adds a network poor-share target and, at random, a class
	// score target, a hold target and a good-share target.
	Targets bool
	// BudgetShare sets each yearly cap as a share of the cost of treating
	// the worse half of the network once (0.7-1.3 times that, at random);
	// zero means no budget.
	BudgetShare float64
	// Interval, when 2 or more, makes every third treatment (the first,
	// the fourth, ...) wait that many years after any work, over classes
	// widened with the years since work (treatments.History); all of
	// today's quantity is past the interval. The rest of the problem is
	// drawn as without it.
	Interval int
	// Catalogue draws a model shaped as planners write scenarios instead
	// (generateCatalogue): one shared scale; a catalogue of Treatments
	// treatment types of which every class has its own copy, with its own
	// unit costs and effects, over wide overlapping bands of states; wear
	// from expected years in each state; weights by replacement value; a
	// level yearly budget and a network poor-share target, both set from
	// simple plans so that the model is feasible and both bind. Targets,
	// BudgetShare and Interval are not used. Generate draws nothing
	// differently when it is false.
	Catalogue bool
}

func (s GenSpec) String() string {
	out := fmt.Sprintf("%dx%dx%dx%d", s.Classes, s.States, s.Treatments, s.Years)
	if s.Interval > 0 {
		out += fmt.Sprintf("-interval%d", s.Interval)
	}
	if s.Catalogue {
		out += "-catalogue"
	}
	return out
}

// randomChain returns an upper-triangular stochastic matrix whose units stay
// put with probability 0.6-0.95 and otherwise drop one or two states.
func randomChain(rng *rand.Rand, n int) *markov.Transition {
	rows := make([][]float64, n)
	for i := range rows {
		rows[i] = make([]float64, n)
		if i == n-1 {
			rows[i][i] = 1
			continue
		}
		stay := 0.6 + 0.35*rng.Float64()
		rows[i][i] = stay
		if i+2 < n && rng.IntN(2) == 0 {
			two := (1 - stay) * 0.3 * rng.Float64()
			rows[i][i+2] = two
			rows[i][i+1] = 1 - stay - two
		} else {
			rows[i][i+1] = 1 - stay
		}
	}
	t, err := markov.NewTransition(rows, markov.Options{})
	if err != nil {
		panic(err)
	}
	return t
}

// randomTreatments returns nt treatments over an n-state scale, from cheap
// preservation on good states to reconstruction of the worst.
func randomTreatments(rng *rand.Rand, n, nt int) []treatments.Treatment {
	out := make([]treatments.Treatment, 0, nt)
	for a := 0; a < nt; a++ {
		tr := treatments.Treatment{Name: string(rune('A' + a)), Cost: make([]float64, n)}
		// Treatment a works on a band of states further down the scale and costs more.
		lo := min(a*n/max(nt, 1), n-1)
		hi := min(lo+1+rng.IntN(2), n-1)
		for i := lo; i <= hi; i++ {
			tr.Applies = append(tr.Applies, i)
			tr.Cost[i] = (10 + 40*float64(a)*float64(a) + 5*float64(i)) * (0.8 + 0.4*rng.Float64())
		}
		switch rng.IntN(3) {
		case 0:
			tr.Effect = treatments.Effect{Kind: treatments.ToState, State: 0}
		case 1:
			tr.Effect = treatments.Effect{Kind: treatments.Improve, Steps: 1 + rng.IntN(2)}
		default:
			tr.Effect = treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{}}
			for _, i := range tr.Applies {
				d := make([]float64, n)
				best := max(i-2, 0)
				d[best] = 0.7
				d[min(best+1, n-1)] += 0.3
				tr.Effect.Rows[i] = d
			}
		}
		tr.SkipsAging = rng.IntN(3) == 0
		out = append(out, tr)
	}
	return out
}

// Generate draws a valid random problem of the given size from rng, for
// tests and benchmarks. Budgets are set from the cost of treating the worse
// half of the network once, so that they bind. The same rng state gives the
// same problem.
func Generate(rng *rand.Rand, s GenSpec) *Problem {
	if s.Catalogue {
		return generateCatalogue(rng, s)
	}
	p := &Problem{Horizon: s.Years, Escalation: 0.03 * rng.Float64(), DiscountRate: 0.05 * rng.Float64()}
	if rng.IntN(2) == 0 {
		p.Objective = MinCost
	}
	need := 0.0
	for k := 0; k < s.Classes; k++ {
		n := s.States
		c := Class{Name: string(rune('k' + k)), Initial: make([]float64, n), Score: make([]float64, n), Group: make([]Group, n)}
		scale := math.Pow(10, float64(rng.IntN(3))) // quantities of 1-1000 units
		for i := range c.Initial {
			if rng.IntN(5) > 0 {
				c.Initial[i] = scale * (1 + 99*rng.Float64())
			}
			c.Score[i] = 100 * float64(n-1-i) / float64(n-1)
			switch {
			case i < (n+1)/3:
				c.Group[i] = Good
			case i < 2*n/3:
				c.Group[i] = Fair
			default:
				c.Group[i] = Poor
			}
		}
		c.Initial[0] += scale // never empty
		c.Weight = 0.5 + rng.Float64()
		chain, ts := randomChain(rng, n), randomTreatments(rng, n, s.Treatments)
		acts, err := treatments.Actions(chain, ts)
		if err != nil {
			panic(err)
		}
		c.Actions = acts
		for i := n / 2; i < n; i++ {
			cheapest := math.Inf(1)
			for _, a := range acts[1:] {
				if a.Applies[i] {
					cheapest = math.Min(cheapest, a.Cost[i])
				}
			}
			if !math.IsInf(cheapest, 1) {
				need += cheapest * c.Initial[i]
			}
		}
		if s.Interval > 1 {
			c = withInterval(c, chain, ts, s.Interval)
		}
		p.Classes = append(p.Classes, c)
	}
	if s.BudgetShare > 0 {
		p.Budget = make([]float64, p.Horizon)
		for t := range p.Budget {
			p.Budget[t] = need * s.BudgetShare * (0.7 + 0.6*rng.Float64())
		}
		p.Objective = MaxCondition
		if s.Targets && rng.IntN(3) == 0 {
			p.Objective = MinCost
		}
	}
	if s.Targets {
		p.Targets = append(p.Targets, Target{Label: "network poor share", Class: Network, Kind: MaxShare, Group: Poor, Value: 0.2 + 0.3*rng.Float64(), From: (p.Horizon + 1) / 2, To: p.Horizon})
		if rng.IntN(2) == 0 {
			p.Targets = append(p.Targets, Target{Label: "class 1 score", Class: 0, Kind: MinScore, Value: 30 + 30*rng.Float64(), From: 1, To: p.Horizon})
		}
		if rng.IntN(2) == 0 {
			p.Targets = append(p.Targets, Target{Label: "hold", Class: Network, Kind: Hold})
		}
		if rng.IntN(3) == 0 {
			p.Targets = append(p.Targets, Target{Label: "good share", Class: Network, Kind: MinShare, Group: Good, Value: 0.2 * rng.Float64(), From: 1, To: p.Horizon})
		}
	}
	if p.Budget == nil && p.Objective == MaxCondition {
		p.Objective = MinCost
	}
	return p
}

// withInterval returns class c with every third of its treatments ts
// waiting interval years after any work, over the widened states.
func withInterval(c Class, chain *markov.Transition, ts []treatments.Treatment, interval int) Class {
	for a := range ts {
		if a%3 == 0 {
			ts[a].MinInterval = interval
		}
	}
	h := treatments.NewHistory(len(c.Initial), ts, nil)
	acts, err := h.Actions(chain, nil, ts)
	if err != nil {
		panic(err)
	}
	wide := make([]float64, h.States())
	for i, q := range c.Initial {
		wide[h.State(i, h.Span)] = q
	}
	c.Initial, c.Actions = wide, acts
	c.Score, c.Group = treatments.Widen(h, c.Score), treatments.Widen(h, c.Group)
	return c
}
