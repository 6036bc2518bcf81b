package optimize

import (
	"context"
	"errors"
	"math/rand/v2"
	"testing"
	"time"

	"wearplan/optimize/optimizetest"
)

// Every lp_solve call of a solve is preceded by one poll of its context,
// so the polls that find it cancelled (optimizetest.CountdownContext)
// bound the solver calls tried after the cancellation.
//
// maxPollsAfterCancel bounds how often a stopped solve may look at its
// context after seeing it cancelled: once where it stops, once more in the
// decomposition (its warm-up gives way to the round's check). A solve
// that tried another method or path after the cancellation would poll
// (and call lp_solve) again and again.
const maxPollsAfterCancel = 3

// TestSolveContext checks the cancellation contract of the Go standard
// library's context package on every kind of solve: a solve whose context
// is cancelled, before it starts or after any number of lp_solve calls,
// returns an error for which errors.Is(err, context.Canceled) holds and
// no answer, stops calling lp_solve once it has seen the cancellation, and
// is not retried by another method (SolveWith's fallback).
func TestSolveContext(t *testing.T) {
	p := Generate(rand.New(rand.NewPCG(9, 1)), GenSpec{Classes: 4, States: 5, Treatments: 4, Years: 12, Targets: true, BudgetShare: 0.15})
	solves := []struct {
		name  string
		solve func(*Problem) (any, error)
	}{
		{"flat", func(p *Problem) (any, error) { return SolveWith(p, Options{Method: Flat}) }},
		{"decomposed", func(p *Problem) (any, error) { return SolveWith(p, Options{Method: Decomposed}) }},
		{"long run", func(p *Problem) (any, error) { return SolveLongRun(p) }},
		{"level budget", func(p *Problem) (any, error) { return LevelBudget(p) }},
	}
	for _, s := range solves {
		t.Run(s.name, func(t *testing.T) {
			// How often an uncancelled solve polls its context.
			full := optimizetest.NewCountdownContext(1 << 40)
			if _, err := s.solve(p.WithContext(full)); err != nil {
				t.Fatalf("uncancelled solve: %v", err)
			}
			// A deadline already passed: the error says so
			// (context.DeadlineExceeded), not the solver's time limit.
			dctx, dcancel := context.WithDeadline(context.Background(), time.Unix(0, 0))
			defer dcancel()
			if _, err := s.solve(p.WithContext(dctx)); !errors.Is(err, context.DeadlineExceeded) || IsTimeout(err) {
				t.Errorf("past deadline: err = %v, want one wrapping context.DeadlineExceeded", err)
			}
			n := full.Polls()
			if n < 2 {
				t.Fatalf("the solve polled its context %d times; want one poll per lp_solve call", n)
			}
			// Not n-1: a cancellation at the last poll may come after
			// the last lp_solve call (the decomposition's warm-up polls
			// too), and a solve that has finished its work may return it.
			for _, left := range []int64{0, 1, n / 2} {
				ctx := optimizetest.NewCountdownContext(left)
				start := time.Now()
				got, err := s.solve(p.WithContext(ctx))
				if !errors.Is(err, context.Canceled) {
					t.Fatalf("cancelled after %d of %d polls: err = %v, want one wrapping context.Canceled", left, n, err)
				}
				if errors.Is(err, context.DeadlineExceeded) || IsTimeout(err) {
					t.Errorf("cancelled after %d polls: %v reads as a time limit", left, err)
				}
				switch v := got.(type) {
				case *Plan:
					if v != nil {
						t.Errorf("cancelled after %d polls: got a plan", left)
					}
				case *LongRun:
					if v != nil {
						t.Errorf("cancelled after %d polls: got a long-run plan", left)
					}
				case float64:
					if v != 0 {
						t.Errorf("cancelled after %d polls: got a budget %g", left, v)
					}
				}
				if a := ctx.PollsAfter(); a > maxPollsAfterCancel {
					t.Errorf("cancelled after %d polls: %d more polls after the cancellation, want at most %d", left, a, maxPollsAfterCancel)
				}
				// A hang, not a speed target.
				if d := time.Since(start); d > 10*time.Second {
					t.Errorf("cancelled after %d polls: took %s", left, d)
				}
			}
		})
	}
}

// TestWithContext checks that WithContext is a shallow copy that leaves
// the original alone, and that Context defaults to the background context
// (as net/http.Request's does).
func TestWithContext(t *testing.T) {
	p := &Problem{Horizon: 3}
	if p.Context() != context.Background() {
		t.Fatalf("Context of a new problem is not context.Background()")
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	q := p.WithContext(ctx)
	if q == p || q.Context() != ctx || p.Context() != context.Background() || q.Horizon != 3 {
		t.Fatalf("WithContext: got %p with %v from %p with %v", q, q.Context(), p, p.Context())
	}
}
