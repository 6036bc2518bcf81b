package treatments_test

import (
	"math"
	"slices"
	"strings"
	"testing"

	"wearplan/markov"
	"wearplan/treatments"
)

func mustTransition(t *testing.T, rows [][]float64) *markov.Transition {
	t.Helper()
	p, err := markov.NewTransition(rows, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func TestNewHistorySpan(t *testing.T) {
	q := &treatments.AfterWork{Years: 3}
	for _, c := range []struct {
		name      string
		intervals []int
		after     *treatments.AfterWork
		span      int // 0: no history
	}{
		{"no intervals, no after-work wear", []int{0, 0}, nil, 0},
		{"a one-year interval is no constraint", []int{1, 0}, nil, 0},
		{"largest interval", []int{6, 0, 4}, nil, 6},
		{"after-work years plus the year after them", []int{0}, q, 4},
		{"interval longer than the after-work years", []int{7}, q, 7},
		{"interval shorter than them", []int{2}, q, 4},
	} {
		t.Run(c.name, func(t *testing.T) {
			ts := make([]treatments.Treatment, len(c.intervals))
			for k, n := range c.intervals {
				ts[k].MinInterval = n
			}
			h := treatments.NewHistory(5, ts, c.after)
			switch {
			case c.span == 0 && h != nil:
				t.Fatalf("history of span %d, want none", h.Span)
			case c.span == 0:
			case h == nil:
				t.Fatalf("no history, want span %d", c.span)
			case h.Span != c.span || h.Conditions != 5 || h.States() != 5*c.span:
				t.Fatalf("history %+v, want span %d over 5 states", *h, c.span)
			}
		})
	}
}

// With no interval and no after-work wear the widened chain must lump back
// to the plain one: every widened state of condition i moves, summed over
// the years since work, by row i of the plain action (the lumpability
// condition of Kemeny and Snell, Finite Markov Chains, 1960, section 6.3).
func TestHistoryLumpsToPlainChain(t *testing.T) {
	p := mustTransition(t, [][]float64{
		{0.7, 0.2, 0.1, 0},
		{0, 0.8, 0.15, 0.05},
		{0, 0, 0.75, 0.25},
		{0, 0, 0, 1},
	})
	ts := []treatments.Treatment{
		{Name: "seal", Applies: []int{0, 1}, Cost: []float64{30, 35, 0, 0}, Effect: treatments.Effect{Kind: treatments.Improve, Steps: 1}},
		{Name: "rebuild", Applies: []int{2, 3}, Cost: []float64{0, 0, 900, 1000}, Effect: treatments.Effect{Kind: treatments.ToState, State: 0}, SkipsAging: true},
	}
	plain, err := treatments.Actions(p, ts)
	if err != nil {
		t.Fatal(err)
	}
	h := &treatments.History{Conditions: 4, Span: 3}
	wide, err := h.Actions(p, nil, ts)
	if err != nil {
		t.Fatal(err)
	}
	for a := range plain {
		for w := 0; w < h.States(); w++ {
			i := h.Condition(w)
			if wide[a].Applies[w] != plain[a].Applies[i] || wide[a].Cost[w] != plain[a].Cost[i] {
				t.Errorf("%s in widened state %d: applies %t cost %g, plain %t %g", plain[a].Name, w, wide[a].Applies[w], wide[a].Cost[w], plain[a].Applies[i], plain[a].Cost[i])
			}
			if !plain[a].Applies[i] {
				continue
			}
			got := h.Fold(wide[a].Rows[w])
			for j := range got {
				if math.Abs(got[j]-plain[a].Rows[i][j]) > 1e-15 {
					t.Errorf("%s from widened state %d: folded row %v, plain row %v", plain[a].Name, w, got, plain[a].Rows[i])
					break
				}
			}
		}
	}
}

// A three-state class worked by hand: usual wear P, wear Q for two years
// after any work, a seal that holds the state (no ageing in its year) and
// waits three years, an overlay to the best state with no wait. The span is
// max(3, 2+1) = 3.
func TestHistoryActionsByHand(t *testing.T) {
	p := mustTransition(t, [][]float64{{0.8, 0.2, 0}, {0, 0.7, 0.3}, {0, 0, 1}})
	q := mustTransition(t, [][]float64{{0.95, 0.05, 0}, {0, 0.9, 0.1}, {0, 0, 1}})
	ts := []treatments.Treatment{
		{Name: "seal", Applies: []int{0, 1}, Cost: []float64{40, 50, 0}, SkipsAging: true, MinInterval: 3,
			Effect: treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{0: {1, 0, 0}, 1: {0, 1, 0}}}},
		{Name: "overlay", Applies: []int{1, 2}, Cost: []float64{0, 900, 1200}, Effect: treatments.Effect{Kind: treatments.ToState, State: 0}},
	}
	after := &treatments.AfterWork{Years: 2, Transition: q}
	h := treatments.NewHistory(3, ts, after)
	if h == nil || h.Span != 3 {
		t.Fatalf("history %v, want span 3", h)
	}
	acts, err := h.Actions(p, after, ts)
	if err != nil {
		t.Fatal(err)
	}
	row := func(entries map[[2]int]float64) []float64 {
		r := make([]float64, h.States())
		for k, v := range entries {
			r[h.State(k[0], k[1])] = v
		}
		return r
	}
	const nothing, seal, overlay = 0, 1, 2
	for _, c := range []struct {
		name         string
		action, i, y int
		want         []float64 // nil: does not apply
		cost         float64
	}{
		// Doing nothing: Q while y <= 2, then P; one more year since work,
		// up to the span.
		{"best, worked last year, wears by Q", nothing, 0, 1, row(map[[2]int]float64{{0, 2}: 0.95, {1, 2}: 0.05}), 0},
		{"best, two years since work, still Q", nothing, 0, 2, row(map[[2]int]float64{{0, 3}: 0.95, {1, 3}: 0.05}), 0},
		{"best, three or more years, P and stays at the span", nothing, 0, 3, row(map[[2]int]float64{{0, 3}: 0.8, {1, 3}: 0.2}), 0},
		{"middle, worked last year", nothing, 1, 1, row(map[[2]int]float64{{1, 2}: 0.9, {2, 2}: 0.1}), 0},
		// The seal waits three years after any work.
		{"seal one year after work", seal, 0, 1, nil, 0},
		{"seal two years after work", seal, 1, 2, nil, 0},
		{"seal three years after work: holds, worked last year next", seal, 0, 3, row(map[[2]int]float64{{0, 1}: 1}), 40},
		{"seal on the middle state", seal, 1, 3, row(map[[2]int]float64{{1, 1}: 1}), 50},
		// The overlay ages in its year, after the work: E·Q.
		{"overlay the year after other work", overlay, 1, 1, row(map[[2]int]float64{{0, 1}: 0.95, {1, 1}: 0.05}), 900},
		{"overlay the worst state long after work", overlay, 2, 3, row(map[[2]int]float64{{0, 1}: 0.95, {1, 1}: 0.05}), 1200},
		{"no overlay on the best state", overlay, 0, 3, nil, 0},
	} {
		t.Run(c.name, func(t *testing.T) {
			w := h.State(c.i, c.y)
			a := &acts[c.action]
			if got := a.Applies[w]; got != (c.want != nil) {
				t.Fatalf("applies %t, want %t", got, c.want != nil)
			}
			if a.Cost[w] != c.cost {
				t.Errorf("cost %g, want %g", a.Cost[w], c.cost)
			}
			if c.want == nil {
				return
			}
			for j := range c.want {
				if math.Abs(a.Rows[w][j]-c.want[j]) > 1e-15 {
					t.Fatalf("row %v, want %v", a.Rows[w], c.want)
				}
			}
		})
	}
	for a := range acts {
		for w, r := range acts[a].Rows {
			if r == nil {
				continue
			}
			s := 0.0
			for _, v := range r {
				s += v
			}
			if math.Abs(s-1) > 1e-12 {
				t.Errorf("%s from widened state %d sums to %g", acts[a].Name, w, s)
			}
		}
	}
}

func TestHistoryStateMapping(t *testing.T) {
	h := &treatments.History{Conditions: 3, Span: 4}
	for i := 0; i < 3; i++ {
		for y := 1; y <= 4; y++ {
			w := h.State(i, y)
			if h.Condition(w) != i || h.Years(w) != y {
				t.Errorf("(%d, %d) -> %d -> (%d, %d)", i, y, w, h.Condition(w), h.Years(w))
			}
		}
		if h.State(i, 9) != h.State(i, 4) || h.State(i, 0) != h.State(i, 1) {
			t.Errorf("years outside 1..span not clamped for state %d", i)
		}
	}
	if got := h.Fold([]float64{1, 2, 3, 4, 0, 0, 0, 5, 6, 0, 0, 0}); !slices.Equal(got, []float64{10, 5, 6}) {
		t.Errorf("fold %v", got)
	}
	if got := treatments.Widen(h, []string{"a", "b", "c"}); len(got) != 12 || got[3] != "a" || got[4] != "b" || got[11] != "c" {
		t.Errorf("widen %v", got)
	}
	names := []string{"Good", "Fair", "Poor"}
	for w, want := range map[int]string{0: "Good, worked last year", 5: "Fair, 2 years since work", 11: "Poor, 4 or more years since work"} {
		if got := h.Label(names, w); got != want {
			t.Errorf("label %d: %q, want %q", w, got, want)
		}
	}
}

func TestHistoryActionsRefuse(t *testing.T) {
	p := mustTransition(t, [][]float64{{0.8, 0.2}, {0, 1}})
	three := mustTransition(t, [][]float64{{0.8, 0.2, 0}, {0, 0.8, 0.2}, {0, 0, 1}})
	ts := []treatments.Treatment{{Name: "seal", Applies: []int{0}, Cost: []float64{10, 0}, MinInterval: -2, Effect: treatments.Effect{Kind: treatments.ToState, State: 0}}}
	h := &treatments.History{Conditions: 2, Span: 2}
	for _, c := range []struct {
		name  string
		after *treatments.AfterWork
		ts    []treatments.Treatment
		want  string
	}{
		{"negative interval", nil, ts, "interval of -2 years"},
		{"after-work matrix of another scale", &treatments.AfterWork{Years: 2, Transition: three}, nil, "has 3 states, the class 2"},
		{"after-work years below 1", &treatments.AfterWork{Years: 0, Transition: p}, nil, "for 0 years"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := h.Actions(p, c.after, c.ts)
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("error %v, want one containing %q", err, c.want)
			}
		})
	}
}
