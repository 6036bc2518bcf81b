// Package browsertest holds what the browser tests of wearplan's pages
// share (the HTML report in cmd/internal/cli, the what-if page in
// cmd/internal/whatif), in the way net/http/httptest serves tests of
// net/http: ordinary Go code, imported only by _test.go files.
//
// Require finds Debian's chromium, following optimizetest.RequireTool's
// rule: a missing browser skips the test, or fails it under
// WEARPLAN_REQUIRE_REFERENCE=1 (set by .ci/run). Start runs it headless
// through chromedp with a fresh profile and nothing that talks to the
// network on its own (no component updates, sync or background
// networking), so that any request Events collects comes from the page.
// Events collects what a page must not do: requests to anywhere it does not
// allow, console errors and warnings, uncaught exceptions and error entries
// of the browser log. SaveScreenshot leaves a screenshot where people can
// look at it: $WEARPLAN_SCREENSHOT_DIR, by default wearplan-screenshots in
// the system's temporary directory, never inside the repository.
package browsertest
