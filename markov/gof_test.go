package markov_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"wearplan/markov"
)

// Mendel's dihybrid cross, the classic worked example of Pearson's
// statistic in genetics and statistics textbooks (numbers from memory):
// 315 round yellow, 108 round green, 101 wrinkled yellow, 32 wrinkled green
// against 9:3:3:1 of 556, i.e. expected 312.75, 104.25, 104.25, 34.75.
// By hand: 2.25²/312.75 + 3.75²/104.25 + 3.25²/104.25 + 2.75²/34.75
// = 0.016187 + 0.134892 + 0.101319 + 0.217626 = 0.470024, 3 degrees of
// freedom (4 cells, total fixed, nothing estimated), p ≈ 0.925 as the
// textbooks print it. The p-value is also checked against the closed form
// of the chi-square upper tail for 3 degrees of freedom,
// Q(x) = erfc(sqrt(x/2)) + sqrt(2x/π)·e^(-x/2) (Abramowitz and Stegun,
// 26.4.5, from memory), computed with the standard library only.
func TestPearsonChiSquareMendel(t *testing.T) {
	row := markov.ChiSquareRow{
		Observed: []float64{315, 108, 101, 32},
		Expected: []float64{312.75, 104.25, 104.25, 34.75},
	}
	got := markov.PearsonChiSquare([]markov.ChiSquareRow{row}, 0)
	want := 2.25*2.25/312.75 + 3.75*3.75/104.25 + 3.25*3.25/104.25 + 2.75*2.75/34.75
	if math.Abs(got.Statistic-want) > 1e-12 || math.Abs(got.Statistic-0.470024) > 5e-7 {
		t.Errorf("statistic %.9f, want %.9f (0.470024 by hand)", got.Statistic, want)
	}
	if got.DF != 3 || got.Cells != 4 || got.Rows != 1 || got.Pairs != 556 {
		t.Errorf("df %d, cells %d, rows %d, pairs %g; want 3, 4, 1, 556", got.DF, got.Cells, got.Rows, got.Pairs)
	}
	x := got.Statistic
	closed := math.Erfc(math.Sqrt(x/2)) + math.Sqrt(2*x/math.Pi)*math.Exp(-x/2)
	// Two routes to the same special function in double precision.
	if math.Abs(got.PValue-closed) > 1e-12 {
		t.Errorf("p-value %.15f, closed form %.15f", got.PValue, closed)
	}
	// The printed 0.925 is rounded to three decimals.
	if math.Abs(got.PValue-0.925) > 0.0005 {
		t.Errorf("p-value %.4f, textbooks print 0.925", got.PValue)
	}
}

// Critical values of the chi-square distribution as printed in standard
// tables (upper 5% and 1% points; from memory). The printed values are
// rounded to three decimals, so the quantile must be within half a unit of
// the last decimal.
func TestChiSquareCriticalValues(t *testing.T) {
	cases := []struct {
		df    int
		alpha float64
		crit  float64
	}{
		{1, 0.05, 3.841},
		{2, 0.05, 5.991},
		{5, 0.05, 11.070},
		{10, 0.05, 18.307},
		{1, 0.01, 6.635},
		{5, 0.01, 15.086},
	}
	for _, c := range cases {
		q := distuv.ChiSquared{K: float64(c.df)}.Quantile(1 - c.alpha)
		if math.Abs(q-c.crit) > 0.0005 {
			t.Errorf("%d df, upper %g point: %.4f, table %.3f", c.df, c.alpha, q, c.crit)
		}
		// A table with one row exactly at the critical value: the statistic
		// is (O-E)²/E summed, and the p-value our function reports must be
		// alpha. One row of two cells with E = (50, 50) and O = (50+d, 50-d)
		// gives X² = d²/25, 1 df; use it for the 1-df cases.
		if c.df == 1 {
			d := 5 * math.Sqrt(c.crit)
			r := markov.PearsonChiSquare([]markov.ChiSquareRow{{Observed: []float64{50 + d, 50 - d}, Expected: []float64{50, 50}}}, 0)
			// The p-value at the rounded critical value differs from alpha
			// by at most density × 0.0005 (< 1e-4 for these tails).
			if math.Abs(r.PValue-c.alpha) > 1e-4 {
				t.Errorf("p-value at %.3f with 1 df: %.5f, want %g", c.crit, r.PValue, c.alpha)
			}
		}
	}
}

// Anderson and Goodman's test that the chain is the same in every year,
// on a table small enough to work by hand (invented counts, two states,
// Poor absorbing):
//
//	first inspected 2020, from Good: 30 stay, 10 to Poor
//	first inspected 2021, from Good: 50 stay, 10 to Poor
//	from Poor (each year 5 and 7 pairs): all stay
//
// Pooled estimate p_GG = 80/100 = 0.8. Expected counts: 2020 (32, 8), 2021
// (48, 12). X² = 4/32 + 4/8 + 4/48 + 4/12 = 1.041667. It is Pearson's
// statistic of the 2x2 table, whose shortcut formula gives the same:
// N(ad - bc)²/((a+b)(c+d)(a+c)(b+d)) = 100·(300 - 500)²/(40·60·80·20)
// = 1.041667 (textbook formula for 2x2 tables, from memory). Degrees of
// freedom: two rows of two cells (1 each); the Poor rows have a single
// possible cell and test nothing; one parameter (p_GG) estimated: 2 - 1 = 1.
// With 1 df the statistic is a squared standard normal, so the p-value is
// erfc(sqrt(x/2)) = 0.3074 (standard library).
func TestTransitionChiSquareByHand(t *testing.T) {
	var pairs []markov.Pair
	add := func(n, group, from, to int) {
		for range n {
			pairs = append(pairs, markov.Pair{From: from, To: to, Years: 1, Group: group})
		}
	}
	add(30, 2020, 0, 0)
	add(10, 2020, 0, 1)
	add(50, 2021, 0, 0)
	add(10, 2021, 0, 1)
	add(5, 2020, 1, 1)
	add(7, 2021, 1, 1)
	c := markov.NewCounts(2)
	for _, p := range pairs {
		c.Add(p.Years, p.From, p.To, 1)
	}
	p, err := markov.CountingMLE(c, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	if p.At(0, 0) != 0.8 {
		t.Fatalf("pooled p_GG = %g, want 0.8", p.At(0, 0))
	}
	got := markov.TransitionChiSquare(pairs, p, true)
	want := 100 * 200.0 * 200 / (40 * 60 * 80 * 20)
	if math.Abs(got.Statistic-want) > 1e-12 {
		t.Errorf("statistic %.12f, want %.12f", got.Statistic, want)
	}
	if got.DF != 1 {
		t.Errorf("df %d, want 1", got.DF)
	}
	if pv := math.Erfc(math.Sqrt(want / 2)); math.Abs(got.PValue-pv) > 1e-12 || math.Abs(got.PValue-0.3074) > 5e-5 {
		t.Errorf("p-value %.6f, want %.6f", got.PValue, pv)
	}
	if got.Rows != 2 || got.Cells != 4 || got.Pairs != 112 || got.Pooled {
		t.Errorf("rows %d, cells %d, pairs %g, pooled %v; want 2, 4, 112, false", got.Rows, got.Cells, got.Pairs, got.Pooled)
	}
}

// Pooling to the rule of five, worked by hand. One family, pairs one year
// from Good under a given matrix with Good's row (0.8, 0.15, 0.05):
//
//	2020: 30 Good, 8 Fair, 2 Poor  (40 pairs)
//	2021: 50 Good, 8 Fair, 2 Poor  (60 pairs)
//	2022: 16 Good, 3 Fair, 1 Poor  (20 pairs)
//
// End states, sized for half the family's 120 pairs: 60·0.8 = 48 and
// 60·0.15 = 9 stand alone, 60·0.05 = 3 is short and joins Fair: cells (Good) and
// (Fair or Poor) with probabilities 0.8 and 0.2. Years: the smallest cell
// needs 5/0.2 = 25 pairs; 2020 (40) and 2021 (60) stand, 2022 (20) joins
// 2021. Rows: 2020 O = (30, 10), E = (32, 8); 2021-22 O = (66, 14),
// E = (64, 16). X² = 4/32 + 4/8 + 4/64 + 4/16 = 0.9375 with 2 rows of 2
// cells: 2 degrees of freedom for a matrix given in advance, whose p-value
// is e^(-x/2) = 0.6258 (chi-square with 2 df is exponential with mean 2,
// textbook fact). Fitted to the same pairs, Good's row has three positive
// entries (2 parameters) but the pooled table sees only one (2 cells - 1):
// 2 - 1 = 1 degree of freedom.
func TestTransitionChiSquarePooling(t *testing.T) {
	p, err := markov.NewTransition([][]float64{{0.8, 0.15, 0.05}, {0, 0.7, 0.3}, {0, 0, 1}}, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var pairs []markov.Pair
	for _, r := range []struct{ group, good, fair, poor int }{{2020, 30, 8, 2}, {2021, 50, 8, 2}, {2022, 16, 3, 1}} {
		for to, k := range []int{r.good, r.fair, r.poor} {
			for range k {
				pairs = append(pairs, markov.Pair{From: 0, To: to, Years: 1, Group: r.group})
			}
		}
	}
	got := markov.TransitionChiSquare(pairs, p, false)
	if math.Abs(got.Statistic-0.9375) > 1e-12 || got.DF != 2 || got.Rows != 2 || got.Cells != 4 || !got.Pooled {
		t.Errorf("got %+v; want X² 0.9375, 2 df, 2 rows, 4 cells, pooled", got)
	}
	if math.Abs(got.PValue-math.Exp(-0.9375/2)) > 1e-12 {
		t.Errorf("p-value %.6f, want e^(-x/2) = %.6f", got.PValue, math.Exp(-0.9375/2))
	}
	if fitted := markov.TransitionChiSquare(pairs, p, true); fitted.DF != 1 {
		t.Errorf("fitted: %d df, want 1", fitted.DF)
	}
}

// Under the model the statistic follows the chi-square distribution, so
// over many synthetic data sets drawn from a known matrix and fitted, the
// share of p-values below 0.05 must be near 5% (and below 0.5 near 50%).
// With S data sets each share is binomial with standard error
// sqrt(a(1-a)/S); the band is four of them. The chi-square approximation
// is asymptotic and the estimates come from the unpooled pairs (Chernoff
// and Lehmann, 1954), so this needs enough pairs per cell: 400 assets for
// the counting estimate, 1,200 assets seen every one, two or three years
// for the interval estimate. The band is wide: it catches a statistic that
// ignores the estimated parameters or subtracts two too many (both tried),
// not an error of one degree of freedom; the hand-worked tables above
// check the count itself.
func TestTransitionChiSquareCalibrated(t *testing.T) {
	cases := []struct {
		name   string
		assets int
		sets   int
		mixed  bool
	}{
		{"counting, 400 assets", 400, 300, false},
		{"interval, 1200 assets", 1200, 100, true},
	}
	for _, tc := range cases {
		r := rand.New(rand.NewPCG(1957, 1))
		below05, below50 := 0, 0
		for range tc.sets {
			h := simulate(r, truth, tc.assets, 6)
			var p *markov.Transition
			var pairs []markov.Pair
			if tc.mixed {
				for a := range h {
					step := 1 + a%3
					var kept []markov.Inspection
					for k := 0; k < len(h[a]); k += step {
						kept = append(kept, h[a][k])
					}
					h[a] = kept
				}
			}
			sample, _, _, err := markov.Prepare(h, 5, markov.Structure{})
			if err != nil {
				t.Fatal(err)
			}
			pairs = sample.Pairs()
			if tc.mixed {
				p, _, err = markov.IntervalMLE(sample.Counts(), markov.Structure{}, nil)
				p = p.Rounded(6)
			} else {
				p, err = markov.CountingMLE(sample.Counts(), markov.Structure{})
			}
			if err != nil {
				t.Fatal(err)
			}
			x := markov.TransitionChiSquare(pairs, p, true)
			if x.DF < 1 {
				t.Fatalf("%s: no degrees of freedom: %+v", tc.name, x)
			}
			if x.PValue < 0.05 {
				below05++
			}
			if x.PValue < 0.5 {
				below50++
			}
		}
		s := float64(tc.sets)
		for _, c := range []struct {
			alpha float64
			count int
		}{{0.05, below05}, {0.5, below50}} {
			share := float64(c.count) / s
			band := 4 * math.Sqrt(c.alpha*(1-c.alpha)/s)
			if math.Abs(share-c.alpha) > band {
				t.Errorf("%s: %.1f%% of p-values below %g, want %g%% ± %.1f", tc.name, 100*share, c.alpha, 100*c.alpha, 100*band)
			}
		}
	}
}
