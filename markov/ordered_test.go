package markov_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"testing"

	"wearplan/markov"
)

// orderedTruth is an ordered logit model of the yearly drop on five
// states (invented parameters): thresholds per starting state and
// coefficients of two covariates, traffic (thousands of vehicles a day)
// and age (years).
var (
	orderedBeta       = []float64{0.15, 0.04}
	orderedThresholds = [][]float64{{2.2, 4.0}, {1.9, 3.8}, {1.6, 3.5}, {1.4}}
)

// drawDrop draws the yearly drop from state i at η by the ordered logit.
func drawDrop(r *rand.Rand, i int, eta float64) int {
	u := r.Float64()
	for k, mu := range orderedThresholds[i] {
		if u < 1/(1+math.Exp(-(mu-eta))) {
			return k
		}
	}
	return len(orderedThresholds[i])
}

// orderedPairs generates pairs from the ordered logit (synthetic data
// generated in the test from known parameters): assets with traffic
// drawn around 6 and age around 20 (centred there, so that η stays near
// 0), inspected every year, or with every, every that many years.
func orderedPairs(r *rand.Rand, assets, years, every int) []markov.Pair {
	var out []markov.Pair
	for a := range assets {
		s := a % 4
		traffic := 6 + 3*r.NormFloat64()
		age := 20 + 8*r.NormFloat64()
		for t := 0; t < years; t += every {
			x := []float64{traffic, age + float64(t)}
			eta := orderedBeta[0]*(x[0]-6) + orderedBeta[1]*(x[1]-20)
			from := s
			for range every {
				if s < 4 {
					s = min(4, s+drawDrop(r, s, eta))
				}
			}
			out = append(out, markov.Pair{From: from, To: s, Years: every, X: x})
		}
	}
	return out
}

// Coefficients recovered within 3 standard errors in at least 95% of 200
// seeds (synthetic histories generated in the test from known
// parameters; 400 assets, five yearly inspections each). Three standard
// errors hold a normal estimate with probability 0.9973, so at most a
// handful of the 400 checks should miss; and within one standard error in
// roughly 68% of them (55-80% allowed), so that the standard errors are
// not inflated either.
//
// The seeds run on every core at once; each fit is deterministic.
func TestOrderedRecoversCoefficients(t *testing.T) {
	const seeds = 200
	zs := make([][]float64, seeds)
	errs := make([]error, seeds)
	var wg sync.WaitGroup
	next := make(chan uint64, seeds)
	for seed := range uint64(seeds) {
		next <- seed
	}
	close(next)
	for range runtime.GOMAXPROCS(0) {
		wg.Go(func() {
			for seed := range next {
				r := rand.New(rand.NewPCG(seed, 1995))
				m, err := markov.OrderedMLE(orderedPairs(r, 400, 5, 1), 5, []string{"traffic", "age"}, markov.Logit, markov.Structure{})
				if err != nil {
					errs[seed] = err
					continue
				}
				for c, want := range orderedBeta {
					zs[seed] = append(zs[seed], math.Abs(m.Coef[c]-want)/m.CoefSE[c])
				}
			}
		})
	}
	wg.Wait()
	within3, within1, total := 0, 0, 0
	for seed := range seeds {
		if errs[seed] != nil {
			t.Fatalf("seed %d: %v", seed, errs[seed])
		}
		for _, z := range zs[seed] {
			total++
			if z <= 3 {
				within3++
			}
			if z <= 1 {
				within1++
			}
		}
	}
	if float64(within3) < 0.95*float64(total) {
		t.Errorf("coefficients within 3 standard errors in %d of %d estimates, want 95%%", within3, total)
	}
	if f := float64(within1) / float64(total); f < 0.55 || f > 0.80 {
		t.Errorf("coefficients within 1 standard error in %.0f%% of estimates, want about 68%%", 100*f)
	}
}

// Pairs two years apart enter through (P(x)²)_ij; the coefficients are
// still recovered (one seed, 3 standard errors), and the gradient matches
// finite differences, which TestOrderedGradient checks directly.
func TestOrderedTwoYearPairs(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 1995))
	m, err := markov.OrderedMLE(orderedPairs(r, 1500, 8, 2), 5, []string{"traffic", "age"}, markov.Logit, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	for c, want := range orderedBeta {
		if z := math.Abs(m.Coef[c]-want) / m.CoefSE[c]; z > 3 {
			t.Errorf("%s: %.4f ± %.4f, truth %.2f", m.Names[c], m.Coef[c], m.CoefSE[c], want)
		}
	}
	if m.LRPValue > 1e-6 {
		t.Errorf("likelihood ratio %.2f, p %.3g: covariates with an effect not detected", m.LR, m.LRPValue)
	}
}

// Without covariates the ordered model is the unrestricted matrix over the
// drops seen, so on one-year pairs its maximum is the counting estimate
// p_ij = n_ij/n_i (Anderson and Goodman, 1957).
func TestOrderedWithoutCovariatesIsCounting(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 3))
	pairs := orderedPairs(r, 800, 5, 1)
	c := markov.NewCounts(5)
	for k := range pairs {
		c.Add(1, pairs[k].From, pairs[k].To, 1)
		pairs[k].X = nil
	}
	want, err := markov.CountingMLE(c, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	m, err := markov.OrderedMLE(pairs, 5, nil, markov.Logit, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	got, err := m.Matrix(nil)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 5 {
		for j := range 5 {
			if math.Abs(got.At(i, j)-want.At(i, j)) > 1e-6 {
				t.Errorf("P[%d][%d] = %.7f, counting %.7f", i, j, got.At(i, j), want.At(i, j))
			}
		}
	}
	if math.Abs(m.LogLikelihood-markov.LogLikelihood(c, want)) > 1e-6 {
		t.Errorf("log-likelihood %.8f, counting %.8f", m.LogLikelihood, markov.LogLikelihood(c, want))
	}
}

func TestOrderedErrors(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 5))
	pairs := orderedPairs(r, 300, 4, 1)
	collinear := make([]markov.Pair, len(pairs))
	constant := make([]markov.Pair, len(pairs))
	for k, p := range pairs {
		collinear[k], constant[k] = p, p
		collinear[k].X = []float64{p.X[0], p.X[1], 2*p.X[0] - p.X[1]}
		constant[k].X = []float64{p.X[0], 7}
	}
	var ce *markov.CollinearError
	if _, err := markov.OrderedMLE(collinear, 5, []string{"traffic", "age", "load"}, markov.Logit, markov.Structure{}); !errors.As(err, &ce) || ce.Constant || len(ce.Names) != 3 {
		t.Errorf("collinear covariates: %v", err)
	}
	if _, err := markov.OrderedMLE(constant, 5, []string{"traffic", "lanes"}, markov.Logit, markov.Structure{}); !errors.As(err, &ce) || !ce.Constant || ce.Names[0] != "lanes" || ce.Value != 7 {
		t.Errorf("constant covariate: %v", err)
	}
	var nd *markov.NoDataError
	few := []markov.Pair{{From: 0, To: 0, Years: 1, X: []float64{1}}, {From: 0, To: 1, Years: 1, X: []float64{2}}}
	if _, err := markov.OrderedMLE(few, 4, []string{"traffic"}, markov.Logit, markov.Structure{}); !errors.As(err, &nd) || len(nd.Rows) != 2 {
		t.Errorf("states without pairs: %v", err)
	}
}

// The exact gradient against central differences (error O(h²) plus
// rounding O(eps·L/h); L is a sum over a few thousand pairs of order 1e3,
// so 1e-5 relative to the largest component is safe), for one-, two- and
// three-year pairs, both links.
func TestOrderedGradient(t *testing.T) {
	for _, link := range []markov.Link{markov.Logit, markov.Probit} {
		for _, every := range []int{1, 2, 3} {
			r := rand.New(rand.NewPCG(uint64(every), 9))
			exact, numeric, err := markov.OrderedGradientCheck(orderedPairs(r, 200, 6, every), 5, []string{"traffic", "age"}, link, nil)
			if err != nil {
				t.Fatal(err)
			}
			scale := 0.0
			for _, v := range numeric {
				scale = math.Max(scale, math.Abs(v))
			}
			for k := range exact {
				if math.Abs(exact[k]-numeric[k]) > 1e-5*scale {
					t.Errorf("%s, every %d years: gradient[%d] = %.8g, finite differences %.8g", link, every, k, exact[k], numeric[k])
				}
			}
		}
	}
}

// The closed-form Hessian (one-year pairs) against central differences of
// the exact gradient, both links: agreement within 1e-5 of the largest
// entry (central differences err by O(h²) plus rounding).
func TestOrderedHessian(t *testing.T) {
	for _, link := range []markov.Link{markov.Logit, markov.Probit} {
		r := rand.New(rand.NewPCG(4, 4))
		exact, numeric, err := markov.OrderedHessianCheck(orderedPairs(r, 300, 5, 1), 5, []string{"traffic", "age"}, link, nil)
		if err != nil {
			t.Fatal(err)
		}
		scale := 0.0
		for _, row := range numeric {
			for _, v := range row {
				scale = math.Max(scale, math.Abs(v))
			}
		}
		for a := range exact {
			for b := range exact[a] {
				if math.Abs(exact[a][b]-numeric[a][b]) > 1e-5*scale {
					t.Errorf("%s: H[%d][%d] = %.8g, finite differences %.8g", link, a, b, exact[a][b], numeric[a][b])
				}
			}
		}
	}
}
