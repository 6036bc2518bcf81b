package markov_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"strings"
	"testing"

	"wearplan/markov"
)

// doNothing is the policy "always action 0" for years x states.
func doNothing(years, states, actions int) [][][]float64 {
	pol := make([][][]float64, years)
	for t := range pol {
		pol[t] = make([][]float64, states)
		for i := range pol[t] {
			pol[t][i] = make([]float64, actions)
			pol[t][i][0] = 1
		}
	}
	return pol
}

func lot(class, state int, quantity float64) markov.Lot {
	return markov.Lot{Class: class, State: state, Quantity: quantity}
}

// sampleMoments returns the mean, the sample variance (divisor R-1) and the
// fourth central moment of xs.
func sampleMoments(xs []float64) (mean, variance, m4 float64) {
	for _, x := range xs {
		mean += x
	}
	mean /= float64(len(xs))
	for _, x := range xs {
		d := (x - mean) * (x - mean)
		variance += d
		m4 += d * d
	}
	m4 /= float64(len(xs))
	variance /= float64(len(xs) - 1)
	return mean, variance, m4
}

// Standard errors used by the sampling checks below (large-sample results,
// textbook facts quoted from memory): the mean of R independent draws has
// standard error sqrt(σ²/R); the sample variance has standard error
// sqrt((μ4 - σ⁴)/R), with μ4 the fourth central moment, estimated here from
// the sample itself. Each check allows 4 standard errors: a correct engine
// fails one with probability about 6e-5, and with fixed seeds the outcome is
// the same on every run of the test.
const nSE = 4

// The time a single asset left alone takes to first reach the worst state
// is the absorption time of the chain. Its mean from each state is t = N·1
// and its variance (2N - I)t - t∘t, with N = (I - Q)^-1 the fundamental
// matrix (Kemeny and Snell, Finite Markov Chains, 1960; formulas from
// memory). YearsToWorst computes them and is checked by hand in
// chain_test.go; here the simulation must reproduce them.
func TestSimulateYearsToWorstMatchesFundamentalMatrix(t *testing.T) {
	chains := map[string][][]float64{
		"3-state by hand (mean 3.5, variance 5.75 from state 1)": {
			{0.5, 0.3, 0.2},
			{0, 0.6, 0.4},
			{0, 0, 1},
		},
		"random 5-state with skips": randomUpper(rand.New(rand.NewPCG(9, 9)), 5),
	}
	for name, rows := range chains {
		t.Run(name, func(t *testing.T) {
			p, err := markov.NewTransition(rows, markov.Options{})
			if err != nil {
				t.Fatal(err)
			}
			abs, err := p.YearsToWorst()
			if err != nil {
				t.Fatal(err)
			}
			n := p.States()
			// Horizon long enough that an asset not yet in the worst state
			// is a negligible censoring: P(T > H) < 1e-7 from every state.
			horizon := 10
			for ; horizon < 1000; horizon += 10 {
				ph, _ := p.Power(horizon)
				if 1-ph.At(0, n-1) < 1e-7 {
					break
				}
			}
			// One class per starting state, each holding one lot of one unit,
			// so each class's worst-state quantity says where its asset is.
			var classes []markov.SimClass
			var lots []markov.Lot
			for i := range n - 1 {
				classes = append(classes, markov.SimClass{Policy: doNothing(horizon, n, 1), Rows: [][][]float64{rows}})
				lots = append(lots, markov.Lot{Class: i, State: i, Quantity: 1})
			}
			const runs = 4000
			times := make([][]float64, n-1)
			for i := range times {
				times[i] = make([]float64, runs)
			}
			err = markov.Simulate(classes, lots, markov.SimOptions{Years: horizon, Runs: runs, Seed: 2027}, func(run int, o *markov.RunOutcome) error {
				for k := range n - 1 {
					for y := 1; y <= horizon; y++ {
						if o.Quantity[k][y][n-1] == 1 {
							times[k][run] = float64(y)
							break
						}
					}
					if times[k][run] == 0 {
						return errors.New("an asset did not reach the worst state within the horizon")
					}
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			for i := range n - 1 {
				mean, variance, m4 := sampleMoments(times[i])
				seMean := math.Sqrt(abs.Variance[i] / runs)
				seVar := math.Sqrt((m4 - variance*variance) / runs)
				if math.Abs(mean-abs.Mean[i]) > nSE*seMean {
					t.Errorf("from state %d: simulated mean %.3f years, Kemeny-Snell %.3f (tolerance %.3f)", i+1, mean, abs.Mean[i], nSE*seMean)
				}
				if math.Abs(variance-abs.Variance[i]) > nSE*seVar {
					t.Errorf("from state %d: simulated variance %.3f, Kemeny-Snell %.3f (tolerance %.3f)", i+1, variance, abs.Variance[i], nSE*seVar)
				}
			}
		})
	}
}

// randomPolicyClass returns an invented class with a do-nothing matrix,
// two treatments and a random policy that mixes them, for checks of the
// policy mechanics against the deterministic flow.
func randomPolicyClass(r *rand.Rand, n, years int) (markov.SimClass, [][][]float64) {
	p := randomUpper(r, n)
	rebuild := make([][]float64, n) // to the best state, no ageing
	improve := make([][]float64, n) // one state up, then a year of ageing
	for i := range n {
		rebuild[i] = make([]float64, n)
		rebuild[i][0] = 1
		if i >= 1 {
			improve[i] = p[i-1]
		}
	}
	rows := [][][]float64{p, improve, rebuild}
	pol := make([][][]float64, years)
	for y := range pol {
		pol[y] = make([][]float64, n)
		for i := range pol[y] {
			w := []float64{1 + 2*r.Float64(), 0, 0}
			if i >= 1 {
				w[1] = r.Float64()
			}
			if i >= n-2 && y%3 != 1 { // rebuild only the worst states, not every year
				w[2] = r.Float64()
			}
			s := w[0] + w[1] + w[2]
			pol[y][i] = []float64{w[0] / s, w[1] / s, w[2] / s}
		}
	}
	return markov.SimClass{Policy: pol, Rows: rows}, rows
}

// With many lots in every state the simulated median and mean equal the
// deterministic forecast within sampling error. The deterministic forecast
// is q·P^t for doing nothing (docs/model.md, Deterioration) and, under a policy, the
// flow q_{t+1} = Σ_{i,a} q_t,i π_t(i,a) M_a(i,·) that the plan's LP uses.
// Lots move independently, so the quantity of a class in state j is a sum of
// independent lot indicators with variance Σ_l q_l² π_l(1 - π_l), where π_l
// is lot l's own chance of being in j (computed here by the same flow from
// its start). The mean of R runs is checked to nSE standard errors
// sqrt(var/R). The sample median of R runs has standard error about
// 1.2533·σ/sqrt(R) (asymptotic variance of the median of a normal sample,
// πσ²/2R, textbook fact from memory), and any distribution's median lies
// within σ of its mean (a classical inequality); the median check allows
// the sum of the two.
func TestSimulateCentreMatchesDeterministicForecast(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 55))
	const n, years, perState, runs = 5, 8, 1500, 150
	years5, err := markov.FromYearsInState([]float64{6, 5, 5, 6})
	if err != nil {
		t.Fatal(err)
	}
	pc, prow := randomPolicyClass(r, n, years)
	cases := []struct {
		name string
		c    markov.SimClass
		rows [][][]float64
	}{
		{"do nothing under years in state 6, 5, 5, 6", markov.SimClass{Policy: doNothing(years, n, 1), Rows: [][][]float64{years5.Rows()}}, [][][]float64{years5.Rows()}},
		{"random policy over three actions", pc, prow},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var lots []markov.Lot
			for i := range n {
				for range perState {
					lots = append(lots, markov.Lot{Class: 0, State: i, Quantity: 1})
				}
			}
			// Deterministic flow per starting state: dist[s][t] is the
			// distribution at the end of year t of a lot starting in s.
			dist := make([][][]float64, n)
			for s := range n {
				dist[s] = make([][]float64, years+1)
				dist[s][0] = make([]float64, n)
				dist[s][0][s] = 1
				for y := range years {
					next := make([]float64, n)
					for i, qi := range dist[s][y] {
						for a, pa := range tc.c.Policy[y][i] {
							if pa == 0 {
								continue
							}
							for j, m := range tc.rows[a][i] {
								next[j] += qi * pa * m
							}
						}
					}
					dist[s][y+1] = next
				}
			}
			qty := make([][][]float64, years+1) // [t][j][run]
			for y := range qty {
				qty[y] = make([][]float64, n)
				for j := range qty[y] {
					qty[y][j] = make([]float64, runs)
				}
			}
			err := markov.Simulate([]markov.SimClass{tc.c}, lots, markov.SimOptions{Years: years, Runs: runs, Seed: 11}, func(run int, o *markov.RunOutcome) error {
				for y := range years + 1 {
					for j := range n {
						qty[y][j][run] = o.Quantity[0][y][j]
					}
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			for y := 1; y <= years; y++ {
				for j := range n {
					want, variance := 0.0, 0.0
					for s := range n {
						pi := dist[s][y][j]
						want += perState * pi
						variance += perState * pi * (1 - pi)
					}
					sd := math.Sqrt(variance)
					xs := qty[y][j]
					mean, _, _ := sampleMoments(xs)
					if math.Abs(mean-want) > nSE*sd/math.Sqrt(runs)+1e-9 {
						t.Errorf("year %d state %d: mean %.2f, deterministic %.2f (tolerance %.2f)", y, j+1, mean, want, nSE*sd/math.Sqrt(runs))
					}
					sorted := slices.Clone(xs)
					slices.Sort(sorted)
					median := (sorted[runs/2-1] + sorted[runs/2]) / 2
					tol := sd + nSE*1.2533*sd/math.Sqrt(runs) + 1e-9
					if math.Abs(median-want) > tol {
						t.Errorf("year %d state %d: median %.2f, deterministic %.2f (tolerance %.2f)", y, j+1, median, want, tol)
					}
				}
			}
		})
	}
}

// For n independent assets that all start in the best state and are left
// alone, the number in a set of states J after t years is binomial with
// p = Σ_{j∈J} (P^t)[0][j], so their share has standard deviation
// sqrt(p(1-p)/n) (binomial distribution, textbook fact). The sample
// variance of R runs is checked against p(1-p)/n to nSE standard errors,
// sqrt(σ⁴(2/(R-1) + κ/R)) with κ = (1 - 6p(1-p))/(np(1-p)) the binomial's
// excess kurtosis (textbook facts, from memory). Equal lots move as one
// cohort of counts: 40 assets exercise the inversion of the binomial
// distribution function (means below 30), 20,000 the rejection sampler.
func TestSimulateShareSpreadIsBinomial(t *testing.T) {
	p, err := markov.FromYearsInState([]float64{3, 3, 4})
	if err != nil {
		t.Fatal(err)
	}
	for _, assets := range []int{40, 20000} {
		t.Run(fmt.Sprintf("%d assets", assets), func(t *testing.T) {
			const years, runs = 10, 3000
			lots := make([]markov.Lot, assets)
			for i := range lots {
				lots[i] = markov.Lot{Class: 0, State: 0, Quantity: 1}
			}
			poor := []int{2, 3} // the two worst states of four
			shares := make([][]float64, years+1)
			for y := range shares {
				shares[y] = make([]float64, runs)
			}
			c := markov.SimClass{Policy: doNothing(years, 4, 1), Rows: [][][]float64{p.Rows()}}
			err = markov.Simulate([]markov.SimClass{c}, lots, markov.SimOptions{Years: years, Runs: runs, Seed: 40}, func(run int, o *markov.RunOutcome) error {
				for y := range years + 1 {
					for _, j := range poor {
						shares[y][run] += o.Quantity[0][y][j] / float64(assets)
					}
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			for y := 2; y <= years; y += 2 {
				pt, _ := p.Power(y)
				pr := pt.At(0, 2) + pt.At(0, 3)
				want := pr * (1 - pr) / float64(assets)
				kurt := (1 - 6*pr*(1-pr)) / (float64(assets) * pr * (1 - pr))
				se := want * math.Sqrt(2.0/(runs-1)+kurt/runs)
				mean, got, _ := sampleMoments(shares[y])
				if math.Abs(got-want) > nSE*se {
					t.Errorf("year %d: share sd %.4f, binomial sqrt(p(1-p)/n) = %.4f with p = %.3f (variance tolerance %.2g)", y, math.Sqrt(got), math.Sqrt(want), pr, nSE*se)
				}
				if math.Abs(mean-pr) > nSE*math.Sqrt(want/runs) {
					t.Errorf("year %d: mean share %.5f, (P^t) gives %.5f", y, mean, pr)
				}
			}
		})
	}
}

// collect runs a simulation and keeps every run's outcome (deep copies).
func collect(t *testing.T, classes []markov.SimClass, lots []markov.Lot, opt markov.SimOptions) []markov.RunOutcome {
	t.Helper()
	out := make([]markov.RunOutcome, opt.Runs)
	err := markov.Simulate(classes, lots, opt, func(run int, o *markov.RunOutcome) error {
		c := markov.RunOutcome{}
		for k := range o.Quantity {
			var q [][]float64
			for _, row := range o.Quantity[k] {
				q = append(q, slices.Clone(row))
			}
			c.Quantity = append(c.Quantity, q)
			var tr [][][]float64
			for _, byState := range o.Treated[k] {
				var s [][]float64
				for _, row := range byState {
					s = append(s, slices.Clone(row))
				}
				tr = append(tr, s)
			}
			c.Treated = append(c.Treated, tr)
		}
		out[run] = c
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func sameOutcomes(a, b []markov.RunOutcome) bool {
	if len(a) != len(b) {
		return false
	}
	for r := range a {
		for k := range a[r].Quantity {
			for y := range a[r].Quantity[k] {
				// Bit for bit: float equality, not a tolerance.
				if !slices.Equal(a[r].Quantity[k][y], b[r].Quantity[k][y]) {
					return false
				}
			}
			for y := range a[r].Treated[k] {
				for i := range a[r].Treated[k][y] {
					if !slices.Equal(a[r].Treated[k][y][i], b[r].Treated[k][y][i]) {
						return false
					}
				}
			}
		}
	}
	return true
}

// Same seed, same runs, bit for bit, with one worker on one core and with
// many workers on every core; another seed gives other runs.
func TestSimulateDeterministicAcrossCores(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	c1, _ := randomPolicyClass(r, 5, 12)
	c2, _ := randomPolicyClass(r, 4, 12)
	d, err := markov.NewDirichletRows([][]float64{{30, 5, 1, 0}, {0, 20, 6, 1}, {0, 0, 9, 4}, {0, 0, 0, 3}}, markov.JeffreysPrior, nil)
	if err != nil {
		t.Fatal(err)
	}
	c2rows := c2.Rows
	c2.Draw = func(rng *rand.Rand) ([][][]float64, error) {
		m, err := d.Draw(rng)
		if err != nil {
			return nil, err
		}
		rows := slices.Clone(c2rows)
		rows[0] = m.Rows()
		return rows, nil
	}
	var lots []markov.Lot
	for i := range 300 {
		lots = append(lots, markov.Lot{Class: i % 2, State: i % 4, Quantity: 0.5 + float64(i%7)})
	}
	opt := markov.SimOptions{Years: 12, Runs: 64, Seed: 99}
	classes := []markov.SimClass{c1, c2}

	prev := runtime.GOMAXPROCS(1)
	opt.Workers = 1
	one := collect(t, classes, lots, opt)
	runtime.GOMAXPROCS(prev)
	opt.Workers = 0
	all := collect(t, classes, lots, opt)
	opt.Workers = 7 // more goroutines than cores: scheduling interleaves runs
	seven := collect(t, classes, lots, opt)
	if !sameOutcomes(one, all) || !sameOutcomes(one, seven) {
		t.Errorf("outcomes differ between 1 worker on 1 core, %d cores, and 7 workers", prev)
	}
	opt.Seed = 100
	if other := collect(t, classes, lots, opt); sameOutcomes(one, other) {
		t.Errorf("seeds 99 and 100 gave the same runs")
	}
}

// Matrix draws come from their own random stream: replicates that are all
// the same matrix give exactly the runs of that fixed matrix.
func TestSimulateMatrixStreamIsSeparate(t *testing.T) {
	p, _ := markov.FromYearsInState([]float64{4, 3, 5})
	same, err := markov.NewReplicates([]*markov.Transition{p, p, p})
	if err != nil {
		t.Fatal(err)
	}
	fixed := markov.SimClass{Policy: doNothing(10, 4, 1), Rows: [][][]float64{p.Rows()}}
	drawn := fixed
	drawn.Draw = func(rng *rand.Rand) ([][][]float64, error) {
		m, err := same.Draw(rng)
		if err != nil {
			return nil, err
		}
		return [][][]float64{m.Rows()}, nil
	}
	lots := []markov.Lot{lot(0, 0, 1), lot(0, 1, 2), lot(0, 2, 3), lot(0, 0, 4)}
	opt := markov.SimOptions{Years: 10, Runs: 30, Seed: 5}
	if !sameOutcomes(collect(t, []markov.SimClass{fixed}, lots, opt), collect(t, []markov.SimClass{drawn}, lots, opt)) {
		t.Errorf("identical replicates changed the lots' runs")
	}
}

// Treated quantities: every lot is counted once a year, in the state it was
// in at the start of the year, under the action it got.
func TestSimulateTreatedAddsUp(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 8))
	c, _ := randomPolicyClass(r, 5, 6)
	lots := []markov.Lot{lot(0, 0, 2.5), lot(0, 3, 1), lot(0, 4, 7), lot(0, 2, 0)}
	for _, o := range collect(t, []markov.SimClass{c}, lots, markov.SimOptions{Years: 6, Runs: 20, Seed: 1}) {
		for y := range 6 {
			for i := range 5 {
				s := 0.0
				for _, v := range o.Treated[0][y][i] {
					s += v
				}
				if math.Abs(s-o.Quantity[0][y][i]) > 1e-12 {
					t.Fatalf("year %d state %d: treated %g, quantity at the start %g", y+1, i+1, s, o.Quantity[0][y][i])
				}
			}
			tot := 0.0
			for _, v := range o.Quantity[0][y+1] {
				tot += v
			}
			if math.Abs(tot-10.5) > 1e-12 {
				t.Fatalf("year %d: total %g, want 10.5", y+1, tot)
			}
		}
	}
}

func TestSimulateRejectsBadInput(t *testing.T) {
	p, _ := markov.FromYearsInState([]float64{4, 3})
	good := func() markov.SimClass {
		return markov.SimClass{Policy: doNothing(3, 3, 2), Rows: [][][]float64{p.Rows(), {nil, nil, {1, 0, 0}}}}
	}
	oneLot := []markov.Lot{lot(0, 1, 1)}
	opt := markov.SimOptions{Years: 3, Runs: 5}
	tests := []struct {
		name    string
		classes func() []markov.SimClass
		lots    []markov.Lot
		opt     markov.SimOptions
		want    string
	}{
		{"no years", func() []markov.SimClass { return []markov.SimClass{good()} }, oneLot, markov.SimOptions{Runs: 1}, "0 years"},
		{"no runs", func() []markov.SimClass { return []markov.SimClass{good()} }, oneLot, markov.SimOptions{Years: 3}, "0 runs"},
		{"no classes", func() []markov.SimClass { return nil }, oneLot, opt, "no classes"},
		{"policy too short", func() []markov.SimClass {
			c := good()
			c.Policy = c.Policy[:2]
			return []markov.SimClass{c}
		}, oneLot, opt, "policy for 2 years, want 3"},
		{"policy does not sum to 1", func() []markov.SimClass {
			c := good()
			c.Policy[1][2] = []float64{0.5, 0.4}
			return []markov.SimClass{c}
		}, oneLot, opt, "year 2 state 3: action probabilities sums to 0.9"},
		{"action taken where it does not apply", func() []markov.SimClass {
			c := good()
			c.Policy[0][1] = []float64{0.5, 0.5}
			return []markov.SimClass{c}
		}, oneLot, opt, "year 1 state 2: action 1 has probability 0.5 but cannot be taken there"},
		{"row not a distribution", func() []markov.SimClass {
			c := good()
			c.Rows[1][2] = []float64{0.7, 0, 0}
			return []markov.SimClass{c}
		}, oneLot, opt, "action 1 state 3: year transition sums to 0.7"},
		{"lot class out of range", func() []markov.SimClass { return []markov.SimClass{good()} }, []markov.Lot{lot(1, 0, 1)}, opt, "lot 1: class 1 out of range"},
		{"lot state out of range", func() []markov.SimClass { return []markov.SimClass{good()} }, []markov.Lot{lot(0, 0, 1), lot(0, 3, 1)}, opt, "lot 2: state 4 outside the 3-state scale"},
		{"lot quantity NaN", func() []markov.SimClass { return []markov.SimClass{good()} }, []markov.Lot{lot(0, 0, math.NaN())}, opt, "quantity NaN"},
		{"drawn rows fail", func() []markov.SimClass {
			c := good()
			c.Draw = func(rng *rand.Rand) ([][][]float64, error) {
				if rng.IntN(3) == 0 {
					return nil, errors.New("no matrix today")
				}
				return c.Rows, nil
			}
			return []markov.SimClass{c}
		}, oneLot, markov.SimOptions{Years: 3, Runs: 50, Seed: 1}, "no matrix today"},
		{"drawn rows malformed", func() []markov.SimClass {
			c := good()
			c.Draw = func(*rand.Rand) ([][][]float64, error) { return c.Rows[:1], nil }
			return []markov.SimClass{c}
		}, oneLot, opt, "drawn rows for 1 actions, want 2"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			called := false
			err := markov.Simulate(tc.classes(), tc.lots, tc.opt, func(int, *markov.RunOutcome) error { called = true; return nil })
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want one containing %q", err, tc.want)
			}
			if called && !strings.Contains(tc.name, "drawn") {
				t.Errorf("runs reported despite invalid input")
			}
		})
	}
}

// When several runs fail, the error is always the lowest-numbered run's,
// whatever the scheduling.
func TestSimulateReportsLowestFailedRun(t *testing.T) {
	p, _ := markov.FromYearsInState([]float64{4, 3})
	c := markov.SimClass{Policy: doNothing(2, 3, 1), Rows: [][][]float64{p.Rows()}}
	for _, workers := range []int{1, 2, 5} {
		err := markov.Simulate([]markov.SimClass{c}, []markov.Lot{lot(0, 0, 1)}, markov.SimOptions{Years: 2, Runs: 40, Workers: workers}, func(run int, _ *markov.RunOutcome) error {
			if run%7 == 6 {
				return errors.New("run " + string(rune('0'+run/7)))
			}
			return nil
		})
		if err == nil || err.Error() != "run 0" {
			t.Errorf("%d workers: error %v, want the error of run 7 (\"run 0\")", workers, err)
		}
	}
}
