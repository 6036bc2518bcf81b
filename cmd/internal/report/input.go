// Package report writes the reports planners hand on: a self-contained HTML
// page with inline SVG charts, the same content as Markdown, and an .xlsx
// workbook. It only formats: every figure comes from a scenarios.Result, and
// the assumptions section restates the scenarios.Scenario the run used.
//
// One run gives a report of one scenario; several runs give a comparison
// report (side-by-side level of service and spend) followed by a section per
// run. A run may carry the simulation of its plan (scenarios.Simulate): its
// section then shows uncertainty bands (bands.go, bandcharts.go). Output is deterministic: the same Report gives the same bytes of HTML
// and Markdown (fixed element ids, no map iteration, no clock: the date is
// part of the input).
package report

import (
	"errors"
	"fmt"
	"regexp"
	"sync"

	"wearplan/scenarios"
)

// Report is everything a report shows.
type Report struct {
	// Runs are the scenarios reported, in the order given; more than one
	// makes a comparison report.
	Runs []Run
	// Sweep, when set, adds the chart and table of condition score against
	// yearly budget (the budget sweep of the funding questions).
	Sweep *Sweep
	// Details are the run details every report ends with.
	Details Details
}

// Run is one scenario and its result.
type Run struct {
	// Scenario is the validated scenario; the assumptions section restates
	// it. It may be nil, and the section is then left out.
	Scenario *scenarios.Scenario
	Result   *scenarios.Result
	// Simulation, when set, is the simulation of the same plan
	// (scenarios.Simulate with the plan policy): the report then adds the
	// uncertainty bands to the level-of-service table and the charts, the
	// probability that each target is met, and a section on what the bands
	// include.
	Simulation *scenarios.SimulationResult
}

// Details identify the run: who made the report, from what, and when.
type Details struct {
	// Version is the wearplan version.
	Version string
	// Date is the report date, YYYY-MM-DD.
	Date string
	// Inputs are the files read, with their SHA-256 digests.
	Inputs []InputFile
}

// InputFile is one input file and the SHA-256 digest of its bytes.
type InputFile struct {
	Path   string
	SHA256 string
}

// Sweep is condition score against yearly budget for one scenario: each
// point is a plan with the same scenario and a different flat yearly
// budget.
type Sweep struct {
	// Scenario names the scenario swept.
	Scenario string
	Currency string
	Points   []SweepPoint
	// Budget is the scenario's own yearly network budget, marked on the
	// chart (its mean when BudgetVaries); nil when it has none.
	Budget       *float64
	BudgetVaries bool
	// TargetsBudget and HoldBudget are the least level budgets that meet
	// the targets and that hold today's network condition, marked on the
	// chart; nil when unknown or unreachable.
	TargetsBudget, HoldBudget *float64
	// Notes are the sweep's warnings (why a budget is missing, say).
	Notes []string
}

// SweepPoint is one plan of a sweep.
type SweepPoint struct {
	// Budget is the yearly network budget (nominal, start-year money).
	Budget float64
	// ConditionScore is the plan's mean network score over the horizon, 0-100.
	ConditionScore float64
	// Status is the plan status (optimal, targets-not-met).
	Status scenarios.Status
	// EndPoorShare is the network's poor share at the end of the horizon
	// (0-1); TargetsMet of Targets hold.
	EndPoorShare        float64
	TargetsMet, Targets int
}

var datePattern = sync.OnceValue(func() *regexp.Regexp { return regexp.MustCompile(`^\d{4}-\d{2}-\d{2}$`) })

// validate rejects a report that cannot be drawn.
func (r *Report) validate() error {
	if len(r.Runs) == 0 {
		return errors.New("report: no runs to report")
	}
	for i, run := range r.Runs {
		if run.Result == nil {
			return fmt.Errorf("report: run %d has no result", i+1)
		}
		if len(run.Result.Initial.Classes) == 0 {
			return fmt.Errorf("report: run %d (%s) has no asset classes", i+1, run.Result.Scenario)
		}
		if err := checkSimulation(run); err != nil {
			return fmt.Errorf("report: run %d (%s): %w", i+1, run.Result.Scenario, err)
		}
	}
	if !datePattern().MatchString(r.Details.Date) {
		return fmt.Errorf("report: date %q is not YYYY-MM-DD", r.Details.Date)
	}
	return nil
}

// checkSimulation checks that a run's simulation is of its plan: the same
// years and classes, and the plan policy.
func checkSimulation(run Run) error {
	sim, r := run.Simulation, run.Result
	if sim == nil {
		return nil
	}
	if sim.Policy != scenarios.PolicyPlan || r.Kind != scenarios.KindPlan {
		return fmt.Errorf("the bands must come from simulating the plan the report shows (simulation policy %q, result %q)", sim.Policy, r.Kind)
	}
	if sim.StartYear != r.StartYear || len(sim.Years) != len(r.Years) || sim.Runs < 1 {
		return fmt.Errorf("the simulation covers %d years from %d (%d runs), the plan %d from %d", len(sim.Years), sim.StartYear, sim.Runs, len(r.Years), r.StartYear)
	}
	if len(sim.Classes) != len(r.Initial.Classes) || len(sim.Initial.Classes) != len(r.Initial.Classes) {
		return fmt.Errorf("the simulation has %d classes, the plan %d", len(sim.Classes), len(r.Initial.Classes))
	}
	for k, c := range sim.Classes {
		if c.Class != r.Initial.Classes[k].Class {
			return fmt.Errorf("class %d is %q in the simulation and %q in the plan", k+1, c.Class, r.Initial.Classes[k].Class)
		}
		for _, y := range sim.Years {
			if len(y.Classes) != len(sim.Classes) || y.Classes[k].Class != c.Class {
				return fmt.Errorf("the simulation's year %d lacks the bands of class %q", y.Year, c.Class)
			}
		}
	}
	return nil
}
