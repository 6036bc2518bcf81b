package optimize

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"wearplan/optimize/optimizetest"
)

// TestFundingDecomposedAgreesWithGLPK: the funding questions answered
// through the decomposition (the money columns in the live master) reach
// the optimum GLPK 5.0's glpsol (Debian glpk-utils, an independent simplex
// code) finds on the same flat funding model: the least level budget and
// the least present value of extra money, within 1e-6 relative (a
// thousand times the decomposition's stopping gap). The answers are
// checked against every row of that model by the solver itself; glpsol
// checks that they are the least.
func TestFundingDecomposedAgreesWithGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	checked := 0
	for seed := 1; seed <= 8; seed++ {
		p := Generate(rand.New(rand.NewPCG(uint64(seed), 5)), GenSpec{Classes: 3 + seed%3, States: 5, Treatments: 4, Years: 8, Targets: true, BudgetShare: 0.1})
		p.CarryOver = seed%2 == 0
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			q := uncapped(p, true)
			b := newBuilder(q)
			m := b.build()
			level := addLevelRows(b, m)
			x, err := levelBudgetDecomposed(q, b, m, level)
			if errors.Is(err, errFundingShort) {
				t.Logf("level budget: %v", err)
			} else if err != nil {
				t.Fatalf("level budget: %v", err)
			} else {
				m.Obj, m.Maximize = make([]float64, len(m.Cols)), false
				m.Obj[level] = 1
				want, ok := GlpsolOptimum(t, m)
				if !ok {
					t.Fatalf("glpsol found no optimum of the level-budget model")
				}
				if !relClose(x[level], want, 1e-6) {
					t.Errorf("level budget %.12g (model units), glpsol %.12g", x[level], want)
				}
				checked++
			}

			b = newBuilder(p)
			m = b.build()
			extras := addExtraMoney(b, m)
			x, err = closingMoneyDecomposed(p, b, m, extras)
			if errors.Is(err, errFundingShort) {
				t.Logf("extra money: %v", err)
				return
			}
			if err != nil {
				t.Fatalf("extra money: %v", err)
			}
			m.Obj, m.Maximize = make([]float64, len(m.Cols)), false
			got := 0.0
			for _, e := range extras {
				m.Obj[e.col] = p.discount(e.year - 1)
				got += m.Obj[e.col] * x[e.col]
			}
			want, ok := GlpsolOptimum(t, m)
			if !ok {
				t.Fatalf("glpsol found no optimum of the extra-money model")
			}
			if !relClose(got, want, 1e-6) {
				t.Errorf("extra money worth %.12g (model units), glpsol %.12g", got, want)
			}
			checked++
		})
	}
	if checked < 8 {
		t.Errorf("only %d of 16 funding answers checked: the generated cases no longer exercise the decomposition", checked)
	}
}

// TestLeastShortfallDecomposedAgreesWithGLPK: the least total target
// shortfall through the decomposition equals glpsol's optimum of the
// elastic flat model (every target row with a shortfall column, the sum of
// those minimised), within 1e-6 relative or 1e-9 absolute (a shortfall of
// zero), on generated networks with tight budgets, some of whose targets
// no plan meets.
func TestLeastShortfallDecomposedAgreesWithGLPK(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	short := 0
	for seed := 1; seed <= 8; seed++ {
		p := Generate(rand.New(rand.NewPCG(uint64(seed), 9)), GenSpec{Classes: 3 + seed%3, States: 5, Treatments: 4, Years: 8, Targets: true, BudgetShare: 0.03})
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			got, err := leastShortfallDecomposed(p)
			if err != nil {
				t.Fatal(err)
			}
			b := newBuilder(p)
			b.build()
			em, cols := b.elastic()
			em.Obj, em.Maximize = make([]float64, len(em.Cols)), false
			for _, c := range cols {
				em.Obj[c.col] = 1
			}
			want, ok := GlpsolOptimum(t, em)
			if !ok {
				t.Fatal("glpsol found no optimum of the elastic model")
			}
			if !(relClose(got, want, 1e-6) || math.Abs(got-want) <= 1e-9) {
				t.Errorf("least shortfall %.12g, glpsol %.12g", got, want)
			}
			if want > 1e-6 {
				short++
			}
		})
	}
	if short < 2 {
		t.Errorf("only %d of 8 cases miss a target: the cases no longer test a shortfall", short)
	}
}
