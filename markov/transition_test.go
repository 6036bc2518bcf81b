package markov_test

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"wearplan/markov"
)

// pos is the (Row, Col) of an *EntryError; Col is -1 for a whole-row problem.
type pos struct{ Row, Col int }

// entryErrors splits an errors.Join result into its *EntryError parts, in
// order. It fails the test if any part is not an *EntryError.
func entryErrors(t *testing.T, err error) []pos {
	t.Helper()
	if err == nil {
		return nil
	}
	joined, ok := err.(interface{ Unwrap() []error })
	if !ok {
		t.Fatalf("error %q is not an errors.Join result", err)
	}
	var out []pos
	for _, e := range joined.Unwrap() {
		ee, ok := e.(*markov.EntryError)
		if !ok {
			t.Fatalf("part %q is %T, want *markov.EntryError", e, e)
		}
		out = append(out, pos{ee.Row, ee.Col})
	}
	return out
}

// upper is a valid 4-state do-nothing matrix (invented numbers).
func upper() [][]float64 {
	return [][]float64{
		{0.80, 0.15, 0.05, 0.00},
		{0.00, 0.70, 0.25, 0.05},
		{0.00, 0.00, 0.90, 0.10},
		{0.00, 0.00, 0.00, 1.00},
	}
}

// with returns a copy of upper() with row i replaced.
func with(i int, row []float64) [][]float64 {
	m := upper()
	m[i] = row
	return m
}

func TestNewTransitionValidation(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name string
		rows [][]float64
		opt  markov.Options
		want []pos // nil: valid
	}{
		{name: "valid upper triangular", rows: upper()},
		{name: "identity is valid (nothing ever moves)", rows: [][]float64{{1, 0}, {0, 1}}},
		{name: "row sums to 0.9", rows: with(1, []float64{0, 0.6, 0.25, 0.05}), want: []pos{{1, -1}}},
		{name: "row sums to 1.1", rows: with(0, []float64{0.8, 0.2, 0.1, 0}), want: []pos{{0, -1}}},
		// RowSumTolerance is 1e-9: a sum 5e-10 off is rounding, 2e-9 off is an input error.
		{name: "row sum off by 5e-10 accepted", rows: with(2, []float64{0, 0, 0.9, 0.1 + 5e-10})},
		{name: "row sum off by 2e-9 rejected", rows: with(2, []float64{0, 0, 0.9, 0.1 + 2e-9}), want: []pos{{2, -1}}},
		// -0.1 and 1.1 still sum to 1, so only the two entries are reported.
		{name: "negative and above-1 entries", rows: with(1, []float64{0, -0.1, 1.1, 0}), want: []pos{{1, 1}, {1, 2}}},
		// NaN poisons the sum; the entry alone is reported.
		{name: "NaN entry", rows: with(2, []float64{0, 0, nan, 0.1}), want: []pos{{2, 2}}},
		{name: "+Inf entry also breaks the sum", rows: with(0, []float64{0.8, math.Inf(1), 0, 0}), want: []pos{{0, 1}, {0, -1}}},
		// Improvement without work is an input error unless the class allows it
		// (docs/model.md, Deterioration: infrastructure does not mend itself).
		{name: "improvement below the diagonal", rows: with(2, []float64{0, 0.05, 0.85, 0.10}), want: []pos{{2, 1}}},
		{name: "improvement in the worst row", rows: with(3, []float64{0.1, 0, 0, 0.9}), want: []pos{{3, 0}}},
		{name: "improvement allowed", rows: with(2, []float64{0, 0.05, 0.85, 0.10}), opt: markov.Options{AllowImprovement: true}},
		{name: "AllowImprovement does not allow negatives", rows: with(2, []float64{0, -0.05, 0.95, 0.10}), opt: markov.Options{AllowImprovement: true}, want: []pos{{2, 1}}},
		{name: "zero below the diagonal is fine", rows: with(3, []float64{0, 0, 0, 1})},
		{name: "short row", rows: with(1, []float64{0.7, 0.3}), want: []pos{{1, -1}}},
		{name: "long row", rows: with(3, []float64{0, 0, 0, 1, 0}), want: []pos{{3, -1}}},
		{name: "nil row", rows: with(0, nil), want: []pos{{0, -1}}},
		{
			name: "every problem at once",
			rows: [][]float64{
				{0.8, 0.1},           // row 0: wrong length
				{0.2, 0.5, 0.2, 0.0}, // row 1: improvement at col 0, sums to 0.9
				{0.0, 0.0, nan, 1.5}, // row 2: NaN at col 2, 1.5 at col 3
				{0.0, 0.0, 0.0, 1.0}, // fine
			},
			want: []pos{{0, -1}, {1, 0}, {1, -1}, {2, 2}, {2, 3}},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p, err := markov.NewTransition(tc.rows, tc.opt)
			if tc.want == nil {
				if err != nil {
					t.Fatalf("unexpected error: %v", err)
				}
				if p.States() != len(tc.rows) {
					t.Fatalf("States() = %d, want %d", p.States(), len(tc.rows))
				}
				for i, row := range tc.rows {
					if got := p.Row(i); !slices.Equal(got, row) {
						t.Errorf("Row(%d) = %v, want %v", i, got, row)
					}
				}
				return
			}
			if p != nil {
				t.Errorf("got a transition alongside an error")
			}
			if got := entryErrors(t, err); !slices.Equal(got, tc.want) {
				t.Errorf("errors at %v, want %v\n%v", got, tc.want, err)
			}
			var ee *markov.EntryError
			if !errors.As(err, &ee) {
				t.Errorf("errors.As did not find an *EntryError in %v", err)
			}
		})
	}
}

func TestNewTransitionTooSmall(t *testing.T) {
	for _, rows := range [][][]float64{nil, {}, {{1}}} {
		p, err := markov.NewTransition(rows, markov.Options{})
		if err == nil || p != nil {
			t.Errorf("NewTransition(%v) = %v, %v; want an error", rows, p, err)
		}
	}
}

func TestEntryErrorMessage(t *testing.T) {
	// Messages count rows and columns from 1, as a person reading the input does.
	cell := (&markov.EntryError{Row: 0, Col: 2, Reason: "bad"}).Error()
	if cell != "row 1, column 3: bad" {
		t.Errorf("cell message %q", cell)
	}
	row := (&markov.EntryError{Row: 4, Col: -1, Reason: "bad"}).Error()
	if row != "row 5: bad" {
		t.Errorf("row message %q", row)
	}
	_, err := markov.NewTransition(with(2, []float64{0, 0.05, 0.85, 0.10}), markov.Options{})
	if err == nil || !strings.Contains(err.Error(), "row 3, column 2") || !strings.Contains(err.Error(), "allow improvement") {
		t.Errorf("improvement message %q should point at row 3, column 2 and say how to fix it", err)
	}
}

func TestTransitionIsImmutable(t *testing.T) {
	rows := upper()
	p, err := markov.NewTransition(rows, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	rows[0][0] = 0.5 // the caller's slice
	if p.At(0, 0) != 0.80 {
		t.Errorf("changing the input changed the transition: At(0,0) = %g", p.At(0, 0))
	}
	p.Row(1)[1] = 0
	p.Rows()[2][2] = 0
	m := p.Matrix()
	m.Set(3, 3, 0)
	if p.At(1, 1) != 0.70 || p.At(2, 2) != 0.90 || p.At(3, 3) != 1 {
		t.Errorf("Row, Rows or Matrix returned shared storage: %v", p.Rows())
	}
	if got := p.Rows(); !slices.EqualFunc(got, upper(), slices.Equal) {
		t.Errorf("Rows() = %v, want %v", got, upper())
	}
}

func TestFromYearsInState(t *testing.T) {
	// Invented years in state. The expected entries are worked by hand:
	// d=4 -> stay 3/4, d=2.5 -> stay 0.6, d=1 -> stay 0, d=8 -> stay 7/8.
	years := []float64{4, 2.5, 1, 8}
	want := [][]float64{
		{0.75, 0.25, 0, 0, 0},
		{0, 0.6, 0.4, 0, 0},
		{0, 0, 0, 1, 0},
		{0, 0, 0, 0.875, 0.125},
		{0, 0, 0, 0, 1}, // worst state absorbing
	}
	p, err := markov.FromYearsInState(years)
	if err != nil {
		t.Fatal(err)
	}
	if p.States() != 5 {
		t.Fatalf("States() = %d, want 5", p.States())
	}
	// 1 - 1/d and 1/d are each rounded once: within 2 ulp of 1.
	const tol = 4.5e-16
	for i := range want {
		for j := range want[i] {
			if got := p.At(i, j); math.Abs(got-want[i][j]) > tol {
				t.Errorf("P[%d][%d] = %.17g, want %g", i, j, got, want[i][j])
			}
		}
	}
}

func TestFromYearsInStateFormula(t *testing.T) {
	// p_ii = 1 - 1/d_i, p_i,i+1 = 1/d_i for arbitrary d_i >= 1, and the mean
	// sojourn 1/(1 - p_ii) gives back d_i (geometric sojourn, textbook fact).
	years := []float64{1, 1.5, 3.7, 12, 40, 1e6}
	p, err := markov.FromYearsInState(years)
	if err != nil {
		t.Fatal(err)
	}
	for i, d := range years {
		if got, want := p.At(i, i+1), 1/d; math.Abs(got-want) > 1e-15 {
			t.Errorf("P[%d][%d] = %g, want %g", i, i+1, got, want)
		}
		// 1/(1-p_ii) amplifies the rounding of p_ii by d: relative 1e-9 covers d = 1e6.
		if back := 1 / (1 - p.At(i, i)); math.Abs(back-d) > 1e-9*d {
			t.Errorf("state %d: 1/(1-p_ii) = %g, want %g", i, back, d)
		}
		for j := range p.States() {
			if j != i && j != i+1 && p.At(i, j) != 0 {
				t.Errorf("P[%d][%d] = %g, want 0", i, j, p.At(i, j))
			}
		}
	}
	last := p.States() - 1
	if p.At(last, last) != 1 {
		t.Errorf("worst state not absorbing: %v", p.Row(last))
	}
}

func TestFromYearsInStateRejects(t *testing.T) {
	tests := []struct {
		name  string
		years []float64
		want  []pos
	}{
		{"below 1", []float64{5, 0.5, 4}, []pos{{1, -1}}},
		{"zero", []float64{0, 5}, []pos{{0, -1}}},
		{"negative", []float64{5, 5, -3}, []pos{{2, -1}}},
		{"NaN", []float64{math.NaN(), 5}, []pos{{0, -1}}},
		{"+Inf", []float64{5, math.Inf(1)}, []pos{{1, -1}}},
		{"-Inf", []float64{math.Inf(-1)}, []pos{{0, -1}}},
		{"all reported", []float64{0.9, 6, math.NaN(), math.Inf(1), 2}, []pos{{0, -1}, {2, -1}, {3, -1}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p, err := markov.FromYearsInState(tc.years)
			if err == nil || p != nil {
				t.Fatalf("FromYearsInState(%v) accepted", tc.years)
			}
			if got := entryErrors(t, err); !slices.Equal(got, tc.want) {
				t.Errorf("errors at %v, want %v\n%v", got, tc.want, err)
			}
		})
	}
	if p, err := markov.FromYearsInState(nil); err == nil || p != nil {
		t.Errorf("FromYearsInState(nil) accepted")
	}
}
