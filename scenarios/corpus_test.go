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
// must contain. The checks below follow from the scenario-file contract in
// DESIGN.md section 3 (strict parsing, errors name the file, line and field)
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
	f, err := os.Open(filepath.Join(corpusDir, "expectations.txt"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	out := map[string][]corpusExpectation{}
	sc := bufio.NewScanner(f)
	for n := 1; sc.Scan(); n++ {
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		parts := strings.Split(text, " | ")
		if len(parts) != 4 {
			t.Fatalf("expectations.txt:%d: want FILE | LINE | FIELD | MESSAGE, got %q", n, text)
		}
		line, err := strconv.Atoi(strings.TrimSpace(parts[1]))
		if err != nil {
			t.Fatalf("expectations.txt:%d: line %q is not a number", n, parts[1])
		}
		field := strings.TrimSpace(parts[2])
		if field == "-" {
			field = ""
		}
		msg := strings.TrimSpace(parts[3])
		if msg == "" {
			t.Fatalf("expectations.txt:%d: empty message substring would match anything", n)
		}
		name := strings.TrimSpace(parts[0])
		out[name] = append(out[name], corpusExpectation{line: line, field: field, msg: msg, src: n})
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
