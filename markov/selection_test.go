package markov_test

import (
	"math/rand/v2"
	"testing"

	"wearplan/markov"
)

// workHistories simulates yearly inspections of assets deteriorating by
// the matrix rows (synthetic data generated in the test from known
// parameters). trigger says, from the state at the previous inspection and
// the state the asset has reached, whether work is done before this
// inspection; work restores the asset to the best state and is recorded on
// the inspection.
func workHistories(r *rand.Rand, rows [][]float64, assets, years int, trigger func(r *rand.Rand, prev, now int) bool) [][]markov.Inspection {
	n := len(rows)
	out := make([][]markov.Inspection, assets)
	for a := range out {
		s := a % (n - 1)
		h := []markov.Inspection{{Time: 2010, State: s, Ref: a}}
		for t := 1; t <= years; t++ {
			prev := s
			s = draw(r, rows[s])
			work := trigger(r, prev, s)
			if work {
				s = 0
			}
			h = append(h, markov.Inspection{Time: 2010 + float64(t), State: s, Work: work, Ref: a})
		}
		out[a] = h
	}
	return out
}

func diagnose(t *testing.T, h [][]markov.Inspection) (markov.SelectionDiagnosis, *markov.Transition) {
	t.Helper()
	sample, _, prep, err := markov.Prepare(h, 5, markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	p, err := markov.CountingMLE(sample.Counts(), markov.Structure{})
	if err != nil {
		t.Fatal(err)
	}
	stay := make([]float64, 5)
	for i := range stay {
		stay[i] = p.At(i, i)
	}
	return prep.Selection.Diagnose(stay), p
}

// Work that follows deterioration between inspections (an asset that
// dropped is treated with probability 0.7 before its next inspection)
// leaves out the pairs of assets that dropped: the counting estimate of
// each staying probability comes out above the truth the data were drawn
// from, the diagnosis warns, and the truth lies between the estimate and
// the bound if every work pair had left (up to sampling error). Work at random (one asset in ten
// a year, whatever its condition) biases nothing and must not be flagged
// as following condition.
func TestWorkSelectionDiagnosis(t *testing.T) {
	r := rand.New(rand.NewPCG(18, 1))
	afterDrop := workHistories(r, truth, 4000, 6, func(r *rand.Rand, prev, now int) bool { return now > prev && r.Float64() < 0.7 })
	d, p := diagnose(t, afterDrop)
	if !d.ConditionDriven || !d.Warn {
		t.Fatalf("work after a drop: condition-driven %v, warn %v (chi-square %.2f, p %.3g)", d.ConditionDriven, d.Warn, d.ByState.Statistic, d.ByState.PValue)
	}
	flagged := 0
	for _, s := range d.States {
		if s.State == 4 {
			continue
		}
		want := truth[s.State][s.State]
		if s.Stay <= want {
			t.Errorf("state %d: estimate %.3f not above the truth %.2f; the test's premise fails", s.State, p.At(s.State, s.State), want)
		}
		if s.Flagged {
			flagged++
			// Here every work pair did leave, so the bound is itself an
			// estimate of the truth: allow four standard errors of
			// sampling noise below it.
			if want < s.StayIfLeft-4*s.StayError || want > s.Stay {
				t.Errorf("state %d: truth %.2f outside the bound %.3f - %.3f (standard error %.3f)", s.State, want, s.StayIfLeft, s.Stay, s.StayError)
			}
		}
	}
	if flagged == 0 {
		t.Error("no state flagged")
	}

	random := workHistories(r, truth, 4000, 6, func(r *rand.Rand, prev, now int) bool { return r.Float64() < 0.1 })
	d, _ = diagnose(t, random)
	if d.ConditionDriven || d.Warn {
		t.Errorf("work at random: condition-driven %v, warn %v (chi-square %.2f, p %.3g)", d.ConditionDriven, d.Warn, d.ByState.Statistic, d.ByState.PValue)
	}
}

// The Cochran-Armitage statistic by hand (invented counts): one state's
// pairs over 1, 2 and 3 years, 100 of each, 10, 20 and 30 with work.
// p̄ = 0.2, T = Σ x(y - n p̄) = 1·(10-20) + 2·(20-20) + 3·(30-20) = 20,
// V = 0.2·0.8·(100·(1+4+9) - (100·6)²/300) = 0.16·(1400 - 1200) = 32,
// Z = 20/sqrt(32) = 3.5355; one-sided p = 2.03e-4 (standard normal table:
// P(Z > 3.54) = 0.0002, from memory). The homogeneity test across states
// by hand: two states, 90/10 and 70/30 kept/work, pooled share 0.2,
// expected 80/20 each: X² = 2·(10²/80 + 10²/20) = 12.5 on 1 degree of
// freedom, p = 4.07e-4 (chi-square table: 10.83 at 0.001, from memory).
func TestSelectionTestsByHand(t *testing.T) {
	w := markov.NewWorkSelectionForTest(3, [][3][2]float64{{{90, 10}, {80, 20}, {70, 30}}})
	d := w.Diagnose([]float64{0.9, 0.8, 1})
	if z := d.ByYears.Z; z < 3.5354 || z > 3.5356 {
		t.Errorf("z = %.5f, want 3.5355", z)
	}
	if p := d.ByYears.PValue; p < 2.0e-4 || p > 2.1e-4 {
		t.Errorf("p = %.3g, want 2.03e-4", p)
	}
	w = markov.NewWorkSelectionForTest(2, [][3][2]float64{{{90, 10}}, {{70, 30}}})
	d = w.Diagnose([]float64{0.9, 1})
	if x := d.ByState.Statistic; x < 12.4999 || x > 12.5001 || d.ByState.DF != 1 {
		t.Errorf("X² = %.5f on %d df, want 12.5 on 1", x, d.ByState.DF)
	}
	if p := d.ByState.PValue; p < 4.0e-4 || p > 4.1e-4 {
		t.Errorf("p = %.3g, want 4.07e-4", p)
	}
}
