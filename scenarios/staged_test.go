package scenarios

import (
	"bytes"
	"context"
	"encoding/json"
	"testing"
)

// The what-if page plans in two stages and keeps the budget-free funding
// answers between budgets (staged.go). The reference is the plan made in
// one go with nothing kept (PlanContext), byte for byte in JSON, at a
// budget that meets the demo's targets and at two cuts below the least
// level budget that meets them: the cuts reuse the level and hold budgets
// kept at the first budget and ask for the targets no money meets, which
// the third reuses. The first stage carries no funding answers, no
// baseline.
func TestPlanStagedIsPlanWithKeptAnswers(t *testing.T) {
	bf := &BudgetFree{}
	for _, level := range []float64{4.5e6, 3.5e6, 3e6} {
		sc := loadDemo(t, "marrowby.yaml")
		for i := range sc.Budget {
			sc.Budget[i] = level
		}
		want, err := Plan(sc, Options{})
		if err != nil {
			t.Fatal(err)
		}
		first, rest, err := PlanStaged(context.Background(), sc, Options{BudgetFree: bf})
		if err != nil {
			t.Fatal(err)
		}
		if first.Funding != nil || first.Baseline != nil {
			t.Errorf("budget %.0f: the first stage has funding %+v, baseline %+v", level, first.Funding, first.Baseline)
		}
		got, err := rest(context.Background())
		if err != nil {
			t.Fatal(err)
		}
		if level < 4e6 && (got.Funding == nil || got.Funding.ExtraTotal == nil || got.Funding.LevelBudget == nil) {
			t.Errorf("budget %.0f: a cut without extra money or level budget: %+v", level, got.Funding)
		}
		wb, _ := json.Marshal(want)
		gb, _ := json.Marshal(got)
		if !bytes.Equal(wb, gb) {
			t.Errorf("budget %.0f: the staged plan with kept answers differs from Plan's:\n%s\n%s", level, gb, wb)
		}
	}
	if bf.hold == nil || bf.level[""] == nil || bf.renewal == nil || bf.reach == nil {
		t.Errorf("answers not kept: hold %v, level %v, renewal %v, reach %v", bf.hold, bf.level, bf.renewal, bf.reach)
	}
}
