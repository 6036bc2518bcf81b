package scenarios_test

import (
	"bytes"
	"encoding/json"
	"maps"
	"math"
	"os"
	"reflect"
	"slices"
	"strings"
	"testing"

	"wearplan/optimize"
	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

// Treatment history (min_interval, after_work, last_treated): scenarios of
// the invented village of Fenwick Hollow, checked against computations
// written out here.

// threeStates is the scenarios' written three-state scale, with the
// scales key.
const threeStates = `scales:
  three:
    states:
      - {name: Good, min: 70, max: 100, value: 85}
      - {name: Fair, min: 40, max: 70, value: 55}
      - {name: Poor, min: 0, max: 40, value: 20}
    groups: {good: [Good], fair: [Fair], poor: [Poor]}
`

// sealScenario is a preservation seal that holds the state for its year
// (like the demo's crack seal: distribution to the same state, no ageing in
// its year), an overlay, and routine costs that grow as lanes wear
// (invented figures). interval is the seal's min_interval ("" for none).
func sealScenario(interval string) string {
	return `# INVENTED EXAMPLE: Fenwick Hollow is an invented village.
name: Fenwick Hollow lanes (invented example)
start_year: 2027
horizon: 15
currency: USD
` + threeStates + `classes:
  - name: lanes
    scale: three
    unit: lane-km
    inventory: {Good: 60, Fair: 30, Poor: 10}
    deterioration: {years_in_state: [5, 6]}
    routine_cost: {Fair: 8000, Poor: 40000}
    treatments: [seal, overlay]
treatments:
  - name: seal
    applies_to: [Good]
    cost: 4200
    effect: {distribution: {Good: {Good: 1}}}
    ages_same_year: false` + interval + `
  - {name: overlay, applies_to: [Fair, Poor], cost: {Fair: 90000, Poor: 120000}, effect: {to: Good}}
objective: min-cost
`
}

func parse(t *testing.T, text string) *scenarios.Scenario {
	t.Helper()
	sc, err := scenarios.Parse("fenwick.yaml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	return sc
}

// TestLongRunSealEveryYear: a seal that holds the state lets the long run
// keep every lane Good for ever by sealing all of it every year, at the
// seal's cost (4,200 a lane-km); no agency does that. With min_interval 6
// the long run can no longer hold 100% Good, and its annual cost is the
// optimal average cost of the process with the interval written out here
// (states: condition x years since work, 1-6), found by relative value
// iteration (optimizetest.RelativeValueIteration; Puterman, Markov Decision
// Processes, 1994, chapter 8).
func TestLongRunSealEveryYear(t *testing.T) {
	every, err := scenarios.LongRun(parse(t, sealScenario("")), scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if c := every.Classes[0]; math.Abs(c.Shares.Good-1) > 1e-9 || math.Abs(every.AnnualCost-100*4200) > 1e-6*420000 {
		t.Fatalf("without an interval: good %.6f at %.2f a year, want all of it sealed every year (100%%, 420,000)", c.Shares.Good, every.AnnualCost)
	}

	lr, err := scenarios.LongRun(parse(t, sealScenario("\n    min_interval: 6")), scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	c := lr.Classes[0]
	if c.Shares.Good > 0.99 {
		t.Errorf("with a 6-year interval the long run still holds %.1f%% good", 100*c.Shares.Good)
	}
	// The process: years_in_state 5 and 6 give P (stay 1-1/d, else drop
	// one state); doing nothing costs the routine cost and moves to one
	// more year since work (at most 6); the seal (Good, 6 or more years
	// since work) keeps Good and costs 4,200; the overlay (Fair, Poor)
	// costs 90,000 or 120,000 and gives Good aged by P in its year. Both
	// land in "worked last year".
	const span = 6
	p := [][]float64{{0.8, 0.2, 0}, {0, 1 - 1.0/6, 1.0 / 6}, {0, 0, 1}}
	routine := []float64{0, 8000, 40000}
	overlay := []float64{0, 90000, 120000}
	m := &optimizetest.MDP{Choices: make([][]optimizetest.Choice, 3*span)}
	idx := func(i, y int) int { return i*span + y - 1 }
	to := func(row []float64, y int) []optimizetest.Move {
		var out []optimizetest.Move
		for j, v := range row {
			if v > 0 {
				out = append(out, optimizetest.Move{State: idx(j, y), P: v})
			}
		}
		return out
	}
	for i := 0; i < 3; i++ {
		for y := 1; y <= span; y++ {
			s := idx(i, y)
			m.Choices[s] = append(m.Choices[s], optimizetest.Choice{Cost: routine[i], Next: to(p[i], min(y+1, span))})
			if i == 0 && y >= 6 {
				m.Choices[s] = append(m.Choices[s], optimizetest.Choice{Cost: 4200, Next: to([]float64{1, 0, 0}, 1)})
			}
			if i > 0 {
				m.Choices[s] = append(m.Choices[s], optimizetest.Choice{Cost: overlay[i], Next: to(p[0], 1)})
			}
		}
	}
	vi, err := optimizetest.RelativeValueIteration(m, 1e-9, 1_000_000)
	if err != nil {
		t.Fatal(err)
	}
	if want := 100 * vi.Gain; math.Abs(lr.AnnualCost-want) > 1e-6*want {
		t.Errorf("long-run annual cost %.4f, value iteration %.4f", lr.AnnualCost, want)
	}
	t.Logf("good %.1f%% at %.0f a year (value iteration %.0f); without the interval 100%% at 420,000", 100*c.Shares.Good, lr.AnnualCost, 100*vi.Gain)
	// Everything the long run reports is by condition state; the JSON
	// splits each entry by years since work, and the seal only ever goes
	// to lanes whose 6 years have passed.
	sealed := 0.0
	for _, e := range c.Policy {
		if e.State != "Good" && e.State != "Fair" && e.State != "Poor" {
			t.Errorf("policy entry on state %q", e.State)
		}
		sum := 0.0
		for _, y := range e.ByYearsSinceWork {
			sum += y.Quantity
			if e.Treatment == "seal" && (y.Years < 6 || !y.OrMore) {
				t.Errorf("the seal given %d years after work", y.Years)
			}
		}
		if math.Abs(sum-e.Quantity) > 1e-6*100 {
			t.Errorf("%s %s: %g by years since work, %g in all", e.State, e.Treatment, sum, e.Quantity)
		}
		if e.Treatment == "seal" {
			sealed += e.Quantity
		}
	}
	if sealed == 0 {
		t.Error("the long run never seals: the interval case was not exercised")
	}
}

// TestHistoryKeysAtZeroChangeNothing: with every min_interval 0 (or 1,
// which is no constraint either: a quantity gets one action a year) and no
// after_work, no class is widened and every output is byte for byte the
// one of the scenario without the keys.
func TestHistoryKeysAtZeroChangeNothing(t *testing.T) {
	plainPath := plainDemoPath(t)
	plain := loadFile(t, plainPath)
	data, err := os.ReadFile(demoPath)
	if err != nil {
		t.Fatal(err)
	}
	text := withoutHistory(string(data))
	text = strings.Replace(text, "ages_same_year: false\n", "ages_same_year: false\n    min_interval: 0\n", 1)
	text = strings.Replace(text, "effect: {improve: 1}}", "effect: {improve: 1}, min_interval: 1}", 1)
	text = strings.ReplaceAll(text, "effect: {to: Good}}", "effect: {to: Good}, min_interval: 0}")
	if strings.Count(text, "min_interval") < 3 {
		t.Fatal("the demo's treatments are not written as this test expects; update it")
	}
	keyed, err := loadDemoText(t, "keyed.yaml", text)
	if err != nil {
		t.Fatal(err)
	}
	for k := range keyed.Classes {
		if keyed.Classes[k].History != nil {
			t.Fatalf("class %s widened with intervals of at most 1 year and no after_work", keyed.Classes[k].Name)
		}
	}
	pa, err := plain.Problem()
	if err != nil {
		t.Fatal(err)
	}
	pb, err := keyed.Problem()
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(pa, pb) {
		t.Fatal("the optimizer's problems differ")
	}
	keyed.Source = plain.Source
	outputs := func(sc *scenarios.Scenario) map[string][]byte {
		out := map[string][]byte{}
		add := func(name string, v any, err error) {
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			b, err := json.Marshal(v)
			if err != nil {
				t.Fatal(err)
			}
			out[name] = b
		}
		plan, err := scenarios.Plan(sc, scenarios.Options{})
		add("plan", plan, err)
		r, err := scenarios.Forecast(sc)
		add("forecast", r, err)
		r, err = scenarios.ForecastRule(sc, scenarios.WorstFirst)
		add("worst-first", r, err)
		lr, err := scenarios.LongRun(sc, scenarios.Options{})
		add("longrun", lr, err)
		sim, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 20, Seed: 7})
		add("simulate", sim, err)
		wl, err := scenarios.MakeWorklist(sc, plan, 3)
		add("worklist", wl, err)
		return out
	}
	a, b := outputs(plain), outputs(keyed)
	for _, name := range slices.Sorted(maps.Keys(a)) {
		if !bytes.Equal(a[name], b[name]) {
			t.Errorf("%s: output differs with the keys at zero", name)
		}
	}
}

func loadFile(t *testing.T, path string) *scenarios.Scenario {
	t.Helper()
	sc, err := scenarios.LoadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return sc
}

// afterWorkScenario: a class typed as quantities, wearing by Q for two
// years after work, with a fifth of every state last treated in 2026 (one
// year before the plan) and a tenth in 2025 (two years).
const afterWorkScenario = `# INVENTED EXAMPLE: Fenwick Hollow is an invented village.
name: Fenwick Hollow footways (invented example)
start_year: 2027
horizon: 4
currency: USD
` + threeStates + `classes:
  - name: footways
    scale: three
    unit: km
    inventory: {Good: 50, Fair: 30, Poor: 20}
    deterioration:
      matrix:
        - [0.7, 0.3, 0]
        - [0, 0.6, 0.4]
        - [0, 0, 1]
    after_work:
      years: 2
      deterioration:
        matrix:
          - [0.9, 0.1, 0]
          - [0, 0.85, 0.15]
          - [0, 0, 1]
    last_treated: {2026: 0.2, 2025: {Good: 0.1, Fair: 0.1, Poor: 0.1}}
    treatments: [resurface]
treatments:
  - {name: resurface, applies_to: [Fair, Poor], cost: 50000, effect: {to: Good}, min_interval: 4}
budget:
  yearly: 400000
`

// TestForecastWithHistoryMatchesHandRoll: quantities treated lately wear
// by the after-work matrix Q for the rest of their two years, the rest by
// P: by hand, the part last treated in 2026 (one year before) wears by Q
// in 2027 and 2028, the part treated in 2025 by Q in 2027 only, the rest
// by P throughout.
func TestForecastWithHistoryMatchesHandRoll(t *testing.T) {
	sc := parse(t, afterWorkScenario)
	if h := sc.Classes[0].History; h == nil || h.Span != 4 {
		t.Fatalf("history %+v, want a span of 4 (the interval)", h)
	}
	r, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	p := [][]float64{{0.7, 0.3, 0}, {0, 0.6, 0.4}, {0, 0, 1}}
	q := [][]float64{{0.9, 0.1, 0}, {0, 0.85, 0.15}, {0, 0, 1}}
	step := func(v []float64, m [][]float64) []float64 {
		out := make([]float64, 3)
		for i := range v {
			for j := range out {
				out[j] += v[i] * m[i][j]
			}
		}
		return out
	}
	init := []float64{50, 30, 20}
	scale := func(f float64) []float64 { return []float64{init[0] * f, init[1] * f, init[2] * f} }
	recent, older, rest := scale(0.2), scale(0.1), scale(0.7)
	got := func(y int) []float64 {
		cc := r.Years[y].Classes[0]
		return []float64{cc.States[0].Quantity, cc.States[1].Quantity, cc.States[2].Quantity}
	}
	if today := r.Initial.Classes[0]; today.States[0].Quantity != 50 || today.States[1].Quantity != 30 || today.States[2].Quantity != 20 {
		t.Errorf("today %v, want the inventory exactly", today.States)
	}
	for y := 0; y < 4; y++ {
		mRecent, mOlder := p, p
		if y < 2 {
			mRecent = q // 2027 and 2028: one and two years after 2026
		}
		if y < 1 {
			mOlder = q // 2027: two years after 2025
		}
		recent, older, rest = step(recent, mRecent), step(older, mOlder), step(rest, p)
		for j, g := range got(y) {
			if want := recent[j] + older[j] + rest[j]; math.Abs(g-want) > 1e-12*100 {
				t.Errorf("end of %d, state %d: %.15g, want %.15g", 2027+y, j+1, g, want)
			}
		}
	}
}

// TestHistoryNotes: a class widened without knowing when it was last
// treated is taken as past every interval, and the result says so; a
// last_treated that no interval or after-work wear uses is said to change
// nothing.
func TestHistoryNotes(t *testing.T) {
	sc := parse(t, sealScenario("\n    min_interval: 6"))
	if notes := strings.Join(sc.Notes, " "); !strings.Contains(notes, "class lanes gives no last_treated, so all of its quantity is taken as treated long ago: free for every treatment interval;") {
		t.Errorf("notes %q", sc.Notes)
	}
	r, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.Join(r.Warnings, " "), "gives no last_treated") {
		t.Errorf("the forecast's warnings do not repeat the assumption: %q", r.Warnings)
	}
	if sc := parse(t, afterWorkScenario); len(sc.Notes) != 0 {
		t.Errorf("last_treated given, yet notes %q", sc.Notes)
	}
	text := strings.Replace(sealScenario(""), "    treatments: [seal, overlay]", "    last_treated: {2024: 0.3}\n    treatments: [seal, overlay]", 1)
	if sc := parse(t, text); !strings.Contains(strings.Join(sc.Notes, " "), "class lanes gives when it was last treated, but none of its treatments has a min_interval and it has no after_work, so that changes nothing") {
		t.Errorf("notes %q", sc.Notes)
	}
}

// TestLastTreatedPlacesQuantities: last_treated shares put each state's
// quantity in the widened states of its years since work; what no share
// covers counts as treated long ago.
func TestLastTreatedPlacesQuantities(t *testing.T) {
	sc := parse(t, afterWorkScenario)
	p, err := sc.Problem()
	if err != nil {
		t.Fatal(err)
	}
	h := sc.Classes[0].History
	init := p.Classes[0].Initial
	for i, q := range []float64{50, 30, 20} {
		for y, share := range map[int]float64{1: 0.2, 2: 0.1, 3: 0, 4: 0.7} {
			if got, want := init[h.State(i, y)], q*share; math.Abs(got-want) > 1e-12 {
				t.Errorf("state %d, %d years since work: %g, want %g", i+1, y, got, want)
			}
		}
	}
	if got := p.Classes[0].Labels[h.State(1, 1)]; got != "Fair, worked last year" {
		t.Errorf("label %q", got)
	}
}

// worklistSegments: lanes of Fenwick Hollow, all Good today, some sealed
// lately (invented).
const worklistSegments = `id,class,quantity,condition,last_treated
L-01,lanes,1.0,Good,2025
L-02,lanes,1.0,Good,2021
L-03,lanes,1.0,Good,
L-04,lanes,1.0,Good,2026
L-05,lanes,1.0,Good,2018
L-06,lanes,1.0,Good,2024
L-07,lanes,1.0,Good,
L-08,lanes,1.0,Good,2023-05-20
`

// TestWorklistKeepsIntervals: with a seal that waits 4 years, no segment
// is listed for it before 4 years have passed since its last treatment,
// whether that was before the plan (last_treated) or in a year listed.
func TestWorklistKeepsIntervals(t *testing.T) {
	text := strings.Replace(sealScenario("\n    min_interval: 4"), "    inventory: {Good: 60, Fair: 30, Poor: 10}\n", "    inventory_csv: segments.csv\n", 1)
	text = strings.Replace(text, "horizon: 15", "horizon: 8", 1)
	sc, err := loadWith(t, text, map[string][]byte{"segments.csv": []byte(worklistSegments)})
	if err != nil {
		t.Fatal(err)
	}
	plan, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	wl, err := scenarios.MakeWorklist(sc, plan, 8)
	if err != nil {
		t.Fatal(err)
	}
	last := map[string]int{}
	for _, s := range sc.Classes[0].Segments {
		last[s.ID] = s.LastTreated
	}
	sealed := 0
	for _, it := range wl.Items {
		if it.Treatment == "seal" {
			sealed++
			if prev := last[it.Segment]; prev > 0 && it.Year-prev < 4 {
				t.Errorf("%s sealed in %d, %d years after its last work in %d", it.Segment, it.Year, it.Year-prev, prev)
			}
		}
		last[it.Segment] = it.Year
	}
	if sealed == 0 {
		t.Fatal("no seal listed: the intervals were not exercised")
	}
	for _, c := range wl.Checks {
		if c.Year == sc.StartYear && !c.Within() {
			t.Errorf("%d %s %s: listed %g of the plan's %g", c.Year, c.State, c.Treatment, c.Listed, c.Planned)
		}
	}
	t.Logf("%d seals listed over 8 years", sealed)
}

// TestWriteModelLegendNamesWidenedStates: the exported model's legend
// lists a widened class's states with their years since work.
func TestWriteModelLegendNamesWidenedStates(t *testing.T) {
	p, err := parse(t, sealScenario("\n    min_interval: 3")).Problem()
	if err != nil {
		t.Fatal(err)
	}
	m, err := optimize.BuildModel(p)
	if err != nil {
		t.Fatal(err)
	}
	notes := strings.Join(m.Notes, "\n")
	for _, want := range []string{"class 1 states (I in its columns and flow rows): 1 Good, worked last year; 2 Good, 2 years since work; 3 Good, 3 or more years since work; 4 Fair, worked last year"} {
		if !strings.Contains(notes, want) {
			t.Errorf("legend lacks %q:\n%s", want, notes)
		}
	}
}

// TestSimulateWithHistoryCentreMatchesPlan: lots cut from a class with
// last_treated shares carry their years since work, move over the widened
// states and follow the plan's shares there, so the mean of the runs is the
// plan's condition within sampling error (the bound and its sources as in
// TestSimulateCentreMatchesPlan: a group share of N lots of size L in a
// class of Q has standard deviation at most sqrt(L/(4Q))).
func TestSimulateWithHistoryCentreMatchesPlan(t *testing.T) {
	const nSE, lot, runs = 4, 0.05, 100
	sc := parse(t, afterWorkScenario)
	r, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: runs, Seed: 11, LotSize: lot})
	if err != nil {
		t.Fatal(err)
	}
	plan, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	worked := 0.0
	for y, yr := range r.Years {
		pc := plan.Years[y].Classes[0]
		for _, w := range pc.Work {
			worked += w.Quantity
		}
		cb := yr.Classes[0]
		sigma := math.Sqrt(lot / (4 * sc.Classes[0].Total()))
		for _, g := range []struct {
			name       string
			mean, plan float64
		}{{"good", cb.Shares.Good.Mean, pc.Shares.Good}, {"fair", cb.Shares.Fair.Mean, pc.Shares.Fair}, {"poor", cb.Shares.Poor.Mean, pc.Shares.Poor}} {
			if math.Abs(g.mean-g.plan) > nSE*sigma/math.Sqrt(runs)+1e-12 {
				t.Errorf("%d %s share: mean of the runs %.4f, plan %.4f", yr.Year, g.name, g.mean, g.plan)
			}
		}
	}
	if worked == 0 {
		t.Fatal("the plan does no work: the widened policy was not exercised")
	}
}

// TestDemoWorklistWithHistoryWithinTolerance: on the demo, whose seals keep
// intervals and whose segments carry their last treatment, the indicative
// years place the segments with each number of years since work against
// the plan's quantities with that number, so every treatment's listed
// quantity stays within the tolerance (two segments) of the plan's.
func TestDemoWorklistWithHistoryWithinTolerance(t *testing.T) {
	sc := loadDemo(t)
	plan, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	wl, err := scenarios.MakeWorklist(sc, plan, 5)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range wl.Checks {
		if !c.Within() {
			t.Errorf("%d %s %s %s: listed %.3f of the plan's %.3f (tolerance %.3f)", c.Year, c.Class, c.State, c.Treatment, c.Listed, c.Planned, c.Tolerance)
		}
	}
}

// A target on one state of a class planned over widened states (intervals,
// wear after work) reaches every solve the same way: the sweep's least
// level budget that meets every target is the one the plan reports (two
// paths to one figure), and holding the widened states of footways'
// "Very poor" is what makes the plan at 1.5 million meet it.
func TestStateTargetOnWidenedClassInSweep(t *testing.T) {
	sc, err := scenarios.LoadFile("../testdata/thornwick-footways.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Funding == nil || r.Funding.LevelBudget == nil {
		t.Fatalf("plan gives no least level budget: %+v", r.Funding)
	}
	sw, err := scenarios.Sweep(sc, []float64{1.5e6}, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	// Both are the optimum of the same LP solved twice: lp_solve's
	// feasibility tolerance (1e-9 relative) bounds the difference.
	if sw.TargetsBudget == nil || math.Abs(*sw.TargetsBudget-*r.Funding.LevelBudget) > 1e-6**r.Funding.LevelBudget {
		t.Errorf("sweep's least level budget %v, plan's %v", sw.TargetsBudget, *r.Funding.LevelBudget)
	}
	if sw.Points[0].Status != "optimal" {
		t.Errorf("at 1.5 million: %s, want every target met", sw.Points[0].Status)
	}
}
