package whatif

import (
	"bytes"
	"container/list"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"strconv"
	"strings"
	"sync"
	"time"

	"wearplan/cmd/internal/report"
	"wearplan/optimize"
	"wearplan/scenarios"
)

// outcome is a planned alternative: the changed scenario, its plan, and
// the /api/plan answer, encoded once.
type outcome struct {
	scenario *scenarios.Scenario
	result   *scenarios.Result
	// simulation holds the uncertainty bands when the request asked for
	// them (nil otherwise); downloaded reports carry them too.
	simulation *scenarios.SimulationResult
	body       []byte
	took       time.Duration
}

// memo remembers the outcomes of recent requests (least recently used
// first out) and lets identical requests that arrive together share one
// solve. Everything in it is guarded by mu.
type memo struct {
	mu       sync.Mutex
	size     int
	order    *list.List // of *memoEntry, most recent first
	entries  map[string]*list.Element
	inflight map[string]*flight
}

type memoEntry struct {
	key string
	out *outcome
}

// flight is one solve that requests wait for. out and err are written
// before done is closed, early (the plan before its funding answers)
// before first is closed; waiters is guarded by the memo's mutex. When the
// last waiter gives up before the solve has started, cancel stops it.
type flight struct {
	done    chan struct{}
	out     *outcome
	err     error
	first   chan struct{}
	early   *outcome
	waiters int
	cancel  context.CancelFunc
}

// computeFunc computes an outcome; it may hand early, once, an outcome
// to show while the rest is computed.
type computeFunc func(ctx context.Context, early func(*outcome)) (*outcome, error)

func newMemo(size int) *memo {
	return &memo{size: size, order: list.New(), entries: map[string]*list.Element{}, inflight: map[string]*flight{}}
}

// source says where an answer came from: the memo, a solve shared with
// another request, or a solve of its own.
type source string

const (
	fromMemo   source = "memo"
	fromShared source = "shared"
	fromSolve  source = "solve"
)

// get returns the outcome for key, computing it at most once however many
// requests ask at the same time. compute runs in its own goroutine with a
// context that ends when every request waiting for it has gone.
func (m *memo) get(ctx context.Context, key string, compute func(context.Context) (*outcome, error)) (*outcome, source, error) {
	return m.getStaged(ctx, key, func(ctx context.Context, _ func(*outcome)) (*outcome, error) { return compute(ctx) }, nil)
}

// getStaged is get for a computation in two stages: when early is not nil
// and the answer is not in the memo, it is called with the computation's
// early outcome as soon as there is one (not at all when the computation
// ends without one), before getStaged waits for the whole. A computation
// started for a request without early is asked for no early outcome.
func (m *memo) getStaged(ctx context.Context, key string, compute computeFunc, early func(*outcome, source)) (*outcome, source, error) {
	m.mu.Lock()
	if el, ok := m.entries[key]; ok {
		m.order.MoveToFront(el)
		m.mu.Unlock()
		return el.Value.(*memoEntry).out, fromMemo, nil
	}
	f, shared := m.inflight[key]
	if !shared {
		fctx, cancel := context.WithCancel(context.Background())
		f = &flight{done: make(chan struct{}), first: make(chan struct{}), cancel: cancel}
		m.inflight[key] = f
		var publish func(*outcome)
		if early != nil {
			publish = func(o *outcome) {
				f.early = o
				close(f.first)
			}
		}
		go func() {
			out, err := compute(fctx, publish)
			m.mu.Lock()
			if m.inflight[key] == f {
				delete(m.inflight, key)
			}
			if err == nil {
				m.add(key, out)
			}
			m.mu.Unlock()
			f.out, f.err = out, err
			close(f.done)
			cancel()
		}()
	}
	f.waiters++
	m.mu.Unlock()
	from := fromSolve
	if shared {
		from = fromShared
	}
	if early != nil {
		select {
		case <-f.first:
			early(f.early, from)
		case <-f.done:
		case <-ctx.Done():
			return nil, from, m.leave(ctx, key, f)
		}
	}
	select {
	case <-f.done:
		return f.out, from, f.err
	case <-ctx.Done():
		return nil, from, m.leave(ctx, key, f)
	}
}

// leave takes a request that gave up off flight f and returns its error.
func (m *memo) leave(ctx context.Context, key string, f *flight) error {
	m.mu.Lock()
	f.waiters--
	if f.waiters == 0 {
		// Nobody waits: let a later request start afresh rather than
		// join a solve that is being called off.
		f.cancel()
		if m.inflight[key] == f {
			delete(m.inflight, key)
		}
	}
	m.mu.Unlock()
	return ctx.Err()
}

// keptAnswers holds a scenarios.BudgetFree per scenario and changes other
// than the network's budget (and the name), the most recently used
// first; the oldest is forgotten beyond size. Everything in it is guarded
// by mu; a BudgetFree guards itself.
type keptAnswers struct {
	mu      sync.Mutex
	size    int
	order   *list.List // of *keptEntry, most recent first
	entries map[string]*list.Element
}

type keptEntry struct {
	key string
	bf  *scenarios.BudgetFree
}

func newKeptAnswers(size int) *keptAnswers {
	return &keptAnswers{size: size, order: list.New(), entries: map[string]*list.Element{}}
}

// get returns the budget-free answers of scenario id with changes ch,
// empty the first time.
func (k *keptAnswers) get(id int, ch scenarios.Changes) *scenarios.BudgetFree {
	ch.Name, ch.BudgetLevel, ch.BudgetSteps = "", nil, nil
	b, err := json.Marshal(ch)
	if err != nil {
		return nil // plan without kept answers
	}
	key := strconv.Itoa(id) + "\n" + string(b)
	k.mu.Lock()
	defer k.mu.Unlock()
	if el, ok := k.entries[key]; ok {
		k.order.MoveToFront(el)
		return el.Value.(*keptEntry).bf
	}
	bf := &scenarios.BudgetFree{}
	k.entries[key] = k.order.PushFront(&keptEntry{key: key, bf: bf})
	for k.order.Len() > k.size {
		last := k.order.Back()
		k.order.Remove(last)
		delete(k.entries, last.Value.(*keptEntry).key)
	}
	return bf
}

// add remembers an outcome; m.mu is held.
func (m *memo) add(key string, out *outcome) {
	if el, ok := m.entries[key]; ok {
		el.Value.(*memoEntry).out = out
		m.order.MoveToFront(el)
		return
	}
	m.entries[key] = m.order.PushFront(&memoEntry{key: key, out: out})
	for m.order.Len() > m.size {
		last := m.order.Back()
		m.order.Remove(last)
		delete(m.entries, last.Value.(*memoEntry).key)
	}
}

// plan returns the outcome of an alternative: from the memo when the same
// scenario and changes were planned recently, else solved (at most
// MaxSolves at once). The request waits at most the solve time limit.
func (s *Server) plan(ctx context.Context, alt alternative) (*outcome, source, *apiError) {
	return s.planStaged(ctx, alt, nil)
}

// planStaged is plan that, when early is not nil and the outcome is
// solved, first hands early the plan without its funding answers.
func (s *Server) planStaged(ctx context.Context, alt alternative, early func(*outcome, source)) (*outcome, source, *apiError) {
	if _, bad := s.source(alt.Scenario); bad != nil {
		return nil, "", bad
	}
	// The changes encode to the same JSON exactly when they are the same
	// (struct fields in a fixed order), which makes them a memo key.
	ch, err := json.Marshal(alt.Changes)
	if err != nil {
		return nil, "", requestProblem(http.StatusBadRequest, "%v", err)
	}
	key := strconv.Itoa(alt.Scenario) + "\n" + strconv.FormatBool(alt.Bands) + "\n" + string(ch)
	ctx, cancel := context.WithTimeout(ctx, s.opt.Plan.Timeout)
	defer cancel()
	out, from, err := s.memo.getStaged(ctx, key, func(fctx context.Context, first func(*outcome)) (*outcome, error) {
		return s.solveStaged(fctx, alt.Scenario, alt.Changes, alt.Bands, first)
	}, early)
	if err == nil {
		return out, from, nil
	}
	var ie *scenarios.InputError
	switch {
	case errors.As(err, &ie):
		return nil, from, inputProblems(ie)
	case errors.Is(err, context.DeadlineExceeded), optimize.IsTimeout(err):
		return nil, from, requestProblem(http.StatusGatewayTimeout, "no plan within the time limit of %s; try again, or start wearplan serve with a longer --timeout", s.opt.Plan.Timeout)
	case errors.Is(err, context.Canceled):
		return nil, from, requestProblem(http.StatusServiceUnavailable, "the request was called off (the page sent a newer one, or the server is stopping)")
	default:
		return nil, from, requestProblem(http.StatusInternalServerError, "planning failed: %v", err)
	}
}

// BandRuns is the number of simulated runs behind the page's uncertainty
// bands: enough for the 5th and 95th percentiles to settle to a few tenths
// of a percentage point on the demo, few enough to answer within a second.
const BandRuns = 200

// solve applies the changes and plans, holding one of the MaxSolves slots.
// ctx ends when every request waiting for the answer has gone (a closed
// tab, a newer request from the page): the plan and the bands' simulation
// then stop between solver calls and runs (scenarios.PlanStaged and
// SimulateContext). One lp_solve call under way cannot be interrupted;
// scenarios.Options.Timeout bounds each.
func (s *Server) solve(ctx context.Context, id int, ch scenarios.Changes, bands bool) (*outcome, error) {
	return s.solveStaged(ctx, id, ch, bands, nil)
}

// solveStaged is solve that, when early is not nil, hands it the plan
// without its funding answers (scenarios.PlanStaged) as soon as it is laid
// out, then completes it. The funding answers that do not depend on the
// network's budget are kept between the plans of a scenario and changes
// that differ only in the budget (keptAnswers).
func (s *Server) solveStaged(ctx context.Context, id int, ch scenarios.Changes, bands bool, early func(*outcome)) (*outcome, error) {
	src := &s.sources[id]
	select {
	case s.sem <- struct{}{}:
	case <-ctx.Done():
		return nil, ctx.Err()
	}
	defer func() { <-s.sem }()
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	start := time.Now()
	sc, err := src.Scenario.Apply(ch)
	if err != nil {
		return nil, err
	}
	opt := s.opt.Plan
	if src.warm != nil {
		opt.Warm = src.warm.Clone()
	}
	opt.BudgetFree = s.kept.get(id, ch)
	res, rest, err := scenarios.PlanStaged(ctx, sc, opt)
	if err == nil && rest != nil {
		if early != nil {
			var panel *report.Panel
			if panel, err = report.RunPanel("current", report.Run{Scenario: sc, Result: res}); err != nil {
				return nil, err
			}
			body, err := encodeAnswer(answer(sc, res, panel))
			if err != nil {
				return nil, err
			}
			early(&outcome{scenario: sc, result: res, body: body, took: time.Since(start)})
		}
		res, err = rest(ctx)
	}
	if err != nil {
		if ctx.Err() == nil { // a request called off is no failure to log
			s.log.Printf("%s: %v", src.Path, err)
		}
		return nil, err
	}
	run := report.Run{Scenario: sc, Result: res}
	if bands {
		// The bands of the plan shown: the simulation plans the same
		// scenario with the same options.
		so := scenarios.SimulateOptions{Runs: BandRuns, Seed: 1, Timeout: opt.Timeout, Solver: opt.Solver}
		if run.Simulation, err = scenarios.SimulateContext(ctx, sc, so); err != nil {
			if ctx.Err() == nil {
				s.log.Printf("%s: bands: %v", src.Path, err)
			}
			return nil, err
		}
	}
	panel, err := report.RunPanel("current", run)
	if err != nil {
		return nil, err
	}
	body, err := encodeAnswer(answer(sc, res, panel))
	if err != nil {
		return nil, err
	}
	return &outcome{scenario: sc, result: res, simulation: run.Simulation, body: body, took: time.Since(start)}, nil
}

// ndjson is the type of the answer in parts (servePlan).
const ndjson = "application/x-ndjson"

// servePlan answers POST /api/plan {scenario, changes} with the plan of
// the changed scenario (planAnswer), 422 and the Issues when the changes
// have problems.
//
// A request that accepts application/x-ndjson (the page's) gets the answer
// in parts, one JSON object a line, so that the plan shows while its
// funding answers (several LPs each) are worked out: first {"part":
// "plan", "answer": ...}, the plan without them, when its solve was
// started by a request in parts; then {"part": "whole", "answer": ...}, the answer a plain
// request gets, or {"part": "whole", "error": ..., "issues": ...} when the
// funding answers fail after the plan was sent. Problems found before any
// part is sent are answered as for a plain request.
func (s *Server) servePlan(w http.ResponseWriter, r *http.Request) {
	var alt alternative
	if bad := decodeBody(w, r, &alt); bad != nil {
		s.fail(w, r, bad)
		return
	}
	if strings.Contains(r.Header.Get("Accept"), ndjson) {
		s.servePlanParts(w, r, alt)
		return
	}
	out, from, bad := s.plan(r.Context(), alt)
	if bad != nil {
		s.fail(w, r, bad)
		return
	}
	h := w.Header()
	h.Set("Content-Type", "application/json; charset=utf-8")
	h.Set("Cache-Control", "no-store")
	h.Set("X-Wearplan-From", string(from))
	h.Set("X-Wearplan-Solve-Ms", strconv.FormatInt(out.took.Milliseconds(), 10))
	w.Write(out.body)
}

// servePlanParts answers servePlan's requests for the answer in parts.
func (s *Server) servePlanParts(w http.ResponseWriter, r *http.Request, alt alternative) {
	rc := http.NewResponseController(w)
	started := false
	begin := func(from source, took time.Duration) {
		h := w.Header()
		h.Set("Content-Type", ndjson+"; charset=utf-8")
		h.Set("Cache-Control", "no-store")
		h.Set("X-Wearplan-From", string(from))
		// The time to the first part: the plan the page shows first.
		h.Set("X-Wearplan-Solve-Ms", strconv.FormatInt(took.Milliseconds(), 10))
		w.WriteHeader(http.StatusOK)
		started = true
	}
	part := func(name string, body []byte) {
		// body is one JSON value and a newline (encodeAnswer).
		w.Write([]byte(`{"part":"` + name + `","answer":`))
		w.Write(bytes.TrimSuffix(body, []byte("\n")))
		w.Write([]byte("}\n"))
		_ = rc.Flush() // a client that went away stops the solve through r.Context
	}
	out, from, bad := s.planStaged(r.Context(), alt, func(early *outcome, from source) {
		begin(from, early.took)
		part("plan", early.body)
	})
	switch {
	case bad != nil && !started:
		s.fail(w, r, bad)
	case bad != nil:
		if bad.status >= 500 {
			s.log.Printf("%s %s: %s", r.Method, r.URL.Path, bad.Message)
		}
		b, err := json.Marshal(struct {
			Part string `json:"part"`
			*apiError
		}{"whole", bad})
		if err == nil {
			w.Write(append(b, '\n'))
		}
	default:
		if !started {
			begin(from, out.took)
		}
		part("whole", out.body)
	}
}

// downloadRequest asks for one alternative as a scenario file or report,
// or several as a comparison report.
type downloadRequest struct {
	Format       string        `json:"format"`
	Alternatives []alternative `json:"alternatives"`
}

var downloadTypes = map[string]string{
	"yaml": "application/yaml; charset=utf-8",
	"html": "text/html; charset=utf-8",
	"md":   "text/markdown; charset=utf-8",
	"xlsx": "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
}

// serveDownload answers POST /api/download {format, alternatives} with a
// file to save: yaml (one alternative as a stand-alone scenario file),
// html, md or xlsx (the report; a comparison for several).
func (s *Server) serveDownload(w http.ResponseWriter, r *http.Request) {
	var req downloadRequest
	if bad := decodeBody(w, r, &req); bad != nil {
		s.fail(w, r, bad)
		return
	}
	typ, ok := downloadTypes[req.Format]
	switch {
	case !ok:
		s.fail(w, r, requestProblem(http.StatusBadRequest, "format %q: choose yaml, html, md or xlsx", req.Format))
		return
	case len(req.Alternatives) == 0 || len(req.Alternatives) > MaxAlternatives:
		s.fail(w, r, requestProblem(http.StatusBadRequest, "give 1 to %d alternatives, not %d", MaxAlternatives, len(req.Alternatives)))
		return
	case req.Format == "yaml" && len(req.Alternatives) != 1:
		s.fail(w, r, requestProblem(http.StatusBadRequest, "a scenario file holds one alternative; download them one at a time"))
		return
	}
	first := req.Alternatives[0]
	src, bad := s.source(first.Scenario)
	if bad != nil {
		s.fail(w, r, bad)
		return
	}
	name := fileName(src.Path, first.Changes.Name, len(req.Alternatives) > 1) + "." + req.Format
	var body []byte
	if req.Format == "yaml" {
		var b bytes.Buffer
		if err := src.Scenario.WriteYAML(&b, first.Changes); err != nil {
			var ie *scenarios.InputError
			if errors.As(err, &ie) {
				s.fail(w, r, inputProblems(ie))
			} else {
				s.fail(w, r, requestProblem(http.StatusInternalServerError, "%v", err))
			}
			return
		}
		body = b.Bytes()
	} else {
		rep := &report.Report{Details: report.Details{Version: s.opt.Version, Date: s.opt.Now().Format(time.DateOnly)}}
		seen := map[int]bool{}
		for _, alt := range req.Alternatives {
			out, _, bad := s.plan(r.Context(), alt)
			if bad != nil {
				s.fail(w, r, bad)
				return
			}
			rep.Runs = append(rep.Runs, report.Run{Scenario: out.scenario, Result: out.result, Simulation: out.simulation})
			if !seen[alt.Scenario] {
				seen[alt.Scenario] = true
				rep.Details.Inputs = append(rep.Details.Inputs, s.sources[alt.Scenario].inputs()...)
			}
		}
		var b bytes.Buffer
		var err error
		switch req.Format {
		case "html":
			err = report.HTML(&b, rep)
		case "md":
			err = report.Markdown(&b, rep)
		default:
			err = report.Workbook(&b, rep)
		}
		if err != nil {
			s.fail(w, r, requestProblem(http.StatusInternalServerError, "writing the report: %v", err))
			return
		}
		body = b.Bytes()
	}
	h := w.Header()
	h.Set("Content-Type", typ)
	h.Set("Cache-Control", "no-store")
	h.Set("Content-Disposition", fmt.Sprintf("attachment; filename=%q", name))
	w.Write(body)
}
