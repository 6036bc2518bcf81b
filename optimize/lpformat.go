package optimize

import (
	"bufio"
	"fmt"
	"io"
	"strings"
)

// lpLineWidth keeps LP-format lines well under the 255-character limit
// some readers still have; the format lets a row continue on the next line
// between any two terms.
const lpLineWidth = 200

// WriteLP writes the model in CPLEX LP format, which GLPK's glpsol reads
// with --lp (--cpxlp) and CPLEX, Gurobi, HiGHS, CBC and CLP read as well.
// Unlike WriteMPS it keeps the objective sense (LP format states it
// explicitly, and readers honour it), so a maximisation stays a
// maximisation. Every column is non-negative, the format's default; columns
// that appear in no row and have no objective coefficient are declared in
// the bounds section so the file has exactly the model's columns. Numbers
// are written with full precision. The model's Notes become comment lines.
func WriteLP(w io.Writer, m *Model) error {
	if err := checkLPNames(m); err != nil {
		return err
	}
	bw := bufio.NewWriter(w)
	for _, n := range m.Notes {
		fmt.Fprintf(bw, "\\ %s\n", commentText(n))
	}
	used := make([]bool, len(m.Cols))
	for _, r := range m.Rows {
		for _, e := range r.Entries {
			used[e.Col] = true
		}
	}
	if m.Maximize {
		fmt.Fprintln(bw, "Maximize")
	} else {
		fmt.Fprintln(bw, "Minimize")
	}
	var obj []Entry
	for j, c := range m.Obj {
		if c != 0 {
			obj = append(obj, Entry{j, c})
			used[j] = true
		}
	}
	writeLPRow(bw, "objective", obj, m.Cols, "")
	fmt.Fprintln(bw, "Subject To")
	for _, r := range m.Rows {
		op := "<="
		switch r.Sense {
		case GreaterEq:
			op = ">="
		case Equal:
			op = "="
		}
		writeLPRow(bw, r.Name, r.Entries, m.Cols, fmt.Sprintf(" %s %s", op, num(r.RHS)))
	}
	var free []string
	for j, u := range used {
		if !u {
			free = append(free, m.Cols[j])
		}
	}
	if len(free) > 0 {
		fmt.Fprintln(bw, "Bounds")
		for _, c := range free {
			fmt.Fprintf(bw, " %s >= 0\n", c)
		}
	}
	fmt.Fprintln(bw, "End")
	return bw.Flush()
}

// writeLPRow writes " name: + a x + b y ...", then tail (the operator and
// right-hand side of a constraint) and a line end, wrapped over lines. An
// empty row is written with a zero coefficient on the first column, because
// LP format needs at least one term.
func writeLPRow(bw *bufio.Writer, name string, entries []Entry, cols []string, tail string) {
	line := " " + name + ":"
	bw.WriteString(line)
	n := len(line)
	if len(entries) == 0 && len(cols) > 0 {
		entries = []Entry{{Col: 0, Val: 0}}
	}
	for _, e := range entries {
		sign, v := "+", e.Val
		if v < 0 {
			sign, v = "-", -v
		}
		term := fmt.Sprintf(" %s %s %s", sign, num(v), cols[e.Col])
		if n+len(term) > lpLineWidth {
			bw.WriteString("\n ")
			n = 1
		}
		bw.WriteString(term)
		n += len(term)
	}
	if tail != "" && n+len(tail) > lpLineWidth {
		bw.WriteString("\n ")
	}
	bw.WriteString(tail + "\n")
}

// checkLPNames rejects names that LP-format readers would misread: empty
// names, names with spaces or operator characters, names starting with a
// digit or a period, and names starting with e or E followed by a digit
// (read as an exponent).
func checkLPNames(m *Model) error {
	check := func(kind, name string) error {
		if name == "" {
			return fmt.Errorf("LP format: empty %s name", kind)
		}
		if strings.ContainsAny(name[:1], "0123456789.") {
			return fmt.Errorf("LP format: %s name %q starts with a digit or a period", kind, name)
		}
		if (name[0] == 'e' || name[0] == 'E') && len(name) > 1 && strings.ContainsAny(name[1:2], "0123456789+-") {
			return fmt.Errorf("LP format: %s name %q reads as a number", kind, name)
		}
		for _, r := range name {
			if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("_.!\"#$%&()/,;?@`'{}|~", r)) {
				return fmt.Errorf("LP format: %s name %q has the character %q", kind, name, r)
			}
		}
		return nil
	}
	for _, c := range m.Cols {
		if err := check("column", c); err != nil {
			return err
		}
	}
	for _, r := range m.Rows {
		if err := check("row", r.Name); err != nil {
			return err
		}
	}
	return nil
}

// commentText keeps a note on one comment line.
func commentText(s string) string {
	return strings.Map(func(r rune) rune {
		if r < ' ' || r == 0x7f {
			return ' '
		}
		return r
	}, s)
}
