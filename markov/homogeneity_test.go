package markov_test

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"wearplan/markov"
)

// Two families of a two-state chain (Fair, then Poor absorbing), by hand
// (invented counts): from Fair, family 1 has 80 stay and 20 drop, family 2
// 60 and 40. Pooled: 0.7 and 0.3, so each family expects 70 and 30.
//
//	Pearson X² = 2·(10²/70 + 10²/30) = 9.5238
//	G² = 2 Σ O ln(O/E) = 2(80 ln 80/70 + 20 ln 20/30 + 60 ln 60/70 + 40 ln 40/30) = 9.6629
//
// on (2 families - 1)(2 moves - 1) = 1 degree of freedom. The p-values
// must be gonum's chi-square upper tail of each, and lie between 0.001
// and 0.005: the published 1-degree critical values are 7.879 at 0.005
// and 10.828 at 0.001 (chi-square table, e.g. Abramowitz and Stegun,
// table 26.8; from memory).
func TestHomogeneityByHand(t *testing.T) {
	a, b := markov.NewCounts(2), markov.NewCounts(2)
	a.Add(1, 0, 0, 80)
	a.Add(1, 0, 1, 20)
	b.Add(1, 0, 0, 60)
	b.Add(1, 0, 1, 40)
	fit := func(c *markov.Counts) (*markov.Transition, float64) {
		p, err := markov.CountingMLE(c, markov.Structure{})
		if err != nil {
			t.Fatal(err)
		}
		return p, markov.LogLikelihood(c, p)
	}
	_, la := fit(a)
	_, lb := fit(b)
	pooled, lp := fit(markov.Pooled(a, b))
	h := markov.TestHomogeneity([]*markov.Counts{a, b}, []float64{la, lb}, pooled, lp, markov.Structure{}, true)
	g2 := 2 * (80*math.Log(80.0/70) + 20*math.Log(20.0/30) + 60*math.Log(60.0/70) + 40*math.Log(40.0/30))
	if h.DF != 1 || math.Abs(h.Pearson-9.5238) > 1e-4 || math.Abs(h.LR-g2) > 1e-9 || math.Abs(g2-9.6629) > 1e-4 {
		t.Fatalf("X² %.4f, G² %.4f on %d df; want 9.5238, %.4f on 1", h.Pearson, h.LR, h.DF, g2)
	}
	chi := distuv.ChiSquared{K: 1}
	for _, c := range []struct {
		name    string
		stat, p float64
	}{{"Pearson", h.Pearson, h.PearsonPValue}, {"likelihood ratio", h.LR, h.LRPValue}} {
		if math.Abs(c.p-chi.Survival(c.stat)) > 1e-15 {
			t.Errorf("%s: p %.6g, gonum's upper tail %.6g", c.name, c.p, chi.Survival(c.stat))
		}
		if c.p <= 0.001 || c.p >= 0.005 || c.stat <= 7.879 || c.stat >= 10.828 {
			t.Errorf("%s: statistic %.4f, p %.4g; the table puts it between 7.879 (0.005) and 10.828 (0.001)", c.name, c.stat, c.p)
		}
	}
}

// familyCounts draws yearly pairs of assets deteriorating by rows (synthetic
// data generated in the test from known parameters).
func familyCounts(r *rand.Rand, rows [][]float64, assets, years int) *markov.Counts {
	n := len(rows)
	c := markov.NewCounts(n)
	for a := range assets {
		s := a % (n - 1)
		for range years {
			to := draw(r, rows[s])
			c.Add(1, s, to, 1)
			s = to
		}
	}
	return c
}

func homogeneityOf(t *testing.T, groups ...*markov.Counts) markov.Homogeneity {
	t.Helper()
	var lls []float64
	for _, g := range groups {
		p, err := markov.CountingMLE(g, markov.Structure{})
		if err != nil {
			t.Fatal(err)
		}
		lls = append(lls, markov.LogLikelihood(g, p))
	}
	all := markov.Pooled(groups...)
	p, err := markov.CountingMLE(all, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	return markov.TestHomogeneity(groups, lls, p, markov.LogLikelihood(all, p), markov.Structure{}, true)
}

// uniformKS is the Kolmogorov-Smirnov distance of a sample from the
// uniform distribution on [0, 1]: the largest gap between the sample's
// empirical distribution function and F(x) = x.
func uniformKS(ps []float64) float64 {
	s := slices.Clone(ps)
	slices.Sort(s)
	n := float64(len(s))
	d := 0.0
	for i, p := range s {
		d = math.Max(d, math.Max(float64(i+1)/n-p, p-float64(i)/n))
	}
	return d
}

// Families with the same matrix (synthetic, generated in the test: two
// families of 400 assets inspected yearly for five years) are not told
// apart: over 200 seeds the likelihood-ratio and Anderson-Goodman p-values
// are uniform on [0, 1] as a test's p-values are under its hypothesis,
// checked by the Kolmogorov-Smirnov distance against the 1% critical value
// 1.63/sqrt(200) = 0.115 (Massey, 1951, table of critical values for large
// samples; from memory). Families with different matrices (heavy traffic:
// every staying probability 0.1 lower) are told apart at p < 0.01 in
// every one of 20 seeds at the same size.
func TestHomogeneityCalibration(t *testing.T) {
	heavy := make([][]float64, len(truth))
	for i, row := range truth {
		heavy[i] = slices.Clone(row)
		if i < len(truth)-1 {
			heavy[i][i] -= 0.1
			heavy[i][i+1] += 0.1
		}
	}
	var lr, pearson []float64
	for seed := range uint64(200) {
		r := rand.New(rand.NewPCG(seed, 1957))
		h := homogeneityOf(t, familyCounts(r, truth, 400, 5), familyCounts(r, truth, 400, 5))
		lr = append(lr, h.LRPValue)
		pearson = append(pearson, h.PearsonPValue)
		if seed < 20 {
			d := homogeneityOf(t, familyCounts(r, truth, 400, 5), familyCounts(r, heavy, 400, 5))
			if d.LRPValue >= 0.01 || d.PearsonPValue >= 0.01 {
				t.Errorf("seed %d: different families not told apart: likelihood ratio p %.3g, Anderson-Goodman p %.3g", seed, d.LRPValue, d.PearsonPValue)
			}
		}
	}
	crit := 1.63 / math.Sqrt(200)
	for name, ps := range map[string][]float64{"likelihood ratio": lr, "Anderson-Goodman": pearson} {
		if d := uniformKS(ps); d > crit {
			t.Errorf("%s p-values of identical families: Kolmogorov-Smirnov distance %.3f from uniform, above %.3f", name, d, crit)
		}
	}
}
