package cli

import (
	"context"
	"fmt"
	"net/url"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"

	"wearplan/cmd/internal/browsertest"
)

// TestReportOpensInChromium opens the HTML reports of the demo, of a
// comparison and of the demo with uncertainty bands in headless Chromium
// (Debian's chromium, driven with chromedp) and checks, in the page the
// browser built: no console errors or warnings, no network requests, the
// level-of-service table with a row for every class and the network (and
// the poor share's range with bands), and every chart, band charts
// included, drawn at a visible size with its text. Screenshots are saved
// outside the repository.
func TestReportOpensInChromium(t *testing.T) {
	browsertest.Require(t)
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
	// one per class, the spend chart and the spend by class; a comparison
	// adds two, a single scenario's summary its network chart.
	runCharts := func(run string) []string {
		ids := []string{run + "-chart-network"}
		for k := 1; k <= 4; k++ {
			ids = append(ids, fmt.Sprintf("%s-chart-class-%d", run, k))
		}
		return append(ids, run+"-chart-spend", run+"-chart-class-spend")
	}
	// With bands, a band chart follows the network's and each class's.
	bandCharts := append(append([]string{"summary-chart-network"}, runCharts("run-1")...), "run-1-chart-bands-network")
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
		{single, "marrowby-report.png", true, []string{"run-1-los"}, append([]string{"summary-chart-network"}, runCharts("run-1")...)},
		{compare, "marrowby-comparison.png", false, []string{"compare-los", "compare-spend", "run-1-los", "run-2-los"},
			append(append([]string{"compare-chart-score", "compare-chart-spend"}, runCharts("run-1")...), runCharts("run-2")...)},
		{bands, "marrowby-bands.png", true, []string{"run-1-los"}, bandCharts},
	}

	events := &browsertest.Events{}
	ctx := browsertest.Start(t, 1280, 900, events)
	for _, pg := range pages {
		u := (&url.URL{Scheme: "file", Path: pg.file}).String()
		events.Reset(func(url string) bool { return url == u })

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
		// No table is wider than its place on a 1280-pixel screen: each
		// sits in a scrolling box, which must not need to scroll.
		if over := overflowing(t, tctx); len(over) > 0 {
			t.Errorf("%s: tables wider than the page at 1280 px: %v", filepath.Base(pg.file), over)
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
		out := browsertest.SaveScreenshot(t, pg.shot, shot)
		t.Logf("screenshot of %s: %s", filepath.Base(pg.file), out)

		requests, problems := events.Collected()
		if len(requests) > 0 {
			t.Errorf("%s: the page made network requests: %v", filepath.Base(pg.file), requests)
		}
		if len(problems) > 0 {
			t.Errorf("%s: console problems: %v", filepath.Base(pg.file), problems)
		}
	}
}

// overflowing lists the tables whose scrolling box would scroll: wider
// than the page gives them.
func overflowing(t *testing.T, ctx context.Context) []string {
	t.Helper()
	ids, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](`[...document.querySelectorAll('.wide')].filter(w => w.scrollWidth > w.clientWidth + 1).map(w => (w.querySelector('table') || {}).id + ' ' + w.scrollWidth + '>' + w.clientWidth)`))
	if err != nil {
		t.Fatal(err)
	}
	return ids
}

// pdfPages counts the pages of a PDF by its page objects.
var pdfPage = regexp.MustCompile(`/Type\s*/Page[^s]`)

// TestReportPrints prints the reports with Chromium (print to PDF): the
// one-page summary of the demo and of the invented utility, printed alone,
// makes one A4 and one Letter page; and in the print layout at the width
// an A4 page leaves (190 mm, 718 CSS pixels) no table of a single report or
// a comparison is wider than the page.
func TestReportPrints(t *testing.T) {
	browsertest.Require(t)
	dir := t.TempDir()
	files := map[string][]string{
		"marrowby.html": {"report", demo},
		"keswold.html":  {"report", keswold},
		"compare.html":  {"report", demo, reduced, increased},
	}
	for name, args := range files {
		if code, _, errs := run(t, append(args, "--date", "2027-01-15", "--out", filepath.Join(dir, name))...); code != 0 {
			t.Fatalf("%s: exit %d: %s", name, code, errs)
		}
	}
	events := &browsertest.Events{}
	ctx := browsertest.Start(t, 1280, 900, events)
	open := func(name string) context.Context {
		t.Helper()
		u := (&url.URL{Scheme: "file", Path: filepath.Join(dir, name)}).String()
		events.Reset(func(url string) bool { return url == u })
		if err := chromedp.Do(ctx, chromedp.Navigate(u)); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		return ctx
	}
	for _, name := range []string{"marrowby.html", "keswold.html"} {
		pctx := open(name)
		// Keep the page's title, the caution and the summary: what the
		// first printed page holds.
		if _, err := chromedp.Run(pctx, chromedp.Evaluate[bool](`(() => {
			for (const e of [...document.body.children]) {
				if (!(e.tagName === 'HEADER' || e.id === 'caution' || e.id === 'summary')) e.remove();
			}
			return !!document.getElementById('summary');
		})()`)); err != nil {
			t.Fatal(err)
		}
		for _, paper := range []struct {
			name string
			w, h float64 // inches
		}{{"A4", 8.27, 11.69}, {"Letter", 8.5, 11}} {
			res, err := chromedp.Call(pctx, page.PrintToPDF, page.PrintToPDFParams{PaperWidth: paper.w, PaperHeight: paper.h})
			if err != nil {
				t.Fatal(err)
			}
			if n := len(pdfPage.FindAll(res.Data, -1)); n != 1 {
				t.Errorf("%s: the summary prints on %d %s pages, want 1", name, n, paper.name)
			}
			if paper.name == "A4" {
				out := filepath.Join(t.TempDir(), "summary.pdf")
				if err := os.WriteFile(out, res.Data, 0o644); err == nil {
					t.Logf("%s: summary printed to %s", name, out)
				}
			}
		}
		if _, problems := events.Collected(); len(problems) > 0 {
			t.Errorf("%s: console problems: %v", name, problems)
		}
	}
	// The whole report prints too, with more pages than the summary's.
	for _, name := range []string{"marrowby.html", "keswold.html", "compare.html"} {
		pctx := open(name)
		res, err := chromedp.Call(pctx, page.PrintToPDF, page.PrintToPDFParams{PaperWidth: 8.27, PaperHeight: 11.69})
		if err != nil {
			t.Fatal(err)
		}
		if n := len(pdfPage.FindAll(res.Data, -1)); n < 3 {
			t.Errorf("%s: %d printed pages", name, n)
		}
		// The print layout at the width of an A4 page within its margins.
		if _, err := chromedp.Call(pctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"}); err != nil {
			t.Fatal(err)
		}
		if _, err := chromedp.Call(pctx, emulation.SetDeviceMetricsOverride, emulation.SetDeviceMetricsOverrideParams{Width: 718, Height: 1000, DeviceScaleFactor: 1}); err != nil {
			t.Fatal(err)
		}
		wide, err := chromedp.Run(pctx, chromedp.Evaluate[[]string](`(() => {
			const page = document.body.getBoundingClientRect().right + 1;
			return [...document.querySelectorAll('table')].filter(t => t.getBoundingClientRect().right > page).map(t => t.id + ' ' + Math.round(t.getBoundingClientRect().right) + '>' + Math.round(page));
		})()`))
		if err != nil {
			t.Fatal(err)
		}
		if len(wide) > 0 {
			t.Errorf("%s: tables wider than a printed A4 page: %v", name, wide)
		}
		if _, err := chromedp.Call(pctx, emulation.ClearDeviceMetricsOverride, cdp.Empty{}); err != nil {
			t.Fatal(err)
		}
		if _, err := chromedp.Call(pctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{}); err != nil {
			t.Fatal(err)
		}
		if _, problems := events.Collected(); len(problems) > 0 {
			t.Errorf("%s: console problems: %v", name, problems)
		}
	}
}
