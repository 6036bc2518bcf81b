package scenarios_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// worklistScenario is a two-class network on the five-state preset with a
// budget (invented numbers; the town of Marrowby is invented). Its
// segments come from segments.csv.
const worklistScenario = `name: Marrowby worklist test (invented example)
start_year: 2030
horizon: 6
cost_escalation: 0.03
inventory_csv: {file: segments.csv%s}
classes:
  - name: roads
    scale: preset:five-state
    unit: lane-km
    replacement_cost: 500000
    deterioration: {years_in_state: [5, 4, 4, 3]}
    treatments: [seal, overlay, rebuild]
  - name: culverts
    scale: preset:five-state
    unit: each
    replacement_cost: 80000
    deterioration: {years_in_state: [9, 7, 6, 5]}
    treatments: [reline, replace]
treatments:
  - {name: seal, applies_to: [Very good, Good], cost: 9000, effect: {improve: 1}}
  - {name: overlay, applies_to: [Fair, Poor], cost: {Fair: 90000, Poor: 120000}, effect: {to: Very good}}
  - {name: rebuild, applies_to: [Poor, Very poor], cost: 500000, effect: {to: Very good}, ages_same_year: false}
  - {name: reline, applies_to: [Fair, Poor], cost: 30000, effect: {to: Good}}
  - {name: replace, applies_to: [Poor, Very poor], cost: 80000, effect: {to: Very good}, ages_same_year: false}
budget:
  yearly: %d
`

// randomSegments writes an invented segment list: roads of 0.05-1.5
// lane-km and culverts of 1 each, conditions on 0-100.
func randomSegments(rng *rand.Rand, roads, culverts int) string {
	var b strings.Builder
	b.WriteString("id,class,quantity,condition,aadt\n")
	for i := range roads {
		fmt.Fprintf(&b, "R%04d,roads,%.3f,%d,%d\n", i, 0.05+1.45*rng.Float64(), rng.IntN(101), 100+rng.IntN(20000))
	}
	for i := range culverts {
		fmt.Fprintf(&b, "C%03d,culverts,1,%d,%d\n", i, rng.IntN(101), 100+rng.IntN(5000))
	}
	return b.String()
}

func planWorklist(t *testing.T, options string, budget int, csvText string, years int) (*scenarios.Scenario, *scenarios.Result, *scenarios.Worklist) {
	t.Helper()
	sc, err := loadWith(t, fmt.Sprintf(worklistScenario, options, budget), map[string][]byte{"segments.csv": []byte(csvText)})
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	w, err := scenarios.MakeWorklist(sc, r, years)
	if err != nil {
		t.Fatal(err)
	}
	return sc, r, w
}

// key identifies a year, class, state and treatment.
type key struct {
	year                    int
	class, state, treatment string
}

func TestWorklistMatchesPlan(t *testing.T) {
	for seed := uint64(1); seed <= 4; seed++ {
		rng := rand.New(rand.NewPCG(seed, 7))
		csvText := randomSegments(rng, 300+rng.IntN(300), 40+rng.IntN(60))
		options := ""
		if seed%2 == 0 {
			options = ", priority: aadt"
		}
		sc, r, w := planWorklist(t, options, 3_000_000+int(seed)*500_000, csvText, 4)
		segment := map[string]scenarios.Segment{}
		largest := map[[2]string]float64{}
		for _, c := range sc.Classes {
			for _, s := range c.Segments {
				segment[s.ID] = s
				k := [2]string{c.Name, c.Scale.States[s.State].Name}
				largest[k] = math.Max(largest[k], s.Quantity)
			}
		}
		// The listed quantity per year, class, state and treatment, added up
		// here from the items.
		listed := map[key]float64{}
		seen := map[string]bool{}
		for _, it := range w.Items {
			yk := fmt.Sprint(it.Year, "/", it.Segment)
			// A segment appears at most once per year (the acceptance).
			if seen[yk] {
				t.Fatalf("seed %d: segment %s listed twice in %d", seed, it.Segment, it.Year)
			}
			seen[yk] = true
			s := segment[it.Segment]
			if it.Quantity != s.Quantity {
				t.Errorf("seed %d: %s listed with %v, the segment has %v (segments are never split)", seed, it.Segment, it.Quantity, s.Quantity)
			}
			if it.Year == sc.StartYear && it.State != sc.Classes[classOf(sc, it.Class)].Scale.States[s.State].Name {
				t.Errorf("seed %d: %s listed in %s in year 1, the inventory says %s", seed, it.Segment, it.State, sc.Classes[classOf(sc, it.Class)].Scale.States[s.State].Name)
			}
			listed[key{it.Year, it.Class, it.State, it.Treatment}] += it.Quantity
		}
		// Year 1: per class, state and treatment the listed quantity is within
		// one segment's quantity of the plan's (the acceptance); the
		// tolerance is the largest segment of that class and state.
		planned := map[key]float64{}
		for _, cc := range r.Years[0].Classes {
			for _, wk := range cc.Work {
				k := key{sc.StartYear, cc.Class, wk.State, wk.Treatment}
				planned[k] += wk.Quantity
				tol := largest[[2]string{cc.Class, wk.State}]
				if d := math.Abs(listed[k] - wk.Quantity); d > tol+1e-9 {
					t.Errorf("seed %d: %v planned %.4f, listed %.4f: off by more than the largest segment (%v)", seed, k, wk.Quantity, listed[k], tol)
				}
			}
		}
		for k, q := range listed {
			if k.year == sc.StartYear && planned[k] == 0 {
				t.Errorf("seed %d: %v listed %v with nothing planned", seed, k, q)
			}
		}
		// The worklist's own checks agree, and hold for every year.
		for _, c := range w.Checks {
			if math.Abs(c.Listed-listed[key{c.Year, c.Class, c.State, c.Treatment}]) > 1e-9 {
				t.Errorf("seed %d: check %+v disagrees with the items", seed, c)
			}
			if !c.Within() {
				t.Errorf("seed %d: check outside its tolerance: %+v", seed, c)
			}
		}
		t.Logf("seed %d: %d items, %d checks", seed, len(w.Items), len(w.Checks))
		if !strings.Contains(w.Caution, "inspection") || !strings.Contains(w.Caution, "indicative") {
			t.Errorf("caution %q", w.Caution)
		}
	}
}

func classOf(sc *scenarios.Scenario, name string) int {
	for k := range sc.Classes {
		if sc.Classes[k].Name == name {
			return k
		}
	}
	return -1
}

func TestWorklistPriorityOrder(t *testing.T) {
	// Within a class and state, the plan's treatments take the segments in
	// priority order: no segment left out ranks before one that is listed,
	// and the costliest treatment takes the first ones.
	rng := rand.New(rand.NewPCG(11, 3))
	csvText := randomSegments(rng, 500, 80)
	for _, options := range []string{"", ", priority: aadt"} {
		sc, _, w := planWorklist(t, options, 4_000_000, csvText, 1)
		for _, c := range sc.Classes {
			for i, st := range c.Scale.States {
				var items []scenarios.WorkItem
				for _, it := range w.Items {
					if it.Class == c.Name && it.State == st.Name {
						items = append(items, it)
					}
				}
				if len(items) == 0 {
					continue
				}
				// Ranks run 1, 2, 3... with no gap: a prefix of the priority order.
				for n, it := range items {
					if it.Rank != n+1 {
						t.Fatalf("%q %s %s: item %d has rank %d; the listed segments are not the first in priority order", options, c.Name, st.Name, n, it.Rank)
					}
				}
				// The order itself: priority first (when given), else worst
				// condition (lowest index here), then largest quantity.
				for n := 1; n < len(items); n++ {
					a, b := items[n-1], items[n]
					if options != "" {
						if *a.Priority < *b.Priority {
							t.Errorf("%s %s: %s (aadt %v) before %s (aadt %v)", c.Name, st.Name, a.Segment, *a.Priority, b.Segment, *b.Priority)
						}
					} else if *a.Condition > *b.Condition || (*a.Condition == *b.Condition && a.Quantity < b.Quantity) {
						t.Errorf("%s %s: %s (index %v, %v) before %s (index %v, %v)", c.Name, st.Name, a.Segment, *a.Condition, a.Quantity, b.Segment, *b.Condition, b.Quantity)
					}
				}
				// Costlier treatments come first.
				for n := 1; n < len(items); n++ {
					if cost(c, items[n-1].Treatment, i) < cost(c, items[n].Treatment, i) {
						t.Errorf("%s %s: %s before the costlier %s", c.Name, st.Name, items[n-1].Treatment, items[n].Treatment)
					}
				}
			}
		}
	}
}

func cost(c scenarios.Class, treatment string, state int) float64 {
	for _, tr := range c.Treatments {
		if tr.Name == treatment {
			return tr.Cost[state]
		}
	}
	return 0
}

func TestWorklistMidpointByHand(t *testing.T) {
	// Three Poor segments of 1, 2 and 3 units, worst first; the plan
	// overlays 2.5 units of Poor. Laid end to end they cover 0-1, 1-3 and
	// 3-6; midpoints 0.5 and 2 fall in the overlay's stretch 0-2.5, the
	// third's (4.5) does not: 3 units listed, within one segment of 2.5.
	csvText := "id,class,quantity,condition\nA,roads,1,21\nB,roads,2,25\nC,roads,3,30\nK,culverts,1,90\n"
	sc, err := loadWith(t, fmt.Sprintf(worklistScenario, "", 0), map[string][]byte{"segments.csv": []byte(csvText)})
	if err != nil {
		t.Fatal(err)
	}
	r := handPlan(sc, []scenarios.Work{{Treatment: "overlay", State: "Poor", Quantity: 2.5, Cost: 300000}})
	w, err := scenarios.MakeWorklist(sc, r, 1)
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, it := range w.Items {
		got = append(got, fmt.Sprintf("%s %s %v %v", it.Segment, it.Treatment, it.Quantity, it.Cost))
	}
	if want := "A overlay 1 120000|B overlay 2 240000"; strings.Join(got, "|") != want {
		t.Errorf("items %q, want %q", strings.Join(got, "|"), want)
	}
	// Two treatments split the line: rebuild (costlier) takes 0-1.2, then
	// overlay 1.2-4.7: A (mid 0.5) rebuild; B (mid 2) and C (mid 4.5) overlay.
	r = handPlan(sc, []scenarios.Work{{Treatment: "overlay", State: "Poor", Quantity: 3.5}, {Treatment: "rebuild", State: "Poor", Quantity: 1.2}})
	w, err = scenarios.MakeWorklist(sc, r, 1)
	if err != nil {
		t.Fatal(err)
	}
	got = nil
	for _, it := range w.Items {
		got = append(got, it.Segment+" "+it.Treatment)
	}
	if want := "A rebuild|B overlay|C overlay"; strings.Join(got, "|") != want {
		t.Errorf("items %q, want %q", strings.Join(got, "|"), want)
	}
}

// handPlan is a one-year plan result with the given roads work.
func handPlan(sc *scenarios.Scenario, work []scenarios.Work) *scenarios.Result {
	r := &scenarios.Result{Kind: "plan", Status: "optimal"}
	y := scenarios.Year{Year: sc.StartYear}
	for _, c := range sc.Classes {
		cc := scenarios.ClassCondition{Class: c.Name, Work: []scenarios.Work{}}
		if c.Name == "roads" {
			cc.Work = work
		}
		y.Classes = append(y.Classes, cc)
	}
	for range sc.Horizon {
		r.Years = append(r.Years, y)
	}
	return r
}

func TestWorklistRejects(t *testing.T) {
	sc := mustParse(t, valueScenario)
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := scenarios.MakeWorklist(sc, r, 1); err == nil || !strings.Contains(err.Error(), "no class has a segment list") {
		t.Errorf("inline inventory: %v", err)
	}
	rng := rand.New(rand.NewPCG(5, 5))
	sc, r, _ = planWorklist(t, "", 2_000_000, randomSegments(rng, 50, 10), 1)
	if _, err := scenarios.MakeWorklist(sc, r, 7); err == nil || !strings.Contains(err.Error(), "between 1 and 6") {
		t.Errorf("7 years of a 6-year plan: %v", err)
	}
	f, _ := scenarios.Forecast(sc)
	if _, err := scenarios.MakeWorklist(sc, f, 1); err == nil {
		t.Error("a forecast has no work to list")
	}
}
