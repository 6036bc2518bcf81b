package markov_test

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"wearplan/markov"
)

// histories worked by hand (invented): asset A is seen yearly 2010-2014
// and in 2016, with a reading that improves without work in 2013 and work
// recorded before 2014; asset B twice within three months, then a drop of
// two states in a year; asset C once.
func handHistories() [][]markov.Inspection {
	return [][]markov.Inspection{
		{
			{Time: 2010, State: 0, Ref: 2}, {Time: 2011, State: 0, Ref: 3}, {Time: 2012, State: 1, Ref: 4},
			{Time: 2013, State: 0, Ref: 5}, {Time: 2014, State: 1, Work: true, Ref: 6}, {Time: 2016, State: 2, Ref: 7},
		},
		{{Time: 2010, State: 0, Ref: 8}, {Time: 2010.2, State: 0, Ref: 9}, {Time: 2011.1, State: 2, Ref: 10}},
		{{Time: 2012, State: 1, Ref: 11}},
	}
}

// Each data-preparation step counted, by hand from handHistories: seven
// consecutive pairs (5 of A, 2 of B); A's 2013-2014 pair has work; B's
// first pair is 0.2 years apart; A's 2012-2013 pair improves without work.
// Kept: A 2010-11 (stay), 2011-12 (0 to 1), 2014-16 (1 to 2 in 2 years),
// B 2010.2-2011.1 (0 to 2 in 1 year, rounded from 0.9). Under OneStep the
// last is impossible (two states in one year); with improvement allowed
// the 2012-13 pair is kept.
func TestPrepareCountsEachStep(t *testing.T) {
	cases := []struct {
		name                                         string
		s                                            markov.Structure
		used, improved, impossible, oneYear, twoYear int
	}{
		{"full", markov.Structure{}, 4, 1, 0, 3, 1},
		{"one step", markov.Structure{OneStep: true}, 3, 1, 1, 2, 1},
		{"improvement kept", markov.Structure{Improvement: true}, 5, 1, 0, 4, 1},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			sample, readings, prep, err := markov.Prepare(handHistories(), 3, tc.s)
			if err != nil {
				t.Fatal(err)
			}
			if prep.Assets != 3 || prep.Inspections != 10 || prep.Pairs != 7 || prep.WithWork != 1 || prep.TooClose != 1 {
				t.Errorf("assets %d, inspections %d, pairs %d, with work %d, too close %d; want 3, 10, 7, 1, 1",
					prep.Assets, prep.Inspections, prep.Pairs, prep.WithWork, prep.TooClose)
			}
			if prep.Used != tc.used || prep.Improved != tc.improved || prep.Impossible != tc.impossible || prep.ImprovedKept != tc.s.Improvement {
				t.Errorf("used %d, improved %d, impossible %d, kept %v; want %d, %d, %d, %v",
					prep.Used, prep.Improved, prep.Impossible, prep.ImprovedKept, tc.used, tc.improved, tc.impossible, tc.s.Improvement)
			}
			want := []markov.YearsCount{{Years: 1, Pairs: tc.oneYear}, {Years: 2, Pairs: tc.twoYear}}
			if len(prep.ByYears) != 2 || prep.ByYears[0] != want[0] || prep.ByYears[1] != want[1] {
				t.Errorf("by interval %v, want %v", prep.ByYears, want)
			}
			if len(sample.Pairs()) != tc.used {
				t.Errorf("sample holds %d pairs, want %d", len(sample.Pairs()), tc.used)
			}
			if prep.ImprovedExamples[0] != (markov.RefPair{First: 4, Second: 5}) || prep.TooCloseExamples[0] != (markov.RefPair{First: 8, Second: 9}) {
				t.Errorf("examples %v, %v", prep.ImprovedExamples, prep.TooCloseExamples)
			}
			// Readings stop at the first inspection after work: A has 4
			// (2010-2013), B 3, C 1. B's last is round(1.1) = 1 year on.
			if len(readings) != 8 || readings[6] != (markov.Reading{Years: 1, Start: 0, State: 2, Prev: 0, Gap: 1}) {
				t.Errorf("readings %v", readings)
			}
		})
	}
	// The first pair's group is the calendar year of its first inspection.
	sample, _, _, _ := markov.Prepare(handHistories(), 3, markov.Structure{})
	if g := sample.Pairs()[0].Group; g != 2010 {
		t.Errorf("group %d, want 2010", g)
	}
	bad := [][]markov.Inspection{{{Time: 2012, State: 0}, {Time: 2011, State: 0}}}
	if _, _, _, err := markov.Prepare(bad, 3, markov.Structure{}); err == nil {
		t.Error("history out of time order accepted")
	}
	bad = [][]markov.Inspection{{{Time: 2012, State: 3}}}
	if _, _, _, err := markov.Prepare(bad, 3, markov.Structure{}); err == nil {
		t.Error("state outside the scale accepted")
	}
}

// Observed and predicted mean condition, by hand. P = [[0.5 0.5] [0 1]],
// state values 80 and 20. Readings: asset 1 in state 1, 1, 2 at years 0,
// 1, 2; asset 2 in 1, 2 at years 0, 1; asset 3 in 2 at year 0.
// Year 0: observed (80+80+20)/3 = 60, predicted the same both ways. Year
// 1: both started in state 1 a year before: observed (80+20)/2 = 50, both
// predictions 0.5·80 + 0.5·20 = 50. Year 2: observed 20; from the first
// inspection (state 1, two years): P² row 1 = (0.25, 0.75), 0.25·80 +
// 0.75·20 = 35; from the previous one (state 1, one year): 50.
func TestMeanConditionByHand(t *testing.T) {
	p, err := markov.NewTransition([][]float64{{0.5, 0.5}, {0, 1}}, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	readings := []markov.Reading{
		{Years: 0, Start: 0, State: 0, Prev: 0}, {Years: 1, Start: 0, State: 0, Prev: 0, Gap: 1}, {Years: 2, Start: 0, State: 1, Prev: 0, Gap: 1},
		{Years: 0, Start: 0, State: 0, Prev: 0}, {Years: 1, Start: 0, State: 1, Prev: 0, Gap: 1},
		{Years: 0, Start: 1, State: 1, Prev: 1},
	}
	got, err := markov.MeanCondition(readings, p, []float64{80, 20})
	if err != nil {
		t.Fatal(err)
	}
	want := []markov.ConditionPoint{{0, 3, 60, 60, 60}, {1, 2, 50, 50, 50}, {2, 1, 20, 35, 50}}
	if len(got) != len(want) {
		t.Fatalf("got %v, want %v", got, want)
	}
	for k := range want {
		g, w := got[k], want[k]
		if g.Years != w.Years || g.Readings != w.Readings || math.Abs(g.Observed-w.Observed) > 1e-12 ||
			math.Abs(g.FromFirst-w.FromFirst) > 1e-12 || math.Abs(g.FromPrevious-w.FromPrevious) > 1e-12 {
			t.Errorf("year %d: got %+v, want %+v", w.Years, g, w)
		}
	}
	if _, err := markov.MeanCondition(readings, p, []float64{80}); err == nil {
		t.Error("one value for two states accepted")
	}
}

// With one pair per asset the stay share from a state is a binomial
// proportion, whose standard error is sqrt(p(1-p)/n); the bootstrap over
// assets must reproduce it (Efron and Tibshirani, 1993, ch. 6: the
// bootstrap standard error of a proportion tends to the binomial one).
// The spread of B replicates estimates a standard deviation with relative
// standard error about 1/sqrt(2(B-1)) (normal theory, textbook fact): 3.5%
// for B = 400, so 14% (four of them) is the tolerance.
func TestBootstrapMatchesBinomialStandardError(t *testing.T) {
	r := rand.New(rand.NewPCG(6, 6))
	const assets = 2000
	var h [][]markov.Inspection
	stays := 0
	for a := range assets {
		to := 0
		if r.Float64() >= 0.8 {
			to = 1
		} else {
			stays++
		}
		h = append(h, []markov.Inspection{{Time: 2020, State: 0, Ref: a}, {Time: 2021, State: to, Ref: a}})
	}
	sample, _, _, err := markov.Prepare(h, 2, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	fit := func(c *markov.Counts) (*markov.Transition, error) { return markov.CountingMLE(c, markov.Structure{}) }
	const reps = 400
	b := markov.BootstrapAssets(sample, reps, 42, fit)
	if len(b.Replicates) != reps || b.Failed != 0 {
		t.Fatalf("%d replicates, %d failed", len(b.Replicates), b.Failed)
	}
	mean, sq := 0.0, 0.0
	for _, p := range b.Replicates {
		mean += p.At(0, 0)
	}
	mean /= reps
	for _, p := range b.Replicates {
		d := p.At(0, 0) - mean
		sq += d * d
	}
	sd := math.Sqrt(sq / (reps - 1))
	phat := float64(stays) / assets
	se := math.Sqrt(phat * (1 - phat) / assets)
	if math.Abs(sd/se-1) > 0.14 {
		t.Errorf("bootstrap sd %.5f, binomial standard error %.5f", sd, se)
	}
}

// The same sample and seed give the same replicates whether one or two
// goroutines share the work; another seed gives others.
func TestBootstrapDeterministic(t *testing.T) {
	h := simulate(rand.New(rand.NewPCG(7, 7)), truth, 300, 4)
	sample, _, _, err := markov.Prepare(h, 5, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	fit := func(c *markov.Counts) (*markov.Transition, error) { return markov.CountingMLE(c, markov.Structure{}) }
	prev := runtime.GOMAXPROCS(1)
	one := markov.BootstrapAssets(sample, 50, 1, fit)
	runtime.GOMAXPROCS(max(2, prev))
	two := markov.BootstrapAssets(sample, 50, 1, fit)
	runtime.GOMAXPROCS(prev)
	other := markov.BootstrapAssets(sample, 50, 2, fit)
	differs := false
	for r := range one.Replicates {
		for i := range 5 {
			for j := range 5 {
				if one.Replicates[r].At(i, j) != two.Replicates[r].At(i, j) {
					t.Fatalf("replicate %d differs between 1 and 2 workers", r)
				}
				if one.Replicates[r].At(i, j) != other.Replicates[r].At(i, j) {
					differs = true
				}
			}
		}
	}
	if !differs {
		t.Error("seeds 1 and 2 gave the same replicates")
	}
}

// A state seen in one asset of twenty is missed by a resample with
// probability (19/20)^20 = 0.358: those replicates cannot be fitted and are
// counted. Binomial band of four standard errors around 0.358·200.
func TestBootstrapCountsFailures(t *testing.T) {
	var h [][]markov.Inspection
	for a := range 19 {
		h = append(h, []markov.Inspection{{Time: 2020, State: 0, Ref: a}, {Time: 2021, State: a % 2}})
	}
	h = append(h, []markov.Inspection{{Time: 2020, State: 1}, {Time: 2021, State: 2}})
	sample, _, _, err := markov.Prepare(h, 3, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	fit := func(c *markov.Counts) (*markov.Transition, error) { return markov.CountingMLE(c, markov.Structure{}) }
	b := markov.BootstrapAssets(sample, 200, 9, fit)
	q := math.Pow(19.0/20, 20)
	if b.Failed+len(b.Replicates) != 200 || math.Abs(float64(b.Failed)-200*q) > 4*math.Sqrt(200*q*(1-q)) {
		t.Errorf("%d failed, %d fitted; expected about %.0f failures", b.Failed, len(b.Replicates), 200*q)
	}
	if b.FirstError == nil {
		t.Error("no reason given for the failures")
	}
}

// The claim in MeanCondition's documentation, on synthetic data: 4,000
// assets deteriorate by truth; each year an asset found in state 3 or worse
// at its inspection is treated (back to state 1, work recorded at the next
// inspection) with probability 0.3. Given the previous reading, next
// year's reading is a draw from that row of P whether or not others were
// treated, so the mean predicted from the previous inspection must match
// the observed mean within four standard errors, SE_t = sqrt(Σ Var_i)/n_t
// with Var_i the variance of the state value over row i of P (readings of
// different assets are independent given their previous states). The
// prediction from the first inspection ignores that treated assets left,
// and by year 6 it must fall short by more than four standard errors.
func TestMeanConditionUnderWork(t *testing.T) {
	p, err := markov.NewTransition(truth, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	values := []float64{90, 70, 50, 30, 10}
	r := rand.New(rand.NewPCG(12, 34))
	var h [][]markov.Inspection
	for a := range 4000 {
		s := a % 3
		var hist []markov.Inspection
		work := false
		for y := 0; y <= 8; y++ {
			if y > 0 {
				if s >= 2 && r.Float64() < 0.3 {
					s, work = 0, true
				} else {
					s = draw(r, truth[s])
				}
			}
			hist = append(hist, markov.Inspection{Time: 2015 + float64(y), State: s, Work: work})
			work = false
		}
		h = append(h, hist)
	}
	_, readings, _, err := markov.Prepare(h, 5, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	points, err := markov.MeanCondition(readings, p, values)
	if err != nil {
		t.Fatal(err)
	}
	variance := make([]float64, 5)
	for i := range variance {
		m, m2 := 0.0, 0.0
		for j, v := range values {
			m += truth[i][j] * v
			m2 += truth[i][j] * v * v
		}
		variance[i] = m2 - m*m
	}
	sumVar := map[int]float64{}
	for _, rd := range readings {
		if rd.Years > 0 {
			sumVar[rd.Years] += variance[rd.Prev]
		}
	}
	for _, pt := range points[1:] {
		se := math.Sqrt(sumVar[pt.Years]) / float64(pt.Readings)
		if d := math.Abs(pt.Observed - pt.FromPrevious); d > 4*se {
			t.Errorf("year %d: observed %.2f, predicted from previous %.2f, differ by %.2f > 4·%.2f", pt.Years, pt.Observed, pt.FromPrevious, d, se)
		}
		if pt.Years == 6 && pt.Observed-pt.FromFirst < 4*se {
			t.Errorf("year 6: observed %.2f, from first %.2f: the selection by work should show", pt.Observed, pt.FromFirst)
		}
	}
}
