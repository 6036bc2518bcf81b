package optimize

import (
	"errors"
	"fmt"
)

// The funding questions through the decomposition. LevelBudget and
// ClosingMoney are each one linear program: the plan's model plus columns
// of money added to the budget rows (the level L, or the extra money of
// each cap and year). As one flat LP it is as large as the plan's flat
// model, which past a few thousand columns lp_solve takes minutes to
// solve. The decomposition solves it as it solves a plan: the money
// columns are columns of the master that no pricing problem makes
// (extra), always in the master, and the stages are the least total
// shortfall (which must be zero: the money is unlimited), the least money
// (objFunding), then the least present value of spend with that money
// held. Its answer is checked against every row of the flat funding model
// before it is used.

// fundingFlatColumns is the largest flat model (in columns) whose funding
// questions are solved as one flat LP. The flat LP of the 20x7x6x30
// benchmark network (12,900 columns) took seconds, the decomposition a
// fraction of that; at a few hundred columns the flat LP is quicker.
const fundingFlatColumns = 5000

// errFundingShort: with the money unlimited the decomposition still found
// a target shortfall; the flat funding model says which targets and why.
var errFundingShort = errors.New("the targets cannot all be met by adding money")

// levelBudgetDecomposed answers LevelBudget for q (no network cap) through
// the decomposition and returns the values of the columns of m, the flat
// model b built with the level column and rows of addLevelRows.
func levelBudgetDecomposed(q *Problem, b *builder, m *Model, level int) ([]float64, error) {
	return fundingDecomposed(q, b, m, func(dw *decomposer) []int {
		e := extra{cost: 1}
		for t := 0; t < q.Horizon; t++ {
			l := link{kind: linkBudget, name: fmt.Sprintf("level_%d", t+1), sense: LessEq, year: t, from: t, active: true, budget: Network, funded: true}
			coef := -1.0
			if q.CarryOver {
				l.from, coef = 0, -float64(t+1)
			}
			e.terms = append(e.terms, linkTerm{len(dw.links), coef})
			dw.links = append(dw.links, l)
		}
		dw.extras = []extra{e}
		return []int{level}
	})
}

// closingMoneyDecomposed answers ClosingMoney for p through the
// decomposition and returns the values of the columns of m, the flat model
// b built with the extra money columns of addExtraMoney.
func closingMoneyDecomposed(p *Problem, b *builder, m *Model, extras []extraMoney) ([]float64, error) {
	return fundingDecomposed(p, b, m, func(dw *decomposer) []int {
		cols := make([]int, len(extras))
		dw.extras = make([]extra, len(extras))
		for i, em := range extras {
			cols[i] = em.col
			dw.extras[i].cost = p.discount(em.year - 1)
			for r := range dw.links {
				l := &dw.links[r]
				if l.kind != linkBudget || l.sense != LessEq || l.budget != em.budget {
					continue
				}
				if y := l.year + 1; y == em.year || (p.CarryOver && y > em.year) {
					l.funded = true
					dw.extras[i].terms = append(dw.extras[i].terms, linkTerm{r, -1})
				}
			}
		}
		return cols
	})
}

// fundingDecomposed runs the decomposition on p with the extra columns
// that addExtras puts in (it returns the column of m that each stands
// for), and returns the answer as values of m's columns, checked against
// every row of m.
func fundingDecomposed(p *Problem, b *builder, m *Model, addExtras func(dw *decomposer) []int) ([]float64, error) {
	o := Options{Method: Decomposed, Master: MasterLive}
	dw := newDecomposer(p, o)
	cols := addExtras(dw)
	dw.seed(o)
	res, capped, err := dw.stages(o, objFunding, objCost)
	if err == nil {
		err = capped
	}
	if errors.Is(err, errBudgetsCannotHold) {
		err = errFundingShort // the money enters caps only; a least spend cannot hold
	}
	if err != nil {
		return nil, err
	}
	x := make([]float64, len(m.Cols))
	dw.quantities(res, b, x)
	for i, c := range cols {
		x[c] = res.extra[i]
	}
	if v := violation(m.Rows, x); !(v <= rowTolerance) {
		return nil, &SolverError{Status: StatusUnverified, Advice: fmt.Sprintf("the decomposition's funding answer misses a row of the flat model by %.2g (relative), more than the %.0g accepted", v, rowTolerance)}
	}
	return x, nil
}

// leastShortfallDecomposed is leastShortfall through the decomposition: its
// stage 1 (after stage 0 when doing nothing breaks a budget row). Any
// error, a budget that cannot hold among them, leaves the answer to the
// flat model.
func leastShortfallDecomposed(p *Problem) (float64, error) {
	o := Options{Method: Decomposed}
	dw := newDecomposer(p, o)
	dw.seed(o)
	if dw.doNothingOverspends() {
		res, err := dw.generate(&stage{obj: objExcess, sign: 1})
		if err != nil {
			return 0, err
		}
		if -res.z > infeasibleExcess {
			return 0, errBudgetsCannotHold
		}
	}
	res, err := dw.generate(&stage{obj: objSlack, sign: 1})
	if err != nil {
		return 0, err
	}
	return -res.z, nil
}
