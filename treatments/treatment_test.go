package treatments_test

import (
	"math"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"wearplan/markov"
	"wearplan/treatments"
)

// parts splits an errors.Join result into its messages (nil for nil).
func parts(t *testing.T, err error) []string {
	t.Helper()
	if err == nil {
		return nil
	}
	joined, ok := err.(interface{ Unwrap() []error })
	if !ok {
		return []string{err.Error()}
	}
	var out []string
	for _, e := range joined.Unwrap() {
		out = append(out, e.Error())
	}
	return out
}

func TestEffectRowToState(t *testing.T) {
	tr := treatments.Treatment{Name: "rebuild", Effect: treatments.Effect{Kind: treatments.ToState, State: 0}}
	for i := range 5 {
		got, err := tr.EffectRow(i, 5)
		if err != nil {
			t.Fatal(err)
		}
		if want := []float64{1, 0, 0, 0, 0}; !slices.Equal(got, want) {
			t.Errorf("EffectRow(%d) = %v, want %v", i, got, want)
		}
	}
	tr.Effect.State = 2
	if got, _ := tr.EffectRow(4, 5); !slices.Equal(got, []float64{0, 0, 1, 0, 0}) {
		t.Errorf("to state 3: %v", got)
	}
	for _, s := range []int{-1, 5} {
		tr.Effect.State = s
		if row, err := tr.EffectRow(1, 5); err == nil {
			t.Errorf("target state %d accepted: %v", s, row)
		} else if !strings.Contains(err.Error(), `"rebuild"`) {
			t.Errorf("error %q does not name the treatment", err)
		}
	}
}

func TestEffectRowImprove(t *testing.T) {
	tr := treatments.Treatment{Name: "overlay", Effect: treatments.Effect{Kind: treatments.Improve, Steps: 2}}
	// State i goes to max(i-2, 0): clipped at the best state.
	want := map[int]int{0: 0, 1: 0, 2: 0, 3: 1, 4: 2, 5: 3}
	for i, to := range want {
		got, err := tr.EffectRow(i, 6)
		if err != nil {
			t.Fatal(err)
		}
		exp := make([]float64, 6)
		exp[to] = 1
		if !slices.Equal(got, exp) {
			t.Errorf("improve 2 from state %d: %v, want %v", i, got, exp)
		}
	}
	for _, steps := range []int{0, -1} {
		tr.Effect.Steps = steps
		if row, err := tr.EffectRow(3, 6); err == nil {
			t.Errorf("improve by %d accepted: %v", steps, row)
		}
	}
}

func TestEffectRowDistribution(t *testing.T) {
	dist := []float64{0.1, 0.6, 0.3, 0, 0}
	tr := treatments.Treatment{Name: "thin overlay", Effect: treatments.Effect{
		Kind: treatments.Distribution,
		Rows: map[int][]float64{2: dist, 3: {0, 0.5, 0.5}},
	}}
	got, err := tr.EffectRow(2, 5)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(got, dist) {
		t.Errorf("EffectRow(2) = %v, want %v", got, dist)
	}
	got[0] = 0.9
	if dist[0] != 0.1 {
		t.Errorf("EffectRow returned the catalogue's own slice")
	}
	if _, err := tr.EffectRow(1, 5); err == nil || !strings.Contains(err.Error(), "no distribution given for state 2") {
		t.Errorf("missing state: %v", err)
	}
	if _, err := tr.EffectRow(3, 5); err == nil || !strings.Contains(err.Error(), "has 3 entries, want 5") {
		t.Errorf("short distribution: %v", err)
	}
}

func TestEffectRowRejectsBadInput(t *testing.T) {
	tr := treatments.Treatment{Name: "seal", Effect: treatments.Effect{Kind: treatments.Improve, Steps: 1}}
	// A state outside the scale is an error, not a panic or a row for a
	// state that does not exist.
	for _, i := range []int{-1, 5, 9} {
		if row, err := tr.EffectRow(i, 5); err == nil {
			t.Errorf("EffectRow(%d, 5) = %v, want an error", i, row)
		}
	}
	if row, err := tr.EffectRow(0, 0); err == nil {
		t.Errorf("EffectRow on an empty scale = %v", row)
	}
	tr.Effect.Kind = treatments.EffectKind(99)
	if _, err := tr.EffectRow(0, 5); err == nil || !strings.Contains(err.Error(), "unknown effect kind") {
		t.Errorf("unknown kind: %v", err)
	}
}

// valid returns a treatment that passes Validate on a 5-state scale.
func valid() treatments.Treatment {
	return treatments.Treatment{
		Name:    "overlay",
		Applies: []int{2, 3},
		Cost:    []float64{0, 0, 160000, 190000, 0},
		Effect:  treatments.Effect{Kind: treatments.Improve, Steps: 2},
	}
}

func TestValidate(t *testing.T) {
	tests := []struct {
		name   string
		change func(*treatments.Treatment)
		want   []string // one substring per expected error, in order
	}{
		{name: "valid", change: func(*treatments.Treatment) {}},
		{name: "free treatment is valid", change: func(tr *treatments.Treatment) { tr.Cost[2] = 0 }},
		{name: "cost of a state it does not apply to is not read", change: func(tr *treatments.Treatment) { tr.Cost[0] = math.NaN() }},
		{name: "applies to no state", change: func(tr *treatments.Treatment) { tr.Applies = nil }, want: []string{"applies to no state"}},
		{name: "state past the scale", change: func(tr *treatments.Treatment) { tr.Applies = []int{2, 5} }, want: []string{"applies to state 6, outside the 5-state scale"}},
		{name: "negative state", change: func(tr *treatments.Treatment) { tr.Applies = []int{-1, 3} }, want: []string{"applies to state 0, outside"}},
		{name: "duplicated state", change: func(tr *treatments.Treatment) { tr.Applies = []int{2, 3, 2} }, want: []string{"lists state 3 twice"}},
		{name: "negative cost", change: func(tr *treatments.Treatment) { tr.Cost[3] = -5 }, want: []string{"unit cost -5 in state 4"}},
		{name: "NaN cost", change: func(tr *treatments.Treatment) { tr.Cost[2] = math.NaN() }, want: []string{"unit cost NaN in state 3"}},
		{name: "infinite cost", change: func(tr *treatments.Treatment) { tr.Cost[2] = math.Inf(1) }, want: []string{"unit cost +Inf in state 3"}},
		{name: "wrong number of costs", change: func(tr *treatments.Treatment) { tr.Cost = []float64{1, 2} }, want: []string{"2 costs for a 5-state scale"}},
		{name: "bad improve steps reported once", change: func(tr *treatments.Treatment) { tr.Effect.Steps = 0 }, want: []string{"improve by 0 states"}},
		{
			name: "target state outside the scale reported once",
			change: func(tr *treatments.Treatment) {
				tr.Effect = treatments.Effect{Kind: treatments.ToState, State: 7}
			},
			want: []string{"target state 8 is outside the 5-state scale"},
		},
		{
			name: "distribution not summing to 1",
			change: func(tr *treatments.Treatment) {
				tr.Effect = treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{
					2: {0.2, 0.5, 0.2, 0, 0}, // 0.9
					3: {0, 0.5, 0.5, 0, 0},
				}}
			},
			want: []string{"after treating state 3 sums to 0.9"},
		},
		{
			name: "distribution off by rounding only is accepted",
			change: func(tr *treatments.Treatment) {
				tr.Effect = treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{
					2: {0.1, 0.2, 0.7 + 1e-12, 0, 0}, // within markov.RowSumTolerance
					3: {0, 0.5, 0.5, 0, 0},
				}}
			},
		},
		{
			name: "distribution entries outside [0, 1]",
			change: func(tr *treatments.Treatment) {
				tr.Effect = treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{
					2: {-0.2, 1.2, 0, 0, 0},
					3: {0, math.NaN(), 1, 0, 0},
				}}
			},
			want: []string{
				"probability -0.2 of reaching state 1 from state 3",
				"probability 1.2 of reaching state 2 from state 3",
				"probability NaN of reaching state 2 from state 4",
			},
		},
		{
			name: "distribution missing for an applicable state",
			change: func(tr *treatments.Treatment) {
				tr.Effect = treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{2: {1, 0, 0, 0, 0}}}
			},
			want: []string{"no distribution given for state 4"},
		},
		{
			name: "every problem at once",
			change: func(tr *treatments.Treatment) {
				tr.Applies = []int{2, 9, 3, 3}
				tr.Cost[3] = -1
				tr.Effect = treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{
					2: {0.5, 0.6, 0, 0, 0},
					3: {0, 1, 0, 0, 0},
				}}
			},
			want: []string{
				"after treating state 3 sums to 1.1",
				"applies to state 10, outside",
				"unit cost -1 in state 4",
				"lists state 4 twice",
			},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tr := valid()
			tc.change(&tr)
			got := parts(t, tr.Validate(5))
			if len(got) != len(tc.want) {
				t.Fatalf("got %d errors, want %d:\n%s", len(got), len(tc.want), strings.Join(got, "\n"))
			}
			for k := range got {
				if !strings.Contains(got[k], tc.want[k]) {
					t.Errorf("error %d = %q, want it to contain %q", k, got[k], tc.want[k])
				}
				if !strings.Contains(got[k], `"overlay"`) {
					t.Errorf("error %q does not name the treatment", got[k])
				}
			}
		})
	}
}

// The do-nothing matrix used below: FromYearsInState([6, 5, 5, 6]), a
// five-state scale (invented years in state).
func doNothing(t *testing.T) *markov.Transition {
	t.Helper()
	p, err := markov.FromYearsInState([]float64{6, 5, 5, 6})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// catalogue is an invented treatment list covering every effect form.
func catalogue() []treatments.Treatment {
	return []treatments.Treatment{
		{Name: "seal", Applies: []int{0, 1}, Cost: []float64{28000, 30000, 0, 0, 0},
			Effect: treatments.Effect{Kind: treatments.ToState, State: 0}},
		{Name: "overlay", Applies: []int{2, 3}, Cost: []float64{0, 0, 160000, 190000, 0},
			Effect: treatments.Effect{Kind: treatments.Improve, Steps: 2}},
		{Name: "patch", Applies: []int{3}, Cost: []float64{0, 0, 0, 40000, 0},
			Effect: treatments.Effect{Kind: treatments.Distribution, Rows: map[int][]float64{3: {0, 0.2, 0.5, 0.3, 0}}}},
		{Name: "rebuild", Applies: []int{3, 4}, Cost: []float64{0, 0, 0, 450000, 450000},
			Effect: treatments.Effect{Kind: treatments.ToState, State: 0}, SkipsAging: true},
	}
}

// effectMatrices are the E_a of catalogue(), written out by hand (row i: the
// condition right after treating state i; rows of states a treatment does
// not apply to are left zero and never compared).
var effectMatrices = map[string][]float64{
	"seal": {
		1, 0, 0, 0, 0,
		1, 0, 0, 0, 0,
		0, 0, 0, 0, 0,
		0, 0, 0, 0, 0,
		0, 0, 0, 0, 0,
	},
	"overlay": { // improve by 2: state 3 -> 1, state 4 -> 2 (1-based)
		0, 0, 0, 0, 0,
		0, 0, 0, 0, 0,
		1, 0, 0, 0, 0,
		0, 1, 0, 0, 0,
		0, 0, 0, 0, 0,
	},
	"patch": {
		0, 0, 0, 0, 0,
		0, 0, 0, 0, 0,
		0, 0, 0, 0, 0,
		0, 0.2, 0.5, 0.3, 0,
		0, 0, 0, 0, 0,
	},
	"rebuild": {
		0, 0, 0, 0, 0,
		0, 0, 0, 0, 0,
		0, 0, 0, 0, 0,
		1, 0, 0, 0, 0,
		1, 0, 0, 0, 0,
	},
}

// The year's transition of a treatment is row i of E_a·P, or of E_a when it
// does not age in its year (docs/model.md, Treatments); the reference product is
// computed independently with gonum's matrix multiplication.
func TestActions(t *testing.T) {
	p := doNothing(t)
	n := p.States()
	cat := catalogue()
	acts, err := treatments.Actions(p, cat)
	if err != nil {
		t.Fatal(err)
	}
	if len(acts) != len(cat)+1 {
		t.Fatalf("%d actions, want %d", len(acts), len(cat)+1)
	}

	// Do nothing first: applies everywhere, costs nothing, rows = P.
	dn := acts[0]
	if dn.Name != treatments.DoNothing {
		t.Errorf("first action %q, want %q", dn.Name, treatments.DoNothing)
	}
	for i := range n {
		if !dn.Applies[i] || dn.Cost[i] != 0 || !slices.Equal(dn.Rows[i], p.Row(i)) {
			t.Errorf("do nothing in state %d: applies %v, cost %g, row %v; want true, 0, %v", i, dn.Applies[i], dn.Cost[i], dn.Rows[i], p.Row(i))
		}
	}

	for k, tr := range cat {
		a := acts[k+1]
		if a.Name != tr.Name {
			t.Errorf("action %d is %q, want %q (catalogue order)", k+1, a.Name, tr.Name)
		}
		// Independent reference: E_a·P with gonum (or E_a when it skips ageing).
		want := mat.NewDense(n, n, effectMatrices[tr.Name])
		if !tr.SkipsAging {
			var ep mat.Dense
			ep.Mul(want, p.Matrix())
			want = &ep
		}
		for i := range n {
			applies := slices.Contains(tr.Applies, i)
			if a.Applies[i] != applies {
				t.Errorf("%s: Applies[%d] = %v, want %v", tr.Name, i, a.Applies[i], applies)
			}
			if !applies {
				if a.Cost[i] != 0 || a.Rows[i] != nil {
					t.Errorf("%s in state %d (not applicable): cost %g, row %v; want 0, nil", tr.Name, i, a.Cost[i], a.Rows[i])
				}
				continue
			}
			if a.Cost[i] != tr.Cost[i] {
				t.Errorf("%s: cost in state %d = %g, want %g", tr.Name, i, a.Cost[i], tr.Cost[i])
			}
			if len(a.Rows[i]) != n {
				t.Fatalf("%s: row %d has %d entries", tr.Name, i, len(a.Rows[i]))
			}
			sum := 0.0
			for j := range n {
				// A row of E_a·P sums at most 5 non-negative products: no
				// cancellation, so relative error is a few eps; 1e-12 is safe.
				w := want.At(i, j)
				if got := a.Rows[i][j]; math.Abs(got-w) > 1e-12*math.Abs(w) {
					t.Errorf("%s: row %d col %d = %.17g, want %.17g", tr.Name, i, j, got, w)
				}
				sum += a.Rows[i][j]
			}
			if math.Abs(sum-1) > 1e-12 {
				t.Errorf("%s: row %d sums to %.15g", tr.Name, i, sum)
			}
		}
	}
}

// Two rows worked by hand from P = FromYearsInState([6, 5, 5, 6]):
// seal in state 2 sends the unit to state 1, which then ages with P's row 1,
// (5/6, 1/6, 0, 0, 0); overlay in state 4 sends it to state 2, which ages
// with (0, 4/5, 1/5, 0, 0). Rebuild skips ageing: (1, 0, 0, 0, 0).
// The patch mixes rows 2-4 of P: 0.2·(0, 0.8, 0.2, 0, 0) +
// 0.5·(0, 0, 0.8, 0.2, 0) + 0.3·(0, 0, 0, 5/6, 1/6) = (0, 0.16, 0.44, 0.35, 0.05).
func TestActionsByHand(t *testing.T) {
	acts, err := treatments.Actions(doNothing(t), catalogue())
	if err != nil {
		t.Fatal(err)
	}
	check := func(name string, got, want []float64) {
		t.Helper()
		for j := range want {
			// 1/6, 0.8 etc. are rounded once or twice: 1e-15 absolute.
			if math.Abs(got[j]-want[j]) > 1e-15 {
				t.Errorf("%s: %v, want %v", name, got, want)
				return
			}
		}
	}
	check("seal from state 2", acts[1].Rows[1], []float64{5.0 / 6, 1.0 / 6, 0, 0, 0})
	check("overlay from state 4", acts[2].Rows[3], []float64{0, 0.8, 0.2, 0, 0})
	check("patch from state 4", acts[3].Rows[3], []float64{0, 0.16, 0.44, 0.35, 0.05})
	check("rebuild from state 5", acts[4].Rows[4], []float64{1, 0, 0, 0, 0})
}

func TestActionsRejectsInvalidTreatment(t *testing.T) {
	cat := catalogue()
	cat[2].Cost[3] = -40000
	acts, err := treatments.Actions(doNothing(t), cat)
	if err == nil {
		t.Fatalf("Actions accepted a negative cost: %v", acts)
	}
	if !strings.Contains(err.Error(), `"patch"`) {
		t.Errorf("error %q does not name the treatment", err)
	}
}

func TestActionsNoTreatments(t *testing.T) {
	p := doNothing(t)
	acts, err := treatments.Actions(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(acts) != 1 || acts[0].Name != treatments.DoNothing {
		t.Fatalf("Actions(p, nil) = %v, want do nothing alone", acts)
	}
}

func TestActionsDoNotShareStorage(t *testing.T) {
	p := doNothing(t)
	cat := catalogue()
	acts, err := treatments.Actions(p, cat)
	if err != nil {
		t.Fatal(err)
	}
	acts[0].Rows[0][0] = -1
	acts[3].Rows[3][1] = -1 // patch, ages: a fresh row
	if p.At(0, 0) != 5.0/6 {
		t.Errorf("do-nothing rows share storage with the transition")
	}
	cat2 := catalogue()
	cat2[2].SkipsAging = true
	acts, err = treatments.Actions(p, cat2)
	if err != nil {
		t.Fatal(err)
	}
	acts[3].Rows[3][1] = -1
	if cat2[2].Effect.Rows[3][1] != 0.2 {
		t.Errorf("a treatment that skips ageing shares its distribution with the action")
	}
}
