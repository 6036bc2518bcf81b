package report

import (
	"bytes"
	"crypto/sha256"
	"flag"
	"fmt"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"wearplan/cmd/internal/goldentest"
	"wearplan/scenarios"
)

var update = flag.Bool("update", false, "rewrite the golden files of the reports (go test ./cmd/internal/report -run Golden -update)")

// keswold is an invented water utility (two budget groups, counted
// assets, routine costs, targets the budget cannot meet).
const keswold = "../../../testdata/keswold-utility.yaml"

// golden compares got with testdata/golden/name, or rewrites it with
// -update.
func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	goldentest.Compare(t, filepath.Join("testdata", "golden", name), got, *update, "go test ./cmd/internal/report -run Golden -update")
}

var svgElement = regexp.MustCompile(`(?s)<svg .*?</svg>`)

// withoutSVG replaces each inline chart by its digest, so that the golden
// HTML reads as the page's text and structure; the charts are checked in
// the browser and by their own tests.
func withoutSVG(page []byte) []byte {
	return svgElement.ReplaceAllFunc(page, func(svg []byte) []byte {
		return []byte(fmt.Sprintf("<svg sha256=%x/>", sha256.Sum256(svg)))
	})
}

func TestGoldenReports(t *testing.T) {
	sc, err := scenarios.LoadFile(keswold)
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	sw, err := scenarios.Sweep(sc, []float64{2e6, 3e6}, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	budget := 2.6e6
	rep := &Report{
		Runs:    []Run{{Scenario: sc, Result: r}},
		Sweep:   &Sweep{Scenario: sw.Scenario, Currency: sw.Currency, Budget: &budget, TargetsBudget: sw.TargetsBudget, HoldBudget: sw.HoldBudget, Notes: sw.Warnings},
		Details: Details{Version: "test", Date: "2027-01-15", Inputs: []InputFile{{Path: "keswold-utility.yaml", SHA256: strings.Repeat("cd", 32)}}},
	}
	for _, p := range sw.Points {
		rep.Sweep.Points = append(rep.Sweep.Points, SweepPoint{Budget: p.Budget, ConditionScore: p.ConditionScore, Status: p.Status, EndPoorShare: p.EndPoorShare, TargetsMet: p.TargetsMet, Targets: p.Targets})
	}
	var md, page bytes.Buffer
	if err := Markdown(&md, rep); err != nil {
		t.Fatal(err)
	}
	golden(t, "keswold.md", md.Bytes())
	if err := HTML(&page, rep); err != nil {
		t.Fatal(err)
	}
	golden(t, "keswold.html", withoutSVG(page.Bytes()))

	cmp := smallReport(t)
	other := smallReport(t).Runs[0]
	other.Result.Scenario = "Marrowby local roads and culverts, second option (invented test data)"
	cmp.Runs = append(cmp.Runs, other)
	var cmd bytes.Buffer
	if err := Markdown(&cmd, cmp); err != nil {
		t.Fatal(err)
	}
	golden(t, "comparison.md", cmd.Bytes())
}
