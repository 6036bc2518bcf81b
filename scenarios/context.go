package scenarios

import (
	"context"
	"errors"
	"fmt"

	"wearplan/optimize"
)

// Cancellation. Each long-running call (PlanContext, SweepContext,
// CompareContext, LongRunContext, PlanRobustContext, SimulateContext,
// FitContext) takes a context, as database/sql's QueryContext does beside
// Query; the calls without it use context.Background(). The context goes
// with every optimize.Problem the call builds (optimize.Problem.WithContext),
// so each solve stops between lp_solve calls once it is done; the
// simulation stops starting runs and the bootstrap stops fitting
// resamples. A call whose context is done before it returns gives an
// error wrapping the context's error and no result, even when its work
// was finished: nothing half-done (a plan whose funding answers were cut
// short, say) comes back as if it were whole.

// orBackground is ctx, or context.Background() when ctx is nil (an options
// value made without one of the ...Context calls).
func orBackground(ctx context.Context) context.Context {
	if ctx == nil {
		return context.Background()
	}
	return ctx
}

// stopped returns the error of a call whose context is done, wrapping the
// context's error, and nil while it is not.
func stopped(ctx context.Context) error {
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("stopped before it finished: %w", err)
	}
	return nil
}

// finish returns r and err, unless ctx is done: then no result and the
// context's error.
func finish[T any](ctx context.Context, r *T, err error) (*T, error) {
	if cerr := stopped(ctx); cerr != nil {
		if err != nil && errors.Is(err, ctx.Err()) {
			return nil, err
		}
		return nil, cerr
	}
	return r, err
}

// halted reports whether err ends the whole call rather than one part of
// it (a sweep point, a funding answer): the solver's time limit ran out or
// the context was cancelled or passed its deadline.
func halted(err error) bool {
	return optimize.IsTimeout(err) || errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded)
}

// context is the call's context (see PlanContext).
func (o Options) context() context.Context { return orBackground(o.ctx) }

// problem is sc's optimisation problem, carrying the call's context.
func (o Options) problem(sc *Scenario) (*optimize.Problem, error) {
	p, err := sc.Problem()
	if err != nil {
		return nil, err
	}
	return p.WithContext(o.context()), nil
}
