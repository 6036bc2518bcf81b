package scenarios_test

import (
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"wearplan/scenarios"
)

const demoScenario = "examples/marrowby.yaml"

func demoScales(t *testing.T) *scenarios.ScaleSet {
	t.Helper()
	set, err := scenarios.LoadScaleSet(demoScenario)
	if err != nil {
		t.Fatal(err)
	}
	return set
}

func readCSV(t *testing.T, text string, opt scenarios.InspectionOptions) (*scenarios.Inspections, error) {
	t.Helper()
	if opt.ScaleFor == nil {
		opt.ScaleFor = demoScales(t).ForClass
	}
	return scenarios.ReadInspections(strings.NewReader(text), "test.csv", opt)
}

type inspectionExpectation struct {
	kind string // error or warning
	line int
	msg  string
	src  int
}

// The corpus in testdata/bad-inspections holds malformed inspection
// exports (invented Marrowby data); expectations.txt says, for each file,
// whether reading and fitting it must fail with a problem on a given line
// or succeed with a warning, and what the message must contain. The
// contract is the project's rule for bad input: a clear message naming the
// file and line and the fix, no panic.
func TestBadInspectionCorpus(t *testing.T) {
	dir := "../testdata/bad-inspections"
	want := map[string][]inspectionExpectation{}
	for _, row := range expectationRows(t, filepath.Join(dir, "expectations.txt"), "FILE | KIND | LINE | MESSAGE") {
		p := row.fields
		line, err := strconv.Atoi(p[2])
		if err != nil || (p[1] != "error" && p[1] != "warning") || p[3] == "" {
			t.Fatalf("expectations.txt:%d: bad expectation %q", row.src, strings.Join(p, " | "))
		}
		want[p[0]] = append(want[p[0]], inspectionExpectation{kind: p[1], line: line, msg: p[3], src: row.src})
	}
	files, _ := filepath.Glob(filepath.Join(dir, "*.csv"))
	if len(files) < 10 {
		t.Fatalf("corpus has %d files, want at least 10", len(files))
	}
	set := demoScales(t)
	for _, path := range files {
		name := filepath.Base(path)
		exps, ok := want[name]
		if !ok {
			t.Errorf("%s: no expectation in expectations.txt", name)
			continue
		}
		t.Run(name, func(t *testing.T) {
			file, err := os.Open(path)
			if err != nil {
				t.Fatal(err)
			}
			defer file.Close()
			res, err := func() (*scenarios.FitResult, error) {
				ins, err := scenarios.ReadInspections(file, name, scenarios.InspectionOptions{ScaleFor: set.ForClass})
				if err != nil {
					return nil, err
				}
				return scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting})
			}()
			for _, e := range exps {
				switch e.kind {
				case "error":
					var ie *scenarios.InputError
					if !errors.As(err, &ie) {
						t.Fatalf("err = %v, want an input error (expectations.txt:%d)", err, e.src)
					}
					found := false
					for _, is := range ie.Issues {
						if is.File == name && is.Line == e.line && strings.Contains(is.Msg, e.msg) {
							found = true
						}
					}
					if !found {
						t.Errorf("no problem on line %d containing %q (expectations.txt:%d); got:\n%v", e.line, e.msg, e.src, err)
					}
				case "warning":
					if err != nil {
						t.Fatalf("err = %v, want success with a warning (expectations.txt:%d)", err, e.src)
					}
					found := false
					for _, w := range res.Warnings {
						found = found || (strings.Contains(w, e.msg) && strings.HasPrefix(w, name))
					}
					if !found {
						t.Errorf("no warning containing %q (expectations.txt:%d); got %q", e.msg, e.src, res.Warnings)
					}
				}
			}
		})
	}
}

func TestReadInspectionsColumnsAndValues(t *testing.T) {
	// Extra columns ignored, header names mapped and matched without case,
	// a byte-order mark dropped, dates and years mixed, PCI values and
	// state names, work words read.
	text := "\ufeffSegment,Type,Survey Date,PCI,Rehab,Crew\n" +
		"A1,local-asphalt,2021-07-02,86,,x\n" + // 86 is Good (86-100)
		"A1,local-asphalt,2022-07-02,85.6,no,x\n" + // 85.6 has not reached 86: Satisfactory
		"A1,local-asphalt,2023,Fair,0,x\n" +
		"A1,local-asphalt,2024,40,milled,x\n" // Very poor, work done
	cols := scenarios.InspectionColumns{Asset: "segment", Class: "TYPE", Inspected: "survey date", Condition: "pci", Work: "rehab"}
	ins, err := readCSV(t, text, scenarios.InspectionOptions{Columns: cols})
	if err != nil {
		t.Fatal(err)
	}
	if ins.Rows != 4 || len(ins.Classes) != 1 || len(ins.Classes[0].Histories) != 1 {
		t.Fatalf("read %+v", ins)
	}
	h := ins.Classes[0].Histories[0]
	wantStates := []int{0, 1, 2, 4}
	wantWork := []bool{false, false, false, true}
	for k, in := range h {
		if in.State != wantStates[k] || in.Work != wantWork[k] || in.Ref != k+2 {
			t.Errorf("inspection %d: %+v, want state %d, work %v, line %d", k, in, wantStates[k], wantWork[k], k+2)
		}
	}
	// 2021-07-02 is day 183 of 365: 2021 + 182/365. The year 2023 is
	// taken as mid-year, 2023.5.
	if d := h[0].Time - (2021 + 182.0/365); d*d > 1e-20 || h[2].Time != 2023.5 {
		t.Errorf("times %v, %v", h[0].Time, h[2].Time)
	}
}

func TestReadInspectionsSkipBadRowsAndClasses(t *testing.T) {
	text := "asset,class,inspected,condition\n" +
		"A1,local-asphalt,2021,90\n" +
		"A1,local-asphalt,2022,101\n" + // outside the scale
		"A1,local-asphalt,20x2,80\n" + // bad date
		"S1,sidewalks,2021,50\n" + // unknown class
		"C1,culverts,2021,Good\n"
	ins, err := readCSV(t, text, scenarios.InspectionOptions{SkipBadRows: true, Only: []string{"local-asphalt", "sidewalks"}})
	if err != nil {
		t.Fatal(err)
	}
	if ins.BadRows != 3 || ins.Skipped != 1 || len(ins.Classes) != 1 || ins.Classes[0].Rows != 1 {
		t.Errorf("bad %d, skipped %d, classes %d; want 3, 1, 1 with one row", ins.BadRows, ins.Skipped, len(ins.Classes))
	}
	joined := strings.Join(ins.Warnings, "\n")
	for _, want := range []string{"line 3", "line 4", `class "sidewalks" (line 5)`} {
		if !strings.Contains(joined, want) {
			t.Errorf("warnings lack %q:\n%s", want, joined)
		}
	}
}

func TestReadInspectionsListsAtMostFiftyProblems(t *testing.T) {
	// Every reader lists the first 50 problems and counts the others, so
	// that a file wrong throughout gives a readable message.
	var b strings.Builder
	b.WriteString("asset,class,inspected,condition\n")
	for range 80 {
		b.WriteString("A1,local-asphalt,never,90\n")
	}
	_, err := readCSV(t, b.String(), scenarios.InspectionOptions{})
	var ie *scenarios.InputError
	if !errors.As(err, &ie) || len(ie.Issues) != scenarios.MaxListed || ie.Unlisted != 30 || !strings.Contains(err.Error(), "and 30 more problems") {
		t.Fatalf("got %v", err)
	}
}

func TestScaleStateOf(t *testing.T) {
	set := demoScales(t)
	pci := set.Scales["pci"]
	deck := set.Scales["deck-rating"]
	cases := []struct {
		s    *scenarios.Scale
		v    float64
		want int
	}{
		// Scale.StateOf: a value between whole-number ranges has not
		// reached the better range (common practice, no source).
		{pci, 100, 0}, {pci, 86, 0}, {pci, 85.5, 1}, {pci, 85.4, 1}, {pci, 71, 1}, {pci, 0, 6}, {pci, -0.4, -1},
		{pci, 100.6, -1}, {pci, -1, -1},
		{deck, 9, 0}, {deck, 6, 1}, {deck, 6.4, 1}, {deck, 2, 5}, {deck, 0, 5}, {deck, 10, -1},
		{set.Scales["five-state"], 80, 1}, {set.Scales["five-state"], 80.1, 0}, {set.Scales["five-state"], 79.9, 1}, // shared end: the worse state
	}
	for _, c := range cases {
		if got := c.s.StateOf(c.v); got != c.want {
			t.Errorf("%s.StateOf(%g) = %d, want %d", c.s.Name, c.v, got, c.want)
		}
	}
}
