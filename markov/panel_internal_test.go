package markov

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
)

// The exact gradient of the interval likelihood against gonum's central
// finite differences (diff/fd), at random parameters, for each structure.
// Central differences with step h err by O(h²·f”') plus rounding
// O(eps·f/h); with h = 1e-5 and f, its derivatives of order 1 that is
// ~1e-10, so 1e-7 relative to the largest component is a safe bound that a
// wrong term in the gradient (of order 1e-2 or more) cannot meet.
func TestIntervalGradientMatchesFiniteDifferences(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 3))
	for _, s := range []Structure{{}, {OneStep: true}, {Improvement: true}, {OneStep: true, Improvement: true}} {
		n := 5
		c := NewCounts(n)
		for _, g := range []int{1, 2, 4} {
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					if s.Possible(g, i, j, n) {
						c.Add(g, i, j, float64(1+r.IntN(30)))
					}
				}
			}
		}
		m := newSoftmaxModel(n, s)
		ev := newIntervalEval(c, m)
		x := make([]float64, m.size)
		for k := range x {
			x[k] = r.NormFloat64()
		}
		got := make([]float64, len(x))
		ev.grad(got, x)
		want := fd.Gradient(nil, ev.f, x, &fd.Settings{Formula: fd.Central, Step: 1e-5})
		scale := 0.0
		for _, v := range want {
			scale = math.Max(scale, math.Abs(v))
		}
		for k := range got {
			if math.Abs(got[k]-want[k]) > 1e-7*scale {
				t.Errorf("%v: gradient[%d] = %.10g, finite differences %.10g", s, k, got[k], want[k])
			}
		}
	}
}
