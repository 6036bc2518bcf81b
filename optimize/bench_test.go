package optimize

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"wearplan/optimize/optimizetest"
)

// Benchmark sizes: classes x states x treatments x years, each with a
// binding yearly budget and the max-condition objective (the common case;
// unmet targets add an elastic model and two more solves).
var benchSizes = []randomSpec{
	{classes: 4, states: 5, treatments: 4, years: 20, budgetShare: 0.15},
	{classes: 20, states: 7, treatments: 6, years: 30, budgetShare: 0.15},
}

func (s randomSpec) String() string { return s.gen().String() }

// BenchmarkBuild measures building the flat LP (no solve).
func BenchmarkBuild(b *testing.B) {
	for _, spec := range benchSizes {
		p := randomProblem(rand.New(rand.NewPCG(1, 1)), spec)
		b.Run(spec.String(), func(b *testing.B) {
			var m *Model
			for b.Loop() {
				var err error
				if m, err = BuildModel(p); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(len(m.Cols)), "cols")
			b.ReportMetric(float64(len(m.Rows)), "rows")
		})
	}
}

// BenchmarkSolve measures a whole plan: build, lp_solve, tie-break solve,
// reading the plan. Peak RSS is reported as MiB-peak.
func BenchmarkSolve(b *testing.B) {
	for _, spec := range benchSizes {
		p := randomProblem(rand.New(rand.NewPCG(1, 1)), spec)
		b.Run(spec.String(), func(b *testing.B) {
			optimizetest.ResetPeakRSS()
			var plan *Plan
			for b.Loop() {
				var err error
				if plan, err = Solve(p); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
			b.ReportMetric(float64(plan.Stats.Cols), "cols")
			b.ReportMetric(float64(plan.Stats.Solves), "solves")
		})
	}
}

// BenchmarkSolveDecomposed measures a whole plan by the decomposition, at
// the three sizes (make bench prints them beside the peers).
func BenchmarkSolveDecomposed(b *testing.B) {
	for _, spec := range append(benchSizes, randomSpec{classes: 60, states: 10, treatments: 8, years: 40, budgetShare: 0.15}) {
		p := randomProblem(rand.New(rand.NewPCG(1, 1)), spec)
		b.Run(spec.String(), func(b *testing.B) {
			optimizetest.ResetPeakRSS()
			var plan *Plan
			for b.Loop() {
				var err error
				if plan, err = SolveWith(p, Options{Method: Decomposed}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
			b.ReportMetric(float64(plan.Stats.Iterations), "rounds")
			b.ReportMetric(float64(plan.Stats.Columns), "policies")
		})
	}
}

// BenchmarkMasterForm compares the decomposition's masters, the dual
// form (re-solved from its last basis as rows are added) and the live
// primal form (colMaster) in lp_solve and, while it has at most
// denseMasterRows rows, in the dense simplex, on networks of several
// sizes, most with targets (so hold and target rows enter the masters),
// and on single classes planned as the renewal indicators plan them (the
// least cost that keeps today's condition score in every year: one
// target row a year).
func BenchmarkMasterForm(b *testing.B) {
	type form struct {
		name string
		o    Options
	}
	forms := []form{
		{"dual", Options{Method: Decomposed, Master: MasterDual}},
		{"live-lpsolve", Options{Method: Decomposed, Master: MasterLive, lpSolveMaster: true}},
		{"live-dense", Options{Method: Decomposed, Master: MasterLive}},
	}
	run := func(b *testing.B, name string, p *Problem) {
		work := newDecomposer(p, Options{}).pricingWork
		for _, f := range forms {
			b.Run(name+"/"+f.name, func(b *testing.B) {
				var plan *Plan
				for b.Loop() {
					var err error
					if plan, err = SolveWith(p, f.o); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(work), "rewards/round")
				b.ReportMetric(float64(plan.Stats.Solves), "solves")
			})
		}
	}
	for _, spec := range []GenSpec{
		{Classes: 4, States: 5, Treatments: 4, Years: 20, BudgetShare: 0.15},
		{Classes: 4, States: 5, Treatments: 4, Years: 20, Targets: true, BudgetShare: 0.15},
		{Classes: 10, States: 6, Treatments: 5, Years: 20, Targets: true, BudgetShare: 0.15},
		{Classes: 20, States: 7, Treatments: 6, Years: 30, Targets: true, BudgetShare: 0.15},
	} {
		run(b, fmt.Sprintf("%s/targets=%v", spec, spec.Targets), Generate(rand.New(rand.NewPCG(1, 1)), spec))
	}
	for _, spec := range []GenSpec{
		{Classes: 1, States: 7, Treatments: 6, Years: 30},
		{Classes: 1, States: 10, Treatments: 8, Years: 40},
		{Classes: 1, States: 10, Treatments: 8, Years: 40, Catalogue: true},
	} {
		run(b, spec.String()+"/hold", holdToday(Generate(rand.New(rand.NewPCG(1, 1)), spec)))
	}
}

// holdToday makes p the plan the renewal indicators make of a class:
// least cost, no budget, the class's score at least today's in every
// year.
func holdToday(p *Problem) *Problem {
	p.Budget, p.GroupBudgets, p.RoutineInBudget = nil, nil, false
	p.Objective = MinCost
	c := &p.Classes[0]
	p.Targets = []Target{{Label: "hold", Class: 0, Kind: MinScore, Value: c.ScoreOf(c.Initial) - 1e-7, From: 1, To: p.Horizon}}
	return p
}
