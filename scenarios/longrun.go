package scenarios

import (
	"context"
	"math"

	"wearplan/optimize"
)

// LongRunResult is the steady-state policy of a scenario: what to do each
// year, forever, what condition that sustains, and what it costs a year at
// start-year prices.
type LongRunResult struct {
	Scenario  string `json:"scenario"`
	Source    string `json:"source"`
	Kind      Kind   `json:"kind"` // KindLongRun
	Status    Status `json:"status"`
	Objective string `json:"objective"`
	Currency  string `json:"currency"`
	// Budget is the annual network cap used (the first year's), if any.
	Budget *float64 `json:"budget"`
	// AnnualCost is treatment spend plus routine cost per year.
	AnnualCost      float64          `json:"annual_cost"`
	AnnualTreatment float64          `json:"annual_treatment_cost"`
	AnnualRoutine   float64          `json:"annual_routine_cost"`
	Weighting       string           `json:"network_weighting"`
	Today           Snapshot         `json:"today"`
	Classes         []LongRunClass   `json:"classes"`
	Network         NetworkCondition `json:"network"`
	Targets         []LongRunTarget  `json:"targets"`
	Warnings        []string         `json:"warnings"`
	Caution         string           `json:"caution"`
}

// LongRunClass is one class's long-run policy and condition.
type LongRunClass struct {
	Class string `json:"class"`
	Unit  string `json:"unit"`
	// States is the long-run quantity in each state.
	States       Quantities `json:"states"`
	AverageIndex float64    `json:"average_index"`
	Score        float64    `json:"score"`
	Shares       Shares     `json:"shares"`
	// Policy lists, per state, the share of it given each action each year.
	Policy          []PolicyEntry `json:"policy"`
	AnnualTreatment float64       `json:"annual_treatment_cost"`
	AnnualRoutine   float64       `json:"annual_routine_cost"`
}

// PolicyEntry is the long-run share of one state given one action a year.
type PolicyEntry struct {
	State     string  `json:"state"`
	Treatment string  `json:"treatment"`
	Quantity  float64 `json:"quantity"`
	// Share is the fraction of the state's long-run quantity (0-1).
	Share float64 `json:"share"`
	Cost  float64 `json:"annual_cost"`
	// ByYearsSinceWork splits the entry by the years since the quantity's
	// last treatment, for classes whose treatments keep intervals or that
	// wear differently after work (absent for the others).
	ByYearsSinceWork []PolicyYears `json:"by_years_since_work,omitempty"`
}

// PolicyYears is the part of a policy entry with one number of years since
// the last treatment.
type PolicyYears struct {
	// Years since the last treatment at the start of the year; with OrMore,
	// that many or more (the longest the class keeps).
	Years    int     `json:"years_since_work"`
	OrMore   bool    `json:"or_more,omitempty"`
	Quantity float64 `json:"quantity"`
	// Share is the fraction of the long-run quantity in the state with
	// these years since work (0-1).
	Share float64 `json:"share"`
}

// LongRunTarget says whether a target holds in the long run.
type LongRunTarget struct {
	Target string  `json:"target"`
	Met    bool    `json:"met"`
	Value  float64 `json:"value"`
	Limit  float64 `json:"limit"`
	// Shortfall is in the target's unit (share 0-1, or index points).
	Shortfall float64 `json:"shortfall,omitempty"`
}

// LongRun solves the scenario's steady-state problem (optimize.SolveLongRun):
// the scenario's objective, targets with their years ignored, and the first
// year's caps as annual caps.
func LongRun(sc *Scenario, opt Options) (*LongRunResult, error) {
	return LongRunContext(context.Background(), sc, opt)
}

// LongRunContext is LongRun with a context: once ctx is done the solve
// stops between solver calls and it returns an error wrapping ctx.Err(),
// and no result.
func LongRunContext(ctx context.Context, sc *Scenario, opt Options) (*LongRunResult, error) {
	opt.ctx = ctx
	r, err := longRun(sc, opt)
	return finish(ctx, r, err)
}

// longRun is LongRun under opt's context.
func longRun(sc *Scenario, opt Options) (*LongRunResult, error) {
	p, err := opt.problem(sc)
	if err != nil {
		return nil, err
	}
	p.Timeout = opt.Timeout
	lr, err := optimize.SolveLongRun(p)
	if err != nil {
		return nil, err
	}
	if lr.Status == optimize.Infeasible {
		if err := minSpendInfeasible(sc, p, longRunFeasible); err != nil {
			return nil, err
		}
		return nil, budgetInfeasible(sc, p)
	}
	r := &LongRunResult{
		Scenario: sc.Name, Source: sc.Source, Kind: KindLongRun, Status: Status(lr.Status), Objective: sc.Objective.String(),
		Currency: sc.Currency, Weighting: string(sc.Weighting), Caution: Caution, Warnings: append([]string{}, sc.Notes...),
		AnnualCost: lr.AnnualCost(), AnnualTreatment: lr.AnnualTreatment, AnnualRoutine: lr.AnnualRoutine,
	}
	if sc.Budget != nil && !math.IsInf(sc.Budget[0], 1) {
		b := sc.Budget[0]
		r.Budget = &b
	}
	if sc.Horizon > 1 && sc.Budget != nil {
		r.Warnings = append(r.Warnings, "the long-run policy uses the first year's budget as the annual cap, at start-year prices")
	}
	cond := make([][][]float64, len(sc.Classes))
	for k := range sc.Classes {
		cond[k] = [][]float64{sc.Classes[k].Initial, lr.Distribution[k]}
	}
	today := assemble(&Scenario{Name: sc.Name, Classes: sc.Classes, Horizon: 1, StartYear: sc.StartYear, Weighting: sc.Weighting}, p, cond, nil, nil)
	views := conditionClasses(sc, p)
	r.Today = today.Initial
	r.Network = today.Years[0].Network
	for k := range sc.Classes {
		c := &sc.Classes[k]
		lc := LongRunClass{Class: c.Name, Unit: c.Unit, AnnualTreatment: lr.Treatment[k], AnnualRoutine: lr.Routine[k], Policy: []PolicyEntry{}}
		cc := today.Years[0].Classes[k]
		lc.States, lc.AverageIndex, lc.Score, lc.Shares = cc.States, cc.AverageIndex, cc.Score, cc.Shares
		// Entries under a millionth of the class are left out: the
		// tie-break stage may move that much (optimize.holdTolerance), and
		// no one plans a millionth of a network.
		floor := 1e-6 * c.Total()
		dist := foldQuantities(c, lr.Distribution[k])
		policy := lr.Policy[k]
		if c.History != nil {
			policy = foldByAction(c.History, policy)
		}
		for i, byAction := range policy {
			inState := dist[i]
			for a, q := range byAction {
				if q <= floor {
					continue
				}
				act := &views[k].Actions[a]
				cost := q * act.Cost[i]
				if a == 0 && c.Routine != nil {
					cost = q * c.Routine[i]
				}
				e := PolicyEntry{State: c.Scale.States[i].Name, Treatment: act.Name, Quantity: q, Share: q / inState, Cost: cost}
				if h := c.History; h != nil {
					for y := 1; y <= h.Span; y++ {
						w := h.State(i, y)
						if v := lr.Policy[k][w][a]; v > floor {
							e.ByYearsSinceWork = append(e.ByYearsSinceWork, PolicyYears{Years: y, OrMore: y == h.Span, Quantity: v, Share: v / lr.Distribution[k][w]})
						}
					}
				}
				lc.Policy = append(lc.Policy, e)
			}
		}
		r.Classes = append(r.Classes, lc)
	}
	// Targets, measured on the long-run condition like a one-year plan.
	short := map[int]float64{}
	for _, s := range lr.Shortfalls {
		short[s.Target] = s.Amount
	}
	fake := &Result{Initial: today.Initial, Years: []Year{{Year: sc.StartYear, Classes: today.Years[0].Classes, Network: r.Network}}}
	one := *sc
	one.Targets = make([]Target, len(sc.Targets))
	for n, t := range sc.Targets {
		t.FromYear, t.ToYear = sc.StartYear, sc.StartYear
		one.Targets[n] = t
	}
	for n, o := range evaluateTargets(&one, fake) {
		lt := LongRunTarget{Target: longRunLabel(sc.Targets[n]), Met: o.Met, Value: o.WorstValue, Limit: o.Limit}
		if v, ok := short[n]; ok {
			if k := sc.Targets[n].Spec.Kind; k == optimize.MinScore || k == optimize.Hold {
				v = indexPoints(sc, sc.Targets[n], v)
			}
			lt.Shortfall = v
		}
		r.Targets = append(r.Targets, lt)
	}
	return r, nil
}

// longRunLabel restates a target without its years, which a steady state
// does not have.
func longRunLabel(t Target) string {
	who := "network"
	if t.Class != "" {
		who = t.Class
	}
	s := t.Spec
	what := who + " " + s.Group.String() + " share"
	if t.State != "" {
		what = who + " share in state " + t.State
	}
	switch s.Kind {
	case optimize.MaxShare:
		return what + " at most " + pct(s.Value) + " in the long run"
	case optimize.MinShare:
		return what + " at least " + pct(s.Value) + " in the long run"
	case optimize.Hold:
		return who + " average condition in the long run no worse than today"
	}
	return t.Label + " (held in the long run)"
}
