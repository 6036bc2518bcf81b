package scenarios_test

import (
	"math"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// TestUnspentWarningNamesTheCapThatHolds: on the invented Brackenford
// drainage scenario the drainage fund's cap binds in 2034-2036 while the
// network budget does not, and the plan says so. The warning's claim is
// checked against the LP itself: a constraint with slack has a zero shadow
// price (complementary slackness, any LP textbook, e.g. Chvátal, Linear
// Programming, 1983, ch. 5, from memory), so raising the network budget in
// those years leaves the plan's score where it is, while raising the
// fund's cap there lifts it.
func TestUnspentWarningNamesTheCapThatHolds(t *testing.T) {
	sc := loadFile(t, "../testdata/brackenford-drainage.yaml")
	base, err := scenarios.Plan(sc, scenarios.Options{SkipFunding: true})
	if err != nil {
		t.Fatal(err)
	}
	var warning string
	for _, w := range base.Warnings {
		if strings.Contains(w, "unspent") {
			warning = w
		}
	}
	for _, want := range []string{"unspent in 2034-2036", `budget group "drainage fund" spends its whole cap`, "(on bridges)"} {
		if !strings.Contains(warning, want) {
			t.Errorf("warning %q lacks %q", warning, want)
		}
	}
	years := []int{7, 8, 9} // 2034-2036, 0-based
	more := func(edit func(*scenarios.Scenario)) float64 {
		t.Helper()
		c := loadFile(t, "../testdata/brackenford-drainage.yaml")
		edit(c)
		r, err := scenarios.Plan(c, scenarios.Options{SkipFunding: true})
		if err != nil {
			t.Fatal(err)
		}
		return r.ConditionScore
	}
	network := more(func(c *scenarios.Scenario) {
		for _, y := range years {
			c.Budget[y] *= 1.5
		}
	})
	// 1e-6 score points: the solver's 1e-9 on the 0-1 objective times 100,
	// with room for the elastic model's stages.
	if math.Abs(network-base.ConditionScore) > 1e-6 {
		t.Errorf("more network budget in 2034-2036 moved the score from %.9g to %.9g: the network cap was binding", base.ConditionScore, network)
	}
	fund := more(func(c *scenarios.Scenario) {
		for _, y := range years {
			c.BudgetGroups[0].Yearly[y] *= 1.5
		}
	})
	if fund <= base.ConditionScore+1e-6 {
		t.Errorf("a larger drainage fund in 2034-2036 scores %.9g, no more than %.9g: the cap was not what held the money back", fund, base.ConditionScore)
	}
}

// TestNoUnspentWarningWhenTheBudgetIsSpent: the demo spends its budget
// every year (within rounding), so it carries no such note.
func TestNoUnspentWarningWhenTheBudgetIsSpent(t *testing.T) {
	r, err := scenarios.Plan(loadFile(t, "examples/marrowby.yaml"), scenarios.Options{SkipFunding: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range r.Warnings {
		if strings.Contains(w, "unspent") {
			t.Errorf("unexpected note: %s", w)
		}
	}
}
