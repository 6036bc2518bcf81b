package optimize

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"wearplan/markov"
	"wearplan/optimize/optimizetest"
	"wearplan/treatments"
)

// perturbed returns a sample whose rows are the problem's, each entry
// multiplied by a factor in [1-spread, 1+spread] and the row normalised
// again (zeros stay zero): a stand-in for a matrix drawn from its sampling
// distribution.
func perturbed(rng *rand.Rand, p *Problem, spread float64) MatrixSample {
	s := MatrixSample{Rows: make([][][][]float64, len(p.Classes))}
	for k := range p.Classes {
		c := &p.Classes[k]
		s.Rows[k] = make([][][]float64, len(c.Actions))
		for a := range c.Actions {
			s.Rows[k][a] = make([][]float64, len(c.Initial))
			for i, row := range c.Actions[a].Rows {
				out := make([]float64, len(row))
				sum := 0.0
				for j, v := range row {
					out[j] = v * (1 + spread*(2*rng.Float64()-1))
					sum += out[j]
				}
				for j := range out {
					out[j] /= sum
				}
				s.Rows[k][a][i] = out
			}
		}
	}
	return s
}

// measureOf is a target's measure at the end of year y (1-based) of a
// condition: a group share (0-1) or the score (0-100), computed here from
// the quantities alone.
func measureOf(p *Problem, cond [][][]float64, tg *Target, y int) float64 {
	one := func(k int) float64 {
		q := cond[k][y]
		switch {
		case tg.Kind == MinScore || tg.Kind == Hold:
			return p.Classes[k].ScoreOf(q)
		case tg.States != nil:
			in, tot := 0.0, 0.0
			for i, v := range q {
				tot += v
				if tg.States[i] {
					in += v
				}
			}
			return in / tot
		}
		return p.Classes[k].SharesOf(q)[tg.Group]
	}
	if tg.Class != Network {
		return one(tg.Class)
	}
	w, v := p.Weights(), 0.0
	for k := range p.Classes {
		v += w[k] * one(k)
	}
	return v
}

// missed returns how far a condition misses target n in its worst year
// (positive when missed).
func missed(p *Problem, cond [][][]float64, n int) float64 {
	tg := &p.Targets[n]
	from, to := tg.From, tg.To
	limit := tg.Value
	if tg.Kind == Hold {
		from, to = p.Horizon, p.Horizon
		limit = p.InitialScore(tg.Class)
	}
	worst := math.Inf(-1)
	for y := from; y <= to; y++ {
		v := measureOf(p, cond, tg, y)
		if tg.Kind == MaxShare {
			worst = math.Max(worst, v-limit)
		} else {
			worst = math.Max(worst, limit-v)
		}
	}
	return worst
}

// The robust plan meets every target under the point estimate and under
// each of its samples, checked by forecasting its work program under each
// sample separately (RollWork) and measuring the targets from the
// quantities; no sample is asked to treat more than it holds. Random
// problems with targets (Generate) and a target on one state, ten samples
// each.
func TestRobustPlanHoldsUnderEachSample(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 2027))
	checked := 0
	for c := range 8 {
		p := Generate(rng, GenSpec{Classes: 1 + rng.IntN(3), States: 4 + rng.IntN(3), Treatments: 2 + rng.IntN(2), Years: 4 + rng.IntN(5), Targets: true, BudgetShare: 0.3 + 0.3*rng.Float64()})
		// A target on one named state: at most 15% of class 1 in its worst.
		worst := make([]bool, len(p.Classes[0].Initial))
		worst[len(worst)-1] = true
		p.Targets = append(p.Targets, Target{Label: "class 1 worst state at most 15%", Class: 0, Kind: MaxShare, States: worst, Value: 0.15, From: 2, To: p.Horizon})
		var samples []MatrixSample
		for range 10 {
			samples = append(samples, perturbed(rng, p, 0.15))
		}
		t.Run(fmt.Sprintf("case%d", c), func(t *testing.T) {
			rp, err := SolveRobust(p, samples)
			if err != nil {
				t.Fatal(err)
			}
			if !rp.HoldsUnderSamples {
				t.Skipf("the targets cannot hold under every sample within the budget")
			}
			checked++
			total := 0.0
			for k := range p.Classes {
				total += p.Classes[k].Total()
			}
			for s := -1; s < len(samples); s++ {
				var sm *MatrixSample
				if s >= 0 {
					sm = &samples[s]
				}
				cond, undone := RollWork(p, rp.Work, sm)
				for k, u := range undone {
					if u > 1e-7*total {
						t.Errorf("sample %d, class %d: the work asks to treat %g more than the states hold", s+1, k+1, u)
					}
				}
				for n := range p.Targets {
					if m := missed(p, cond, n); m > 1e-6 {
						t.Errorf("sample %d (0: point estimate): target %d (%s) missed by %g", s+1, n+1, p.Targets[n].Label, m)
					}
				}
				if s >= 0 {
					for k := range cond {
						for y := range cond[k] {
							for i, q := range cond[k][y] {
								if math.Abs(q-rp.Samples[s][k][y][i]) > 1e-9*total {
									t.Fatalf("sample %d: reported condition differs from the forecast", s+1)
								}
							}
						}
					}
				}
			}
		})
	}
	if checked < 3 {
		t.Errorf("only %d of 8 random problems had a robust plan that meets its targets", checked)
	}
}

// Samples equal to the point estimate add nothing: the robust plan's
// optimum is the flat plan's (to the tolerance of two lp_solve solves).
func TestRobustWithoutSpreadIsThePlan(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	for c := range 4 {
		p := Generate(rng, GenSpec{Classes: 2, States: 5, Treatments: 3, Years: 6, Targets: c%2 == 0, BudgetShare: 0.4})
		same := MatrixSample{Rows: make([][][][]float64, len(p.Classes))}
		for k := range p.Classes {
			for a := range p.Classes[k].Actions {
				same.Rows[k] = append(same.Rows[k], p.Classes[k].Actions[a].Rows)
			}
		}
		rp, err := SolveRobust(p, []MatrixSample{same, same})
		if err != nil {
			t.Fatal(err)
		}
		plan, err := Solve(p)
		if err != nil {
			t.Fatal(err)
		}
		if rp.Status != plan.Status {
			t.Fatalf("case %d: robust %s, plan %s", c, rp.Status, plan.Status)
		}
		got, want := rp.ConditionScore, plan.ConditionScore
		if p.Objective == MinCost {
			got, want = rp.PresentValue+rp.RoutinePresentValue, plan.PresentValue+plan.RoutinePresentValue
		}
		if plan.Status == Optimal && !relClose(got, want, 1e-6) {
			t.Errorf("case %d (%s): robust %.10g, plan %.10g", c, p.Objective, got, want)
		}
	}
}

// handSizedRobust is a problem small enough to write its robust LP by hand:
// 100 units of one class in three states (good, fair, poor; scores 100,
// 50, 0), renewal of fair or poor units to good (cost 10 a unit, no ageing
// that year), at most 200 a year, at most 20% poor at the end of every
// year of three, least cost (no discounting); and two samples of the
// do-nothing matrix.
func handSizedRobust(t *testing.T) (*Problem, []MatrixSample, [3][3][3]float64) {
	t.Helper()
	m := [3][3][3]float64{ // [scenario][from][to]: the point estimate, then the samples
		{{0.8, 0.2, 0}, {0, 0.7, 0.3}, {0, 0, 1}},
		{{0.7, 0.3, 0}, {0, 0.6, 0.4}, {0, 0, 1}},
		{{0.9, 0.1, 0}, {0, 0.75, 0.25}, {0, 0, 1}},
	}
	renew := treatments.Treatment{Name: "renew", Applies: []int{1, 2}, Cost: []float64{10, 10, 10}, Effect: treatments.Effect{Kind: treatments.ToState, State: 0}, SkipsAging: true}
	actions := func(s int) []treatments.Action {
		rows := make([][]float64, 3)
		for i := range rows {
			rows[i] = m[s][i][:]
		}
		tr, err := markov.NewTransition(rows, markov.Options{})
		if err != nil {
			t.Fatal(err)
		}
		acts, err := treatments.Actions(tr, []treatments.Treatment{renew})
		if err != nil {
			t.Fatal(err)
		}
		return acts
	}
	p := &Problem{Horizon: 3, Budget: []float64{200, 200, 200}, Objective: MinCost,
		Classes: []Class{{Name: "pipes", Initial: []float64{50, 30, 20}, Score: []float64{100, 50, 0}, Group: []Group{Good, Fair, Poor}, Weight: 1, Actions: actions(0)}},
		Targets: []Target{{Label: "poor at most 20%", Class: Network, Kind: MaxShare, Group: Poor, Value: 0.2, From: 1, To: 3}}}
	var samples []MatrixSample
	for s := 1; s <= 2; s++ {
		acts := actions(s)
		rows := make([][][]float64, len(acts))
		for a := range acts {
			rows[a] = acts[a].Rows
		}
		samples = append(samples, MatrixSample{Rows: [][][][]float64{rows}})
	}
	return p, samples, m
}

// The robust LP against GLPK: an independent scenario LP of the hand-sized
// case, written out here in quantities (renewals r[t,i] shared, untreated
// quantities u[s,t,i] per scenario) straight from the definitions in the
// package notes, and solved by glpsol, gives the same least cost as
// SolveRobust; and glpsol on the model SolveRobust exports agrees too.
// Renewal costs no ageing in its year, so a renewed unit ends the year
// good in every scenario. The point-estimate plan is cheaper and misses
// the target under a sample: the reason for a robust plan.
func TestRobustMatchesGLPKOnHandSizedModel(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	p, samples, m := handSizedRobust(t)
	rp, err := SolveRobust(p, samples)
	if err != nil {
		t.Fatal(err)
	}
	if rp.Status != Optimal || !rp.HoldsUnderSamples {
		t.Fatalf("status %s, holds under the samples %t", rp.Status, rp.HoldsUnderSamples)
	}
	got := rp.PresentValue

	var lp strings.Builder
	n0 := []float64{50, 30, 20}
	const T, total = 3, 100.0
	obj := []string{}
	for t := 1; t <= T; t++ {
		obj = append(obj, fmt.Sprintf("10 r%d_1 + 10 r%d_2", t, t))
	}
	fmt.Fprintf(&lp, "Minimize\n obj: %s\nSubject To\n", strings.Join(obj, " + "))
	for s := range 3 {
		for t := 1; t <= T; t++ {
			for j := range 3 {
				terms := []string{fmt.Sprintf("u%d_%d_%d", s, t, j)}
				if j > 0 {
					terms = append(terms, fmt.Sprintf("r%d_%d", t, j))
				}
				rhs := 0.0
				if t == 1 {
					rhs = n0[j]
				} else {
					for i := range 3 {
						if v := m[s][i][j]; v != 0 {
							terms = append(terms, fmt.Sprintf("- %.12g u%d_%d_%d", v, s, t-1, i))
						}
					}
					if j == 0 {
						terms = append(terms, fmt.Sprintf("- r%d_1 - r%d_2", t-1, t-1))
					}
				}
				fmt.Fprintf(&lp, " flow%d_%d_%d: %s = %g\n", s, t, j, strings.Join(terms, " + "), rhs)
			}
			// Poor at the end of year t: untreated units that end poor.
			var poor []string
			for i := range 3 {
				if v := m[s][i][2]; v != 0 {
					poor = append(poor, fmt.Sprintf("%.12g u%d_%d_%d", v, s, t, i))
				}
			}
			fmt.Fprintf(&lp, " poor%d_%d: %s <= %g\n", s, t, strings.Join(poor, " + "), 0.2*total)
		}
	}
	for t := 1; t <= T; t++ {
		fmt.Fprintf(&lp, " budget%d: 10 r%d_1 + 10 r%d_2 <= 200\n", t, t, t)
	}
	lp.WriteString("End\n")
	text := strings.ReplaceAll(lp.String(), "+ -", "-")
	path := filepath.Join(t.TempDir(), "hand.lp")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	want, optimal, _ := optimizetest.GlpsolObjective(t, "--lp", path)
	if !optimal {
		t.Fatalf("glpsol: the hand-written robust LP is not solved to optimality:\n%s", text)
	}
	if !relClose(got, want, 1e-7) {
		t.Errorf("SolveRobust %.12g, glpsol on the hand-written scenario LP %.12g", got, want)
	}

	model, err := BuildRobustModel(p, samples)
	if err != nil {
		t.Fatal(err)
	}
	// The exported model counts money in units of the largest yearly cap
	// (200), as every wearplan model does.
	exported, optimal, _ := optimizetest.GlpsolObjective(t, "--freemps", writeModel(t, model, "robust"))
	if !optimal || !relClose(200*exported, want, 1e-7) {
		t.Errorf("glpsol on the exported robust model %.12g (optimal %t), on the hand-written one %.12g", 200*exported, optimal, want)
	}

	plan, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	if !(plan.PresentValue < got-1e-6) {
		t.Errorf("the point-estimate plan costs %.6g, the robust plan %.6g: robustness should cost money here", plan.PresentValue, got)
	}
	worst := math.Inf(-1)
	for s := range samples {
		cond, _ := RollWork(p, plan.Work, &samples[s])
		worst = math.Max(worst, missed(p, cond, 0))
	}
	if worst <= 1e-6 {
		t.Errorf("the point-estimate plan holds under every sample; the case does not show the point of a robust plan")
	}
	t.Logf("least cost: robust %.4g, point estimate %.4g; the point plan misses 20%% poor by %.3g under its worst sample", got, plan.PresentValue, worst)
}
