package whatif

import (
	"context"
	"errors"
	"strconv"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

func TestMemoSharesOneComputation(t *testing.T) {
	m := newMemo(4)
	var calls atomic.Int32
	release := make(chan struct{})
	compute := func(context.Context) (*outcome, error) {
		calls.Add(1)
		<-release
		return &outcome{body: []byte("x")}, nil
	}
	var wg sync.WaitGroup
	froms := make([]source, 10)
	for i := range froms {
		wg.Go(func() {
			out, from, err := m.get(context.Background(), "k", compute)
			if err != nil || string(out.body) != "x" {
				t.Errorf("get: %v", err)
			}
			froms[i] = from
		})
	}
	// Let every caller join before the computation ends.
	for deadline := time.Now().Add(5 * time.Second); ; time.Sleep(time.Millisecond) {
		m.mu.Lock()
		n := 0
		if f := m.inflight["k"]; f != nil {
			n = f.waiters
		}
		m.mu.Unlock()
		if n == 10 || time.Now().After(deadline) {
			break
		}
	}
	close(release)
	wg.Wait()
	if calls.Load() != 1 {
		t.Errorf("%d computations for one key", calls.Load())
	}
	solved := 0
	for _, f := range froms {
		if f == fromSolve {
			solved++
		}
	}
	if solved != 1 {
		t.Errorf("answers came from %v; want one solve, the rest shared", froms)
	}
	if _, from, _ := m.get(context.Background(), "k", compute); from != fromMemo || calls.Load() != 1 {
		t.Errorf("again: from %s after %d computations", from, calls.Load())
	}
}

// When everyone waiting gives up, the computation is told to stop, and a
// later request starts afresh instead of joining it.
func TestMemoCallsOffAbandonedWork(t *testing.T) {
	m := newMemo(4)
	stopped := make(chan struct{})
	ctx, cancel := context.WithCancel(context.Background())
	go func() {
		time.Sleep(20 * time.Millisecond)
		cancel()
	}()
	_, _, err := m.get(ctx, "k", func(fctx context.Context) (*outcome, error) {
		<-fctx.Done()
		close(stopped)
		return nil, fctx.Err()
	})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("caller that gave up got %v", err)
	}
	select {
	case <-stopped:
	case <-time.After(5 * time.Second):
		t.Fatal("the abandoned computation was not called off")
	}
	out, from, err := m.get(context.Background(), "k", func(context.Context) (*outcome, error) { return &outcome{body: []byte("new")}, nil })
	if err != nil || from != fromSolve || string(out.body) != "new" {
		t.Errorf("after giving up: %v %s %v", out, from, err)
	}
}

func TestMemoForgetsTheOldest(t *testing.T) {
	m := newMemo(3)
	var calls atomic.Int32
	get := func(k int) source {
		_, from, err := m.get(context.Background(), strconv.Itoa(k), func(context.Context) (*outcome, error) {
			calls.Add(1)
			return &outcome{}, nil
		})
		if err != nil {
			t.Fatal(err)
		}
		return from
	}
	for k := range 3 {
		get(k)
	}
	get(0) // 0 is now the most recent
	get(3) // forgets 1
	if get(0) != fromMemo || get(2) != fromMemo || get(1) != fromSolve {
		t.Error("the memo forgot the wrong entry")
	}
	if m.order.Len() != 3 || len(m.entries) != 3 {
		t.Errorf("%d entries, want 3", m.order.Len())
	}
	// Errors are not remembered.
	for range 2 {
		if _, _, err := m.get(context.Background(), "bad", func(context.Context) (*outcome, error) { return nil, errors.New("no") }); err == nil {
			t.Error("error lost")
		}
	}
	if _, ok := m.entries["bad"]; ok {
		t.Error("an error was remembered")
	}
}

// A solve whose requests have all gone (its context cancelled, here at the
// poll half way through an uncancelled solve's polls of its context, by
// optimizetest.CountdownContext rather than timing) stops between solver
// calls and simulated runs with the context's error, the cancellation
// contract of the Go standard library's context package, instead of
// planning on for nobody.
func TestSolveStopsWhenCalledOff(t *testing.T) {
	s, err := New(demoSources(t, "marrowby.yaml"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	src := &s.sources[0]
	ch := src.Scenario.Current()
	full := optimizetest.NewCountdownContext(1 << 40)
	if _, err := s.solve(full, 0, ch, true); err != nil {
		t.Fatal(err)
	}
	// The same solve again, without the funding answers kept by the first.
	s.kept = newKeptAnswers(1)
	mid := optimizetest.NewCountdownContext(full.Polls() / 2)
	out, err := s.solve(mid, 0, ch, true)
	if !errors.Is(err, context.Canceled) || out != nil {
		t.Errorf("called off at poll %d of %d: %v, %v; want no outcome and context.Canceled", full.Polls()/2+1, full.Polls(), out, err)
	}
}

// The budget-free answers are shared by changes that differ only in the
// network's budget and the name, not by other changes or scenarios, and
// the oldest key is forgotten beyond the bound; many requests at once get
// one BudgetFree per key (run with -race).
func TestKeptAnswersKeyAndBound(t *testing.T) {
	k := newKeptAnswers(2)
	lvl, other, esc, cut := 3e6, 4e6, 0.05, -10.0
	base := k.get(0, scenarios.Changes{BudgetLevel: &lvl})
	if k.get(0, scenarios.Changes{BudgetLevel: &other, Name: "cut", BudgetSteps: []scenarios.BudgetStep{{FromYear: 2029, Percent: &cut}}}) != base {
		t.Error("another budget got other answers")
	}
	if k.get(0, scenarios.Changes{BudgetLevel: &lvl, Escalation: &esc}) == base {
		t.Error("another cost escalation shared the budget-free answers")
	}
	if k.get(1, scenarios.Changes{}) == base {
		t.Error("another scenario shared the budget-free answers")
	}
	if k.order.Len() != 2 || k.get(0, scenarios.Changes{}) == base {
		t.Errorf("%d keys kept; the oldest should be forgotten", k.order.Len())
	}
	var wg sync.WaitGroup
	got := make([]*scenarios.BudgetFree, 8)
	for i := range got {
		wg.Go(func() {
			v := float64(i) * 1e6
			got[i] = k.get(2, scenarios.Changes{BudgetLevel: &v})
		})
	}
	wg.Wait()
	for _, bf := range got {
		if bf != got[0] {
			t.Fatal("requests at once got different budget-free answers")
		}
	}
}
