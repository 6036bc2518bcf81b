package report

import (
	"bytes"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"wearplan/scenarios"
)

// TestClassWarningsInEveryFormat: a plan that gives a class no work (the
// invented town of Quillhaven's footpaths) says so under its own heading in
// the HTML and Markdown reports, once, apart from the other notes, and in
// the workbook's About sheet.
func TestClassWarningsInEveryFormat(t *testing.T) {
	sc, err := scenarios.LoadFile("../../../testdata/quillhaven.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{SkipFunding: true})
	if err != nil {
		t.Fatal(err)
	}
	var text string
	for _, w := range r.ClassWarnings {
		if w.Class == "footpaths" {
			text = w.Text
		}
	}
	if text == "" {
		t.Fatalf("no footpaths warning: %q", r.Warnings)
	}
	rep := &Report{Runs: []Run{{Scenario: sc, Result: r}}, Details: Details{Version: "test", Date: "2027-01-15"}}
	h := htmlOf(t, rep)
	if !strings.Contains(h, "What the plan does to each class</h3>") || strings.Count(h, "Warning: footpaths: the plan meets its targets, but gives it no work in any year") != 1 {
		t.Errorf("HTML: heading or the footpaths warning (once) missing")
	}
	md := markdownOf(t, rep)
	if !strings.Contains(md, "### What the plan does to each class") || strings.Count(md, "no work in any year") != 1 {
		t.Errorf("Markdown: heading or the footpaths warning (once) missing")
	}
	var b bytes.Buffer
	if err := Workbook(&b, rep); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&b)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := f.GetRows(SheetAbout)
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, row := range rows {
		found = found || (len(row) > 1 && row[0] == "Warning" && strings.HasSuffix(row[1], text))
	}
	if !found {
		t.Errorf("About sheet has no Warning row with the footpaths warning")
	}
}
