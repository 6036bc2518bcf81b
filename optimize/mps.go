package optimize

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
)

// WriteMPS writes the model in free MPS format. Every column is
// non-negative (the MPS default), so no BOUNDS section is needed. A
// maximisation is written as the minimisation of the negated objective,
// because readers disagree on OBJSENSE; the header comment says so. Numbers
// are written with full precision so a reader solves exactly this model.
// The model's Notes become comment lines at the top.
func WriteMPS(w io.Writer, m *Model) error {
	bw := bufio.NewWriter(w)
	name := m.Name
	if name == "" {
		name = "wearplan"
	}
	for _, n := range m.Notes {
		fmt.Fprintf(bw, "* %s\n", commentText(n))
	}
	sign := 1.0
	if m.Maximize {
		sign = -1
		fmt.Fprintln(bw, "* maximisation written as minimisation: the optimum of this file is minus the plan's objective")
	}
	fmt.Fprintf(bw, "NAME %s\nROWS\n N objective\n", name)
	for _, r := range m.Rows {
		t := "L"
		switch r.Sense {
		case GreaterEq:
			t = "G"
		case Equal:
			t = "E"
		}
		fmt.Fprintf(bw, " %s %s\n", t, r.Name)
	}
	// Column-wise entries: the transpose of the rows.
	type cell struct {
		row int
		val float64
	}
	cols := make([][]cell, len(m.Cols))
	for i, r := range m.Rows {
		for _, e := range r.Entries {
			cols[e.Col] = append(cols[e.Col], cell{i, e.Val})
		}
	}
	fmt.Fprintln(bw, "COLUMNS")
	for j, name := range m.Cols {
		if c := m.Obj[j]; c != 0 || len(cols[j]) == 0 {
			fmt.Fprintf(bw, " %s objective %s\n", name, num(sign*c))
		}
		for _, c := range cols[j] {
			fmt.Fprintf(bw, " %s %s %s\n", name, m.Rows[c.row].Name, num(c.val))
		}
	}
	fmt.Fprintln(bw, "RHS")
	for _, r := range m.Rows {
		if r.RHS != 0 {
			fmt.Fprintf(bw, " rhs %s %s\n", r.Name, num(r.RHS))
		}
	}
	fmt.Fprintln(bw, "ENDATA")
	return bw.Flush()
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
