package scenarios_test

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
	"testing/fstest"

	"wearplan/scenarios"
)

// heavyCulverts wears faster than culvertTruth: every staying probability
// 0.1 lower (invented).
var heavyCulverts = [][]float64{
	{0.75, 0.22, 0.03, 0, 0},
	{0, 0.70, 0.28, 0.02, 0},
	{0, 0, 0.68, 0.32, 0},
	{0, 0, 0, 0.65, 0.35},
	{0, 0, 0, 0, 1},
}

// familyExport writes yearly inspections of culverts in two traffic bands
// (synthetic, generated in the test from known matrices).
func familyExport(seed uint64, assets int, light, heavy [][]float64) string {
	r := rand.New(rand.NewPCG(seed, 5))
	values := []int{90, 70, 50, 30, 10}
	var b strings.Builder
	b.WriteString("asset,class,inspected,condition,traffic\n")
	for a := range assets {
		rows, band := light, "light"
		if a%2 == 1 {
			rows, band = heavy, "heavy"
		}
		s := (a / 2) % 4
		for y := 0; y <= 5; y++ {
			if y > 0 {
				s = draw(r, rows[s])
			}
			fmt.Fprintf(&b, "C%05d,culverts,%d,%d,%s\n", a, 2015+y, values[s], band)
		}
	}
	return b.String()
}

func fitFamilies(t *testing.T, text string, opt scenarios.FitOptions) *scenarios.FitResult {
	t.Helper()
	ins, err := readCSV(t, text, scenarios.InspectionOptions{By: opt.By})
	if err != nil {
		t.Fatal(err)
	}
	res, err := scenarios.Fit(ins, opt)
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// Families with different matrices are told apart, by both methods, at a
// realistic size (1,200 culverts, six yearly inspections); identical ones
// are merged on request.
func TestFitByFamily(t *testing.T) {
	for _, method := range []string{scenarios.MethodCounting, scenarios.MethodInterval} {
		res := fitFamilies(t, familyExport(1, 1200, culvertTruth, heavyCulverts), scenarios.FitOptions{Method: method, By: []string{"traffic"}})
		c := res.Classes[0]
		if len(c.Families) != 2 || c.Families[0].Family != "heavy" || c.Homogeneity == nil || !c.Homogeneity.Differ || *c.Homogeneity.LikelihoodRatio.PValue >= 0.01 {
			t.Fatalf("%s: families %d, homogeneity %+v", method, len(c.Families), c.Homogeneity)
		}
		if (method == scenarios.MethodCounting) != (c.Homogeneity.AndersonGoodman != nil) {
			t.Errorf("%s: Anderson-Goodman test %v", method, c.Homogeneity.AndersonGoodman)
		}
		// Each family's staying probabilities near its own truth (four
		// binomial standard errors).
		for f, truth := range map[int][][]float64{0: heavyCulverts, 1: culvertTruth} {
			fam := c.Families[f]
			for i := range 4 {
				p, n := truth[i][i], float64(fam.PerState[i].Pairs)
				if got := fam.PerState[i].Stay; math.Abs(got-p) > 4*math.Sqrt(p*(1-p)/n) {
					t.Errorf("%s: family %s state %d stay %.3f, truth %.2f", method, fam.Family, i, got, p)
				}
			}
		}
	}
	res := fitFamilies(t, familyExport(2, 1200, culvertTruth, culvertTruth), scenarios.FitOptions{Method: scenarios.MethodCounting, By: []string{"traffic"}, MergeAlike: true})
	c := res.Classes[0]
	if len(c.Merges) != 1 || len(c.Families) != 1 || c.Families[0].Family != "heavy + light" || !slices.Equal(c.Families[0].Members, []string{"heavy", "light"}) {
		t.Errorf("identical families not merged: merges %+v, families %d", c.Merges, len(c.Families))
	}
}

// Bad input for families: an unknown column, and a family with no pairs in
// a state, each named in the message.
func TestFitByFamilyErrors(t *testing.T) {
	text := familyExport(3, 200, culvertTruth, heavyCulverts)
	_, err := readCSV(t, text, scenarios.InspectionOptions{By: []string{"traffik"}})
	if err == nil || !strings.Contains(err.Error(), `no column "traffik" to group by`) {
		t.Errorf("unknown column: %v", err)
	}
	// Only light culverts ever start in state 4 (Poor): the heavy ones
	// below are all inspected from the best state for one year.
	var b strings.Builder
	b.WriteString(text)
	b.WriteString("X1,culverts,2015,90,rare\nX1,culverts,2016,70,rare\n")
	ins, err := readCSV(t, b.String(), scenarios.InspectionOptions{By: []string{"traffic"}})
	if err != nil {
		t.Fatal(err)
	}
	_, err = scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting, By: []string{"traffic"}})
	var ie *scenarios.InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "family rare (traffic)") || !strings.Contains(err.Error(), "no usable pair starts in state") {
		t.Errorf("family without pairs in a state: %v", err)
	}
}

// familyScenario uses the fit file by family: roads split by the traffic
// column of their segment list, paths taking one family (invented).
const familyScenario = `name: Families (invented)
start_year: 2027
horizon: 5
scales:
  five:
` + fiveBands + `classes:
  - name: roads
    scale: five
    unit: lane-km
    inventory_csv: segments.csv
    deterioration: {fit: fit.yaml, fit_class: culverts}
    treatments: [fix]
  - name: paths
    scale: five
    unit: m2
    inventory: {Very good: 10, Fair: 5}
    deterioration: {fit: fit.yaml, fit_class: culverts, family: heavy}
    treatments: [fix]
treatments:
  - {name: fix, applies_to: [Poor, Very poor], cost: 10, effect: {to: Very good}}
budget:
  yearly: 100
  groups:
    - {name: roads only, classes: [roads], yearly: 60}
targets:
  - {class: roads, group: poor, max_share: 0.5}
`

func TestScenarioFamilies(t *testing.T) {
	res := fitFamilies(t, familyExport(4, 600, culvertTruth, heavyCulverts), scenarios.FitOptions{Method: scenarios.MethodCounting, By: []string{"traffic"}})
	var fit bytes.Buffer
	if err := scenarios.WriteFitFile(&fit, res); err != nil {
		t.Fatal(err)
	}
	segments := "id,quantity,condition,traffic\nR1,1.25,90,heavy\nR2,0.5,30,light\nR3,2.125,50,heavy\n"
	fsys := fstest.MapFS{"s.yaml": {Data: []byte(familyScenario)}, "fit.yaml": {Data: fit.Bytes()}, "segments.csv": {Data: []byte(segments)}}
	sc, err := scenarios.Load(fsys, "s.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, c := range sc.Classes {
		names = append(names, c.Name)
	}
	if !slices.Equal(names, []string{"roads (heavy)", "roads (light)", "paths"}) {
		t.Fatalf("classes %v", names)
	}
	heavy, light, paths := sc.Classes[0], sc.Classes[1], sc.Classes[2]
	fams := res.Classes[0].Families
	if heavy.Total() != 3.375 || light.Total() != 0.5 || heavy.Initial[0] != 1.25 || heavy.Initial[2] != 2.125 || len(heavy.Segments) != 2 {
		t.Errorf("heavy %v (%d segments), light %v", heavy.Initial, len(heavy.Segments), light.Initial)
	}
	if !slices.Equal(heavy.Transition.Rows()[0], fams[0].Deterioration.Matrix[0]) || !slices.Equal(light.Transition.Rows()[1], fams[1].Deterioration.Matrix[1]) ||
		!slices.Equal(paths.Transition.Rows()[2], fams[0].Deterioration.Matrix[2]) {
		t.Error("a class does not use its family's matrix")
	}
	if heavy.Parent != "roads" || heavy.Family != "heavy" || len(heavy.Treatments) != 1 {
		t.Errorf("heavy: parent %q family %q, %d treatments", heavy.Parent, heavy.Family, len(heavy.Treatments))
	}
	// Weights: equal by class, the roads' half shared by quantity.
	if w := heavy.Weight + light.Weight; math.Abs(w-0.5) > 1e-12 || math.Abs(heavy.Weight/light.Weight-3.375/0.5) > 1e-9 {
		t.Errorf("weights %g, %g", heavy.Weight, light.Weight)
	}
	if len(sc.Targets) != 2 || sc.Targets[0].Class != "roads (heavy)" || sc.Targets[1].Class != "roads (light)" {
		t.Errorf("targets %+v", sc.Targets)
	}
	if g := sc.BudgetGroups[0].Classes; !slices.Equal(g, []string{"roads (heavy)", "roads (light)"}) {
		t.Errorf("budget group classes %v", g)
	}
	if len(sc.Notes) == 0 || !strings.Contains(sc.Notes[0], "class roads is split by family of traffic") {
		t.Errorf("notes %q", sc.Notes)
	}
	if _, err := scenarios.Plan(sc, scenarios.Options{}); err != nil {
		t.Errorf("plan: %v", err)
	}

	for _, bad := range []struct{ scenario, segments, want string }{
		{familyScenario, "id,quantity,condition\nR1,1,90\n", `no "traffic" column`},
		{familyScenario, "id,quantity,condition,traffic\nR1,1,90,medium\nR2,1,90,medium\n", `"medium": lines 2, 3 of class "roads" name no family`},
		{strings.Replace(familyScenario, "family: heavy", "family: medium", 1), segments, `has no family "medium"; its families (by traffic) are heavy, light`},
		{strings.Replace(familyScenario, "inventory: {Very good: 10, Fair: 5}\n    deterioration: {fit: fit.yaml, fit_class: culverts, family: heavy}", "inventory: {Very good: 10, Fair: 5}\n    deterioration: {fit: fit.yaml, fit_class: culverts}", 1), segments, "the class's inventory is typed in"},
	} {
		fsys := fstest.MapFS{"s.yaml": {Data: []byte(bad.scenario)}, "fit.yaml": {Data: fit.Bytes()}, "segments.csv": {Data: []byte(bad.segments)}}
		if _, err := scenarios.Load(fsys, "s.yaml"); err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("want %q, got %v", bad.want, err)
		}
	}
}
