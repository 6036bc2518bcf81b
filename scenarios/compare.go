package scenarios

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// CompareResult puts the plans of several scenarios side by side.
type CompareResult struct {
	Kind      Kind            `json:"kind"` // KindCompare
	Currency  string          `json:"currency"`
	Scenarios []CompareColumn `json:"scenarios"`
	Warnings  []string        `json:"warnings"`
	Caution   string          `json:"caution"`
}

// CompareColumn is one scenario's plan in figures.
type CompareColumn struct {
	Scenario       string   `json:"scenario"`
	Source         string   `json:"source"`
	Status         Status   `json:"status"`
	Objective      string   `json:"objective"`
	ConditionScore float64  `json:"condition_score"`
	TotalCost      float64  `json:"total_cost"`
	PresentValue   float64  `json:"present_value"`
	RoutineCost    *float64 `json:"routine_cost,omitempty"`
	// TargetsMet counts the targets that hold; Shortfalls lists the rest.
	TargetsMet int             `json:"targets_met"`
	Targets    int             `json:"targets"`
	Shortfalls []TargetOutcome `json:"shortfalls"`
	// Service is the level of service at each chosen year.
	Service []CompareYear `json:"service"`
	// Funding and Baseline as in the plan.
	Funding  *Funding  `json:"funding,omitempty"`
	Baseline *Baseline `json:"baseline,omitempty"`
	// Confidence as in the plan, when a target states one.
	Confidence *Confidence `json:"confidence,omitempty"`
}

// CompareYear is the level of service at the end of one year.
type CompareYear struct {
	Year    int              `json:"year"`
	Classes []ClassService   `json:"classes"`
	Network NetworkCondition `json:"network"`
}

// ClassService is a class's level of service.
type ClassService struct {
	Class        string  `json:"class"`
	Shares       Shares  `json:"shares"`
	AverageIndex float64 `json:"average_index"`
}

// YearSpec chooses plan years: 1-based plan years, calendar years (1000 and
// above), or "last".
type YearSpec []string

// ParseYears reads a list such as "1,5,10,last".
func ParseYears(s string) (YearSpec, error) {
	var out YearSpec
	for _, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		if f == "" {
			continue
		}
		if f != "last" {
			if v, err := strconv.Atoi(f); err != nil || v < 1 {
				return nil, fmt.Errorf("year %q: give plan years counted from 1 (1,5,10), calendar years (2031) or last", f)
			}
		}
		out = append(out, f)
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("no years given; e.g. 1,5,10,last")
	}
	return out, nil
}

// resolve turns the spec into plan years (1-based) of a scenario, in the
// order given, dropping repeats. Years beyond the horizon are an error.
func (ys YearSpec) resolve(sc *Scenario) ([]int, error) {
	var out []int
	seen := map[int]bool{}
	for _, f := range ys {
		t := sc.Horizon
		if f != "last" {
			v, _ := strconv.Atoi(f)
			t = v
			if v >= 1000 {
				t = v - sc.StartYear + 1
			}
		}
		if t < 1 || t > sc.Horizon {
			return nil, &yearError{fmt.Sprintf("%s: year %s is outside the plan %d-%d (years 1-%d)", sc.Source, f, sc.StartYear, sc.Year(sc.Horizon), sc.Horizon)}
		}
		if !seen[t] {
			seen[t] = true
			out = append(out, t)
		}
	}
	return out, nil
}

type yearError struct{ msg string }

func (e *yearError) Error() string { return e.msg }

// IsYearError says whether err is a chosen year outside a scenario's plan.
func IsYearError(err error) bool {
	var ye *yearError
	return errors.As(err, &ye)
}

// Compare plans each scenario (in parallel, results in the order given) and
// collects the figures a budget meeting compares.
func Compare(scs []*Scenario, years YearSpec, opt Options) (*CompareResult, error) {
	return CompareContext(context.Background(), scs, years, opt)
}

// CompareContext is Compare with a context: once ctx is done no further
// scenario is started, the plans under way stop between solver calls, and
// it returns an error wrapping ctx.Err(), and no result.
func CompareContext(ctx context.Context, scs []*Scenario, years YearSpec, opt Options) (*CompareResult, error) {
	opt.ctx = ctx
	r, err := compare(scs, years, opt)
	return finish(ctx, r, err)
}

// compare is Compare under opt's context.
func compare(scs []*Scenario, years YearSpec, opt Options) (*CompareResult, error) {
	r := &CompareResult{Kind: KindCompare, Scenarios: make([]CompareColumn, len(scs)), Caution: Caution, Warnings: []string{}}
	chosen := make([][]int, len(scs))
	for n, sc := range scs {
		ys, err := years.resolve(sc)
		if err != nil {
			return nil, err
		}
		chosen[n] = ys
		if n == 0 {
			r.Currency = sc.Currency
		} else if sc.Currency != r.Currency {
			r.Warnings = append(r.Warnings, fmt.Sprintf("%s uses currency %q, %s uses %q: money figures are not comparable", scs[0].Source, r.Currency, sc.Source, sc.Currency))
		}
	}
	jobs := make([]func() error, len(scs))
	classWarnings := make([][]ClassWarning, len(scs))
	for n, sc := range scs {
		jobs[n] = func() error {
			res, err := plan(sc, opt)
			if err != nil {
				return fmt.Errorf("%s: %w", sc.Source, err)
			}
			r.Scenarios[n] = column(res, chosen[n])
			classWarnings[n] = res.ClassWarnings
			return nil
		}
	}
	if err := runParallel(opt.context(), jobs); err != nil {
		return nil, err
	}
	// What each plan does to its classes, scenario by scenario in the
	// order given.
	for n, sc := range scs {
		for _, w := range classWarnings[n] {
			r.Warnings = append(r.Warnings, sc.Source+": "+w.Text)
		}
	}
	return r, nil
}

func column(res *Result, years []int) CompareColumn {
	c := CompareColumn{Scenario: res.Scenario, Source: res.Source, Status: res.Status, Objective: res.Objective, ConditionScore: res.ConditionScore,
		TotalCost: res.TotalCost, PresentValue: res.PresentValue, RoutineCost: res.RoutineCost, Targets: len(res.Targets),
		Funding: res.Funding, Baseline: res.Baseline, Confidence: res.Confidence, Shortfalls: []TargetOutcome{}}
	for _, t := range res.Targets {
		if t.Met {
			c.TargetsMet++
		} else {
			c.Shortfalls = append(c.Shortfalls, t)
		}
	}
	for _, t := range years {
		y := res.Years[t-1]
		cy := CompareYear{Year: y.Year, Network: y.Network}
		for _, cc := range y.Classes {
			cy.Classes = append(cy.Classes, ClassService{Class: cc.Class, Shares: cc.Shares, AverageIndex: cc.AverageIndex})
		}
		c.Service = append(c.Service, cy)
	}
	return c
}
