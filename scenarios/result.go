package scenarios

import (
	"bytes"
	"encoding/json"

	"wearplan/optimize"
)

// Caution is the paragraph every report carries.
const Caution = "Planning estimate only. These figures come from a network-level model made for budgeting; " +
	"they are not an engineering assessment of any asset. Decisions about specific assets need inspection " +
	"by qualified people, and local codes, standards and licensed practice govern."

// Kind says what a result is; it is the "kind" field of every JSON
// output.
type Kind string

const (
	KindPlan       Kind = "plan"
	KindForecast   Kind = "forecast"
	KindLongRun    Kind = "longrun"
	KindSweep      Kind = "sweep"
	KindCompare    Kind = "compare"
	KindSimulation Kind = "simulation"
)

// Status is the outcome of a run: for a plan, the solver's (optimize.Status);
// for a forecast, the rule it follows.
type Status string

const (
	// Optimal: every target holds and the objective is optimal.
	Optimal = Status(optimize.Optimal)
	// TargetsNotMet: the targets cannot all be met within the budgets; the
	// plan is the one with the least total shortfall.
	TargetsNotMet = Status(optimize.TargetsNotMet)
	// DoNothing: a forecast with no work done.
	DoNothing Status = "do-nothing"
	// FollowsWorstFirst: a forecast under the worst-first rule.
	FollowsWorstFirst = Status(WorstFirst)
)

// Result is a forecast or plan, year by year, in the shape of the JSON
// output documented in docs/json.md. Shares are fractions (0-1); money is
// nominal in the scenario's currency unless a field says present value.
type Result struct {
	Scenario  string `json:"scenario"`
	Source    string `json:"source"`
	Kind      Kind   `json:"kind"` // KindPlan or KindForecast
	Status    Status `json:"status"`
	Objective string `json:"objective,omitempty"`
	Currency  string `json:"currency"`
	StartYear int    `json:"start_year"`
	Horizon   int    `json:"horizon"`
	// TotalCost is nominal treatment spend over the horizon.
	TotalCost    float64 `json:"total_cost"`
	PresentValue float64 `json:"present_value"`
	// RoutineCost is the nominal routine cost of untreated quantities over
	// the horizon, reported apart from treatment spend (absent when the
	// scenario gives no routine costs); RoutinePresentValue discounts it.
	RoutineCost         *float64 `json:"routine_cost,omitempty"`
	RoutinePresentValue *float64 `json:"routine_present_value,omitempty"`
	DiscountRate        float64  `json:"discount_rate"`
	Escalation          float64  `json:"cost_escalation"`
	// ConditionScore is the mean over the horizon of the network condition
	// score (0-100), the max-condition objective.
	ConditionScore float64 `json:"condition_score"`
	// Weighting says how classes are weighted in network figures.
	Weighting string          `json:"network_weighting"`
	Weights   []ClassWeight   `json:"weights"`
	Initial   Snapshot        `json:"initial"`
	Years     []Year          `json:"years"`
	Targets   []TargetOutcome `json:"targets"`
	// GroupClasses name each budget group's classes; the groups' spend
	// and caps are in Years[].Groups.
	GroupClasses []GroupClasses `json:"budget_group_classes,omitempty"`
	// BacklogRules say what each poor state's backlog is valued at.
	BacklogRules []BacklogRule `json:"backlog_rules,omitempty"`
	Warnings     []string      `json:"warnings"`
	// ClassWarnings say what a plan does to classes a council should hear
	// about (classwarn.go); their texts are among Warnings too.
	ClassWarnings []ClassWarning `json:"class_warnings,omitempty"`
	// Funding answers the funding questions of a plan (funding.go).
	Funding *Funding `json:"funding,omitempty"`
	// Baseline is the worst-first rule under the same budget, for
	// comparison with an optimised plan.
	Baseline *Baseline `json:"baseline,omitempty"`
	// Indicators are the asset management plan indicators
	// (indicators.go): remaining life, depreciated replacement cost,
	// consumption and the renewal ratios.
	Indicators *Indicators `json:"indicators,omitempty"`
	Model      *ModelSize  `json:"model,omitempty"`
	// Confidence is how the plan meets the targets that state a
	// confidence (confidence.go); nil when none does.
	Confidence *Confidence `json:"confidence,omitempty"`
	// Robust compares a robust plan (PlanRobust) with the point-estimate
	// plan under sampled matrices; nil for other plans.
	Robust  *Robust `json:"robust,omitempty"`
	Caution string  `json:"caution"`
	// wide keeps, for classes with a History, the quantities by widened
	// state at the end of each year (index 0: today), for worklists; nil
	// for the other classes, and not part of the JSON contract.
	wide [][][]float64
}

// wideCondition is class k's quantity by widened state at the end of year
// t (0: today), or nil when not known.
func (r *Result) wideCondition(k, t int) []float64 {
	if k >= len(r.wide) || r.wide[k] == nil || t >= len(r.wide[k]) {
		return nil
	}
	return r.wide[k][t]
}

// ClassWeight is one class's share of network figures.
type ClassWeight struct {
	Class  string  `json:"class"`
	Weight float64 `json:"weight"`
}

// ModelSize describes the LP that was solved: the flat model, or for the
// decomposition the last master LP (Iterations pricing rounds, Policies
// generated).
type ModelSize struct {
	Solver     string `json:"solver,omitempty"`
	Rows       int    `json:"rows"`
	Columns    int    `json:"columns"`
	Nonzeros   int    `json:"nonzeros"`
	Solves     int    `json:"solves"`
	Iterations int    `json:"iterations,omitempty"`
	Policies   int    `json:"policies,omitempty"`
	// Path says how the plan was solved when lp_solve's first way gave no
	// checked answer (other settings, the other method).
	Path string `json:"path,omitempty"`
}

// Snapshot is the condition of every class and the network at one time.
type Snapshot struct {
	Classes []ClassCondition `json:"classes"`
	Network NetworkCondition `json:"network"`
}

// Shares are the level-of-service group shares.
type Shares struct {
	Good float64 `json:"good"`
	Fair float64 `json:"fair"`
	Poor float64 `json:"poor"`
}

// ClassCondition is a class's condition at the end of a year (or today),
// with the year's work and spend in plans.
type ClassCondition struct {
	Class        string     `json:"class"`
	Unit         string     `json:"unit"`
	States       Quantities `json:"states"`
	AverageIndex float64    `json:"average_index"`
	Score        float64    `json:"score"`
	Shares       Shares     `json:"shares"`
	// ReplacementValue and Backlog are money figures of the asset-value
	// reporting at that year's prices (value.go has the definitions): set
	// when the scenario gives what they need, nil and left out of JSON
	// when unknown.
	ReplacementValue *float64 `json:"replacement_value,omitempty"`
	Backlog          *float64 `json:"backlog,omitempty"`
	Work             []Work   `json:"work,omitzero"` // [] in plans, absent in forecasts
	Spend            *float64 `json:"spend,omitempty"`
	// MinYearly is the money ring-fenced for the class that year
	// (budget.min_yearly), in plans, when there is any.
	MinYearly *float64 `json:"min_yearly,omitempty"`
}

// NetworkCondition is the weighted network condition. AverageIndex is
// present only when every class uses the same scale.
type NetworkCondition struct {
	Score        float64  `json:"score"`
	AverageIndex *float64 `json:"average_index,omitempty"`
	Shares       Shares   `json:"shares"`
	// ReplacementValue and Backlog: see ClassCondition.
	ReplacementValue *float64 `json:"replacement_value,omitempty"`
	Backlog          *float64 `json:"backlog,omitempty"`
}

// Work is the quantity of a class in one state given one treatment in a year.
type Work struct {
	Treatment string  `json:"treatment"`
	State     string  `json:"state"`
	Quantity  float64 `json:"quantity"`
	Cost      float64 `json:"cost"`
}

// Year is one planning year: the work done in it and the condition at its end.
type Year struct {
	Year   int      `json:"year"`
	Spend  float64  `json:"spend"`
	Budget *float64 `json:"budget"`
	// Routine is the year's routine cost (absent without routine costs).
	Routine *float64         `json:"routine_cost,omitempty"`
	Groups  []GroupSpend     `json:"budget_groups,omitempty"`
	Classes []ClassCondition `json:"classes"`
	Network NetworkCondition `json:"network"`
}

// GroupClasses is a budget group and the classes it caps.
type GroupClasses struct {
	Name    string   `json:"name"`
	Classes []string `json:"classes"`
}

// GroupSpend is a budget group's spend and cap in a year.
type GroupSpend struct {
	Name   string  `json:"name"`
	Spend  float64 `json:"spend"`
	Budget float64 `json:"budget"`
	// MinYearly is the money ring-fenced for the group that year
	// (budget.min_yearly), when there is any.
	MinYearly *float64 `json:"min_yearly,omitempty"`
}

// TargetOutcome says whether a target holds, its worst year, and any
// shortfall per year (share points 0-1, or index points).
type TargetOutcome struct {
	Target string `json:"target"`
	// Measure says what the values are: a share 0-1, an average index on
	// the target's scale, or the 0-100 condition score (a network target
	// when the classes' scales differ).
	Measure    TargetMeasure   `json:"measure"`
	Met        bool            `json:"met"`
	WorstYear  int             `json:"worst_year"`
	WorstValue float64         `json:"worst_value"`
	Limit      float64         `json:"limit"`
	Shortfalls []YearShortfall `json:"shortfalls,omitempty"`
}

// TargetMeasure names the unit of a target's values and shortfalls.
type TargetMeasure string

const (
	// MeasureShare: a share of quantity, 0-1; shortfalls in share points.
	MeasureShare TargetMeasure = "share"
	// MeasureIndex: an average index on the target's scale; shortfalls in
	// index points.
	MeasureIndex TargetMeasure = "index"
	// MeasureScore: the 0-100 condition score; shortfalls in score points.
	MeasureScore TargetMeasure = "score"
)

// YearShortfall is how far a target is missed in one year, in the target's
// own unit (share 0-1, index points or score points: see Measure).
type YearShortfall struct {
	Year   int     `json:"year"`
	Amount float64 `json:"amount"`
}

// StateQuantity is the quantity in one state.
type StateQuantity struct {
	State    string
	Quantity float64
}

// Quantities is a quantity per state, best first. It is written to JSON as
// an object whose keys keep the scale's order.
type Quantities []StateQuantity

// MarshalJSON writes the quantities as an ordered object.
func (q Quantities) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, s := range q {
		if i > 0 {
			b.WriteByte(',')
		}
		k, err := json.Marshal(s.State)
		if err != nil {
			return nil, err
		}
		v, err := json.Marshal(s.Quantity)
		if err != nil {
			return nil, err
		}
		b.Write(k)
		b.WriteByte(':')
		b.Write(v)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}
