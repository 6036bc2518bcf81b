package whatif

import (
	"context"
	"fmt"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"wearplan/cmd/internal/browsertest"
)

// seen is what the test reads off the page after a plan.
type seen struct {
	Solves    string
	Budget    string
	PoorEnd   string // the network's poor share in the table's last column
	LOS       string // the level-of-service table's text
	Chart     string // the network condition chart's SVG
	SpendSVG  string
	Headline  string
	Shortfall int
	Funding   string // the funding answers in words
	Pending   bool   // the funding answers are still being worked out
	Early     string // plans shown before their funding answers
	Caution   string
	Problems  bool
}

const readPage = `(() => {
	const rows = [...document.querySelectorAll('#current-los tbody tr')];
	let network = false, poor = '';
	for (const r of rows) {
		const head = r.cells[0].textContent;
		if (r.classList.contains('group')) network = head.startsWith('Network');
		else if (network && head === 'Poor') poor = r.cells[r.cells.length - 1].textContent;
	}
	const svg = (id) => { const s = document.querySelector('#' + id + ' svg'); return s ? s.outerHTML : ''; };
	return {
		Solves: document.body.dataset.solves || '',
		Budget: document.getElementById('budget-level').value,
		PoorEnd: poor,
		LOS: (document.getElementById('current-los') || {}).textContent || '',
		Chart: svg('current-chart-network'),
		SpendSVG: svg('current-chart-spend'),
		Headline: document.getElementById('headline').textContent,
		Shortfall: document.querySelectorAll('#shortfalls li').length,
		Funding: document.getElementById('funding').textContent,
		Pending: document.getElementById('funding').classList.contains('pending'),
		Early: document.body.dataset.early || '',
		Caution: document.getElementById('caution').textContent,
		Problems: !document.getElementById('problems').hidden,
	};
})()`

func shareOf(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(strings.TrimSuffix(s, "%"), 64)
	if err != nil {
		t.Fatalf("poor share %q is not a percentage", s)
	}
	return v
}

// TestPageInChromium opens the what-if page for the demo in headless
// Chromium (Debian's chromium driven with chromedp), waits for the first
// plan, lowers the yearly budget by clicking on the slider at a third of
// its track, and checks that the plan is made again: the level-of-service
// table and the charts change, the network's poor share at the end of the
// plan rises, and the shortfall is told in words; the plan was shown
// before its funding answers, which then followed in words. It then keeps the
// alternative and checks the side-by-side list. No console errors, no
// policy violations, no requests to anywhere but the server.
func TestPageInChromium(t *testing.T) {
	browsertest.Require(t)
	_, ts := newTestServer(t, Options{}, "marrowby.yaml")
	events := &browsertest.Events{}
	events.Reset(func(url string) bool {
		return strings.HasPrefix(url, ts.URL+"/") || strings.HasPrefix(url, "data:")
	})
	ctx := browsertest.Start(t, 1400, 1000, events)
	ctx, tcancel := context.WithTimeout(ctx, 90*time.Second)
	defer tcancel()

	read := func() seen {
		t.Helper()
		v, err := chromedp.Run(ctx, chromedp.Evaluate[seen](readPage))
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	// waitSolves waits until the page has shown n plans.
	waitSolves := func(n int) seen {
		t.Helper()
		if err := chromedp.Do(ctx, chromedp.WaitVisible(chromedp.CSS(fmt.Sprintf(`body[data-solves="%d"]`, n)))); err != nil {
			t.Fatalf("waiting for plan %d: %v (status: %v)", n, err, read())
		}
		return read()
	}

	if err := chromedp.Do(ctx, chromedp.Navigate(ts.URL+"/")); err != nil {
		t.Fatal(err)
	}
	before := waitSolves(1)
	if before.Budget != "4500000" || before.PoorEnd == "" || before.Chart == "" || before.SpendSVG == "" || before.Problems {
		t.Fatalf("first plan: budget %q, poor share %q, chart %d bytes, problems shown %v", before.Budget, before.PoorEnd, len(before.Chart), before.Problems)
	}
	if before.Caution == "" || !strings.Contains(before.Headline, "Every target is met") {
		t.Errorf("first plan: caution %q, headline %q", before.Caution, before.Headline)
	}

	// Lower the budget as a person would: click the slider a third of the
	// way along (its range is 0 to twice the file's 4.5 million).
	type box struct{ X, Y, W, H float64 }
	b, err := chromedp.Run(ctx, chromedp.Evaluate[box](`(() => { const r = document.getElementById('budget-slider').getBoundingClientRect(); return {X: r.x, Y: r.y, W: r.width, H: r.height}; })()`))
	if err != nil {
		t.Fatal(err)
	}
	if err := chromedp.Do(ctx, chromedp.MouseClickXY(b.X+b.W/3, b.Y+b.H/2)); err != nil {
		t.Fatal(err)
	}
	after := waitSolves(2)
	budget, err := strconv.ParseFloat(after.Budget, 64)
	if err != nil || budget < 2.5e6 || budget > 3.5e6 {
		t.Fatalf("the slider set the budget to %q, want about 3 million", after.Budget)
	}
	if after.LOS == before.LOS {
		t.Error("the level-of-service table did not change")
	}
	if after.Chart == before.Chart || after.SpendSVG == before.SpendSVG {
		t.Error("the charts did not change")
	}
	if p0, p1 := shareOf(t, before.PoorEnd), shareOf(t, after.PoorEnd); p1 <= p0 {
		t.Errorf("network poor share at the end: %.1f%% with 4.5 million, %.1f%% with %s", p0, p1, after.Budget)
	}
	if after.Shortfall == 0 || !strings.Contains(after.Headline, "Not every target") {
		t.Errorf("lower budget: headline %q, %d shortfalls in words", after.Headline, after.Shortfall)
	}
	// The cut came in two parts, the plan first (servePlan): the page
	// showed it, then the funding answers in words when they followed.
	if after.Early == "" || after.Early == "0" {
		t.Errorf("no plan was shown before its funding answers (data-early %q)", after.Early)
	}
	if after.Pending || !strings.Contains(after.Funding, "extra") || !strings.Contains(after.Funding, "level budget") {
		t.Errorf("lower budget: funding answers pending %v, in words %q; want the extra money and the least level budget", after.Pending, after.Funding)
	}

	// Keep it: the side-by-side list shows the page's plan and the kept one.
	if err := chromedp.Do(ctx, chromedp.Click(chromedp.ID("keep"))); err != nil {
		t.Fatal(err)
	}
	cols, err := chromedp.Run(ctx, chromedp.Evaluate[int](`document.querySelectorAll('#compare-alternatives thead th').length`))
	if err != nil || cols != 3 {
		t.Errorf("comparison has %d header cells (want figure, page, kept): %v", cols, err)
	}

	// Ask for the uncertainty bands: the page plans again and shows the
	// band chart of the network beside its condition chart.
	if err := chromedp.Do(ctx, chromedp.Click(chromedp.ID("bands"))); err != nil {
		t.Fatal(err)
	}
	waitSolves(3)
	visible, err := chromedp.Run(ctx, chromedp.Evaluate[bool](`(() => { const e = document.querySelector('#charts-main #current-chart-bands-network'); return !!e && e.getBoundingClientRect().height > 50; })()`))
	if err != nil || !visible {
		t.Errorf("no visible band chart after asking for bands: %v", err)
	}

	shot, err := chromedp.Run(ctx, chromedp.FullScreenshot(100))
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("screenshot: %s", browsertest.SaveScreenshot(t, "what-if-page.png", shot))

	outside, problems := events.Collected()
	if len(outside) > 0 {
		t.Errorf("requests outside the server: %v", outside)
	}
	if len(problems) > 0 {
		t.Errorf("console problems: %v", problems)
	}
}

// TestClassTargetsInChromium: on the demo's first plan the page warns what
// the plan does to local asphalt's worst state; clicking that warning's
// "Add this target" button adds a row to the target editor reading local
// asphalt, share in a state, Failed, at most the suggested share, and the
// page plans again with it: the targets table lists the new target. The
// editor offers a state only for a class.
func TestClassTargetsInChromium(t *testing.T) {
	browsertest.Require(t)
	_, ts := newTestServer(t, Options{}, "marrowby.yaml")
	events := &browsertest.Events{}
	events.Reset(func(url string) bool {
		return strings.HasPrefix(url, ts.URL+"/") || strings.HasPrefix(url, "data:")
	})
	ctx := browsertest.Start(t, 1400, 1000, events)
	ctx, tcancel := context.WithTimeout(ctx, 90*time.Second)
	defer tcancel()
	wait := func(n int) {
		t.Helper()
		if err := chromedp.Do(ctx, chromedp.WaitVisible(chromedp.CSS(fmt.Sprintf(`body[data-solves="%d"]`, n)))); err != nil {
			t.Fatalf("waiting for plan %d: %v", n, err)
		}
	}
	if err := chromedp.Do(ctx, chromedp.Navigate(ts.URL+"/")); err != nil {
		t.Fatal(err)
	}
	wait(1)
	type row struct {
		Warning string
		Rows    int
	}
	first, err := chromedp.Run(ctx, chromedp.Evaluate[row](`(() => {
		const li = [...document.querySelectorAll('#class-warnings li')].find((l) => l.textContent.includes('local-asphalt:'));
		return { Warning: li ? li.textContent : '', Rows: document.querySelectorAll('#targets li').length };
	})()`))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(first.Warning, "worst state, Failed") || !strings.Contains(first.Warning, "Add this target") {
		t.Fatalf("local-asphalt warning %q", first.Warning)
	}
	if _, err := chromedp.Run(ctx, chromedp.Evaluate[bool](`(() => { [...document.querySelectorAll('#class-warnings li')].find((l) => l.textContent.includes('local-asphalt:')).querySelector('button').click(); return true; })()`)); err != nil {
		t.Fatal(err)
	}
	wait(2)
	type added struct {
		Rows                         int
		Who, Measure, State, Bound   string
		Value, Targets               string
		StateOffered, NetworkOffered bool
	}
	got, err := chromedp.Run(ctx, chromedp.Evaluate[added](`(() => {
		const rows = document.querySelectorAll('#targets li');
		const last = rows[rows.length - 1];
		const sel = (label) => last.querySelector('[aria-label$="' + label + '"]');
		const first = rows[0].querySelector('[aria-label$="measure"]');
		return {
			Rows: rows.length, Who: sel('applies to').value, Measure: sel('measure').value, State: sel('state').value,
			Bound: sel('bound').value, Value: sel('value').value, Targets: document.getElementById('targets-table').textContent,
			StateOffered: !!sel('measure').querySelector('option[value=state]'),
			NetworkOffered: !!first.querySelector('option[value=state]'),
		};
	})()`))
	if err != nil {
		t.Fatal(err)
	}
	if got.Rows != first.Rows+1 || got.Who != "local-asphalt" || got.Measure != "state" || got.State != "Failed" || got.Bound != "max" {
		t.Errorf("added row: %+v", got)
	}
	if v, err := strconv.ParseFloat(got.Value, 64); err != nil || v <= 0 || v > 10 {
		t.Errorf("added row's share %q, want a percentage", got.Value)
	}
	if !strings.Contains(got.Targets, "local-asphalt share in state Failed at most "+got.Value+"%") {
		t.Errorf("targets table lacks the new target:\n%s", got.Targets)
	}
	if !got.StateOffered || got.NetworkOffered {
		t.Errorf("state offered for a class %v, for the network %v", got.StateOffered, got.NetworkOffered)
	}
	shot, err := chromedp.Run(ctx, chromedp.CaptureScreenshot())
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("screenshot: %s", browsertest.SaveScreenshot(t, "what-if-class-targets.png", shot))
	if _, problems := events.Collected(); len(problems) > 0 {
		t.Errorf("console problems: %v", problems)
	}
}
