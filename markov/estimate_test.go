package markov_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"wearplan/markov"
)

// simulate draws yearly inspections of assets that deteriorate by the
// one-year matrix rows, starting spread evenly over the states above the
// worst (invented synthetic data). Asset a is inspected in 2010, 2011, ...
// for years+1 inspections; Ref is 1000·a + t.
func simulate(r *rand.Rand, rows [][]float64, assets, years int) [][]markov.Inspection {
	n := len(rows)
	out := make([][]markov.Inspection, assets)
	for a := range out {
		s := a % (n - 1)
		h := make([]markov.Inspection, 0, years+1)
		for t := 0; t <= years; t++ {
			if t > 0 {
				s = draw(r, rows[s])
			}
			h = append(h, markov.Inspection{Time: 2010 + float64(t), State: s, Ref: 1000*a + t})
		}
		out[a] = h
	}
	return out
}

func draw(r *rand.Rand, row []float64) int {
	u := r.Float64()
	for j, p := range row {
		if u < p {
			return j
		}
		u -= p
	}
	// Rounding left u a hair above the last positive entry.
	for j := len(row) - 1; j >= 0; j-- {
		if row[j] > 0 {
			return j
		}
	}
	return len(row) - 1
}

func countsOf(t *testing.T, h [][]markov.Inspection, states int, s markov.Structure) *markov.Counts {
	t.Helper()
	sample, _, _, err := markov.Prepare(h, states, s)
	if err != nil {
		t.Fatal(err)
	}
	return sample.Counts()
}

// Counting estimate worked by hand (invented counts of pairs one year
// apart, three states Good, Fair, Poor):
//
//	from Good: 20 pairs: 15 stay, 4 to Fair, 1 to Poor -> 0.75, 0.20, 0.05
//	from Fair: 10 pairs:  7 stay, 3 to Poor            -> 0,    0.70, 0.30
//	from Poor:  5 pairs:  5 stay (absorbing)           -> 0,    0,    1
//
// p_ij = n_ij / n_i (Anderson and Goodman, 1957). Pairs two years apart (4
// from Good to Poor) must not change it: the counting method uses one-year
// pairs only. With OneStep the Good -> Poor pair is not allowed, which is
// an error rather than a silent drop.
func TestCountingMLEByHand(t *testing.T) {
	c := markov.NewCounts(3)
	c.Add(1, 0, 0, 15)
	c.Add(1, 0, 1, 4)
	c.Add(1, 0, 2, 1)
	c.Add(1, 1, 1, 7)
	c.Add(1, 1, 2, 3)
	c.Add(1, 2, 2, 5)
	c.Add(2, 0, 2, 4)
	p, err := markov.CountingMLE(c, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	want := [][]float64{{0.75, 0.20, 0.05}, {0, 0.70, 0.30}, {0, 0, 1}}
	for i := range want {
		for j := range want[i] {
			// One division of small integers: exact to an ulp.
			if math.Abs(p.At(i, j)-want[i][j]) > 1e-15 {
				t.Errorf("P[%d][%d] = %.17g, want %g", i, j, p.At(i, j), want[i][j])
			}
		}
	}
	// Expected years in state 1/(1 - p_ii): 4 and 3.33 years, by hand.
	yis := p.YearsInState()
	if math.Abs(yis[0]-4) > 1e-12 || math.Abs(yis[1]-10.0/3) > 1e-12 || !math.IsInf(yis[2], 1) {
		t.Errorf("years in state %v, want [4 3.333 +Inf]", yis)
	}
	var fe *markov.ForbiddenError
	if _, err := markov.CountingMLE(c, markov.Structure{OneStep: true}); !errors.As(err, &fe) || fe.From != 0 || fe.To != 2 {
		t.Errorf("OneStep with a two-state drop: err %v, want a ForbiddenError from 0 to 2", err)
	}
}

func TestCountingMLENoData(t *testing.T) {
	c := markov.NewCounts(4)
	c.Add(1, 0, 0, 9)
	c.Add(1, 0, 1, 1)
	c.Add(1, 2, 3, 2)
	c.Add(2, 1, 2, 6) // two-year pairs do not inform the counting estimate
	_, err := markov.CountingMLE(c, markov.Structure{})
	var nd *markov.NoDataError
	if !errors.As(err, &nd) || len(nd.Rows) != 1 || nd.Rows[0] != 1 {
		t.Fatalf("err %v, want a NoDataError for row 1", err)
	}
}

// truth is an invented five-state deterioration matrix with moves of one
// and two states a year.
var truth = [][]float64{
	{0.80, 0.15, 0.05, 0, 0},
	{0, 0.75, 0.20, 0.05, 0},
	{0, 0, 0.70, 0.25, 0.05},
	{0, 0, 0, 0.80, 0.20},
	{0, 0, 0, 0, 1},
}

// Recovery: 3,000 synthetic assets inspected yearly for six years, from
// truth. Given the states assets start a year in, the next states are
// independent multinomial draws from the rows of P (the Markov property),
// so the counting estimate p_ij = n_ij/n_i is binomial with standard error
// sqrt(p_ij(1-p_ij)/n_i) (Anderson and Goodman, 1957). Each entry must lie
// within four standard errors of the truth (a two-sided chance of 6e-5 per
// entry under the normal approximation); entries that are zero in the
// truth must be exactly zero.
func TestCountingMLERecoversKnownMatrix(t *testing.T) {
	h := simulate(rand.New(rand.NewPCG(4, 1957)), truth, 3000, 6)
	c := countsOf(t, h, 5, markov.Structure{})
	p, err := markov.CountingMLE(c, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	for i := range truth {
		ni := c.RowTotal(1, i)
		for j, want := range truth[i] {
			got := p.At(i, j)
			if want == 0 || want == 1 {
				if got != want {
					t.Errorf("P[%d][%d] = %g, want exactly %g", i, j, got, want)
				}
				continue
			}
			se := math.Sqrt(want * (1 - want) / ni)
			if math.Abs(got-want) > 4*se {
				t.Errorf("P[%d][%d] = %.4f, truth %.2f, more than 4 standard errors (%.4f, n_i = %g)", i, j, got, want, se, ni)
			}
		}
	}
}

// Rounded keeps rows summing to exactly 1 and zeros at zero, and moves no
// entry by more than one unit of the last decimal (largest remainder
// method; worked by hand: 1/3, 1/3, 1/3 to 2 decimals is 0.34, 0.33, 0.33).
func TestRounded(t *testing.T) {
	p, err := markov.NewTransition([][]float64{
		{1.0 / 3, 1.0 / 3, 1.0 / 3},
		{0, 0.123456789, 0.876543211},
		{0, 0, 1},
	}, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	r := p.Rounded(2)
	want := [][]float64{{0.34, 0.33, 0.33}, {0, 0.12, 0.88}, {0, 0, 1}}
	for i := range want {
		for j := range want[i] {
			if r.At(i, j) != want[i][j] {
				t.Errorf("Rounded(2)[%d][%d] = %g, want %g", i, j, r.At(i, j), want[i][j])
			}
		}
	}
	rng := rand.New(rand.NewPCG(8, 8))
	for range 50 {
		rows := randomUpper(rng, 7)
		p, err := markov.NewTransition(rows, markov.Options{})
		if err != nil {
			t.Fatal(err)
		}
		r := p.Rounded(6)
		for i := range rows {
			sum := 0.0
			for j := range rows[i] {
				v := r.At(i, j)
				sum += v
				if math.Abs(v-rows[i][j]) > 1e-6+1e-15 {
					t.Fatalf("entry moved from %g to %g", rows[i][j], v)
				}
				if rows[i][j] == 0 && v != 0 {
					t.Fatalf("zero became %g", v)
				}
			}
			// Six-decimal numbers summing to 1 in decimal add up in binary
			// to within a few ulps; NewTransition already held them to 1e-9.
			if math.Abs(sum-1) > 1e-12 {
				t.Fatalf("row sums to %.17g", sum)
			}
		}
	}
}
