package scenarios

import (
	"errors"
	"fmt"
	"hash/fnv"
	"sort"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Issue is one problem found in an input file: where it is and what to do.
type Issue struct {
	File  string
	Line  int    // 0 when unknown
	Field string // dotted path, e.g. classes[1].deterioration.matrix[2]
	Msg   string
}

func (e *Issue) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Field != "" {
		b.WriteString(e.Field)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// InputError lists the problems found in the input, in file and line order:
// at most MaxListed of them, and the number of the others in Unlisted.
type InputError struct {
	Issues []*Issue
	// Unlisted counts the problems found beyond the first MaxListed.
	Unlisted int
}

func (e *InputError) Error() string {
	lines := make([]string, len(e.Issues))
	for i, is := range e.Issues {
		lines[i] = is.Error()
	}
	n := len(e.Issues) + e.Unlisted
	head := "1 problem"
	if n != 1 {
		head = fmt.Sprintf("%d problems", n)
	}
	text := head + " in the input:\n  " + strings.Join(lines, "\n  ")
	if e.Unlisted > 0 {
		text += fmt.Sprintf("\n  and %d more problems not listed; fix the ones above and check again", e.Unlisted)
	}
	return text
}

// MaxListed bounds the problems an InputError lists one by one: a file
// with thousands of bad rows is told about the first ones and how many
// more there are, so that the messages stay readable and small whatever
// the input.
const MaxListed = 50

// Bounds on what one message may quote from the input: a long name or
// value is cut (saying how long it was), so that a hostile file cannot make
// the messages about it larger than the file.
const (
	maxQuotedRunes = 120
	maxMsgRunes    = 1000
	maxFieldRunes  = 240
	// maxTold bounds the unlisted problems told apart from repeats of the
	// same problem; past it every problem found is counted.
	maxTold = 10_000
)

// issues collects problems while a file is read and checked.
type issues struct {
	file string
	// files names the files of an extends chain; a line n·lineBlock + l
	// is line l of files[n] (extends.go).
	files []string
	list  []*Issue
	seen  map[Issue]bool
	// unlisted counts problems past MaxListed; hashes tells them apart.
	unlisted int
	hashes   map[uint64]bool
}

// where turns a line of the merged tree into a file and a line in it.
func (s *issues) where(line int) (string, int) {
	if n := line / lineBlock; n > 0 && n < len(s.files) {
		return s.files[n], line % lineBlock
	}
	return s.file, line
}

// note formats something a planner should know, but that is no error, the
// way an issue is written: file, line, field, message.
func (s *issues) note(line int, field, format string, args ...any) string {
	file, line := s.where(line)
	is := clipped(file, line, field, format, args)
	return is.Error()
}

func (s *issues) add(line int, field, format string, args ...any) {
	file, line := s.where(line)
	s.addIn(file, line, field, format, args...)
}

// addIn records a problem of another file than s.file (a file the
// scenario names), under the same bound on the list.
func (s *issues) addIn(file string, line int, field, format string, args ...any) {
	if len(s.list) >= MaxListed && len(s.hashes) >= maxTold {
		// Counting is all that is left to do; telling problems apart is
		// not worth its memory any more.
		s.unlisted++
		return
	}
	s.record(clipped(file, line, field, format, args))
}

// clipped is the problem as told: what it quotes from the input cut to
// the bounds above and made printable.
func clipped(file string, line int, field, format string, args []any) Issue {
	clipQuoted(format, args)
	return Issue{
		File:  clip(printable(file), maxFieldRunes),
		Line:  line,
		Field: clip(printable(field), maxFieldRunes),
		Msg:   clip(printable(fmt.Sprintf(format, args...)), maxMsgRunes),
	}
}

// record adds is unless the same problem is known already (e.g. a
// catalogue treatment checked once for each class that uses it).
func (s *issues) record(is Issue) {
	if s.seen[is] {
		return
	}
	if len(s.list) >= MaxListed {
		h := fnv.New64a()
		fmt.Fprintf(h, "%s\x00%d\x00%s\x00%s", is.File, is.Line, is.Field, is.Msg)
		if s.hashes == nil {
			s.hashes = map[uint64]bool{}
		}
		if k := h.Sum64(); !s.hashes[k] {
			s.hashes[k] = true
			s.unlisted++
		}
		return
	}
	if s.seen == nil {
		s.seen = map[Issue]bool{}
	}
	s.seen[is] = true
	s.list = append(s.list, &is)
}

// full says whether the list is full: problems found now are only counted.
func (s *issues) full() bool { return len(s.list) >= MaxListed }

// count is the number of problems found, listed or not.
func (s *issues) count() int { return len(s.list) + s.unlisted }

// addAll copies the issues of an *InputError (from another file).
func (s *issues) addAll(err error) {
	if err == nil {
		return
	}
	var ie *InputError
	if !errors.As(err, &ie) {
		s.add(0, "", "%v", err)
		return
	}
	for _, e := range ie.Issues {
		s.record(*e)
	}
	s.unlisted += ie.Unlisted
}

func (s *issues) err() error {
	if s.count() == 0 {
		return nil
	}
	// By file, then by line; within a file the problems without a line
	// (the whole file's, and counts of problems not listed) follow the
	// others in the order found, so that "and 30 more problems" comes
	// after the problems it adds to.
	sorted := append([]*Issue(nil), s.list...)
	sort.SliceStable(sorted, func(i, j int) bool {
		a, b := sorted[i], sorted[j]
		if a.File != b.File {
			return a.File < b.File
		}
		if (a.Line == 0) != (b.Line == 0) {
			return b.Line == 0
		}
		return a.Line < b.Line
	})
	return &InputError{Issues: sorted, Unlisted: s.unlisted}
}

// clipQuoted cuts the text arguments that format quotes (%q): values
// from the input. Other arguments are composed text, bounded with the
// whole message.
func clipQuoted(format string, args []any) {
	n := 0
	for i := 0; i < len(format); i++ {
		if format[i] != '%' {
			continue
		}
		i++
		for i < len(format) && strings.IndexByte("+-# 0123456789.", format[i]) >= 0 {
			i++
		}
		if i >= len(format) || format[i] == '%' {
			continue
		}
		if format[i] == '[' {
			return // explicit argument indexes: leave the arguments alone
		}
		if format[i] == 'q' && n < len(args) {
			if str, ok := args[n].(string); ok {
				args[n] = clip(str, maxQuotedRunes)
			}
		}
		n++
	}
}

// clip cuts s to its first n characters, saying how long it was, so that
// a 40,000-character name is quoted by its start.
func clip(s string, n int) string {
	if len(s) <= n || utf8.RuneCountInString(s) <= n {
		return s
	}
	i := 0
	for k := 0; k < n; k++ {
		_, size := utf8.DecodeRuneInString(s[i:])
		i += size
	}
	return fmt.Sprintf("%s… (%d characters in all)", s[:i], utf8.RuneCountInString(s))
}

// printable replaces control characters (terminal escape sequences and
// line breaks among them) by U+FFFD: a message names what it quotes with
// %q, but a field path holds names raw, and no message may move the
// terminal's cursor or pass for another line of the list.
func printable(s string) string {
	if strings.IndexFunc(s, unicode.IsControl) < 0 {
		return s
	}
	return strings.Map(func(r rune) rune {
		if unicode.IsControl(r) {
			return utf8.RuneError
		}
		return r
	}, s)
}
