package browsertest

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"sync"
	"testing"

	cdplog "github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"

	"wearplan/optimize/optimizetest"
)

// Require returns the path of Debian's chromium (or chromium-browser). When
// neither is installed the test is skipped, or fails under
// WEARPLAN_REQUIRE_REFERENCE=1. Call it at the top of a test that does
// other work before Start, so that a missing browser skips that work too.
func Require(t testing.TB) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser"} {
		if path, err := exec.LookPath(name); err == nil {
			return path
		}
	}
	return optimizetest.RequireTool(t, "chromium")
}

// Start starts headless chromium (see Require) with a window of width x
// height CSS pixels and a profile in a temporary folder, and returns the
// context of its first tab, whose events go to events. The browser is
// closed when the test ends.
func Start(t testing.TB, width, height int, events *Events) context.Context {
	t.Helper()
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(Require(t)),
		chromedp.UserDataDir(t.TempDir()),
		chromedp.WindowSize(width, height),
		chromedp.Flag("no-sandbox", true),
		chromedp.Flag("disable-gpu", true),
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-background-networking", true),
	)
	actx, acancel := chromedp.NewExecAllocator(context.Background(), opts...)
	ctx, cancel := chromedp.NewContext(actx, chromedp.WithListener(events.Listen))
	t.Cleanup(func() {
		cancel()
		acancel()
	})
	if err := chromedp.Do(ctx); err != nil { // starts the browser
		t.Fatalf("starting chromium: %v", err)
	}
	return ctx
}

// Events collects what a page did that it must not: requests that the
// rule given to Reset does not allow, console errors, warnings and failed
// assertions, uncaught exceptions, and error and warning entries of the
// browser log (which is where refused loads and content security policy
// violations show). The zero Events allows no request.
type Events struct {
	mu       sync.Mutex
	allow    func(url string) bool
	outside  []string
	problems []string
}

// Reset forgets what was collected and, from now on, allows the requests
// whose URL allow accepts.
func (e *Events) Reset(allow func(url string) bool) {
	e.mu.Lock()
	defer e.mu.Unlock()
	e.allow, e.outside, e.problems = allow, nil, nil
}

// Collected returns what was collected since the last Reset: the requests
// not allowed and the problems.
func (e *Events) Collected() (outside, problems []string) {
	e.mu.Lock()
	defer e.mu.Unlock()
	return append([]string(nil), e.outside...), append([]string(nil), e.problems...)
}

// Listen is the chromedp listener that collects (Start installs it).
func (e *Events) Listen(ev any) {
	e.mu.Lock()
	defer e.mu.Unlock()
	switch ev := ev.(type) {
	case *network.EventRequestWillBeSent:
		if e.allow == nil || !e.allow(ev.Request.URL) {
			e.outside = append(e.outside, ev.Request.URL)
		}
	case *runtime.EventConsoleAPICalled:
		if ev.Type == runtime.ConsoleAPICalledTypeError || ev.Type == runtime.ConsoleAPICalledTypeWarning || ev.Type == runtime.ConsoleAPICalledTypeAssert {
			e.problems = append(e.problems, fmt.Sprintf("console %s", ev.Type))
		}
	case *runtime.EventExceptionThrown:
		e.problems = append(e.problems, "exception: "+ev.ExceptionDetails.Text)
	case *cdplog.EventEntryAdded:
		if ev.Entry.Level == cdplog.EntryLevelError || ev.Entry.Level == cdplog.EntryLevelWarning {
			e.problems = append(e.problems, fmt.Sprintf("log %s (%s): %s", ev.Entry.Level, ev.Entry.Source, ev.Entry.Text))
		}
	}
}

// SaveScreenshot writes the PNG image png as name in the screenshot folder
// ($WEARPLAN_SCREENSHOT_DIR, or wearplan-screenshots in the system's
// temporary directory) and returns its path.
func SaveScreenshot(t testing.TB, name string, png []byte) string {
	t.Helper()
	dir := os.Getenv("WEARPLAN_SCREENSHOT_DIR")
	if dir == "" {
		dir = filepath.Join(os.TempDir(), "wearplan-screenshots")
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, png, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}
