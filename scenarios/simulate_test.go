package scenarios_test

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"runtime"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"wearplan/markov"
	"wearplan/scenarios"
)

// Checks of the scenario-level simulation. The engine's own checks against
// outside references (Kemeny and Snell absorption times, the binomial
// spread, the deterministic flow) are in markov/simulate_test.go; these
// check that a scenario is wired into it correctly, with sampling
// tolerances justified beside each check. Scenarios are invented (Marrowby).

const smallPath = "../testdata/marrowby-small.yaml"

func loadSmall(t *testing.T) *scenarios.Scenario {
	t.Helper()
	sc, err := scenarios.LoadFile(smallPath)
	if err != nil {
		t.Fatal(err)
	}
	return sc
}

func simulate(t *testing.T, sc *scenarios.Scenario, opt scenarios.SimulateOptions) *scenarios.SimulationResult {
	t.Helper()
	r, err := scenarios.Simulate(sc, opt)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// Type 7 of Hyndman and Fan (1996): h = (n-1)p, interpolate between the
// order statistics around h. Reference values: R's quantile() default
// (type 7) and a spreadsheet's PERCENTILE.INC give 9.55 for the 95th
// percentile of 1..10 and 1.15 for the 5th of 1..4; the 40th percentile of
// 15, 20, 35, 40, 50 is 29 (all from memory, and by the definition:
// h = 8.55 gives 9 + 0.55; h = 0.15 gives 1 + 0.15; h = 1.6 gives
// 20 + 0.6·15).
func TestPercentileType7(t *testing.T) {
	seq := func(n int) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = float64(i + 1)
		}
		return out
	}
	tests := []struct {
		xs   []float64
		p    float64
		want float64
	}{
		{seq(10), 0.95, 9.55},
		{seq(10), 0.05, 1.45},
		{seq(10), 0.5, 5.5},
		{seq(4), 0.05, 1.15},
		{[]float64{15, 20, 35, 40, 50}, 0.4, 29},
		{[]float64{15, 20, 35, 40, 50}, 0, 15},
		{[]float64{15, 20, 35, 40, 50}, 1, 50},
		{[]float64{7}, 0.95, 7},
		{[]float64{2, 2, 2}, 0.3, 2},
	}
	for _, tc := range tests {
		if got := scenarios.Percentile(tc.xs, tc.p); math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("Percentile(%v, %g) = %.15g, want %g", tc.xs, tc.p, got, tc.want)
		}
	}
	if got := scenarios.Percentile(nil, 0.5); !math.IsNaN(got) {
		t.Errorf("Percentile of nothing = %g, want NaN", got)
	}
}

func TestCutLots(t *testing.T) {
	sc := mustParse(t, scenarioYAML("", []string{
		classYAML("roads", "{Very good: 2.5, Good: 0, Fair: 0.3, Poor: 3, Very poor: 1}", yearsDet),
		classYAML("culverts", "{Very good: 5, Good: 0, Fair: 0, Poor: 0, Very poor: 1}", yearsDet),
	}, "", ""))
	type lot struct {
		class string
		state int
		q     float64
	}
	tests := []struct {
		name     string
		def      float64
		per      map[string]float64
		want     []lot
		wantSums bool
	}{
		{"unit lots with a fractional remainder", 0, nil, []lot{
			{"roads", 0, 1}, {"roads", 0, 1}, {"roads", 0, 0.5}, {"roads", 2, 0.3},
			{"roads", 3, 1}, {"roads", 3, 1}, {"roads", 3, 1}, {"roads", 4, 1},
			{"culverts", 0, 1}, {"culverts", 0, 1}, {"culverts", 0, 1}, {"culverts", 0, 1}, {"culverts", 0, 1}, {"culverts", 4, 1},
		}, true},
		// 0.3/0.1 is 2.9999999999999996 in binary: three lots, not two and
		// a sliver.
		{"a size that does not divide exactly in binary", 0.1, map[string]float64{"culverts": 5}, nil, true},
		{"per-class size", 0, map[string]float64{"roads": 2}, []lot{
			{"roads", 0, 2}, {"roads", 0, 0.5}, {"roads", 2, 0.3}, {"roads", 3, 2}, {"roads", 3, 1}, {"roads", 4, 1},
			{"culverts", 0, 1}, {"culverts", 0, 1}, {"culverts", 0, 1}, {"culverts", 0, 1}, {"culverts", 0, 1}, {"culverts", 4, 1},
		}, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			segs, err := scenarios.CutLots(sc, tc.def, tc.per)
			if err != nil {
				t.Fatal(err)
			}
			if tc.want != nil {
				if len(segs) != len(tc.want) {
					t.Fatalf("%d lots, want %d: %+v", len(segs), len(tc.want), segs)
				}
				for n, w := range tc.want {
					s := segs[n]
					if s.Class != w.class || s.State != w.state || math.Abs(s.Quantity-w.q) > 1e-12 || s.ID != "" {
						t.Errorf("lot %d = %+v, want %+v", n+1, s, w)
					}
				}
			}
			if tc.def == 0.1 {
				n := 0
				for _, s := range segs {
					if s.Class == "roads" && s.State == 2 {
						n++
						if math.Abs(s.Quantity-0.1) > 1e-12 {
							t.Errorf("Fair roads lot of %g, want 0.1", s.Quantity)
						}
					}
				}
				if n != 3 {
					t.Errorf("0.3 in lots of 0.1 gave %d lots, want 3", n)
				}
			}
			sums := map[string][]float64{"roads": make([]float64, 5), "culverts": make([]float64, 5)}
			for _, s := range segs {
				sums[s.Class][s.State] += s.Quantity
			}
			for k := range sc.Classes {
				c := &sc.Classes[k]
				for i, q := range c.Initial {
					if math.Abs(sums[c.Name][i]-q) > 1e-12 {
						t.Errorf("%s state %d: lots add up to %g, inventory %g", c.Name, i+1, sums[c.Name][i], q)
					}
				}
			}
		})
	}

	_, err := scenarios.CutLots(sc, 0, map[string]float64{"bridges": 2})
	var oe *scenarios.OptionError
	if !errors.As(err, &oe) || oe.Option != "lot size" || !strings.Contains(oe.Msg, `unknown class "bridges"; classes are roads, culverts`) {
		t.Errorf("unknown class: %v", err)
	}
	_, err = scenarios.CutLots(sc, 1e-6, nil)
	if !errors.As(err, &oe) || !strings.Contains(oe.Msg, `class "roads"`) || !strings.Contains(oe.Msg, "roads=0.001") {
		t.Errorf("too many lots: %v", err)
	}
}

// The mean and median of the runs equal the deterministic plan within
// sampling error. Whatever the policy, a lot's indicator of being in a
// group has variance at most 1/4 (an indicator's p(1-p)), so with N
// independent lots of size L in a class of total Q = N·L a group share has
// standard deviation at most σ = sqrt(L/(4Q)), and a class's spend at most
// sqrt(N)·L·c/2, with c the largest unit cost in that year. The mean of R
// runs is then within nSE·σ/sqrt(R); the median within σ (any
// distribution's median lies within one standard deviation of its mean)
// plus nSE·1.2533·σ/sqrt(R) (standard error of a sample median, πσ²/2R for
// a normal sample); textbook facts, from memory. The expected quantities of
// the policy follow the plan's flow exactly (linearity of expectation), so
// the centre is the plan's own figures.
func TestSimulateCentreMatchesPlan(t *testing.T) {
	const nSE = 4
	sc := loadSmall(t)
	const lot, runs = 0.05, 100
	r := simulate(t, sc, scenarios.SimulateOptions{Runs: runs, Seed: 7, LotSize: lot})
	plan, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	for y, yr := range r.Years {
		for k, cb := range yr.Classes {
			c := &sc.Classes[k]
			pc := plan.Years[y].Classes[k]
			sigma := math.Sqrt(lot / (4 * c.Total()))
			for _, g := range []struct {
				name string
				b    scenarios.Band
				plan float64
			}{{"good", cb.Shares.Good, pc.Shares.Good}, {"fair", cb.Shares.Fair, pc.Shares.Fair}, {"poor", cb.Shares.Poor, pc.Shares.Poor}} {
				if g.b.Plan != g.plan {
					t.Errorf("%d %s %s: band's plan value %g, plan %g", yr.Year, c.Name, g.name, g.b.Plan, g.plan)
				}
				if d := math.Abs(g.b.Mean - g.plan); d > nSE*sigma/math.Sqrt(runs)+1e-12 {
					t.Errorf("%d %s %s share: mean %.4f, plan %.4f", yr.Year, c.Name, g.name, g.b.Mean, g.plan)
				}
				if d := math.Abs(g.b.P50 - g.plan); d > sigma+nSE*1.2533*sigma/math.Sqrt(runs) {
					t.Errorf("%d %s %s share: median %.4f, plan %.4f", yr.Year, c.Name, g.name, g.b.P50, g.plan)
				}
				if !(g.b.P5 <= g.b.P50 && g.b.P50 <= g.b.P95) {
					t.Errorf("%d %s %s: percentiles out of order %+v", yr.Year, c.Name, g.name, g.b)
				}
			}
			cmax := 0.0
			for _, tr := range c.Treatments {
				for _, v := range tr.Cost {
					cmax = max(cmax, v)
				}
			}
			cmax *= math.Pow(1+sc.Escalation, float64(y))
			sdSpend := math.Sqrt(c.Total()/lot) * lot * cmax / 2
			if d := math.Abs(cb.Spend.Mean - *pc.Spend); d > nSE*sdSpend/math.Sqrt(runs)+1e-6 {
				t.Errorf("%d %s spend: mean %.0f, plan %.0f (tolerance %.0f)", yr.Year, c.Name, cb.Spend.Mean, *pc.Spend, nSE*sdSpend/math.Sqrt(runs))
			}
		}
		if yr.Network.Spend.Plan != plan.Years[y].Spend {
			t.Errorf("%d: network plan spend %g, plan %g", yr.Year, yr.Network.Spend.Plan, plan.Years[y].Spend)
		}
	}
}

// Doing nothing, the centre is the deterministic forecast q·P^t (docs/model.md,
// Deterioration), with the same tolerances as above.
func TestSimulateDoNothingCentreIsForecast(t *testing.T) {
	const nSE = 4
	sc := loadSmall(t)
	const lot, runs = 0.05, 100
	r := simulate(t, sc, scenarios.SimulateOptions{Runs: runs, Seed: 8, LotSize: lot, Policy: scenarios.PolicyDoNothing})
	f, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	if r.PolicyRule != "" || r.PlanStatus != "" || r.Years[0].Network.Spend != nil {
		t.Errorf("do-nothing result carries plan fields: rule %q, status %q", r.PolicyRule, r.PlanStatus)
	}
	for y, yr := range r.Years {
		for k, cb := range yr.Classes {
			c := &sc.Classes[k]
			// q·P^t written out with the class's own matrix.
			roll, err := c.Transition.Roll(c.Initial, y+1)
			if err != nil {
				t.Fatal(err)
			}
			poor := 0.0
			for i, q := range roll[y+1] {
				if c.Scale.Group[i] == 2 {
					poor += q / c.Total()
				}
			}
			if math.Abs(f.Years[y].Classes[k].Shares.Poor-poor) > 1e-12 || math.Abs(cb.Shares.Poor.Plan-poor) > 1e-12 {
				t.Fatalf("%d %s: plan value %g, q·P^t gives %g", yr.Year, c.Name, cb.Shares.Poor.Plan, poor)
			}
			sigma := math.Sqrt(lot / (4 * c.Total()))
			if math.Abs(cb.Shares.Poor.Mean-poor) > nSE*sigma/math.Sqrt(runs) {
				t.Errorf("%d %s poor: mean %.4f, q·P^t %.4f", yr.Year, c.Name, cb.Shares.Poor.Mean, poor)
			}
			if math.Abs(cb.Shares.Poor.P50-poor) > sigma+nSE*1.2533*sigma/math.Sqrt(runs) {
				t.Errorf("%d %s poor: median %.4f, q·P^t %.4f", yr.Year, c.Name, cb.Shares.Poor.P50, poor)
			}
		}
	}
}

// The probability that a target holds: n assets all new and left alone,
// the number poor in year t is binomial(n, p_t) with p_t the chance of
// being in a poor state after t years, (P^t) from the best state; a target
// "poor share at most s" holds with probability P(X <= s·n), here from
// gonum's binomial CDF (an independent implementation through the
// regularised incomplete beta function). The simulated frequency over R runs
// is checked to 4 binomial standard errors, sqrt(P(1-P)/R).
func TestSimulateTargetProbabilityIsBinomial(t *testing.T) {
	sc := mustParse(t, scenarioYAML("", []string{
		classYAML("culverts", "{Very good: 40, Good: 0, Fair: 0, Poor: 0, Very poor: 0}", "years_in_state: [2, 1.5, 2, 3]"),
	}, "", "targets:\n  - {class: culverts, group: poor, max_share: 0.2, from_year: 2032, to_year: 2033}\n"))
	const runs = 4000
	r := simulate(t, sc, scenarios.SimulateOptions{Runs: runs, Seed: 3, Policy: scenarios.PolicyDoNothing})
	if len(r.Targets) != 1 || len(r.Targets[0].Years) != 2 {
		t.Fatalf("targets %+v, want one target over 2 years", r.Targets)
	}
	c := &sc.Classes[0]
	lowest := 1.0
	for _, yc := range r.Targets[0].Years {
		tYears := yc.Year - sc.StartYear + 1
		pt, err := c.Transition.Power(tYears)
		if err != nil {
			t.Fatal(err)
		}
		p := pt.At(0, 3) + pt.At(0, 4)
		want := distuv.Binomial{N: 40, P: p}.CDF(8)
		if se := math.Sqrt(want * (1 - want) / runs); math.Abs(yc.Probability-want) > 4*se {
			t.Errorf("%d: target met in %.4f of runs, binomial P(X <= 8 | n = 40, p = %.3f) = %.4f", yc.Year, yc.Probability, p, want)
		}
		lowest = min(lowest, yc.Probability)
	}
	if all := r.Targets[0].AllYears; all > lowest || all <= 0 {
		t.Errorf("probability in every year %g, above the lowest yearly probability %g or zero", all, lowest)
	}
}

func jsonOf(t *testing.T, v any) []byte {
	t.Helper()
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// Same seed, same bytes, with one worker on one core and with all cores.
func TestSimulateSameBytesAnyCores(t *testing.T) {
	sc := loadSmall(t)
	opt := scenarios.SimulateOptions{Runs: 60, Seed: 2027, Workers: 1}
	prev := runtime.GOMAXPROCS(1)
	one := jsonOf(t, simulate(t, sc, opt))
	runtime.GOMAXPROCS(prev)
	opt.Workers = 0
	all := jsonOf(t, simulate(t, sc, opt))
	opt.Workers = 9
	nine := jsonOf(t, simulate(t, sc, opt))
	if !bytes.Equal(one, all) || !bytes.Equal(one, nine) {
		t.Errorf("JSON differs between 1 core and %d cores or 9 workers", prev)
	}
	opt.Seed = 2028
	if bytes.Equal(one, jsonOf(t, simulate(t, sc, opt))) {
		t.Errorf("seeds 2027 and 2028 gave the same bands")
	}
}

// countsFrom makes invented transition counts whose maximum-likelihood
// matrix is close to rows: about perRow observed moves from each state.
func countsFrom(rows [][]float64, perRow float64) [][]float64 {
	out := make([][]float64, len(rows))
	for i, row := range rows {
		out[i] = make([]float64, len(row))
		for j, p := range row {
			out[i][j] = math.Round(p * perRow)
		}
	}
	return out
}

func bandWidth(b scenarios.Band) float64 { return b.P95 - b.P5 }

func TestSimulateMatrixUncertainty(t *testing.T) {
	const runs = 200
	var oe *scenarios.OptionError
	for _, m := range []string{scenarios.MatrixDirichlet, scenarios.MatrixBootstrap} {
		_, err := scenarios.Simulate(loadSmall(t), scenarios.SimulateOptions{Runs: runs, Matrix: m})
		if !errors.As(err, &oe) || oe.Option != "matrix uncertainty" || !strings.Contains(oe.Msg, "no class") || !strings.Contains(oe.Msg, "use none") {
			t.Errorf("%s without fit data: %v", m, err)
		}
	}

	none := simulate(t, loadSmall(t), scenarios.SimulateOptions{Runs: runs, Seed: 1})
	if none.Uncertainty.Matrix != scenarios.MatrixNone || !strings.Contains(strings.Join(none.Uncertainty.Excluded, " "), "matrix uncertainty") {
		t.Errorf("none: uncertainty %+v does not say matrices are excluded", none.Uncertainty)
	}

	// Few inspections (about 12 moves per row) on the roads: wide posterior.
	sc := loadSmall(t)
	roads := &sc.Classes[0]
	roads.Evidence = &scenarios.MatrixEvidence{Source: "roads-fit.json", Counts: countsFrom(roads.Transition.Rows(), 12)}
	dir := simulate(t, sc, scenarios.SimulateOptions{Runs: runs, Seed: 1, Matrix: scenarios.MatrixDirichlet})
	if dir.Uncertainty.Matrix != scenarios.MatrixDirichlet || !strings.Contains(dir.Classes[0].Matrix, "Jeffreys") || dir.Classes[1].Matrix != "as given" {
		t.Errorf("dirichlet: uncertainty %+v, classes %+v", dir.Uncertainty, dir.Classes)
	}
	if !strings.Contains(strings.Join(dir.Warnings, " "), "keep their matrix as given: culverts") {
		t.Errorf("no warning that culverts keep their matrix: %v", dir.Warnings)
	}
	last := len(none.Years) - 1
	wNone, wDir := bandWidth(none.Years[last].Classes[0].Shares.Poor), bandWidth(dir.Years[last].Classes[0].Shares.Poor)
	if !(wDir > 1.2*wNone) {
		t.Errorf("roads poor band %.4f with matrix uncertainty, %.4f without; want it clearly wider", wDir, wNone)
	}
	// The culverts keep their matrix and their own lots' random numbers
	// (separate streams), so their bands do not change.
	if !bytes.Equal(jsonOf(t, none.Years[last].Classes[1]), jsonOf(t, dir.Years[last].Classes[1])) {
		t.Errorf("culvert bands changed although their matrix is fixed")
	}

	// Replicates that all equal the matrix as given change nothing.
	sc = loadSmall(t)
	roads = &sc.Classes[0]
	roads.Evidence = &scenarios.MatrixEvidence{Replicates: []*markov.Transition{roads.Transition, roads.Transition, roads.Transition}}
	boot := simulate(t, sc, scenarios.SimulateOptions{Runs: runs, Seed: 1, Matrix: scenarios.MatrixBootstrap})
	if !bytes.Equal(jsonOf(t, none.Years), jsonOf(t, boot.Years)) {
		t.Errorf("identical bootstrap replicates changed the bands")
	}
	if !strings.Contains(boot.Classes[0].Matrix, "bootstrap replicates (3 matrices") {
		t.Errorf("bootstrap class matrix %q", boot.Classes[0].Matrix)
	}

	// Evidence that does not fit the scale is an error naming the class.
	sc = loadSmall(t)
	sc.Classes[1].Evidence = &scenarios.MatrixEvidence{Source: "culverts-fit.json", Counts: [][]float64{{5, 1}, {0, 3}}}
	_, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: runs, Matrix: scenarios.MatrixDirichlet})
	if err == nil || !strings.Contains(err.Error(), `class "culverts": matrix evidence from culverts-fit.json: counts for 2 states, the scale has 5`) {
		t.Errorf("mismatched counts: %v", err)
	}
}

func TestSimulateGivenLots(t *testing.T) {
	sc := loadSmall(t)
	segs, err := scenarios.CutLots(sc, 0.5, nil)
	if err != nil {
		t.Fatal(err)
	}
	a := simulate(t, sc, scenarios.SimulateOptions{Runs: 30, Seed: 4, LotSize: 0.5})
	b := simulate(t, sc, scenarios.SimulateOptions{Runs: 30, Seed: 4, Lots: segs})
	if !bytes.Equal(jsonOf(t, a.Years), jsonOf(t, b.Years)) {
		t.Errorf("the same lots given as segments changed the bands")
	}
	if b.Classes[0].SegmentsFrom != "pieces given by the caller" || b.Classes[0].LotSize != 0 {
		t.Errorf("segment source %+v", b.Classes[0])
	}
	_, err = scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 30, Lots: segs[1:]})
	var oe *scenarios.OptionError
	if !errors.As(err, &oe) || oe.Option != "segments" || !strings.Contains(oe.Msg, `class "local-asphalt", state "Very good": segments add up to 69.5 lane-km but the inventory has 70`) {
		t.Errorf("missing segment: %v", err)
	}
	bad := append([]scenarios.Lot{{ID: "R-17", Class: "trams", Quantity: 1}}, segs...)
	if _, err = scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 30, Lots: bad}); err == nil || !strings.Contains(err.Error(), `segment R-17: unknown class "trams"`) {
		t.Errorf("unknown class: %v", err)
	}
}

func TestSimulateOptionErrors(t *testing.T) {
	tests := []struct {
		name   string
		opt    scenarios.SimulateOptions
		option string
		msg    string
	}{
		{"no runs", scenarios.SimulateOptions{}, "runs", "0 runs; give between 1 and"},
		{"too many runs", scenarios.SimulateOptions{Runs: scenarios.MaxRuns + 1}, "runs", "give between 1 and"},
		{"unknown policy", scenarios.SimulateOptions{Runs: 5, Policy: "worst-first"}, "policy", `"worst-first"; choose plan or do-nothing`},
		{"unknown matrix source", scenarios.SimulateOptions{Runs: 5, Matrix: "jackknife"}, "matrix uncertainty", "choose none, dirichlet or bootstrap"},
		{"negative prior", scenarios.SimulateOptions{Runs: 5, Prior: -1}, "dirichlet prior", "give a positive number"},
		{"negative lot size", scenarios.SimulateOptions{Runs: 5, LotSize: -2}, "lot size", "-2; give a positive size"},
		{"zero class lot size", scenarios.SimulateOptions{Runs: 5, ClassLotSize: map[string]float64{"culverts": 0}}, "lot size", "culverts=0"},
		{"unknown class lot size", scenarios.SimulateOptions{Runs: 5, ClassLotSize: map[string]float64{"bridges": 2}}, "lot size", `unknown class "bridges"`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := scenarios.Simulate(loadSmall(t), tc.opt)
			var oe *scenarios.OptionError
			if !errors.As(err, &oe) || oe.Option != tc.option || !strings.Contains(oe.Msg, tc.msg) {
				t.Errorf("error %v, want option %q with %q", err, tc.option, tc.msg)
			}
		})
	}
}

// The JSON carries what reports and the what-if page need, and the caution.
func TestSimulateJSONShape(t *testing.T) {
	r := simulate(t, loadSmall(t), scenarios.SimulateOptions{Runs: 20, Seed: 1})
	var doc map[string]any
	if err := json.Unmarshal(jsonOf(t, r), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"kind", "policy", "plan_status", "runs", "seed", "percentiles", "uncertainty", "classes", "initial", "years", "targets", "warnings", "caution"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
	if doc["caution"] != scenarios.Caution {
		t.Errorf("caution %q", doc["caution"])
	}
	year := doc["years"].([]any)[0].(map[string]any)
	class := year["classes"].([]any)[0].(map[string]any)
	poor := class["shares"].(map[string]any)["poor"].(map[string]any)
	for _, k := range []string{"p5", "p50", "p95", "mean", "plan"} {
		if _, ok := poor[k]; !ok {
			t.Errorf("band lacks %q: %v", k, poor)
		}
	}
	target := doc["targets"].([]any)[0].(map[string]any)
	for _, k := range []string{"target", "met_by_plan", "probability_all_years", "years"} {
		if _, ok := target[k]; !ok {
			t.Errorf("target lacks %q: %v", k, target)
		}
	}
	if !strings.Contains(strings.Join(r.Warnings, " "), "only 20 runs") {
		t.Errorf("no warning about few runs: %v", r.Warnings)
	}
}

// TestSimulateInventorySegments: a class read from a segment list moves
// segment by segment (each whole segment is one lot) unless a lot size is
// given for it.
func TestSimulateInventorySegments(t *testing.T) {
	sc, err := scenarios.LoadFile("examples/marrowby.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r := simulate(t, sc, scenarios.SimulateOptions{Runs: 5, Seed: 1, ClassLotSize: map[string]float64{"culverts": 2}})
	for k, c := range r.Classes {
		want := len(sc.Classes[k].Segments)
		if c.Class == "culverts" {
			// Lots of 2 per state and year of the last treatment (kept
			// up to the class's longest interval), one smaller lot for
			// an odd count.
			span := sc.Classes[k].History.Span
			count := map[[2]int]float64{}
			for _, s := range sc.Classes[k].Segments {
				y := span
				if s.LastTreated > 0 {
					y = min(sc.StartYear-s.LastTreated, span)
				}
				count[[2]int{s.State, y}] += s.Quantity
			}
			lots := 0
			for _, q := range count {
				lots += int(math.Ceil(q / 2))
			}
			if !strings.HasPrefix(c.SegmentsFrom, "pieces of 2 each") || c.Segments != lots {
				t.Errorf("culverts with a lot size: %d lots from %q, want %d", c.Segments, c.SegmentsFrom, lots)
			}
			continue
		}
		if c.Segments != want || !strings.Contains(c.SegmentsFrom, "segments of the inventory list") {
			t.Errorf("%s: %d lots from %q, want its %d inventory segments", c.Class, c.Segments, c.SegmentsFrom, want)
		}
	}
}
