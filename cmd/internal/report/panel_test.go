package report

import (
	"regexp"
	"strings"
	"testing"
)

// The panel's pieces are the report's own: each fragment appears in the
// HTML report of the same run, byte for byte.
func TestPanelPiecesAreTheReports(t *testing.T) {
	rep := smallReport(t)
	page := htmlOf(t, rep)
	p, err := RunPanel("run-1", rep.Runs[0])
	if err != nil {
		t.Fatal(err)
	}
	pieces := map[string]string{"summary": string(p.Summary), "level of service": string(p.LOS), "targets": string(p.Targets), "spend": string(p.Spend), "work": string(p.Work)}
	for _, f := range p.Charts {
		pieces[f.ID] = string(f.HTML)
	}
	for name, html := range pieces {
		if html == "" || !strings.Contains(page, html) {
			t.Errorf("panel %s (%d bytes) is not part of the HTML report", name, len(html))
		}
	}
	classes := len(rep.Runs[0].Result.Initial.Classes)
	if len(p.Charts) != classes+2 || p.Charts[0].ID != "run-1-chart-network" || p.Charts[len(p.Charts)-1].ID != "run-1-chart-spend" {
		t.Errorf("charts %d (want network, %d classes, spend)", len(p.Charts), classes)
	}
	if !strings.Contains(string(p.LOS), `id="run-1-los"`) {
		t.Error("level-of-service table lacks its id")
	}
}

func TestPaletteCSS(t *testing.T) {
	css := PaletteCSS()
	for _, name := range []string{"ink", "spend", "grid", "good", "fair", "poor", "on-good", "on-poor"} {
		if !regexp.MustCompile(`--` + name + `: #[0-9a-f]{6};`).MatchString(css) {
			t.Errorf("palette lacks --%s: %s", name, css)
		}
	}
	if !strings.Contains(string(Stylesheet()), "caption") {
		t.Error("stylesheet is not the reports'")
	}
}
