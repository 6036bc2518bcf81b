package scenarios_test

import (
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"testing/fstest"

	"wearplan/scenarios"
)

// Fuzz tests of every reader of user files: the scenario loader (with a
// base it extends), segment lists, inspection exports, fit files and
// what-if changes. Each is seeded from the files in testdata and the
// examples; `make test` runs each for a few seconds, `make fuzz` for
// longer, and any input that fails is kept by Go under
// testdata/fuzz/FuzzNAME, where plain `go test` runs it as a test case.
//
// What must hold for any input: no panic; a problem comes back as an
// *InputError listing at most MaxListed problems, each message of bounded
// length and free of control characters (messages reach a terminal).

// checkInputError checks the shape of a reader's error.
func checkInputError(t *testing.T, err error) {
	t.Helper()
	if err == nil {
		return
	}
	var ie *scenarios.InputError
	if !errors.As(err, &ie) {
		t.Fatalf("error is %T, not an *InputError: %v", err, err)
	}
	if len(ie.Issues) == 0 || len(ie.Issues) > scenarios.MaxListed {
		t.Fatalf("%d issues listed; want 1 to %d", len(ie.Issues), scenarios.MaxListed)
	}
	for _, is := range ie.Issues {
		text := is.Error()
		if len(text) > 8<<10 {
			t.Fatalf("a message of %d bytes: %.200s", len(text), text)
		}
		if i := strings.IndexFunc(text, func(r rune) bool { return r < 0x20 || r == 0x7f || (r >= 0x80 && r <= 0x9f) }); i >= 0 {
			t.Fatalf("control character %q in a message: %q", text[i], text)
		}
	}
}

// seedFiles returns the contents of the files matching pattern, cut to
// limit bytes (a seed's size slows every fuzzing step).
func seedFiles(f *testing.F, pattern string, limit int) [][]byte {
	f.Helper()
	paths, err := filepath.Glob(pattern)
	if err != nil || len(paths) == 0 {
		f.Fatalf("no seed files %s (%v)", pattern, err)
	}
	var out [][]byte
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		if len(b) > limit {
			b = b[:limit]
		}
		out = append(out, b)
	}
	return out
}

func FuzzLoadScenario(f *testing.F) {
	base := seedFiles(f, "../testdata/marrowby-small.yaml", 1<<20)[0]
	for _, b := range seedFiles(f, "../testdata/bad-scenarios/*.yaml", 1<<20) {
		f.Add(b, base)
	}
	for _, b := range seedFiles(f, "examples/marrowby*.yaml", 1<<20) {
		f.Add(b, base)
	}
	f.Add([]byte("extends: base.yaml\nname: a variant\nbudget: {yearly: 2500000}\n"), base)
	f.Add([]byte("extends: base.yaml\nclasses:\n  - {name: culverts, replacement_cost: 90000}\n"), base)
	f.Add([]byte("extends: base.yaml\n"), []byte("extends: scenario.yaml\n"))
	f.Add([]byte("a: &x [*x]\n"), base)
	segments := seedFiles(f, "examples/marrowby-segments-invented.csv", 8<<10)[0]
	f.Fuzz(func(t *testing.T, scenario, baseText []byte) {
		fsys := fstest.MapFS{
			"scenario.yaml":                  {Data: scenario},
			"base.yaml":                      {Data: baseText},
			"marrowby-segments-invented.csv": {Data: segments},
		}
		sc, err := scenarios.Load(fsys, "scenario.yaml")
		checkInputError(t, err)
		if err == nil && sc == nil {
			t.Fatal("no scenario and no error")
		}
	})
}

// segmentScenario reads segments.csv at scenario level with the given
// delimiter and decimal mark.
func segmentScenario(delimiter, decimal string) string {
	return strings.Replace(inventoryScenario(`, skip_unrated: true, priority: "quantity * (100 - condition)"`), "{file: segments.csv",
		`{file: segments.csv, delimiter: "`+delimiter+`", decimal: "`+decimal+`"`, 1)
}

func FuzzSegmentList(f *testing.F) {
	for _, b := range seedFiles(f, "../testdata/bad-inventories/*.csv", 1<<20) {
		f.Add(b, uint8(0))
	}
	f.Add(seedFiles(f, "examples/marrowby-segments-invented.csv", 8<<10)[0], uint8(0))
	f.Add([]byte("id;class;quantity;condition;wkt\nR-1;roads;0,5;85,5;POINT (1,5 2)\n"), uint8(3))
	f.Add([]byte("id,class,quantity,condition,wkt\nR-1,roads,1,50,\"POINT (NaN NaN)\"\n"), uint8(0))
	f.Fuzz(func(t *testing.T, csvText []byte, format uint8) {
		delimiter := []string{",", ";", "\\t", "|"}[format%4]
		decimal := []string{".", ","}[format/4%2]
		_, err := loadWith(t, segmentScenario(delimiter, decimal), map[string][]byte{"segments.csv": csvText})
		checkInputError(t, err)
	})
}

func FuzzInspections(f *testing.F) {
	for _, b := range seedFiles(f, "../testdata/bad-inspections/*.csv", 1<<20) {
		f.Add(b, uint8(0))
	}
	f.Add(seedFiles(f, "examples/marrowby-inspections.csv", 8<<10)[0], uint8(0))
	f.Add([]byte("asset;class;inspected;condition\nA1;local-asphalt;14/06/2021;71,5\nA1;local-asphalt;13/06/2022;64\n"), uint8(1+2*3))
	scales, err := scenarios.LoadScaleSet(demoScenario)
	if err != nil {
		f.Fatal(err)
	}
	formats := []string{"ISO", "DD/MM/YYYY", "MM/DD/YYYY", "DD.MM.YYYY"}
	f.Fuzz(func(t *testing.T, csvText []byte, format uint8) {
		dateFormat, err := scenarios.ParseDateFormat(formats[format%4])
		if err != nil {
			t.Fatal(err)
		}
		opt := scenarios.InspectionOptions{
			ScaleFor:    scales.ForClass,
			Delimiter:   []rune{',', ';'}[format/4%2],
			Decimal:     []rune{'.', ','}[format/8%2],
			DateFormat:  dateFormat,
			SkipBadRows: format&16 != 0,
		}
		ins, err := scenarios.ReadInspections(strings.NewReader(string(csvText)), "export.csv", opt)
		checkInputError(t, err)
		if err == nil && ins.Rows == 0 {
			t.Fatal("read without error and without rows")
		}
	})
}

func FuzzFitFile(f *testing.F) {
	for _, b := range seedFiles(f, "../testdata/fit-files/*.yaml", 1<<20) {
		f.Add(b)
	}
	f.Add([]byte("wearplan_fit: 1\nclasses: []\n"))
	f.Fuzz(func(t *testing.T, text []byte) {
		_, err := scenarios.ReadFitFile(fstest.MapFS{"fit.yaml": {Data: text}}, "fit.yaml")
		checkInputError(t, err)
	})
}

func FuzzWhatIfChanges(f *testing.F) {
	for _, b := range seedFiles(f, "../testdata/whatif-changes/*.json", 1<<20) {
		f.Add(b)
	}
	ed, err := scenarios.LoadEditableFile("examples/marrowby.yaml")
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, body []byte) {
		var ch scenarios.Changes
		if json.Unmarshal(body, &ch) != nil {
			return // the server answers 400 before any change is applied
		}
		sc, err := ed.Apply(ch)
		checkInputError(t, err)
		if err == nil && sc == nil {
			t.Fatal("no scenario and no error")
		}
	})
}
