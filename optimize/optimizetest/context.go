package optimizetest

import (
	"context"
	"sync"
	"sync/atomic"
)

// CountdownContext is a context that is cancelled by being looked at: its
// Err (and Done) turn to context.Canceled once they have been polled the
// given number of times, so a test can cancel a call at every point where
// the call checks its context, with no timing involved. It keeps the
// context package's contract: once Done is closed, Err returns the same
// non-nil error on every call.
type CountdownContext struct {
	context.Context
	left   atomic.Int64
	polls  atomic.Int64
	after  atomic.Int64
	done   chan struct{}
	closed sync.Once
}

// NewCountdownContext returns a context cancelled at its left+1st poll.
func NewCountdownContext(left int64) *CountdownContext {
	c := &CountdownContext{Context: context.Background(), done: make(chan struct{})}
	c.left.Store(left)
	return c
}

// Err counts a poll and returns context.Canceled once the countdown has run out.
func (c *CountdownContext) Err() error {
	c.polls.Add(1)
	if c.left.Add(-1) < 0 {
		c.after.Add(1)
		c.closed.Do(func() { close(c.done) })
		return context.Canceled
	}
	return nil
}

// Done counts a poll, as Err does, and returns a channel closed once the
// countdown has run out.
func (c *CountdownContext) Done() <-chan struct{} {
	c.Err()
	return c.done
}

// Polls is the number of polls so far.
func (c *CountdownContext) Polls() int64 { return c.polls.Load() }

// PollsAfter is the number of polls that found the context cancelled.
func (c *CountdownContext) PollsAfter() int64 { return c.after.Load() }
