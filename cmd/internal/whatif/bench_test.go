package whatif

import (
	"fmt"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"testing"
	"time"

	"wearplan/cmd/internal/report"
	"wearplan/scenarios"
)

// BenchmarkPlanRequest is one change on the page for the demo: POST
// /api/plan, decoded, laid over the scenario, planned, laid out and
// encoded (no network: the handler is called directly). Each iteration
// asks for a budget one unit above the last, so the memo never answers;
// "memo" repeats one request. Besides the mean, it reports the median in
// ms (ms-median), the figure the README records.
func BenchmarkPlanRequest(b *testing.B) {
	for _, c := range []struct {
		name  string
		level float64
		memo  bool
	}{
		{"demo-4.5M-targets-met", 4.5e6, false},
		{"demo-3.0M-targets-not-met", 3e6, false},
		{"memo", 4.5e6, true},
	} {
		b.Run(c.name, func(b *testing.B) {
			s, err := New(demoSources(b, "marrowby.yaml"), Options{})
			if err != nil {
				b.Fatal(err)
			}
			var times []time.Duration
			i := 0
			for b.Loop() {
				level := c.level
				if !c.memo {
					level += float64(i)
				}
				i++
				body := fmt.Sprintf(`{"scenario": 0, "changes": {"budget_level": %.0f}}`, level)
				req, _ := http.NewRequest("POST", "http://127.0.0.1/api/plan", strings.NewReader(body))
				req.Header.Set("Content-Type", "application/json")
				rec := httptest.NewRecorder()
				start := time.Now()
				s.ServeHTTP(rec, req)
				times = append(times, time.Since(start))
				if rec.Code != 200 {
					b.Fatalf("%d %s", rec.Code, rec.Body)
				}
			}
			slices.Sort(times)
			b.ReportMetric(float64(times[len(times)/2].Microseconds())/1000, "ms-median")
		})
	}
}

// BenchmarkPlanParts splits a cold request for the demo into its parts.
func BenchmarkPlanParts(b *testing.B) {
	src := demoSources(b, "marrowby.yaml")[0]
	level := 4.5e6
	ch := scenarios.Changes{BudgetLevel: &level}
	sc, err := src.Scenario.Apply(ch)
	if err != nil {
		b.Fatal(err)
	}
	res, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		b.Fatal(err)
	}
	panel, err := report.RunPanel("current", report.Run{Scenario: sc, Result: res})
	if err != nil {
		b.Fatal(err)
	}
	b.Run("apply", func(b *testing.B) {
		for b.Loop() {
			if _, err := src.Scenario.Apply(ch); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("plan", func(b *testing.B) {
		for b.Loop() {
			if _, err := scenarios.Plan(sc, scenarios.Options{}); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("plan-without-funding-and-baseline", func(b *testing.B) {
		for b.Loop() {
			if _, err := scenarios.Plan(sc, scenarios.Options{SkipFunding: true}); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("charts-and-tables", func(b *testing.B) {
		for b.Loop() {
			if _, err := report.RunPanel("current", report.Run{Scenario: sc, Result: res}); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("encode", func(b *testing.B) {
		for b.Loop() {
			if _, err := encodeAnswer(answer(sc, res, panel)); err != nil {
				b.Fatal(err)
			}
		}
	})
}
