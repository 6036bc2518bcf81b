package whatif

import (
	"fmt"
	"math"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"testing"
	"time"

	"wearplan/cmd/internal/report"
	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
)

// BenchmarkPlanRequest is one change on the page for the demo: POST
// /api/plan, decoded, laid over the scenario, planned, laid out and
// encoded (no network: the handler is called directly). The memo is
// emptied before each request except in "memo", which repeats one.
//   - demo: the demo as loaded (4.5 million a year, every target met);
//   - slider: the yearly budgets a slider gives, 2 to 7 million in steps of
//     250,000, in turn (below 4.5 million the targets are not met and the
//     plan adds the shortfall and funding solves);
//   - cuts: 15 distinct yearly budgets from 3 to 5.5 million in equal
//     steps, in turn, most of them cuts below the least level budget that
//     meets the demo's targets, the question meetings ask most (the
//     budget-free funding answers are kept per scenario and changes, as
//     the server keeps them, while the plans' memo is emptied);
//   - cuts-parts: the same, asked for in parts as the page asks
//     (servePlan): ms-median is the time to the first part, the plan the
//     page shows, and ms-whole-median the time to the whole answer;
//   - memo: the same request again;
//   - bands: the demo with the uncertainty bands ticked (BandRuns runs of
//     its 2,893 segments, the band charts and rows laid out); the peak
//     resident memory of the process is reported as MiB-peak and the
//     processor time per request as cpu-ms/op.
//
// Besides the mean it reports the median (ms-median, the figure docs/benchmarks.md
// records) and the 90th percentile (ms-p90) in milliseconds, and for the
// slider how many answers were errors (lp_solve has been seen to call a
// feasible model infeasible at some budgets).
func BenchmarkPlanRequest(b *testing.B) {
	var slider []float64
	for v := 2e6; v <= 7e6; v += 250000 {
		slider = append(slider, v)
	}
	var cuts []float64
	for i := range 15 {
		cuts = append(cuts, math.Round(3e6+2.5e6*float64(i)/14))
	}
	for _, c := range []struct {
		name    string
		budgets []float64 // nil: the file's
		memo    bool
		bands   bool
		parts   bool
	}{
		{"demo", nil, false, false, false},
		{"slider", slider, false, false, false},
		{"cuts", cuts, false, false, false},
		{"cuts-parts", cuts, false, false, true},
		{"memo", nil, true, false, false},
		{"bands", nil, false, true, false},
	} {
		b.Run(c.name, func(b *testing.B) {
			s, err := New(demoSources(b, "marrowby.yaml"), Options{})
			if err != nil {
				b.Fatal(err)
			}
			optimizetest.ResetPeakRSS()
			cpu := optimizetest.CPUSeconds()
			var times, wholes []time.Duration
			failed := 0
			i := 0
			for b.Loop() {
				body := `{"scenario": 0, "changes": {}}`
				if c.bands {
					body = `{"scenario": 0, "changes": {}, "bands": true}`
				}
				if c.budgets != nil {
					body = fmt.Sprintf(`{"scenario": 0, "changes": {"budget_level": %.0f}}`, c.budgets[i%len(c.budgets)])
				}
				i++
				if !c.memo {
					s.memo = newMemo(32)
				}
				req, _ := http.NewRequest("POST", "http://127.0.0.1/api/plan", strings.NewReader(body))
				req.Header.Set("Content-Type", "application/json")
				if c.parts {
					req.Header.Set("Accept", ndjson)
				}
				rec := &firstFlush{ResponseRecorder: httptest.NewRecorder()}
				start := time.Now()
				s.ServeHTTP(rec, req)
				whole := time.Since(start)
				if c.parts && !rec.at.IsZero() {
					times = append(times, rec.at.Sub(start))
				} else {
					times = append(times, whole)
				}
				wholes = append(wholes, whole)
				if rec.Code != 200 {
					if c.budgets == nil {
						b.Fatalf("%d %s", rec.Code, rec.Body)
					}
					failed++
				}
			}
			slices.Sort(times)
			b.ReportMetric(float64(times[len(times)/2].Microseconds())/1000, "ms-median")
			b.ReportMetric(float64(times[len(times)*9/10].Microseconds())/1000, "ms-p90")
			if c.parts {
				slices.Sort(wholes)
				b.ReportMetric(float64(wholes[len(wholes)/2].Microseconds())/1000, "ms-whole-median")
			}
			if c.budgets != nil {
				b.ReportMetric(float64(failed), "errors")
			}
			if c.bands {
				b.ReportMetric(optimizetest.PeakRSS(), "MiB-peak")
				b.ReportMetric((optimizetest.CPUSeconds()-cpu)*1000/float64(len(times)), "cpu-ms/op")
			}
		})
	}
}

// firstFlush records when the handler first flushed its answer: when the
// first part of an answer in parts left the server.
type firstFlush struct {
	*httptest.ResponseRecorder
	at time.Time
}

func (f *firstFlush) Flush() {
	if f.at.IsZero() {
		f.at = time.Now()
	}
	f.ResponseRecorder.Flush()
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
