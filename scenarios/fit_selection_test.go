package scenarios_test

import (
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// A footpath export generated in the test (synthetic, invented): assets
// deteriorate by culvertTruth, and an asset that dropped during a year is
// relaid before its next inspection with probability 0.8, recorded in the
// work column. The fit must warn, name the states with their figures and
// say the staying probabilities are too high; the same export with work
// at random must not warn.
func TestFitWarnsOfConditionDrivenWork(t *testing.T) {
	gen := func(seed uint64, work func(r *rand.Rand, prev, now int) bool) string {
		r := rand.New(rand.NewPCG(seed, 18))
		values := []int{90, 70, 50, 30, 10}
		var b strings.Builder
		b.WriteString("asset,class,inspected,condition,work\n")
		for a := range 3000 {
			s := a % 4
			fmt.Fprintf(&b, "F%05d,culverts,2015,%d,\n", a, values[s])
			for y := 1; y <= 6; y++ {
				prev := s
				s = draw(r, culvertTruth[s])
				w := ""
				if work(r, prev, s) {
					s, w = 0, "relaid"
				}
				fmt.Fprintf(&b, "F%05d,culverts,%d,%d,%s\n", a, 2015+y, values[s], w)
			}
		}
		return b.String()
	}
	fit := func(text string) *scenarios.FitClass {
		ins, err := readCSV(t, text, scenarios.InspectionOptions{})
		if err != nil {
			t.Fatal(err)
		}
		res, err := scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting})
		if err != nil {
			t.Fatal(err)
		}
		return &res.Classes[0]
	}
	c := fit(gen(1, func(r *rand.Rand, prev, now int) bool { return now > prev && r.Float64() < 0.8 }))
	if c.Selection == nil || !strings.Contains(c.Selection.Warning, "too HIGH") {
		t.Fatalf("no warning of condition-driven work: %+v", c.Selection)
	}
	for _, st := range c.Selection.States {
		if st.Flagged && !strings.Contains(c.Selection.Warning, fmt.Sprintf("%s: %s of %s pairs", st.State, thousands(st.Work), thousands(st.Kept+st.Work))) {
			t.Errorf("the warning does not give the figures of %s: %s", st.State, c.Selection.Warning)
		}
	}
	c = fit(gen(2, func(r *rand.Rand, prev, now int) bool { return r.Float64() < 0.08 }))
	if c.Selection == nil || c.Selection.Warning != "" || c.Selection.ConditionDriven {
		t.Errorf("work at random: %+v", c.Selection)
	}
}

func draw(r *rand.Rand, row []float64) int {
	u := r.Float64()
	for j, p := range row {
		if u < p {
			return j
		}
		u -= p
	}
	return len(row) - 1
}

// thousands writes n with commas between thousands (independently of
// the package's own helper).
func thousands(n int) string {
	s := fmt.Sprint(n)
	out := ""
	for len(s) > 3 {
		out = "," + s[len(s)-3:] + out
		s = s[:len(s)-3]
	}
	return s + out
}
