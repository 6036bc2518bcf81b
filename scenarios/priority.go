package scenarios

import (
	"fmt"
	"math"
	"strings"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/parser"
	"github.com/expr-lang/expr/vm"
)

// Priority variables other than the CSV's columns.
const (
	varCondition = "condition"
	varQuantity  = "quantity"
	varState     = "state"
)

// identifier is how a column is named in the priority expression: lower
// case, every run of other characters than letters and digits turned into
// one underscore, and an underscore before a leading digit.
func identifier(col string) string {
	var b strings.Builder
	under := false
	for _, r := range strings.ToLower(strings.TrimSpace(col)) {
		if (r >= 'a' && r <= 'z') || (r >= '0' && r <= '9') {
			b.WriteRune(r)
			under = false
		} else if !under && b.Len() > 0 {
			b.WriteByte('_')
			under = true
		}
	}
	s := strings.TrimSuffix(b.String(), "_")
	if s != "" && s[0] >= '0' && s[0] <= '9' {
		s = "_" + s
	}
	return s
}

// priorityProgram is a compiled priority expression and the CSV columns it
// reads.
type priorityProgram struct {
	prog *vm.Program
	env  map[string]any
	// cols maps variable names to CSV column positions.
	cols map[string]int
}

// identVisitor collects the names an expression refers to.
type identVisitor struct{ names []string }

func (v *identVisitor) Visit(n *ast.Node) {
	if id, ok := (*n).(*ast.IdentifierNode); ok {
		v.names = append(v.names, id.Value)
	}
}

// compilePriority compiles the priority expression against the header.
func compilePriority(code string, header []string, field string, line int, is *issues) (*priorityProgram, bool) {
	tree, err := parser.Parse(code)
	if err != nil {
		is.add(line, field, "%q: %s; write an expression over the columns, e.g. aadt * (100 - condition)", code, firstTextLine(err.Error()))
		return nil, false
	}
	byIdent := map[string]int{}
	var known []string
	for i, h := range header {
		id := identifier(h)
		if id == "" {
			continue
		}
		if _, dup := byIdent[id]; !dup {
			byIdent[id] = i
			known = append(known, id)
		}
	}
	v := &identVisitor{}
	ast.Walk(&tree.Node, v)
	p := &priorityProgram{env: map[string]any{varCondition: 0.0, varQuantity: 0.0, varState: 0.0}, cols: map[string]int{}}
	ok := true
	for _, name := range v.names {
		switch name {
		case varCondition, varQuantity, varState:
			continue
		}
		i, found := byIdent[name]
		if !found {
			is.add(line, field, "%q refers to %q, which is not a column; use condition, quantity, state or a column: %s", code, name, strings.Join(known, ", "))
			ok = false
			continue
		}
		p.cols[name] = i
		p.env[name] = 0.0
	}
	if !ok {
		return nil, false
	}
	prog, err := expr.Compile(code, expr.Env(p.env), expr.AsFloat64())
	if err != nil {
		is.add(line, field, "%q: %s; the expression must give a number (higher is listed first)", code, firstTextLine(err.Error()))
		return nil, false
	}
	p.prog = prog
	return p, true
}

func firstTextLine(s string) string {
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		return s[:i]
	}
	return s
}

// value evaluates the expression for one row: cond, q and state are the
// row's condition, quantity and state (0 = best); the columns it uses are
// read from rec with the file's number format. A problem is returned as
// the column (or "priority") and a message.
func (p *priorityProgram) value(run *vm.VM, rec []string, header []string, f csvFormat, cond, q float64, state int) (float64, string, string) {
	p.env[varCondition], p.env[varQuantity], p.env[varState] = cond, q, float64(state+1)
	for name, i := range p.cols {
		v := strings.TrimSpace(rec[i])
		x, err := f.number(v)
		if err != nil {
			what := fmt.Sprintf("%q is not a number (%s)", v, f.numberHint(err))
			if v == "" {
				what = "empty"
			}
			return 0, header[i], fmt.Sprintf("%s, and the priority expression uses it (as %s); fill it with a number", what, name)
		}
		p.env[name] = x
	}
	out, err := run.Run(p.prog, p.env)
	if err != nil {
		return 0, "priority", firstTextLine(err.Error())
	}
	v, _ := out.(float64)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, "priority", fmt.Sprintf("the expression gives %v here (a division by zero?); it must give a finite number", v)
	}
	return v, "", ""
}
