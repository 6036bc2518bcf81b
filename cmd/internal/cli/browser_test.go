package cli

import (
	"context"
	"fmt"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	cdplog "github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"

	"wearplan/optimize/optimizetest"
)

// requireBrowser finds Debian's chromium, following optimizetest.RequireTool's rule:
// skip locally when it is missing, fail under WEARPLAN_REQUIRE_REFERENCE=1.
func requireBrowser(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser"} {
		if path, err := exec.LookPath(name); err == nil {
			return path
		}
	}
	return optimizetest.RequireTool(t, "chromium")
}

// screenshotDir is where the browser test leaves its screenshots for
// people to look at: WEARPLAN_SCREENSHOT_DIR, or a folder in the system's
// temporary directory, never inside the repository.
func screenshotDir(t *testing.T) string {
	dir := os.Getenv("WEARPLAN_SCREENSHOT_DIR")
	if dir == "" {
		dir = filepath.Join(os.TempDir(), "wearplan-screenshots")
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	return dir
}

// pageEvents collects what a page did that a self-contained report must
// not do: requests other than the page itself, console errors and
// warnings, uncaught exceptions, and error entries of the browser log
// (which is where refused loads and policy violations show).
type pageEvents struct {
	mu       sync.Mutex
	page     string
	requests []string
	problems []string
}

func (p *pageEvents) listen(ev any) {
	p.mu.Lock()
	defer p.mu.Unlock()
	switch e := ev.(type) {
	case *network.EventRequestWillBeSent:
		if e.Request.URL != p.page {
			p.requests = append(p.requests, e.Request.URL)
		}
	case *runtime.EventConsoleAPICalled:
		if e.Type == runtime.ConsoleAPICalledTypeError || e.Type == runtime.ConsoleAPICalledTypeWarning || e.Type == runtime.ConsoleAPICalledTypeAssert {
			p.problems = append(p.problems, fmt.Sprintf("console %s", e.Type))
		}
	case *runtime.EventExceptionThrown:
		p.problems = append(p.problems, "exception: "+e.ExceptionDetails.Text)
	case *cdplog.EventEntryAdded:
		if e.Entry.Level == cdplog.EntryLevelError || e.Entry.Level == cdplog.EntryLevelWarning {
			p.problems = append(p.problems, fmt.Sprintf("log %s (%s): %s", e.Entry.Level, e.Entry.Source, e.Entry.Text))
		}
	}
}

// TestReportOpensInChromium opens the HTML reports of the demo, of a
// comparison and of the demo with uncertainty bands in headless Chromium
// (Debian's chromium, driven with chromedp) and checks, in the page the
// browser built: no console errors or warnings, no network requests, the
// level-of-service table with a row for every class and the network (and
// the poor share's range with bands), and every chart, band charts
// included, drawn at a visible size with its text. Screenshots are saved
// outside the repository.
func TestReportOpensInChromium(t *testing.T) {
	browser := requireBrowser(t)
	dir := t.TempDir()
	single := filepath.Join(dir, "marrowby.html")
	if code, _, errs := run(t, "report", demo, "--date", "2027-01-15", "--out", single); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	compare := filepath.Join(dir, "compare.html")
	if code, _, errs := run(t, "report", demo, lowBudgetDemo(t), "--date", "2027-01-15", "--out", compare); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	bands := filepath.Join(dir, "bands.html")
	if code, _, errs := run(t, "report", demo, "--bands", "--runs", "100", "--date", "2027-01-15", "--out", bands); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	// The demo has four classes; every run section has a network chart,
	// one per class and the spend chart; a comparison adds two.
	runCharts := func(run string) []string {
		ids := []string{run + "-chart-network"}
		for k := 1; k <= 4; k++ {
			ids = append(ids, fmt.Sprintf("%s-chart-class-%d", run, k))
		}
		return append(ids, run+"-chart-spend")
	}
	// With bands, a band chart follows the network's and each class's.
	bandCharts := append(runCharts("run-1"), "run-1-chart-bands-network")
	for k := 1; k <= 4; k++ {
		bandCharts = append(bandCharts, fmt.Sprintf("run-1-chart-bands-class-%d", k))
	}
	// The single report is captured whole; the long comparison only as far
	// as the window shows, which keeps the test fast.
	pages := []struct {
		file, shot string
		whole      bool
		tables     []string
		charts     []string
	}{
		{single, "marrowby-report.png", true, []string{"run-1-los"}, runCharts("run-1")},
		{compare, "marrowby-comparison.png", false, []string{"compare-los", "compare-spend", "run-1-los", "run-2-los"},
			append(append([]string{"compare-chart-score", "compare-chart-spend"}, runCharts("run-1")...), runCharts("run-2")...)},
		{bands, "marrowby-bands.png", true, []string{"run-1-los"}, bandCharts},
	}

	events := &pageEvents{}
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(browser),
		chromedp.UserDataDir(t.TempDir()),
		chromedp.WindowSize(1100, 900),
		chromedp.Flag("no-sandbox", true),
		chromedp.Flag("disable-gpu", true),
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-background-networking", true),
	)
	ctx, cancel := chromedp.NewContext(context.Background(), chromedp.WithAllocatorOptions(opts...), chromedp.WithListener(events.listen))
	defer cancel()
	if err := chromedp.Do(ctx); err != nil { // starts the browser
		t.Fatalf("starting chromium: %v", err)
	}
	for _, pg := range pages {
		u := (&url.URL{Scheme: "file", Path: pg.file}).String()
		events.mu.Lock()
		events.page, events.requests, events.problems = u, nil, nil
		events.mu.Unlock()

		tctx, tcancel := context.WithTimeout(ctx, 30*time.Second)
		if err := chromedp.Do(tctx, chromedp.Navigate(u)); err != nil {
			tcancel()
			t.Fatalf("%s: %v", pg.file, err)
		}
		for _, id := range pg.tables {
			rows, err := chromedp.Run(tctx, chromedp.Evaluate[[]string](fmt.Sprintf(
				`[...document.querySelectorAll('#%s tbody tr')].map(r => r.cells[0].textContent)`, id)))
			if err != nil {
				t.Fatal(err)
			}
			text := strings.Join(rows, "|")
			for _, want := range []string{"Network", "arterial-asphalt", "local-asphalt", "bridge-decks", "culverts"} {
				if strings.HasSuffix(id, "-los") && !strings.Contains(text, want) {
					t.Errorf("%s: table #%s has no row for %s (rows: %s)", filepath.Base(pg.file), id, want, text)
				}
			}
			if len(rows) < 5 {
				t.Errorf("%s: table #%s has %d rows", filepath.Base(pg.file), id, len(rows))
			}
		}
		if pg.file == bands {
			// The poor share's range for each class and the network, and a
			// probability for each of the demo's two targets.
			ranges, err := chromedp.Run(tctx, chromedp.Evaluate[int](
				`[...document.querySelectorAll('#run-1-los tbody tr')].filter(r => r.cells[0].textContent.startsWith('Poor, 5th-95th percentile of 100 runs')).length`))
			if err != nil {
				t.Fatal(err)
			}
			chances, err := chromedp.Run(tctx, chromedp.Evaluate[int](`document.querySelectorAll('#run-1-bands-targets tbody tr').length`))
			if err != nil {
				t.Fatal(err)
			}
			if ranges != 5 || chances != 2 {
				t.Errorf("bands report: %d range rows (want 5), %d target probability rows (want 2)", ranges, chances)
			}
		}
		// Every chart: an SVG at least 300 x 150 CSS pixels with axis text.
		type drawn struct {
			W, H  float64
			Texts int
		}
		for _, id := range pg.charts {
			d, err := chromedp.Run(tctx, chromedp.Evaluate[drawn](fmt.Sprintf(`(() => {
				const s = document.querySelector('#%s svg');
				if (!s) return {W: 0, H: 0, Texts: 0};
				const r = s.getBoundingClientRect();
				return {W: r.width, H: r.height, Texts: s.querySelectorAll('text').length};
			})()`, id)))
			if err != nil {
				t.Fatal(err)
			}
			if d.W < 300 || d.H < 150 || d.Texts < 8 {
				t.Errorf("%s: chart #%s drawn %.0f x %.0f px with %d texts", filepath.Base(pg.file), id, d.W, d.H, d.Texts)
			}
		}
		n, err := chromedp.Run(tctx, chromedp.Evaluate[int](`document.querySelectorAll('figure svg').length`))
		if err != nil {
			t.Fatal(err)
		}
		if n != len(pg.charts) {
			t.Errorf("%s: %d charts on the page, want %d", filepath.Base(pg.file), n, len(pg.charts))
		}
		capture := chromedp.CaptureScreenshot()
		if pg.whole {
			capture = chromedp.FullScreenshot(100)
		}
		shot, err := chromedp.Run(tctx, capture)
		tcancel()
		if err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(screenshotDir(t), pg.shot)
		if err := os.WriteFile(out, shot, 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("screenshot of %s: %s", filepath.Base(pg.file), out)

		events.mu.Lock()
		if len(events.requests) > 0 {
			t.Errorf("%s: the page made network requests: %v", filepath.Base(pg.file), events.requests)
		}
		if len(events.problems) > 0 {
			t.Errorf("%s: console problems: %v", filepath.Base(pg.file), events.problems)
		}
		events.mu.Unlock()
	}
}
