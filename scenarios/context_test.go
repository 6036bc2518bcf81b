package scenarios_test

import (
	"context"
	"errors"
	"math/rand/v2"
	"testing"
	"time"

	"wearplan/optimize"
	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

// maxPollsAfterCancel bounds how often a call may look at its context
// after finding it cancelled. Every solver call, simulated run and
// bootstrap fit is preceded or followed by one poll, so this bounds the
// work done after the cancellation: a poll per job or run under way on
// each of the machine's workers, a couple per job left unstarted, and the
// final checks. A call that went on with its remaining solves, runs or
// resamples would poll hundreds of times.
const maxPollsAfterCancel = 20

// TestCallsStopOnCancel checks the cancellation contract of the Go standard
// library's context package (a call given a context that is cancelled
// returns ctx.Err(), here wrapped, as database/sql's QueryContext does) on
// each long-running call: a plan by either method, a sweep, a simulation
// and a fit. (a) Cancelled before the call: an error for which
// errors.Is(err, context.Canceled) holds, and no result. (b) Cancelled
// midway, at the poll half way through an uncancelled call's polls of its
// context (optimizetest.CountdownContext, no timing): the same, with at
// most maxPollsAfterCancel polls after the cancellation. The 10 s bound
// catches a call that hangs; it is not a speed target.
func TestCallsStopOnCancel(t *testing.T) {
	sc, err := scenarios.LoadFile("examples/marrowby.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := syntheticCSV(rand.New(rand.NewPCG(31, 7)), culvertTruth, 500, 6)
	ins, err := readCSV(t, text, scenarios.InspectionOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// result reports whether a call's result is nil, and its error.
	type result func(context.Context) (bool, error)
	calls := []struct {
		name string
		call result
	}{
		{"plan flat", func(ctx context.Context) (bool, error) {
			r, err := scenarios.PlanContext(ctx, sc, scenarios.Options{Solver: optimize.Flat})
			return r == nil, err
		}},
		{"plan decomposed", func(ctx context.Context) (bool, error) {
			r, err := scenarios.PlanContext(ctx, sc, scenarios.Options{Solver: optimize.Decomposed})
			return r == nil, err
		}},
		{"sweep", func(ctx context.Context) (bool, error) {
			b := sc.Budget[0]
			r, err := scenarios.SweepContext(ctx, sc, []float64{0.5 * b, b, 1.5 * b, 2 * b}, scenarios.Options{})
			return r == nil, err
		}},
		{"simulate", func(ctx context.Context) (bool, error) {
			r, err := scenarios.SimulateContext(ctx, sc, scenarios.SimulateOptions{Runs: 200, Seed: 1})
			return r == nil, err
		}},
		{"fit", func(ctx context.Context) (bool, error) {
			r, err := scenarios.FitContext(ctx, ins, scenarios.FitOptions{Method: scenarios.MethodInterval, Bootstrap: 40, Seed: 3})
			return r == nil, err
		}},
	}
	check := func(t *testing.T, when string, call result, ctx context.Context) {
		t.Helper()
		start := time.Now()
		isNil, err := call(ctx)
		if !errors.Is(err, context.Canceled) {
			t.Errorf("cancelled %s: err = %v, want one wrapping context.Canceled", when, err)
		}
		if !isNil {
			t.Errorf("cancelled %s: got a result", when)
		}
		if d := time.Since(start); d > 10*time.Second {
			t.Errorf("cancelled %s: took %s", when, d) // a hang, not a speed target
		}
	}
	for _, c := range calls {
		t.Run(c.name, func(t *testing.T) {
			ctx, cancel := context.WithCancel(context.Background())
			cancel()
			check(t, "before the call", c.call, ctx)

			full := optimizetest.NewCountdownContext(1 << 40)
			if isNil, err := c.call(full); err != nil || isNil {
				t.Fatalf("uncancelled: result nil %v, err %v", isNil, err)
			}
			n := full.Polls()
			if n < 4 {
				t.Fatalf("the call polled its context %d times; want a poll per solve, run or resample", n)
			}
			mid := optimizetest.NewCountdownContext(n / 2)
			check(t, "midway", c.call, mid)
			if a := mid.PollsAfter(); a > maxPollsAfterCancel {
				t.Errorf("cancelled at poll %d of %d: %d polls after the cancellation, want at most %d", n/2+1, n, a, maxPollsAfterCancel)
			}
			t.Logf("cancelled at poll %d of %d: %d polls after", n/2+1, n, mid.PollsAfter())
		})
	}
}
