package markov_test

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"wearplan/markov"
)

// Posterior moments of a Dirichlet(α_1..α_m) row with A = Σα: mean
// m_j = α_j/A and variance m_j(1 - m_j)/(A + 1) (moments of the Dirichlet
// distribution, textbook fact from memory). With counts c_j and a symmetric
// prior α, α_j = c_j + α on the allowed entries. The sample moments of many
// draws are checked to nSE standard errors.
func TestDirichletRowsMoments(t *testing.T) {
	tests := []struct {
		name    string
		counts  [][]float64
		prior   float64
		allowed [][]bool
	}{
		{"Jeffreys, no improvement", [][]float64{
			{30, 5, 1, 0},
			{0, 12, 6, 2},
			{0, 0, 4, 4},
			{0, 0, 0, 9},
		}, markov.JeffreysPrior, nil},
		{"uniform, one state a year, a row without counts", [][]float64{
			{50, 7, 0, 0},
			{0, 0, 0, 0},
			{0, 0, 3, 1},
			{0, 0, 0, 2},
		}, markov.UniformPrior, [][]bool{
			{true, true, false, false},
			{false, true, true, false},
			{false, false, true, true},
			{false, false, false, true},
		}},
	}
	const draws = 3000
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d, err := markov.NewDirichletRows(tc.counts, tc.prior, tc.allowed)
			if err != nil {
				t.Fatal(err)
			}
			n := len(tc.counts)
			allowed := tc.allowed
			if allowed == nil {
				allowed = markov.NoImprovement(n)
			}
			samples := make([][][]float64, n) // [i][j][draw]
			for i := range samples {
				samples[i] = make([][]float64, n)
			}
			rng := rand.New(rand.NewPCG(21, 12))
			for range draws {
				m, err := d.Draw(rng)
				if err != nil {
					t.Fatal(err)
				}
				for i := range n {
					for j := range n {
						v := m.At(i, j)
						if !allowed[i][j] && v != 0 {
							t.Fatalf("entry (%d,%d) = %g is not allowed", i+1, j+1, v)
						}
						samples[i][j] = append(samples[i][j], v)
					}
				}
			}
			mean := d.Mean()
			for i := range n {
				A := 0.0
				for j := range n {
					if allowed[i][j] {
						A += tc.counts[i][j] + tc.prior
					}
				}
				for j := range n {
					if !allowed[i][j] {
						continue
					}
					mj := (tc.counts[i][j] + tc.prior) / A
					if math.Abs(mean[i][j]-mj) > 1e-15 {
						t.Errorf("Mean()[%d][%d] = %g, want %g", i+1, j+1, mean[i][j], mj)
					}
					vj := mj * (1 - mj) / (A + 1)
					gm, gv, m4 := sampleMoments(samples[i][j])
					if math.Abs(gm-mj) > nSE*math.Sqrt(vj/draws)+1e-15 {
						t.Errorf("entry (%d,%d): mean %.4f, posterior mean %.4f", i+1, j+1, gm, mj)
					}
					if math.Abs(gv-vj) > nSE*math.Sqrt((m4-gv*gv)/draws)+1e-15 {
						t.Errorf("entry (%d,%d): variance %.3g, posterior variance %.3g", i+1, j+1, gv, vj)
					}
				}
			}
		})
	}
	d, _ := markov.NewDirichletRows(tests[1].counts, tests[1].prior, tests[1].allowed)
	if got := d.EmptyRows(); !slices.Equal(got, []int{1}) {
		t.Errorf("EmptyRows = %v, want [1] (state 2 has no counts)", got)
	}
}

func TestDirichletRowsRejects(t *testing.T) {
	ok := [][]float64{{5, 1, 0}, {0, 3, 1}, {0, 0, 4}}
	tests := []struct {
		name    string
		counts  [][]float64
		prior   float64
		allowed [][]bool
		want    string
	}{
		{"zero prior", ok, 0, nil, "prior 0: give a positive number"},
		{"NaN prior", ok, math.NaN(), nil, "prior NaN"},
		{"one state", [][]float64{{3}}, 0.5, nil, "at least 2 states"},
		{"negative count", [][]float64{{5, -1, 0}, {0, 3, 1}, {0, 0, 4}}, 0.5, nil, "row 1, column 2: count -1"},
		{"improvement counted", [][]float64{{5, 1, 0}, {2, 3, 1}, {0, 0, 4}}, 0.5, nil, "row 2, column 1: 2 observed moves to an entry that is not allowed"},
		{"short row", [][]float64{{5, 1}, {0, 3, 1}, {0, 0, 4}}, 0.5, nil, "row 1: 2 counts"},
		{"nothing allowed", ok, 0.5, [][]bool{{true, true, false}, {false, true, true}, {false, false, false}}, "row 3: no entry allowed"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d, err := markov.NewDirichletRows(tc.counts, tc.prior, tc.allowed)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("got %v, %v; want an error containing %q", d, err, tc.want)
			}
		})
	}
}

// Each replicate is drawn with probability 1/B: over R draws its count is
// binomial(R, 1/B), checked to nSE binomial standard deviations.
func TestReplicatesDrawUniformly(t *testing.T) {
	var ms []*markov.Transition
	for _, d := range []float64{2, 3, 4, 5} {
		m, err := markov.FromYearsInState([]float64{d, d})
		if err != nil {
			t.Fatal(err)
		}
		ms = append(ms, m)
	}
	b, err := markov.NewReplicates(ms)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.Method(), "4 matrices") {
		t.Errorf("Method %q does not say how many replicates", b.Method())
	}
	const draws = 4000
	counts := map[float64]int{}
	rng := rand.New(rand.NewPCG(1, 2))
	for range draws {
		m, _ := b.Draw(rng)
		counts[m.At(0, 1)]++
	}
	p := 1.0 / 4
	sd := math.Sqrt(draws * p * (1 - p))
	for _, d := range []float64{2, 3, 4, 5} {
		if c := float64(counts[1/d]); math.Abs(c-draws*p) > nSE*sd {
			t.Errorf("replicate with %g years in state drawn %g times, want %g ± %.0f", d, c, draws*p, nSE*sd)
		}
	}
	three, _ := markov.FromYearsInState([]float64{2, 2, 2})
	for name, set := range map[string][]*markov.Transition{
		"one replicate":   ms[:1],
		"different sizes": {ms[0], three},
		"missing":         {ms[0], nil},
	} {
		if _, err := markov.NewReplicates(set); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

// With matrix uncertainty the spread of a share has two parts (law of total
// variance, textbook fact): n assets all in state 1, left alone for one
// year, each drops with probability p, and p itself is drawn from its
// posterior Beta(c_1 + α, c_0 + α) (the two-entry Dirichlet). The share
// that dropped then has mean m = E[p] and variance
// Var(p) + E[p(1-p)]/n = v + (m(1-m) - v)/n, v = m(1-m)/(A+1).
func TestSimulateWithDirichletSpread(t *testing.T) {
	counts := [][]float64{{16, 4}, {0, 7}}
	d, err := markov.NewDirichletRows(counts, markov.JeffreysPrior, nil)
	if err != nil {
		t.Fatal(err)
	}
	const assets, runs = 25, 4000
	c := markov.SimClass{
		Policy: doNothing(1, 2, 1),
		Rows:   [][][]float64{{{0.5, 0.5}, {0, 1}}}, // replaced by every draw
		Draw: func(rng *rand.Rand) ([][][]float64, error) {
			m, err := d.Draw(rng)
			if err != nil {
				return nil, err
			}
			return [][][]float64{m.Rows()}, nil
		},
	}
	lots := make([]markov.Lot, assets)
	for i := range lots {
		lots[i] = lot(0, 0, 1)
	}
	shares := make([]float64, runs)
	err = markov.Simulate([]markov.SimClass{c}, lots, markov.SimOptions{Years: 1, Runs: runs, Seed: 3}, func(run int, o *markov.RunOutcome) error {
		shares[run] = o.Quantity[0][1][1] / assets
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	A := 16 + 4 + 2*markov.JeffreysPrior
	m := (4 + markov.JeffreysPrior) / A
	v := m * (1 - m) / (A + 1)
	want := v + (m*(1-m)-v)/assets
	mean, variance, m4 := sampleMoments(shares)
	if math.Abs(mean-m) > nSE*math.Sqrt(want/runs) {
		t.Errorf("mean share %.4f, want %.4f", mean, m)
	}
	if se := math.Sqrt((m4 - variance*variance) / runs); math.Abs(variance-want) > nSE*se {
		t.Errorf("share variance %.5f, want %.5f (matrix %.5f + assets %.5f), tolerance %.5f", variance, want, v, (m*(1-m)-v)/assets, nSE*se)
	}
	// Without the matrix draws the variance is the binomial part alone,
	// m(1-m)/n, clearly smaller: the check above does see matrix uncertainty.
	if want < 1.5*m*(1-m)/assets {
		t.Fatalf("test design: matrix uncertainty adds too little to be seen")
	}
}
