package scenarios_test

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"

	"wearplan/scenarios"
)

// The corpus in testdata/bad-scenarios holds malformed scenario files, each
// a copy of testdata/marrowby-small.yaml (invented data) with a problem put
// in. testdata/bad-scenarios/expectations.txt says, for each file, on which
// line every problem must be reported and what the field path and message
// must contain. The checks below follow from the scenario file format in
// docs/scenario-format.md (strict parsing, errors name the file, line and field)
// and from the package's own promise (doc.go) that every problem is reported
// at once in an *InputError.

const corpusDir = "../testdata/bad-scenarios"

type corpusExpectation struct {
	line  int
	field string // "" when the issue must have no field
	msg   string
	src   int // line in expectations.txt, for messages
}

func (e corpusExpectation) String() string {
	return fmt.Sprintf("line %d, field %q, message containing %q (expectations.txt:%d)", e.line, e.field, e.msg, e.src)
}

func (e corpusExpectation) matches(is *scenarios.Issue) bool {
	if is.Line != e.line || !strings.Contains(is.Msg, e.msg) {
		return false
	}
	if e.field == "" {
		return is.Field == ""
	}
	return strings.Contains(is.Field, e.field)
}

func readCorpusExpectations(t *testing.T) map[string][]corpusExpectation {
	t.Helper()
	out := map[string][]corpusExpectation{}
	for _, row := range expectationRows(t, filepath.Join(corpusDir, "expectations.txt"), "FILE | LINE | FIELD | MESSAGE") {
		line, err := strconv.Atoi(row.fields[1])
		if err != nil {
			t.Fatalf("expectations.txt:%d: line %q is not a number", row.src, row.fields[1])
		}
		field := row.fields[2]
		if field == "-" {
			field = ""
		}
		if row.fields[3] == "" {
			t.Fatalf("expectations.txt:%d: empty message substring would match anything", row.src)
		}
		name := row.fields[0]
		out[name] = append(out[name], corpusExpectation{line: line, field: field, msg: row.fields[3], src: row.src})
	}
	return out
}

// expectationRow is one line of a corpus's expectations.txt: its fields
// (separated by " | ", spaces trimmed) and its line number.
type expectationRow struct {
	fields []string
	src    int
}

// expectationRows reads a corpus's expectations.txt, skipping blank lines
// and # comments; every other line must have the fields layout names.
func expectationRows(t *testing.T, path, layout string) []expectationRow {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	want := len(strings.Split(layout, " | "))
	var out []expectationRow
	sc := bufio.NewScanner(f)
	for n := 1; sc.Scan(); n++ {
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		parts := strings.Split(text, " | ")
		if len(parts) != want {
			t.Fatalf("%s:%d: want %s, got %q", filepath.Base(path), n, layout, text)
		}
		for i := range parts {
			parts[i] = strings.TrimSpace(parts[i])
		}
		out = append(out, expectationRow{fields: parts, src: n})
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return out
}

// TestCorpusBaseIsValid makes sure the file every corpus entry is derived
// from loads cleanly, so that each failure below comes from the problem put
// into that file and nothing else.
func TestCorpusBaseIsValid(t *testing.T) {
	sc, err := scenarios.LoadFile("../testdata/marrowby-small.yaml")
	if err != nil {
		t.Fatalf("base scenario of the corpus does not load: %v", err)
	}
	if sc.Horizon != 5 || sc.StartYear != 2027 || len(sc.Classes) != 2 {
		t.Fatalf("base scenario changed shape (horizon %d, start %d, %d classes); the line numbers in expectations.txt assume horizon 5, start 2027, 2 classes",
			sc.Horizon, sc.StartYear, len(sc.Classes))
	}
}

func TestBadScenarioCorpus(t *testing.T) {
	want := readCorpusExpectations(t)
	files, err := filepath.Glob(filepath.Join(corpusDir, "*.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if len(files) < 20 {
		t.Fatalf("corpus has %d files; it should cover at least 20 kinds of mistake", len(files))
	}
	seen := map[string]bool{}
	multi := 0
	for _, path := range files {
		name := filepath.Base(path)
		seen[name] = true
		exp := want[name]
		if len(exp) > 1 {
			multi++
		}
		t.Run(name, func(t *testing.T) {
			if len(exp) == 0 {
				t.Fatalf("no expectations for %s in expectations.txt", name)
			}
			sc, err := scenarios.LoadFile(path)
			if err == nil {
				t.Fatalf("loaded without error; want %d problem(s), first %v", len(exp), exp[0])
			}
			if sc != nil {
				t.Errorf("a scenario came back with the error; want nil")
			}
			ie, ok := err.(*scenarios.InputError)
			if !ok {
				t.Fatalf("error is %T (%v), want *scenarios.InputError", err, err)
			}
			var asIE *scenarios.InputError
			if !errors.As(err, &asIE) {
				t.Fatalf("errors.As does not find the *InputError")
			}
			if len(ie.Issues) != len(exp) {
				t.Errorf("%d problem(s) reported, want %d:\n%v", len(ie.Issues), len(exp), err)
			}
			used := make([]bool, len(ie.Issues))
			for _, e := range exp {
				found := false
				for i, is := range ie.Issues {
					if !used[i] && e.matches(is) {
						used[i], found = true, true
						break
					}
				}
				if !found {
					t.Errorf("no reported problem with %v; got:\n%v", e, err)
				}
			}
			// Every issue names the file it came from, and the list is in
			// line order, as InputError documents.
			lines := make([]int, len(ie.Issues))
			for i, is := range ie.Issues {
				lines[i] = is.Line
				if is.File != name {
					t.Errorf("issue %q names file %q, want %q", is.Msg, is.File, name)
				}
				if strings.TrimSpace(is.Msg) == "" {
					t.Errorf("issue at line %d has an empty message", is.Line)
				}
			}
			if !sort.IntsAreSorted(lines) {
				t.Errorf("issues not in line order: %v", lines)
			}
			// The one-paragraph error the command line prints names file and line.
			text := err.Error()
			for _, e := range exp {
				loc := name
				if e.line > 0 {
					loc = fmt.Sprintf("%s:%d", name, e.line)
				}
				if !strings.Contains(text, loc) {
					t.Errorf("error text does not name %s:\n%s", loc, text)
				}
			}
		})
	}
	for name := range want {
		if !seen[name] {
			t.Errorf("expectations.txt lists %s, which is not in the corpus", name)
		}
	}
	if multi < 1 {
		t.Errorf("the corpus needs a file with several problems at once")
	}
}
