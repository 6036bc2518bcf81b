package cli

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"wearplan/cmd/internal/render"
	"wearplan/cmd/internal/whatif"
	"wearplan/scenarios"
)

// startServe runs `wearplan serve` with args until the returned stop is
// called; it returns the URL printed and a function that stops the server
// and returns the command's error and everything it printed.
func startServe(t *testing.T, args ...string) (string, func() (string, string, error)) {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	cmd := newRoot(nil, nil)
	pr, pw := io.Pipe()
	var errb bytes.Buffer
	cmd.SetOut(pw)
	cmd.SetErr(&errb)
	cmd.SetArgs(append([]string{"serve"}, args...))
	done := make(chan error, 1)
	go func() {
		err := cmd.ExecuteContext(ctx)
		pw.Close()
		done <- err
	}()
	var out strings.Builder
	sc := bufio.NewScanner(pr)
	url := ""
	for url == "" && sc.Scan() {
		out.WriteString(sc.Text() + "\n")
		url = regexp.MustCompile(`http://\S+/`).FindString(sc.Text())
	}
	if url == "" {
		cancel()
		t.Fatalf("no URL printed: %s %s %v", out.String(), errb.String(), <-done)
	}
	return url, func() (string, string, error) {
		cancel()
		rest, _ := io.ReadAll(pr)
		out.Write(rest)
		select {
		case err := <-done:
			return out.String(), errb.String(), err
		case <-time.After(10 * time.Second):
			t.Fatal("serve did not stop")
			return "", "", nil
		}
	}
}

func TestServeStartsAndStops(t *testing.T) {
	url, stop := startServe(t, demo, "--port", "0")
	if !strings.HasPrefix(url, "http://127.0.0.1:") {
		t.Errorf("URL %s is not on 127.0.0.1", url)
	}
	res, err := http.Get(url)
	if err != nil {
		t.Fatal(err)
	}
	page, _ := io.ReadAll(res.Body)
	res.Body.Close()
	if res.StatusCode != 200 || !strings.Contains(string(page), "Marrowby") {
		t.Errorf("GET %s: %d", url, res.StatusCode)
	}
	out, errs, err := stop()
	if err != nil || !strings.Contains(out, "stopped") || strings.Contains(errs, "warning") {
		t.Errorf("stop: %v; out %q; err %q", err, out, errs)
	}
}

func TestServeWarnsWhenNotLoopback(t *testing.T) {
	url, stop := startServe(t, demo, "--port", "0", "--addr", "0.0.0.0")
	_, errs, err := stop()
	if err != nil || !strings.Contains(errs, "warning: listening on 0.0.0.0") || !strings.HasPrefix(url, "http://127.0.0.1:") {
		t.Errorf("%v; URL %s; stderr %q", err, url, errs)
	}
}

func TestServeBadInput(t *testing.T) {
	bad := filepath.Join(t.TempDir(), "bad.yaml")
	if err := os.WriteFile(bad, []byte("name: x\nhorizon: 0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{{"serve", bad}, {"serve", demo, "--port", "70000"}, {"serve", demo, "--timeout", "0s"}, {"serve"}} {
		if code, _, errs := run(t, args...); code != exitInput {
			t.Errorf("%v: exit %d (%s), want %d", args, code, errs, exitInput)
		}
	}
}

// A scenario saved from the page loads with `wearplan check` and `wearplan
// plan` makes the same plan from it as the page did.
func TestSavedScenarioChecksAndPlansTheSame(t *testing.T) {
	ed, err := scenarios.LoadEditable(os.DirFS(filepath.Dir(demo)), filepath.Base(demo))
	if err != nil {
		t.Fatal(err)
	}
	srv, err := whatif.New([]whatif.Source{{Path: demo, Scenario: ed}}, whatif.Options{Version: "test"})
	if err != nil {
		t.Fatal(err)
	}
	changes := `{"name": "Marrowby, 15% less from 2029 (invented example)", "budget_steps": [{"from_year": 2029, "percent": -15}], "cost_escalation": 0.03,
		"targets": [{"class": "all", "group": "poor", "max_share": 0.2, "from_year": 2032}, {"hold": true}]}`
	body := `{"format": "yaml", "alternatives": [{"scenario": 0, "changes": ` + changes + `}]}`
	req, _ := http.NewRequest("POST", "http://127.0.0.1/api/download", strings.NewReader(body))
	req.Header.Set("Content-Type", "application/json")
	rec := httptest.NewRecorder()
	srv.ServeHTTP(rec, req)
	if rec.Code != 200 {
		t.Fatalf("download: %d %s", rec.Code, rec.Body.String())
	}
	// Saved beside the demo's segment list, as a planner saves it into
	// the scenario's folder.
	saved := demoCopy(t, "saved.yaml", rec.Body.String())
	if code, out, errs := run(t, "check", saved); code != 0 || !strings.Contains(out, "ok") {
		t.Fatalf("check: exit %d %s %s", code, out, errs)
	}
	code, out, errs := run(t, "plan", saved, "--format", "json")
	if code != 0 {
		t.Fatalf("plan: exit %d %s", code, errs)
	}
	var ch scenarios.Changes
	if err := json.Unmarshal([]byte(changes), &ch); err != nil {
		t.Fatal(err)
	}
	sc, err := ed.Apply(ch)
	if err != nil {
		t.Fatal(err)
	}
	res, err := scenarios.Plan(sc, scenarios.Options{Timeout: 5 * time.Minute})
	if err != nil {
		t.Fatal(err)
	}
	var want bytes.Buffer
	if err := render.JSON(&want, res); err != nil {
		t.Fatal(err)
	}
	if a, b := comparable(t, out), comparable(t, want.String()); a != b {
		t.Error("wearplan plan of the saved scenario differs from the page's plan")
	}
}

// comparable drops what names the file a plan came from.
func comparable(t *testing.T, planJSON string) string {
	t.Helper()
	var doc map[string]any
	if err := json.Unmarshal([]byte(planJSON), &doc); err != nil {
		t.Fatal(err)
	}
	delete(doc, "source")
	delete(doc, "warnings")
	b, _ := json.Marshal(doc)
	return string(b)
}
