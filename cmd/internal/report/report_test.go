package report

import (
	"bytes"
	"math"
	"math/rand/v2"
	"regexp"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"

	"wearplan/scenarios"
)

const smallScenario = "../../../testdata/marrowby-small.yaml"

// smallReport plans the small invented test scenario into a report.
func smallReport(t *testing.T) *Report {
	t.Helper()
	sc, err := scenarios.LoadFile(smallScenario)
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return &Report{
		Runs:    []Run{{Scenario: sc, Result: r}},
		Details: Details{Version: "test", Date: "2027-01-15", Inputs: []InputFile{{Path: "marrowby-small.yaml", SHA256: strings.Repeat("ab", 32)}}},
	}
}

func htmlOf(t *testing.T, rep *Report) string {
	t.Helper()
	var b bytes.Buffer
	if err := HTML(&b, rep); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

func markdownOf(t *testing.T, rep *Report) string {
	t.Helper()
	var b bytes.Buffer
	if err := Markdown(&b, rep); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

// TestSameReportSameBytes: HTML and Markdown depend only on the report
// data: two renderings are identical, and the date shows up.
func TestSameReportSameBytes(t *testing.T) {
	rep := smallReport(t)
	a, b := htmlOf(t, rep), htmlOf(t, smallReport(t))
	if a != b {
		t.Error("HTML differs between two renderings of the same report")
	}
	if markdownOf(t, rep) != markdownOf(t, smallReport(t)) {
		t.Error("Markdown differs between two renderings of the same report")
	}
	rep2 := smallReport(t)
	rep2.Details.Date = "2028-02-29"
	if c := htmlOf(t, rep2); c == a || !strings.Contains(c, "2028-02-29") {
		t.Error("the report date does not reach the HTML")
	}
}

// TestEveryReportCarriesCautionAndDetails: the caution paragraph, the
// version, the date and each input file's digest are in both formats.
func TestEveryReportCarriesCautionAndDetails(t *testing.T) {
	rep := smallReport(t)
	for name, out := range map[string]string{"html": htmlOf(t, rep), "md": markdownOf(t, rep)} {
		for _, want := range []string{"Planning estimate only", "not an engineering assessment", "2027-01-15", "test", strings.Repeat("ab", 32), "marrowby-small.yaml"} {
			if !strings.Contains(out, want) {
				t.Errorf("%s lacks %q", name, want)
			}
		}
	}
}

// TestHTMLIsSelfContained: nothing in the page can make the browser fetch
// anything: no scripts, no external references, no font URLs, and a
// content security policy that forbids loading.
func TestHTMLIsSelfContained(t *testing.T) {
	out := htmlOf(t, smallReport(t))
	for _, bad := range []string{"<script", "url(", "@import", "@font-face", "src=", "<link", "<img", "<iframe"} {
		if strings.Contains(out, bad) {
			t.Errorf("HTML contains %q", bad)
		}
	}
	for _, m := range regexp.MustCompile(`href="([^"]*)"`).FindAllStringSubmatch(out, -1) {
		if !strings.HasPrefix(m[1], "#") {
			t.Errorf("link to %q", m[1])
		}
	}
	if !strings.Contains(out, `content="default-src 'none'`) {
		t.Error("no content security policy")
	}
	// The summary's network chart; the plan's network, 2 classes, spend,
	// spend by class.
	if n := strings.Count(out, "<svg "); n != 6 {
		t.Errorf("%d charts, want 6", n)
	}
}

// TestLOSShowsValueAndBacklogWhereKnown: replacement value and backlog
// (filled in by the asset-value reporting) appear in the level-of-service
// table only when the result has them.
func TestLOSShowsValueAndBacklogWhereKnown(t *testing.T) {
	rep := smallReport(t)
	r := rep.Runs[0].Result
	// Forget the figures the run computed, to see the table without them.
	clear := func(cs []scenarios.ClassCondition, n *scenarios.NetworkCondition) {
		for k := range cs {
			cs[k].ReplacementValue, cs[k].Backlog = nil, nil
		}
		n.ReplacementValue, n.Backlog = nil, nil
	}
	clear(r.Initial.Classes, &r.Initial.Network)
	for y := range r.Years {
		clear(r.Years[y].Classes, &r.Years[y].Network)
	}
	if out := markdownOf(t, rep); strings.Contains(out, "Replacement value (USD)") || strings.Contains(out, "Backlog (USD)") {
		t.Fatal("value rows shown without values")
	}
	v := func(x float64) *float64 { return &x }
	r.Initial.Classes[0].ReplacementValue = v(325_000_000)
	r.Initial.Classes[0].Backlog = v(41_234_567)
	for i := range r.Years {
		r.Years[i].Classes[0].ReplacementValue = v(330_000_000 + float64(i))
		r.Years[i].Classes[0].Backlog = v(40_000_000 - 1_000_000*float64(i))
		r.Years[i].Network.Backlog = v(50_000_000)
	}
	out := markdownOf(t, rep)
	for _, want := range []string{
		"| Replacement value (USD) | 325,000,000 | 330,000,000 | 330,000,004 |",
		"| Backlog (USD) | 41,234,567 | 40,000,000 | 36,000,000 |",
		"| Backlog (USD) | not known | 50,000,000 | 50,000,000 |",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("Markdown lacks %q", want)
		}
	}
	if strings.Count(out, "Replacement value (USD)") != 1 {
		t.Errorf("replacement value shown for a class or the network without values")
	}
	if h := htmlOf(t, rep); !strings.Contains(h, "41,234,567") {
		t.Error("HTML lacks the backlog")
	}
}

// TestStatesBestFirst: tables and chart legends list states best first.
func TestStatesBestFirst(t *testing.T) {
	rep := smallReport(t)
	md := markdownOf(t, rep)
	order := []string{"| Very good |", "| Good |", "| Fair |", "| Poor |", "| Very poor |"}
	scale := md[strings.Index(md, "Condition states, best first"):]
	last := -1
	for _, s := range order {
		i := strings.Index(scale, s)
		if i < last {
			t.Errorf("%s out of order in the scale table", s)
		}
		last = i
	}
	h := htmlOf(t, rep)
	chart := h[strings.Index(h, `id="run-1-chart-class-1"`):]
	chart = chart[:strings.Index(chart, "</svg>")]
	last = -1
	for _, s := range []string{">Very good<", ">Good<", ">Fair<", ">Poor<", ">Very poor<"} {
		i := strings.Index(chart, s)
		if i < 0 || i < last {
			t.Errorf("legend entry %s missing or out of order", s)
		}
		last = i
	}
}

// TestComparisonAndSweep: several runs give the side-by-side tables and
// charts; a sweep adds its chart only when given.
func TestComparisonAndSweep(t *testing.T) {
	rep := smallReport(t)
	other := smallReport(t).Runs[0]
	other.Result.Scenario = "Second option | with a pipe"
	rep.Runs = append(rep.Runs, other)
	rep.Sweep = &Sweep{Scenario: "Marrowby", Currency: "USD", Points: []SweepPoint{
		{Budget: 1e6, ConditionScore: 55.5, Status: "targets-not-met"},
		{Budget: 2e6, ConditionScore: 61.26, Status: "optimal"},
		{Budget: 3e6, ConditionScore: 64, Status: "optimal"},
	}}
	h := htmlOf(t, rep)
	for _, id := range []string{"compare-overview", "compare-los", "compare-spend", "compare-chart-score", "compare-chart-spend", "run-2-los", "sweep-chart", "sweep-table"} {
		if !strings.Contains(h, `id="`+id+`"`) {
			t.Errorf("HTML lacks #%s", id)
		}
	}
	md := markdownOf(t, rep)
	if !strings.Contains(md, "| 2,000,000 | 61.3 | 0.0% | 0 of 0 | every target met |") {
		t.Error("Markdown lacks the sweep table row")
	}
	// The pipe in a scenario name is escaped, so every row of the overview
	// table has the same number of cells.
	overview := md[strings.Index(md, "**Scenarios at a glance"):]
	overview = overview[:strings.Index(overview, "\n\n**")]
	if !strings.Contains(overview, `Second option \| with a pipe`) {
		t.Errorf("overview lacks the escaped name:\n%s", overview)
	}
	for _, line := range strings.Split(overview, "\n") {
		if strings.HasPrefix(line, "|") {
			cells := len(regexp.MustCompile(`(^|[^\\])\|`).FindAllString(line, -1)) - 1
			if cells != 8 {
				t.Errorf("%d cells in %q", cells, line)
			}
		}
	}
	rep.Sweep = nil
	if strings.Contains(htmlOf(t, rep), "sweep-chart") {
		t.Error("sweep chart drawn without a sweep")
	}
}

func TestRejectsBadReports(t *testing.T) {
	rep := smallReport(t)
	rep.Details.Date = "15/01/2027"
	if err := HTML(&bytes.Buffer{}, rep); err == nil {
		t.Error("a date that is not YYYY-MM-DD was accepted")
	}
	var b bytes.Buffer
	if err := Markdown(&b, &Report{Details: Details{Date: "2027-01-15"}}); err == nil || b.Len() != 0 {
		t.Errorf("a report without runs: err %v, %d bytes written", err, b.Len())
	}
}

// TestConditionRampLightness: the condition colours fall in CIE lightness
// (L*, CIE 15 colorimetry; formulas from memory) by at least 60/(n-1)
// points a step from best to worst, so that neighbouring states stay apart
// in greyscale; the best is light enough for dark text, the worst dark
// enough for white text.
func TestConditionRampLightness(t *testing.T) {
	for n := 2; n <= 10; n++ {
		ramp := conditionRamp(n)
		for i := 1; i < n; i++ {
			step := lightness(ramp[i-1]) - lightness(ramp[i])
			if step < 60/float64(n-1) {
				t.Errorf("n=%d: lightness step %d->%d is %.1f", n, i, i+1, step)
			}
		}
		if inkOn(ramp[0]) != ink || inkOn(ramp[n-1]) == ink {
			t.Errorf("n=%d: text colours do not contrast with the ends of the ramp", n)
		}
	}
}

// TestLabConversion: reference points of the CIE L*a*b* - sRGB
// conversion (IEC 61966-2-1 sRGB, D65 white; from memory): L* 100 is white,
// L* 0 is black, L* 50 grey is sRGB 119, and lightness inverts it.
func TestLabConversion(t *testing.T) {
	cases := []struct {
		l    float64
		want uint8
	}{{100, 255}, {0, 0}, {50, 119}}
	for _, c := range cases {
		got := lch(c.l, 0, 0)
		if got.R != c.want || got.G != c.want || got.B != c.want {
			t.Errorf("L*=%g: %v, want grey %d", c.l, got, c.want)
		}
		if l := lightness(got); math.Abs(l-c.l) > 0.3 {
			t.Errorf("lightness of %v: %.2f, want %g", got, l, c.l)
		}
	}
}

// TestHatchLinesStayInsideAndCoverTheBand: hatch segments lie on
// 45-degree lines inside the band, and their total length is the band's
// area divided by the spacing (Cavalieri's principle: parallel lines d apart
// cut a region of area A in total length A/d, up to edge effects).
func TestHatchLinesStayInsideAndCoverTheBand(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := 0; trial < 30; trial++ {
		n := 2 + rng.IntN(20)
		lo, hi := make([]vg.Point, n), make([]vg.Point, n)
		x := 0.0
		area := 0.0
		for i := range lo {
			if i > 0 {
				x += 5 + 30*rng.Float64()
			}
			base := 20 + 60*rng.Float64()
			lo[i] = vg.Point{X: vg.Length(x), Y: vg.Length(base)}
			hi[i] = vg.Point{X: vg.Length(x), Y: vg.Length(base + 30 + 80*rng.Float64())}
			if i > 0 {
				w := float64(lo[i].X - lo[i-1].X)
				area += w * (float64(hi[i].Y-lo[i].Y) + float64(hi[i-1].Y-lo[i-1].Y)) / 2
			}
		}
		edge := func(pts []vg.Point, x float64) float64 {
			for i := 1; i < len(pts); i++ {
				if x <= float64(pts[i].X)+1e-9 {
					u := (x - float64(pts[i-1].X)) / float64(pts[i].X-pts[i-1].X)
					return float64(pts[i-1].Y) + u*float64(pts[i].Y-pts[i-1].Y)
				}
			}
			return float64(pts[len(pts)-1].Y)
		}
		const spacing = 3.0
		total := 0.0
		for _, seg := range hatchLines(lo, hi, spacing) {
			a, b := seg[0], seg[1]
			if math.Abs(float64((b.Y-a.Y)-(b.X-a.X))) > 1e-6 {
				t.Fatalf("trial %d: segment %v is not at 45 degrees", trial, seg)
			}
			for _, p := range seg {
				if float64(p.Y) < edge(lo, float64(p.X))-1e-6 || float64(p.Y) > edge(hi, float64(p.X))+1e-6 {
					t.Fatalf("trial %d: point %v outside the band", trial, p)
				}
			}
			total += math.Hypot(float64(b.X-a.X), float64(b.Y-a.Y))
		}
		if n > 1 && area > 0 {
			if want := area / spacing; math.Abs(total-want) > 0.15*want+10 {
				t.Errorf("trial %d: hatch length %.0f, area/spacing %.0f", trial, total, want)
			}
		}
	}
}
