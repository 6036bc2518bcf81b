package markov_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"wearplan/markov"
)

// optTol bounds how far the optimizer may stop from the exact maximum. It
// stops when the mean log-likelihood per pair changes by less than 1e-13
// over 40 iterations (or its gradient falls below 1e-9). Near the maximum
// the mean log-likelihood falls by about δ²/(2p) when an entry p moves by δ
// (the curvature of Σ p log p, Cover and Thomas, Elements of Information
// Theory, ch. 2, from memory), so δ of 1e-5 would cost ~1e-10, a thousand
// times the stopping threshold: an entry further than 1e-5 from the
// maximum would not have been accepted.
const optTol = 1e-5

// With pairs one year apart only, the likelihood is Σ n_ij log p_ij and its
// maximum is the counting estimate in closed form (Anderson and Goodman,
// 1957): the numerical maximisation must find the same matrix.
func TestIntervalMLEMatchesCountingOnYearlyData(t *testing.T) {
	cases := []struct {
		rows [][]float64
		s    markov.Structure
	}{
		{truth, markov.Structure{}},
		{oneStep, markov.Structure{OneStep: true}},
	}
	for _, tc := range cases {
		s := tc.s
		h := simulate(rand.New(rand.NewPCG(5, 5)), tc.rows, 800, 5)
		c := countsOf(t, h, 5, s)
		want, err := markov.CountingMLE(c, s)
		if err != nil {
			t.Fatal(err)
		}
		got, info, err := markov.IntervalMLE(c, s, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i := range 5 {
			for j := range 5 {
				if math.Abs(got.At(i, j)-want.At(i, j)) > optTol {
					t.Errorf("P[%d][%d] = %.7f, counting estimate %.7f (%s)", i, j, got.At(i, j), want.At(i, j), info.Status)
				}
			}
		}
	}
}

// Exact two-year counts: 10,000 assets spread over the states, each pair
// counted at its expected value N_i·(P²)_ij (fractional counts). The
// expected log-likelihood Σ_ij q_ij log r_ij of each row is largest, over
// all distributions r, only at r = q (Gibbs' inequality), so the maximum is
// a matrix whose square is P². For an upper-triangular stochastic matrix
// with positive diagonal, P² determines P (diagonal: d_i = sqrt((P²)_ii);
// above it, (P²)_ij = p_ij(d_i + d_j) + Σ_{i<k<j} p_ik p_kj solves for
// p_ij one diagonal at a time), so the estimate must be the truth.
func TestIntervalMLERecoversMatrixFromExactTwoYearCounts(t *testing.T) {
	p, err := markov.NewTransition(truth, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	p2, _ := p.Power(2)
	c := markov.NewCounts(5)
	for i := range 5 {
		for j := range 5 {
			if v := 2000 * p2.At(i, j); v > 0 {
				c.Add(2, i, j, v)
			}
		}
	}
	got, info, err := markov.IntervalMLE(c, markov.Structure{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 5 {
		for j := range 5 {
			if math.Abs(got.At(i, j)-truth[i][j]) > optTol {
				t.Errorf("P[%d][%d] = %.7f, truth %.2f (%s after %d iterations)", i, j, got.At(i, j), truth[i][j], info.Status, info.Iterations)
			}
		}
	}
}

// oneStep is an invented five-state chain built from years in state
// [5, 4, 4, 3]: each year an asset stays or drops one state.
var oneStep = [][]float64{
	{0.8, 0.2, 0, 0, 0},
	{0, 0.75, 0.25, 0, 0},
	{0, 0, 0.75, 0.25, 0},
	{0, 0, 0, 2.0 / 3, 1.0 / 3},
	{0, 0, 0, 0, 1},
}

// The same 3,000 synthetic assets seen every year and every second year:
// the estimate from two-year pairs must agree with the counting estimate
// from the yearly pairs. Tolerance: four standard errors of the
// difference. The yearly estimate is binomial, se1 = sqrt(p(1-p)/n1). From
// two-year pairs the share staying, q = p², is binomial too, and p = sqrt(q)
// has standard error se(q)/(2 sqrt(q)) (the delta method); the maximum
// likelihood estimate is asymptotically at least that precise (it is
// efficient, Cramér-Rao), so se2 = sqrt(q(1-q)/n2)/(2p) bounds its error.
// Both use the same assets, which correlates the two estimates positively,
// so sqrt(se1² + se2²) overstates the spread of their difference: the check
// is conservative. Entries off the diagonal are 1 - p_ii (one-step model).
func TestIntervalMLETwoYearlyMatchesYearly(t *testing.T) {
	h := simulate(rand.New(rand.NewPCG(2, 1985)), oneStep, 3000, 8)
	s := markov.Structure{OneStep: true}
	yearly := countsOf(t, h, 5, s)
	p1, err := markov.CountingMLE(yearly, s)
	if err != nil {
		t.Fatal(err)
	}
	every2 := make([][]markov.Inspection, len(h))
	for a, hist := range h {
		for k, in := range hist {
			if k%2 == 0 {
				every2[a] = append(every2[a], in)
			}
		}
	}
	biennial := countsOf(t, every2, 5, s)
	if g := biennial.Gaps(); len(g) != 1 || g[0] != 2 {
		t.Fatalf("thinned data have intervals %v, want [2]", g)
	}
	p2, info, err := markov.IntervalMLE(biennial, s, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 4 {
		p := p1.At(i, i)
		se1 := math.Sqrt(p * (1 - p) / yearly.RowTotal(1, i))
		q := p * p
		se2 := math.Sqrt(q*(1-q)/biennial.RowTotal(2, i)) / (2 * p)
		tol := 4 * math.Hypot(se1, se2)
		if d := math.Abs(p2.At(i, i) - p); d > tol {
			t.Errorf("stay in state %d: two-yearly %.4f, yearly %.4f, differ by %.4f > %.4f (%s)", i+1, p2.At(i, i), p, d, tol, info.Status)
		}
		if math.Abs(p2.At(i, i)+p2.At(i, i+1)-1) > 1e-12 {
			t.Errorf("row %d is not one-step: %v", i, p2.Row(i))
		}
	}
}

// Mixed intervals from the full model: a third of the assets every year,
// a third every two years, a third every three. Every entry within four
// standard errors, with the standard error of each entry bounded as if
// only the yearly third informed it (binomial, as in the counting
// recovery): the other two thirds can only make the estimate more precise.
func TestIntervalMLEMixedIntervals(t *testing.T) {
	h := simulate(rand.New(rand.NewPCG(9, 3)), truth, 3000, 6)
	var yearlyOnly [][]markov.Inspection
	for a := range h {
		step := 1 + a%3
		var kept []markov.Inspection
		for k := 0; k < len(h[a]); k += step {
			kept = append(kept, h[a][k])
		}
		h[a] = kept
		if step == 1 {
			yearlyOnly = append(yearlyOnly, kept)
		}
	}
	c := countsOf(t, h, 5, markov.Structure{})
	if g := c.Gaps(); len(g) != 3 {
		t.Fatalf("intervals %v, want 1, 2 and 3 years", g)
	}
	got, _, err := markov.IntervalMLE(c, markov.Structure{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	y := countsOf(t, yearlyOnly, 5, markov.Structure{})
	for i := range 4 {
		for j := i; j < 5; j++ {
			want := truth[i][j]
			se := math.Sqrt(math.Max(want*(1-want), 0.01*0.99) / y.RowTotal(1, i))
			if math.Abs(got.At(i, j)-want) > 4*se {
				t.Errorf("P[%d][%d] = %.4f, truth %.2f, beyond 4 standard errors (%.4f)", i, j, got.At(i, j), want, se)
			}
		}
	}
}

func TestIntervalMLEErrors(t *testing.T) {
	c := markov.NewCounts(4)
	c.Add(2, 0, 3, 1) // three states in two years
	c.Add(2, 0, 1, 5)
	var fe *markov.ForbiddenError
	if _, _, err := markov.IntervalMLE(c, markov.Structure{OneStep: true}, nil); !errors.As(err, &fe) || fe.Years != 2 || fe.To != 3 {
		t.Errorf("err %v, want a ForbiddenError for 0 -> 3 in 2 years", err)
	}
	// Without OneStep the same pair passes through states 1 and 2, so every
	// row is informed.
	if _, _, err := markov.IntervalMLE(c, markov.Structure{}, nil); err != nil {
		t.Errorf("full model: %v", err)
	}
	d := markov.NewCounts(4)
	d.Add(1, 0, 0, 5)
	d.Add(1, 0, 1, 5)
	var nd *markov.NoDataError
	if _, _, err := markov.IntervalMLE(d, markov.Structure{}, nil); !errors.As(err, &nd) || len(nd.Rows) != 1 || nd.Rows[0] != 2 {
		t.Errorf("err %v, want a NoDataError for row 2 (state 3)", err)
	}
	if _, _, err := markov.IntervalMLE(markov.NewCounts(3), markov.Structure{}, nil); err == nil {
		t.Error("no pairs accepted")
	}
}

// The same counts give the same matrix, bit for bit.
func TestIntervalMLEDeterministic(t *testing.T) {
	h := simulate(rand.New(rand.NewPCG(1, 2)), truth, 300, 4)
	for a := range h {
		if a%2 == 0 {
			h[a] = []markov.Inspection{h[a][0], h[a][2], h[a][4]}
		}
	}
	c := countsOf(t, h, 5, markov.Structure{})
	a, _, err := markov.IntervalMLE(c, markov.Structure{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	b, _, _ := markov.IntervalMLE(c, markov.Structure{}, nil)
	for i := range 5 {
		for j := range 5 {
			if a.At(i, j) != b.At(i, j) {
				t.Fatalf("P[%d][%d] differs between runs: %v, %v", i, j, a.At(i, j), b.At(i, j))
			}
		}
	}
}
