package optimize

import (
	"fmt"
	"testing"

	"wearplan/optimize/optimizetest"
)

// Test helpers for the external test package (optimize_test), whose tests
// load scenario files through package scenarios.

// GlpsolOptimum solves a model with GLPK's glpsol (simplex) and returns the
// optimum of the model as written (maximisations negated back).
func GlpsolOptimum(t *testing.T, m *Model) (float64, bool) {
	obj, optimal, _ := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, m, "ref"))
	if m.Maximize {
		obj = -obj
	}
	return obj, optimal
}

func RelClose(a, b, tol float64) bool { return relClose(a, b, tol) }

// Reference is the lexicographic answer of GLPK 5.0's glpsol (Debian
// package glpk-utils, exact simplex) to a problem's exported flat model, in the
// model's units (scores on 0-1, money in the model's money unit): the
// status, and when there is a plan, the least total target shortfall, the
// primary objective with that shortfall held, and the other objective
// with both held.
type Reference struct {
	Status                        Status
	Shortfall, Primary, Secondary float64
}

// ReferenceAnswer solves p's models with glpsol in wearplan's order: when
// doing nothing overspends a cap, the least total overspend (above 1e-9
// the plan is infeasible); the model with hard targets, and when glpsol
// finds it infeasible the elastic model (least total shortfall first).
// glpsol solves in exact rational arithmetic (--exact), so that each later
// objective holds the earlier ones within wearplan's own tolerance (1e-10
// of their value) and no more: where one objective trades steeply against
// another, a looser hold moves the later one by far more than 1e-10.
func ReferenceAnswer(t *testing.T, p *Problem) Reference {
	t.Helper()
	b := newBuilder(p)
	m := b.build()
	secondary := b.objectiveOf(other(p.Objective))
	solve := func(mm *Model, objs [][]float64, maximize []bool) ([]float64, bool) {
		var vals []float64
		cur := &Model{Name: mm.Name, Cols: mm.Cols, Rows: append([]Row(nil), mm.Rows...)}
		for n, o := range objs {
			cur.Obj, cur.Maximize = o, maximize[n]
			obj, optimal, _ := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, cur, "ref"))
			z := obj
			if cur.Maximize {
				z = -obj
			}
			if !optimal {
				return nil, false
			}
			vals = append(vals, z)
			var e []Entry
			for j, c := range o {
				if c != 0 {
					e = append(e, Entry{j, c})
				}
			}
			if len(e) == 0 {
				continue
			}
			tol := holdTolerance(z)
			h := Row{Name: fmt.Sprintf("hold%d", n+1), Entries: e, Sense: LessEq, RHS: z + tol}
			if maximize[n] {
				h.Sense, h.RHS = GreaterEq, z-tol
			}
			cur.Rows = append(cur.Rows, h)
		}
		return vals, true
	}
	if !doNothingFits(b.p) {
		em := &Model{Name: "excess", Cols: append([]string(nil), m.Cols...), Obj: make([]float64, len(m.Cols))}
		drop := make([]bool, len(m.Rows))
		for _, r := range b.targetRowIndexes() {
			drop[r] = true
		}
		at := make([]int, len(m.Rows))
		for i, r := range m.Rows {
			if !drop[i] {
				at[i] = len(em.Rows)
				em.Rows = append(em.Rows, r)
			}
		}
		for _, r := range b.capRowIndexes() {
			row := &em.Rows[at[r]]
			c := em.addCol("excess_"+row.Name, 1)
			row.Entries = append(append([]Entry(nil), row.Entries...), Entry{c, -1})
		}
		v, ok := solve(em, [][]float64{em.Obj}, []bool{false})
		if !ok {
			t.Fatal("glpsol found no least overspend, which always exists")
		}
		if v[0] > infeasibleExcess {
			return Reference{Status: Infeasible}
		}
	}
	if v, ok := solve(m, [][]float64{m.Obj, secondary}, []bool{m.Maximize, !m.Maximize}); ok {
		return Reference{Status: Optimal, Primary: v[0], Secondary: v[1]}
	}
	if len(p.Targets) == 0 {
		t.Fatal("glpsol found no plan of a model without targets whose budgets can hold")
	}
	em, slacks := b.elastic()
	pad := func(o []float64) []float64 {
		return append(append([]float64(nil), o...), make([]float64, len(slacks))...)
	}
	slack := make([]float64, len(em.Cols))
	for _, c := range slacks {
		slack[c.col] = 1
	}
	v, ok := solve(em, [][]float64{slack, pad(m.Obj), pad(secondary)}, []bool{false, m.Maximize, !m.Maximize})
	if !ok {
		t.Fatal("glpsol found no plan of the elastic model, which always has one when the budgets can hold")
	}
	st := TargetsNotMet
	if v[0] <= shortfallFloor {
		st = Optimal
	}
	return Reference{Status: st, Shortfall: v[0], Primary: v[1], Secondary: v[2]}
}

// ModelObjectives measures a plan's objectives in the model's units: the
// primary and the other one (mean score on 0-1, present value of
// life-cycle cost in the model's money unit), and its total shortfall.
func ModelObjectives(p *Problem, plan *Plan) (primary, secondary, shortfall float64) {
	mu := newBuilder(p).moneyUnit
	score := plan.ConditionScore / 100
	cost := (plan.PresentValue + plan.RoutinePresentValue) / mu
	for _, sf := range plan.Shortfalls {
		v := sf.Amount
		if k := p.Targets[sf.Target].Kind; k == MinScore || k == Hold {
			v /= 100
		}
		shortfall += v
	}
	if p.Objective == MinCost {
		return cost, score, shortfall
	}
	return score, cost, shortfall
}

// BestReachableReference is glpsol's best value (on the model's 0-1 scale)
// of target n's measure at the end of year y (1-based) over every plan of
// p with no budget caps and no targets.
func BestReachableReference(t *testing.T, p *Problem, n, y int) float64 {
	t.Helper()
	q := *p
	q.Budget, q.GroupBudgets, q.Targets = nil, nil, nil
	b := newBuilder(&q)
	m := b.build()
	tg := &p.Targets[n]
	obj := make([]float64, len(m.Cols))
	for _, e := range b.conditionEntries(tg, y-1) {
		obj[e.Col] += e.Val
	}
	sense, _ := b.targetBound(tg)
	m.Obj, m.Maximize = obj, sense != LessEq
	z, ok := GlpsolOptimum(t, m)
	if !ok {
		t.Fatal("glpsol found no best reachable value, which always exists")
	}
	return z
}

// InLPSolve keeps a live master in lp_solve even when the dense simplex
// would take it, so that the agreement checks reach both.
func InLPSolve(o Options) Options {
	o.lpSolveMaster = true
	return o
}
