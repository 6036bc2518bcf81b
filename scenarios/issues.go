package scenarios

import (
	"fmt"
	"sort"
	"strings"
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

// InputError lists every problem found in the input, in file and line order.
type InputError struct {
	Issues []*Issue
}

func (e *InputError) Error() string {
	lines := make([]string, len(e.Issues))
	for i, is := range e.Issues {
		lines[i] = is.Error()
	}
	n := len(e.Issues)
	head := "1 problem"
	if n != 1 {
		head = fmt.Sprintf("%d problems", n)
	}
	return head + " in the input:\n  " + strings.Join(lines, "\n  ")
}

// issues collects problems while a file is read and checked.
type issues struct {
	file string
	// files names the files of an extends chain; a line n·lineBlock + l
	// is line l of files[n] (extends.go).
	files []string
	list  []*Issue
	seen  map[Issue]bool
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
	return (&Issue{File: file, Line: line, Field: field, Msg: fmt.Sprintf(format, args...)}).Error()
}

func (s *issues) add(line int, field, format string, args ...any) {
	file, line := s.where(line)
	is := Issue{File: file, Line: line, Field: field, Msg: fmt.Sprintf(format, args...)}
	if s.seen[is] {
		// The same problem found again, e.g. a catalogue treatment checked
		// once for each class that uses it: report it once.
		return
	}
	if s.seen == nil {
		s.seen = map[Issue]bool{}
	}
	s.seen[is] = true
	s.list = append(s.list, &is)
}

func (s *issues) err() error {
	if len(s.list) == 0 {
		return nil
	}
	sorted := append([]*Issue(nil), s.list...)
	sort.SliceStable(sorted, func(i, j int) bool {
		if sorted[i].File != sorted[j].File {
			return sorted[i].File < sorted[j].File
		}
		return sorted[i].Line < sorted[j].Line
	})
	return &InputError{Issues: sorted}
}
