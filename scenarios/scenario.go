package scenarios

import (
	"fmt"
	"math"

	"wearplan/markov"
	"wearplan/optimize"
	"wearplan/treatments"
)

// State is one condition state of a scale.
type State struct {
	Name string
	// Min and Max bound the index values the state covers.
	Min, Max float64
	// Value is the representative index value used for averages.
	Value float64
}

// Scale is an ordered list of condition states, best first, grouped into
// good, fair and poor for level-of-service reporting.
type Scale struct {
	Name   string
	States []State
	Group  []optimize.Group
	// Best and Worst are the index values at the best and worst ends of the
	// scale (Best < Worst for scales where lower is better, such as IRI).
	Best, Worst float64
	// Preset names the built-in scale this one comes from ("" for a scale
	// written in the file); Source cites the standard it follows.
	Preset, Source string
	// betterKeepsEnd[i] says that an index value on the end shared by
	// states i and i+1 counts in the better state i; by default it counts
	// in the worse one. Only presets set it, where a standard says so.
	betterKeepsEnd []bool
}

// StateOf returns the state an index value falls in, or -1 when the value
// is outside the scale. Ranges include both ends; a value on an end shared
// by two states counts in the worse state (unless the scale's standard
// says otherwise), and a value between two ranges that meet at consecutive
// whole numbers (85.5 between 71-85 and 86-100) has not reached the better
// state's range, so it counts in the worse state too.
func (s *Scale) StateOf(v float64) int {
	if math.IsNaN(v) {
		return -1
	}
	in := func(i int) bool { return v >= s.States[i].Min && v <= s.States[i].Max }
	n := len(s.States)
	for i := 0; i < n; i++ {
		if in(i) {
			if i+1 < n && in(i+1) && !(i < len(s.betterKeepsEnd) && s.betterKeepsEnd[i]) {
				continue
			}
			return i
		}
		if i+1 < n {
			lo, hi := math.Min(s.States[i].Min, s.States[i+1].Min), math.Max(s.States[i].Max, s.States[i+1].Max)
			if v > lo && v < hi && !in(i+1) {
				// Strictly between the two ranges: the gap of a whole-number tiling.
				return i + 1
			}
		}
	}
	return -1
}

// Score maps an index value onto 0 (worst end) - 100 (best end).
func (s *Scale) Score(v float64) float64 { return 100 * (v - s.Worst) / (s.Best - s.Worst) }

// Index maps a score back onto the scale's index values.
func (s *Scale) Index(score float64) float64 { return s.Worst + score/100*(s.Best-s.Worst) }

// StateIndex returns the position of a state name, or -1.
func (s *Scale) StateIndex(name string) int {
	for i, st := range s.States {
		if st.Name == name {
			return i
		}
	}
	return -1
}

// Class is a validated asset class.
type Class struct {
	Name string
	Unit string
	// Scale is shared by the classes that name it.
	Scale *Scale
	// Initial is today's quantity by state.
	Initial    []float64
	Transition *markov.Transition
	Treatments []treatments.Treatment
	// ReplacementCost is per unit of quantity; 0 when not given.
	ReplacementCost float64
	// Weight is the class's normalised weight in network figures.
	Weight float64
	// Routine is the yearly cost per unit left untreated in each state at
	// start-year prices; nil when the class gives none.
	Routine []float64
	// Segments are the class's rows of an inventory CSV (nil when the
	// inventory is written in the scenario); Inventory says what was read.
	Segments  []Segment
	Inventory *Inventory
	// SegmentSize is the size of the pieces a simulation cuts the class
	// into, in its unit (segment_size); 0 when not given: the segment list's
	// segments, or DefaultSegmentSize.
	SegmentSize float64
	// Evidence is how the matrix was estimated, when it comes from a fit
	// result; nil for a matrix typed into the scenario. Simulations draw
	// matrices from it under matrix uncertainty.
	Evidence *MatrixEvidence
	// Parent and Family say that the class is one family of the class
	// Parent of the scenario, split off by the family columns of its
	// segment list with its own fitted matrix (splitFamilies); both are
	// empty for a class as written.
	Parent, Family string
	// split holds the fit's families while the class waits to be split.
	split *familySplit
	// AfterWork is the wear of the first years after any treatment (nil:
	// the usual matrix throughout).
	AfterWork *treatments.AfterWork
	// History widens the class's states with the years since its last
	// treatment when its treatments keep intervals or it wears differently
	// after work; nil otherwise (history.go).
	History *treatments.History
	// LastTreated are the shares of the class's quantity last treated in
	// each year: as written in the scenario for a class typed as
	// quantities, or summed from a segment list's last_treated column
	// (each segment also keeps its own year when segments are kept).
	LastTreated []LastTreated
	// datedSegments counts the segments of a segment list that give a
	// last_treated year.
	datedSegments int
}

// LastTreated is the share of each state's quantity last treated in Year.
type LastTreated struct {
	Year  int
	Share []float64
}

// Total is the class's total quantity.
func (c *Class) Total() float64 {
	s := 0.0
	for _, q := range c.Initial {
		s += q
	}
	return s
}

// Target is a validated condition target with calendar years.
type Target struct {
	Label string
	// Class is the class name, or "" for the whole network.
	Class string
	// State names the condition state a state-share target measures ("" for
	// targets on groups or the average index).
	State string
	Spec  optimize.Target
	// FromYear and ToYear are calendar years (end-of-year condition).
	FromYear, ToYear int
	// Confidence is the share of simulated runs in which the plan must
	// meet the target in every year it covers (confidence); 0 when the
	// plan need only meet it in expectation.
	Confidence float64
}

// BudgetGroup caps the yearly spend on some classes.
type BudgetGroup struct {
	Name    string
	Classes []string
	Yearly  []float64
}

// MinSpend is money ring-fenced for a class or a budget group
// (budget.min_yearly): the spend on its classes in each year is at least
// that year's amount, counted as the caps count it.
type MinSpend struct {
	// Name is the class or budget group; Group says which.
	Name    string
	Group   bool
	Classes []string
	Yearly  []float64
	// file and line say where it is written, for messages.
	file string
	line int
}

// ClassWarningLimits are the thresholds of the warnings on what a plan
// does to each class (scenario key class_warnings).
type ClassWarningLimits struct {
	// PoorShareRise: a class whose poor share rises by more than this
	// (share points, 0.10 for 10 points) above today's in some year.
	PoorShareRise float64
	// WorstStateGrowth: a class whose share in its worst state grows to
	// more than this many times today's share in some year.
	WorstStateGrowth float64
	// BacklogGrowth: a class whose backlog, at today's prices, grows to
	// more than this many times today's in some year.
	BacklogGrowth float64
}

// DefaultClassWarnings are the thresholds when the scenario gives none.
var DefaultClassWarnings = ClassWarningLimits{PoorShareRise: 0.10, WorstStateGrowth: 2, BacklogGrowth: 2}

// Weighting says how classes are weighted in network figures.
type Weighting string

const (
	WeightByValue Weighting = "replacement value"
	WeightGiven   Weighting = "weights given in the scenario"
	WeightEqual   Weighting = "equal (no replacement costs given)"
)

// Scenario is a validated planning scenario.
type Scenario struct {
	Name        string
	Description string
	// Source names the file the scenario came from.
	Source       string
	StartYear    int
	Horizon      int
	Currency     string
	DiscountRate float64
	Escalation   float64
	Classes      []Class
	// Budget is the network cap per year; nil for none.
	Budget       []float64
	BudgetGroups []BudgetGroup
	// MinSpends are the ring-fenced yearly spends.
	MinSpends []MinSpend
	CarryOver bool
	// RoutineInBudget counts routine costs against the caps.
	RoutineInBudget bool
	Targets         []Target
	Objective       optimize.Objective
	Weighting       Weighting
	// ClassWarnings are the thresholds of the warnings on what a plan does
	// to each class.
	ClassWarnings ClassWarningLimits
	// Inputs are the files the scenario was read from, first the scenario
	// itself, then its bases and any data files, with their digests.
	Inputs []InputFile
	// Inventories say what was read from each inventory CSV.
	Inventories []*Inventory
	// Notes are things a planner should know about how the file was read
	// (not errors); results repeat them as warnings.
	Notes []string
}

// InputFile is one file a scenario was read from: its name within the
// scenario's folder and the SHA-256 digest of its bytes, in hex.
type InputFile struct {
	Name   string
	SHA256 string
}

// Year returns the calendar year of plan year t (1-based).
func (s *Scenario) Year(t int) int { return s.StartYear + t - 1 }

// SharedScale returns the scale every class uses, or nil when they differ.
func (s *Scenario) SharedScale() *Scale {
	var sc *Scale
	for i := range s.Classes {
		if sc == nil {
			sc = s.Classes[i].Scale
		} else if s.Classes[i].Scale != sc {
			return nil
		}
	}
	return sc
}

// Problem turns the scenario into the optimizer's problem.
func (s *Scenario) Problem() (*optimize.Problem, error) {
	p := &optimize.Problem{
		Horizon:         s.Horizon,
		Budget:          s.Budget,
		CarryOver:       s.CarryOver,
		RoutineInBudget: s.RoutineInBudget,
		Escalation:      s.Escalation,
		DiscountRate:    s.DiscountRate,
		Objective:       s.Objective,
	}
	index := map[string]int{}
	for k := range s.Classes {
		c := &s.Classes[k]
		index[c.Name] = k
		oc, err := c.problemClass(s.StartYear)
		if err != nil {
			return nil, fmt.Errorf("class %q: %w", c.Name, err)
		}
		p.Classes = append(p.Classes, oc)
	}
	for _, g := range s.BudgetGroups {
		gb := optimize.GroupBudget{Name: g.Name, Yearly: g.Yearly}
		for _, name := range g.Classes {
			k, ok := index[name]
			if !ok {
				return nil, fmt.Errorf("budget group %q: class %q is not in the scenario", g.Name, name)
			}
			gb.Classes = append(gb.Classes, k)
		}
		p.GroupBudgets = append(p.GroupBudgets, gb)
	}
	for _, m := range s.MinSpends {
		ms := optimize.MinSpend{Name: m.Name, Yearly: m.Yearly}
		for _, name := range m.Classes {
			k, ok := index[name]
			if !ok {
				return nil, fmt.Errorf("ring-fenced money %q: class %q is not in the scenario", m.Name, name)
			}
			ms.Classes = append(ms.Classes, k)
		}
		p.MinSpends = append(p.MinSpends, ms)
	}
	for _, t := range s.Targets {
		spec := t.Spec
		// A target on states of a class planned over widened states holds
		// every widened state of those condition states.
		if spec.States != nil && spec.Class >= 0 && spec.Class < len(s.Classes) {
			if h := s.Classes[spec.Class].History; h != nil {
				wide := make([]bool, h.States())
				for w := range wide {
					wide[w] = spec.States[h.Condition(w)]
				}
				spec.States = wide
			}
		}
		p.Targets = append(p.Targets, spec)
	}
	return p, nil
}
