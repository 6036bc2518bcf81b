// Package docs holds wearplan's documentation. Its test keeps the
// documents standing alone: every link of README.md, DEVELOPERS.md and
// docs/*.md reaches a file of the repository and, with #anchor, a heading
// of it; every document a Go comment names exists, with the section it
// names; the README stays the short front door.
package docs

import (
	"bufio"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"unicode"
)

// root is the repository's root, seen from this folder.
const root = ".."

// markdownFiles are the documents whose links are checked, relative to root.
func markdownFiles(t *testing.T) []string {
	t.Helper()
	files := []string{"README.md", "DEVELOPERS.md"}
	docs, err := filepath.Glob(filepath.Join(root, "docs", "*.md"))
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range docs {
		rel, err := filepath.Rel(root, d)
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, filepath.ToSlash(rel))
	}
	return files
}

var (
	fence      = regexp.MustCompile("^\\s*(```|~~~)")
	atxHeading = regexp.MustCompile(`^ {0,3}(#{1,6})\s+(.*?)\s*#*\s*$`)
	codeSpan   = regexp.MustCompile("`[^`]*`")
	inlineLink = regexp.MustCompile(`!?\[([^\]]*)\]\(\s*<?([^)\s>]*)>?(?:\s+"[^"]*")?\s*\)`)
	refDef     = regexp.MustCompile(`^ {0,3}\[[^\]]+\]:\s*<?(\S+?)>?(?:\s+"[^"]*")?\s*$`)
	htmlTag    = regexp.MustCompile(`<[^>]*>`)
	htmlAnchor = regexp.MustCompile(`<a\s+(?:name|id)="([^"]+)"`)
)

// proseLines returns the lines of a Markdown file outside code blocks,
// fenced or indented (four spaces after a blank line), with their numbers.
func proseLines(text string) (lines []string, numbers []int) {
	inFence, inIndented, prevBlank := false, false, true
	for n, line := range strings.Split(text, "\n") {
		blank := strings.TrimSpace(line) == ""
		switch {
		case fence.MatchString(line):
			inFence = !inFence
		case inFence:
		case !blank && (strings.HasPrefix(line, "    ") || strings.HasPrefix(line, "\t")) && (prevBlank || inIndented):
			inIndented = true
		default:
			if !blank {
				inIndented = false
			}
			lines = append(lines, line)
			numbers = append(numbers, n+1)
		}
		prevBlank = blank
	}
	return lines, numbers
}

// anchorOf is GitHub's anchor for a heading: the heading's text as
// rendered, lower-cased, with every character other than letters, digits,
// marks, underscores, hyphens and spaces dropped, and spaces turned into
// hyphens.
func anchorOf(heading string) string {
	text := inlineLink.ReplaceAllString(heading, "$1")
	text = htmlTag.ReplaceAllString(text, "")
	var b strings.Builder
	for _, r := range strings.ToLower(text) {
		switch {
		case r == ' ':
			b.WriteByte('-')
		case r == '-' || r == '_' || unicode.IsLetter(r) || unicode.IsDigit(r) || unicode.IsMark(r):
			b.WriteRune(r)
		}
	}
	return b.String()
}

// headingsOf returns the plain text and the anchors of a Markdown file's
// headings (repeated anchors numbered -1, -2, ... as GitHub does), plus
// any explicit HTML anchors.
func headingsOf(text string) (titles []string, anchors map[string]bool) {
	anchors = map[string]bool{}
	seen := map[string]int{}
	lines, _ := proseLines(text)
	for _, line := range lines {
		for _, m := range htmlAnchor.FindAllStringSubmatch(line, -1) {
			anchors[m[1]] = true
		}
		m := atxHeading.FindStringSubmatch(line)
		if m == nil {
			continue
		}
		a := anchorOf(m[2])
		if n := seen[a]; n > 0 {
			anchors[fmt.Sprintf("%s-%d", a, n)] = true
		} else {
			anchors[a] = true
		}
		seen[a]++
		titles = append(titles, strings.ReplaceAll(inlineLink.ReplaceAllString(m[2], "$1"), "`", ""))
	}
	return titles, anchors
}

func readFile(t *testing.T, rel string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(root, filepath.FromSlash(rel)))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// insideRepo resolves target, written in the document doc, to a path
// relative to the root; ok is false when it leaves the repository.
func insideRepo(doc, target string) (rel string, ok bool) {
	p := filepath.ToSlash(filepath.Clean(filepath.Join(filepath.Dir(filepath.FromSlash(doc)), filepath.FromSlash(target))))
	return p, p != ".." && !strings.HasPrefix(p, "../")
}

// linksOf returns the link targets of a Markdown file's prose, with lines.
func linksOf(text string) (targets []string, lines []int) {
	prose, numbers := proseLines(text)
	for k, line := range prose {
		if m := refDef.FindStringSubmatch(line); m != nil {
			targets, lines = append(targets, m[1]), append(lines, numbers[k])
			continue
		}
		for _, m := range inlineLink.FindAllStringSubmatch(codeSpan.ReplaceAllString(line, "``"), -1) {
			targets, lines = append(targets, m[2]), append(lines, numbers[k])
		}
	}
	return targets, lines
}

func TestLinksResolve(t *testing.T) {
	anchorsCache := map[string]map[string]bool{}
	anchors := func(rel string) map[string]bool {
		if a, ok := anchorsCache[rel]; ok {
			return a
		}
		_, a := headingsOf(readFile(t, rel))
		anchorsCache[rel] = a
		return a
	}
	checked := 0
	for _, doc := range markdownFiles(t) {
		targets, lines := linksOf(readFile(t, doc))
		for k, target := range targets {
			where := fmt.Sprintf("%s:%d: link %q", doc, lines[k], target)
			if strings.Contains(target, "://") || strings.HasPrefix(target, "mailto:") {
				continue
			}
			checked++
			path, anchor, _ := strings.Cut(target, "#")
			rel := doc
			if path != "" {
				var ok bool
				if rel, ok = insideRepo(doc, path); !ok {
					t.Errorf("%s leaves the repository; link to a file inside it", where)
					continue
				}
				if _, err := os.Stat(filepath.Join(root, filepath.FromSlash(rel))); err != nil {
					t.Errorf("%s: no such file %s", where, rel)
					continue
				}
			}
			if anchor == "" {
				continue
			}
			if !strings.HasSuffix(rel, ".md") {
				t.Errorf("%s: an anchor into a file that is not Markdown", where)
				continue
			}
			if !anchors(rel)[anchor] {
				t.Errorf("%s: %s has no heading with anchor #%s", where, rel, anchor)
			}
		}
	}
	// The documents link to each other: a parser that found nothing is
	// broken, not proof that the links are fine.
	if checked < 20 {
		t.Errorf("only %d links checked; the link parser is missing links", checked)
	}
}

// A document named in a comment or a document (a Markdown file under docs/,
// or an upper-case name such as README.md) is a file of the repository,
// and a mention of a file under docs/ followed by a comma and a section
// name (as in "(docs/model.md, Flows)") names one of its headings.
var (
	docMention     = regexp.MustCompile(`\b((?:docs/[A-Za-z0-9_.-]+)|(?:[A-Z][A-Z0-9_]*))\.md\b`)
	sectionMention = regexp.MustCompile(`\b(docs/[a-z0-9-]+\.md),\s+([A-Za-z][A-Za-z -]*[A-Za-z])\s*[);:.]`)
	commentPrefix  = regexp.MustCompile(`^\s*//\s?`)
)

func TestNamedDocumentsExist(t *testing.T) {
	titles := map[string][]string{}
	sectionsOf := func(rel string) []string {
		if s, ok := titles[rel]; ok {
			return s
		}
		s, _ := headingsOf(readFile(t, rel))
		titles[rel] = s
		return s
	}
	mentions := 0
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if name := d.Name(); path != root && (strings.HasPrefix(name, ".") || name == "bin" || name == "out") {
				return filepath.SkipDir
			}
			return nil
		}
		if ext := filepath.Ext(path); !slices.Contains([]string{".go", ".md", ".yaml", ".js", ".html"}, ext) && d.Name() != "Makefile" {
			return nil
		}
		rel, err := filepath.Rel(root, path)
		if err != nil {
			return err
		}
		rel = filepath.ToSlash(rel)
		f, err := os.Open(path)
		if err != nil {
			return err
		}
		defer f.Close()
		// Comments are joined into one text, so that a mention wrapped
		// over two comment lines is read whole.
		var text strings.Builder
		sc := bufio.NewScanner(f)
		sc.Buffer(make([]byte, 0, 64*1024), 4<<20)
		for sc.Scan() {
			text.WriteString(commentPrefix.ReplaceAllString(sc.Text(), ""))
			text.WriteByte(' ')
		}
		if err := sc.Err(); err != nil {
			return fmt.Errorf("%s: %w", rel, err)
		}
		for _, m := range docMention.FindAllStringSubmatch(text.String(), -1) {
			mentions++
			if _, err := os.Stat(filepath.Join(root, filepath.FromSlash(m[1]+".md"))); err != nil {
				t.Errorf("%s names %s.md, which is not in the repository", rel, m[1])
			}
		}
		for _, m := range sectionMention.FindAllStringSubmatch(text.String(), -1) {
			doc, section := m[1], strings.ToLower(m[2])
			if _, err := os.Stat(filepath.Join(root, filepath.FromSlash(doc))); err != nil {
				continue // reported above
			}
			found := slices.ContainsFunc(sectionsOf(doc), func(title string) bool {
				return strings.HasPrefix(strings.ToLower(title), section)
			})
			if !found {
				t.Errorf("%s names section %q of %s, which has no such heading", rel, m[2], doc)
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if mentions == 0 {
		t.Error("no document mentions found; the pattern is broken")
	}
}

// The README is the front door: short, the two set-up commands first, and
// every document under docs/ reachable from it.
func TestReadmeIsTheFrontDoor(t *testing.T) {
	const maxBytes = 12 * 1024
	readme := readFile(t, "README.md")
	if n := len(readme); n >= maxBytes {
		t.Errorf("README.md is %d bytes; keep it under %d and move detail to docs/", n, maxBytes)
	}
	// The first code block holds the two set-up commands, make demo then
	// make test.
	start := strings.Index(readme, "```")
	if start < 0 {
		t.Fatal("README.md has no code block with the set-up commands")
	}
	end := strings.Index(readme[start+3:], "```")
	if end < 0 {
		t.Fatal("README.md: the first code block is not closed")
	}
	block := readme[start : start+3+end]
	demo, test := strings.Index(block, "make demo"), strings.Index(block, "make test")
	if demo < 0 || test < 0 || demo > test {
		t.Errorf("README.md: the first code block must give make demo, then make test; it is\n%s", block)
	}
	if strings.Contains(readme[:start], "make ") {
		t.Error("README.md names a make command before the set-up commands")
	}
	targets, _ := linksOf(readme)
	linked := map[string]bool{}
	for _, target := range targets {
		path, _, _ := strings.Cut(target, "#")
		linked[path] = true
	}
	for _, doc := range markdownFiles(t) {
		if doc != "README.md" && !linked[doc] {
			t.Errorf("README.md does not link %s; every document must be reachable from it", doc)
		}
	}
}

func TestAnchorOf(t *testing.T) {
	// GitHub's heading anchors, from memory of how github.com renders
	// Markdown: lower case, punctuation dropped, spaces to hyphens,
	// underscores and hyphens kept.
	for _, c := range []struct{ heading, want string }{
		{"Funding questions: compare, sweep and the shortfall report", "funding-questions-compare-sweep-and-the-shortfall-report"},
		{"From inspections to a fitted matrix (`wearplan fit`)", "from-inspections-to-a-fitted-matrix-wearplan-fit"},
		{"How sure is the plan: `simulate`", "how-sure-is-the-plan-simulate"},
		{"Segment lists (`inventory_csv`)", "segment-lists-inventory_csv"},
		{"The plan, fit and simulate flows", "the-plan-fit-and-simulate-flows"},
		{"See [the model](model.md) here", "see-the-model-here"},
	} {
		t.Run(c.heading, func(t *testing.T) {
			if got := anchorOf(c.heading); got != c.want {
				t.Errorf("anchorOf(%q) = %q, want %q", c.heading, got, c.want)
			}
		})
	}
	_, anchors := headingsOf("# A\n## Notes\n```\n# not a heading\n```\n## Notes\n")
	for _, want := range []string{"a", "notes", "notes-1"} {
		if !anchors[want] {
			t.Errorf("headingsOf: no anchor %q in %v", want, anchors)
		}
	}
	if anchors["not-a-heading"] {
		t.Error("headingsOf: a line in a code block counted as a heading")
	}
}
