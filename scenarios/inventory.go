package scenarios

import (
	"bufio"
	"cmp"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"path"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/parser"
	"github.com/expr-lang/expr/vm"
	"github.com/paulmach/orb/encoding/wkt"
	"gopkg.in/yaml.v3"
)

// Segment is one row of an inventory CSV: a piece of an asset class (a
// road section, a bridge deck, a culvert) with its quantity and today's
// condition.
type Segment struct {
	ID string
	// Name is an optional label (street, structure), passed through.
	Name string
	// Line is the segment's line in the CSV.
	Line int
	// State is today's condition state (0 = best); Index is the index value
	// the row gave, NaN when it gave a state name.
	State    int
	Index    float64
	Quantity float64
	// Priority is the value of the inventory's priority expression (higher
	// first); 0 when there is none.
	Priority float64
	// LastTreated is the calendar year of the segment's last treatment
	// (the optional last_treated column); 0 when not given.
	LastTreated int
	// Geometry, passed through for GIS: WKT as written, or a point.
	WKT      string
	Lon, Lat float64
	HasPoint bool
}

// Inventory says what was read from one inventory CSV.
type Inventory struct {
	// File is the CSV's path relative to the scenario's folder.
	File string
	// Rows counts the data rows read (blank lines and the header excluded).
	Rows    int
	Classes []InventoryClass
	// Rows left out: of classes the file was not read for, without a
	// condition (skip_unrated: true), and with zero quantity.
	OtherClass, Unrated, ZeroQuantity int
	// Priority is the priority expression; "" for the default order.
	Priority string
	// Geometry is "WKT", "lon/lat" or "" (none).
	Geometry string
	// idColumn is the id column's name in the header, for messages.
	idColumn string
}

// InventoryClass is what one class took from an inventory CSV.
type InventoryClass struct {
	Class    string
	Unit     string
	Segments int
	Quantity float64
}

// inputSource is where a scenario was read from, so that the files it
// names can be read from the same place.
type inputSource struct {
	fsys fs.FS
	name string
}

// fileInventoryCSV is inventory_csv: a file name, or the file with options.
type fileInventoryCSV struct {
	File        string       `yaml:"file"`
	Delimiter   string       `yaml:"delimiter"`
	Columns     *fileColumns `yaml:"columns"`
	Priority    string       `yaml:"priority"`
	SkipUnrated bool         `yaml:"skip_unrated"`
	Lines       lines
}

// fileColumns maps the roles wearplan reads to the CSV's own column names.
type fileColumns struct {
	ID        string `yaml:"id"`
	Class     string `yaml:"class"`
	Quantity  string `yaml:"quantity"`
	Condition string `yaml:"condition"`
	Name      string `yaml:"name"`
	WKT       string `yaml:"wkt"`
	Lon       string `yaml:"lon"`
	Lat       string `yaml:"lat"`
	// LastTreated is the optional column of the year of the last work.
	LastTreated string `yaml:"last_treated"`
	Lines       lines
}

func (s *fileInventoryCSV) decodeNode(d *decoder, n *yaml.Node, path string) {
	if n.Kind == yaml.ScalarNode && n.Tag == "!!str" {
		s.File = n.Value
		s.Lines = lines{"": n.Line, "file": n.Line}
		return
	}
	if n.Kind != yaml.MappingNode {
		d.add(n.Line, path, "want a file name (inventory_csv: segments.csv) or a mapping {file: segments.csv, columns: {...}}, got %s", kindName(n))
		return
	}
	d.decodeStruct(n, reflect.ValueOf(s).Elem(), path)
}

// maxCSVIssues bounds the problems listed per CSV: past it, one line says
// how many more there are.
const maxCSVIssues = 50

// Priority variables other than the CSV's columns.
const (
	varCondition = "condition"
	varQuantity  = "quantity"
	varState     = "state"
)

// inventoryJob is one inventory CSV to read and the classes it supplies.
type inventoryJob struct {
	spec  *fileInventoryCSV
	field string
	// takes[k] says class k takes its rows from this file.
	takes []bool
	// only is the class of a class-level file; -1 at scenario level.
	only int
}

// readInventories reads every inventory CSV the scenario names and fills
// the classes' quantities and segments.
func readInventories(sc *Scenario, f *fileScenario, is *issues) {
	var jobs []inventoryJob
	for k := range f.Classes {
		fc := &f.Classes[k]
		if fc.InventoryCSV == nil || sc.Classes[k].Scale == nil || fc.Inventory != nil {
			continue
		}
		j := inventoryJob{spec: fc.InventoryCSV, field: fmt.Sprintf("classes[%d] (%s).inventory_csv", k, sc.Classes[k].Name), takes: make([]bool, len(f.Classes)), only: k}
		j.takes[k] = true
		jobs = append(jobs, j)
	}
	if f.InventoryCSV != nil {
		j := inventoryJob{spec: f.InventoryCSV, field: "inventory_csv", takes: make([]bool, len(f.Classes)), only: -1}
		n := 0
		for k := range f.Classes {
			if f.Classes[k].Inventory == nil && f.Classes[k].InventoryCSV == nil {
				j.takes[k] = true
				n++
			}
		}
		if n == 0 {
			is.add(f.Lines.of("inventory_csv"), "inventory_csv", "every class gives its own inventory, so no class reads this file; drop it, or drop the classes' inventory")
		} else {
			jobs = append(jobs, j)
		}
	}
	for _, j := range jobs {
		readInventory(sc, f, j, is)
	}
	checkUniqueIDs(sc, is)
}

// checkUniqueIDs reports segment ids used twice among the segments read:
// ids key the worklist, so they must be unique across the scenario's
// inventory files. (Sorting the ids once is several times faster than a
// map of a million strings filled row by row.)
func checkUniqueIDs(sc *Scenario, is *issues) {
	type ref struct {
		id         string
		file, line int32
	}
	fileIndex := map[*Inventory]int{}
	for i, inv := range sc.Inventories {
		fileIndex[inv] = i
	}
	n := 0
	for k := range sc.Classes {
		n += len(sc.Classes[k].Segments)
	}
	refs := make([]ref, 0, n)
	for k := range sc.Classes {
		c := &sc.Classes[k]
		if c.Inventory == nil {
			continue
		}
		fi := fileIndex[c.Inventory]
		for j := range c.Segments {
			refs = append(refs, ref{c.Segments[j].ID, int32(fi), int32(c.Segments[j].Line)})
		}
	}
	slices.SortFunc(refs, func(a, b ref) int {
		if v := strings.Compare(a.id, b.id); v != 0 {
			return v
		}
		return cmp.Or(cmp.Compare(a.file, b.file), cmp.Compare(a.line, b.line))
	})
	dups := 0
	for i := 1; i < len(refs); i++ {
		a, b := refs[i-1], refs[i]
		if a.id != b.id {
			continue
		}
		if dups++; dups > maxCSVIssues {
			continue
		}
		where := fmt.Sprintf("line %d", a.line)
		if a.file != b.file {
			where = fmt.Sprintf("%s:%d", sc.Inventories[a.file].File, a.line)
		}
		fis := &issues{file: sc.Inventories[b.file].File}
		fis.add(int(b.line), sc.Inventories[b.file].idColumn, "%q is already used on %s; ids must be unique (they key the worklist)", b.id, where)
		is.list = append(is.list, fis.list...)
	}
	if dups > maxCSVIssues {
		is.add(0, "", "and %d more ids used twice, not listed; fix the ones above and check again", dups-maxCSVIssues)
	}
}

// csvIssues collects the problems of one CSV, listing at most maxCSVIssues.
type csvIssues struct {
	*issues
	count int
}

func (c *csvIssues) add(line int, field, format string, args ...any) {
	c.count++
	if c.count <= maxCSVIssues {
		c.issues.add(line, field, format, args...)
	}
}

func readInventory(sc *Scenario, f *fileScenario, j inventoryJob, is *issues) {
	spec := j.spec
	fileLine := spec.Lines.of("file")
	if strings.TrimSpace(spec.File) == "" {
		is.add(spec.Lines.of(""), j.field+".file", "missing; name the CSV file, relative to the scenario's folder")
		return
	}
	if f.source.fsys == nil {
		is.add(fileLine, j.field, "cannot read %q: the scenario was not read from a file; load it with LoadFile or Load", spec.File)
		return
	}
	name := path.Join(path.Dir(f.source.name), strings.TrimSpace(spec.File))
	if !fs.ValidPath(name) || strings.HasPrefix(spec.File, "/") {
		is.add(fileLine, j.field+".file", "%q: give a path inside the scenario's folder (no .. and no leading /); copy or link the file next to the scenario", spec.File)
		return
	}
	comma, ok := delimiterRune(spec.Delimiter)
	if !ok {
		is.add(spec.Lines.of("delimiter"), j.field+".delimiter", "%q: give one character, e.g. \",\" (the default), \";\" or \"\\t\" for tabs", spec.Delimiter)
		return
	}
	fh, err := f.source.fsys.Open(name)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			is.add(fileLine, j.field+".file", "%s: file not found; the path is relative to the scenario's folder", name)
		} else {
			is.add(fileLine, j.field+".file", "cannot read %s: %v", name, err)
		}
		return
	}
	defer fh.Close()

	ci := &csvIssues{issues: &issues{file: name}}
	inv := &Inventory{File: name, Priority: strings.TrimSpace(spec.Priority)}
	segs, sums := readRows(sc, j, fh, comma, inv, ci, is)
	if ci.count > maxCSVIssues {
		ci.issues.add(0, "", "and %d more problems in this file not listed; fix the ones above and check again", ci.count-maxCSVIssues)
	}
	is.list = append(is.list, ci.list...)
	if ci.count > 0 || segs == nil {
		return
	}
	for k, takes := range j.takes {
		c := &sc.Classes[k]
		if !takes || c.Scale == nil {
			continue
		}
		c.Inventory = inv
		c.Segments = segs[k]
		for i := range c.Initial {
			v, ok := sums[k][i].float()
			if !ok {
				is.add(fileLine, j.field, "the quantities of class %q in state %q add up past %g; check the quantity column's unit", c.Name, c.Scale.States[i].Name, maxExactSum)
			}
			c.Initial[i] = v
		}
		ic := InventoryClass{Class: c.Name, Unit: c.Unit, Segments: len(segs[k]), Quantity: c.Total()}
		inv.Classes = append(inv.Classes, ic)
		if ic.Segments == 0 {
			hint := "check the class column's spelling"
			if j.only >= 0 {
				hint = "rows are kept when their class column names the class; check its spelling, or drop the class column"
			}
			is.add(fileLine, j.field, "%s has no segments of class %q; %s", name, c.Name, hint)
		}
	}
	sc.Inventories = append(sc.Inventories, inv)
}

func delimiterRune(s string) (rune, bool) {
	switch s {
	case "":
		return ',', true
	case "\\t", "tab":
		return '\t', true
	}
	r, size := utf8.DecodeRuneInString(s)
	if size != len(s) || r == '"' || r == '\r' || r == '\n' || r == utf8.RuneError {
		return 0, false
	}
	return r, true
}

// columns are the positions of the roles in a CSV's header, -1 if absent.
type columns struct {
	id, class, quantity, condition, name, wkt, lon, lat, lastTreated int
}

// normalColumn is how header names are compared: trimmed, any case.
func normalColumn(s string) string { return strings.ToLower(strings.TrimSpace(s)) }

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

// headerColumns finds the roles in the header, reporting what is missing.
func headerColumns(header []string, spec *fileInventoryCSV, needClass bool, comma rune, ci *csvIssues, line int) (columns, bool) {
	pos := map[string]int{}
	ok := true
	for i, h := range header {
		h = normalColumn(h)
		if h == "" {
			continue
		}
		if prev, dup := pos[h]; dup {
			ci.add(line, "", "column %q appears twice (columns %d and %d); rename one", header[i], prev+1, i+1)
			ok = false
			continue
		}
		pos[h] = i
	}
	var given fileColumns
	if spec.Columns != nil {
		given = *spec.Columns
	}
	find := func(role, mapped string, required bool) int {
		want := role
		if mapped != "" {
			want = mapped
		}
		if i, found := pos[normalColumn(want)]; found {
			return i
		}
		if mapped != "" || required {
			ok = false
			if len(header) == 1 {
				for _, d := range []string{";", "\t", "|", ","} {
					if strings.Contains(header[0], d) && rune(d[0]) != comma {
						shown := d
						if d == "\t" {
							shown = "\\t"
						}
						ci.add(line, "", "the header reads as one column %q: the file seems to separate columns with %q; add delimiter: %q to inventory_csv", header[0], shown, shown)
						return -1
					}
				}
			}
			how := fmt.Sprintf("or map yours with columns: {%s: YOUR_COLUMN}", role)
			if mapped != "" {
				how = fmt.Sprintf("columns: {%s: %s} names it", role, mapped)
			}
			what := fmt.Sprintf("%q", want)
			if want != role {
				what = fmt.Sprintf("%q (the %s column)", want, role)
			}
			ci.add(line, "", "no column %s; the header has %s; add the column, %s", what, quotedList(header), how)
		}
		return -1
	}
	c := columns{
		id:        find("id", given.ID, true),
		quantity:  find("quantity", given.Quantity, true),
		condition: find("condition", given.Condition, true),
		class:     find("class", given.Class, needClass),
		name:      find("name", given.Name, false),
		wkt:       find("wkt", given.WKT, false),
		lon:       find("lon", given.Lon, false),
		lat:       find("lat", given.Lat, false),
		// The year of the last work, for classes whose treatments keep
		// intervals (treatments.History).
		lastTreated: find("last_treated", given.LastTreated, false),
	}
	if ok && (c.lon < 0) != (c.lat < 0) {
		ci.add(line, "", "give both lon and lat columns for point geometry, or neither")
		ok = false
	}
	return c, ok
}

func quotedList(ss []string) string {
	q := make([]string, len(ss))
	for i, s := range ss {
		q[i] = strconv.Quote(s)
	}
	return strings.Join(q, ", ")
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

// readRows reads the CSV's rows into segments and exact quantity sums per
// class and state. It returns nil segments when the header is unusable.
func readRows(sc *Scenario, j inventoryJob, r io.Reader, comma rune, inv *Inventory, ci *csvIssues, is *issues) ([][]Segment, [][]exactSum) {
	br := bufio.NewReaderSize(r, 1<<16)
	if bom, err := br.Peek(3); err == nil && string(bom) == "\uFEFF" {
		br.Discard(3)
	}
	cr := csv.NewReader(br)
	cr.Comma = comma
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	header, err := cr.Read()
	if err == io.EOF {
		ci.add(1, "", "file is empty; the first line must be a header naming the columns, e.g. id,class,quantity,condition")
		return nil, nil
	}
	if err != nil {
		ci.add(csvErrLine(err, 1), "", "%s", csvErrText(err))
		return nil, nil
	}
	header = append([]string(nil), header...)
	for i, h := range header {
		if !utf8.ValidString(h) {
			ci.add(1, "", "the header is not UTF-8 text; save the file as UTF-8 (\"CSV UTF-8\" in spreadsheet programs)")
			return nil, nil
		}
		header[i] = strings.TrimSpace(h)
	}
	headerLine, _ := cr.FieldPos(0)
	cols, ok := headerColumns(header, j.spec, j.only < 0, comma, ci, headerLine)
	if !ok {
		return nil, nil
	}
	inv.idColumn = header[cols.id]
	switch {
	case cols.wkt >= 0:
		inv.Geometry = "WKT"
	case cols.lon >= 0:
		inv.Geometry = "lon/lat"
	}
	var prio *priorityProgram
	if inv.Priority != "" {
		prio, ok = compilePriority(inv.Priority, header, j.field+".priority", j.spec.Lines.of("priority"), is)
		if !ok {
			return nil, nil
		}
	}
	var run vm.VM
	n := len(sc.Classes)
	segs := make([][]Segment, n)
	sums := make([][]exactSum, n)
	for k := range sc.Classes {
		if j.takes[k] && sc.Classes[k].Scale != nil {
			sums[k] = make([]exactSum, len(sc.Classes[k].Scale.States))
		}
	}
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if !errors.As(err, &pe) {
				ci.add(0, "", "cannot read the file: %v", err)
				break
			}
			ci.add(csvErrLine(err, 0), "", "%s", csvErrText(err))
			if ci.count > maxCSVIssues {
				break
			}
			continue
		}
		line, _ := cr.FieldPos(0)
		if blankRecord(rec) {
			continue
		}
		inv.Rows++
		if len(rec) != len(header) {
			ci.add(line, "", "%d fields, the header has %d; check for a missing or extra %q, or a field with %q in it that needs quotes", len(rec), len(header), string(comma), string(comma))
			continue
		}
		if !validRecord(rec) {
			ci.add(line, "", "not UTF-8 text; save the file as UTF-8 (\"CSV UTF-8\" in spreadsheet programs)")
			continue
		}
		bad := false
		fail := func(field, format string, args ...any) {
			ci.add(line, field, format, args...)
			bad = true
		}
		// Class.
		k := j.only
		if cols.class >= 0 {
			cname := strings.TrimSpace(rec[cols.class])
			if j.only >= 0 {
				if !sameName(cname, sc.Classes[j.only].Name) {
					inv.OtherClass++
					continue
				}
			} else {
				k = classByName(sc, cname)
				switch {
				case cname == "":
					fail(header[cols.class], "empty; name the segment's asset class (%s)", classNames(sc))
				case k < 0:
					fail(header[cols.class], "unknown class %q; the scenario's classes are %s", cname, classNames(sc))
				case !j.takes[k]:
					fail(header[cols.class], "class %q gives its own inventory in the scenario; drop its rows here or its inventory there", cname)
				}
				if bad {
					continue
				}
			}
		}
		c := &sc.Classes[k]
		if c.Scale == nil {
			continue // the scale's problems are reported already
		}
		// Id.
		id := strings.TrimSpace(rec[cols.id])
		if id == "" {
			fail(header[cols.id], "empty; every segment needs an id (it keys the worklist)")
		} else {
			id = strings.Clone(id) // do not hold the whole row in memory
		}
		// Quantity.
		qs := strings.TrimSpace(rec[cols.quantity])
		q, billionths, err := parseQuantity(qs)
		switch {
		case qs == "":
			fail(header[cols.quantity], "empty; give the segment's quantity in %s", c.Unit)
		case err != nil:
			fail(header[cols.quantity], "%q is not a number; write the quantity in %s as a plain number such as 0.412 (no unit, no thousands separator, a point for decimals)", qs, c.Unit)
		case q < 0:
			fail(header[cols.quantity], "%s is negative; a quantity is zero or more", qs)
		}
		// Condition.
		cs := strings.TrimSpace(rec[cols.condition])
		state, index := -1, math.NaN()
		if cs == "" {
			if j.spec.SkipUnrated && !bad {
				inv.Unrated++
				continue
			}
			fail(header[cols.condition], "empty; give an index value or a state name of %s, or set skip_unrated: true on inventory_csv to leave unrated segments out", scaleLabel(c.Scale))
		} else {
			state, index = conditionOf(c.Scale, cs)
			if state < 0 {
				if math.IsNaN(index) {
					fail(header[cols.condition], "%q is neither a number nor a state of %s (states: %s)", cs, scaleLabel(c.Scale), stateList(c.Scale))
				} else {
					fail(header[cols.condition], "%s is outside %s, which runs %s to %s", cs, scaleLabel(c.Scale), num(math.Min(c.Scale.Best, c.Scale.Worst)), num(math.Max(c.Scale.Best, c.Scale.Worst)))
				}
			}
		}
		seg := Segment{ID: id, Line: line, State: state, Index: index, Quantity: q}
		if cols.name >= 0 {
			seg.Name = strings.Clone(strings.TrimSpace(rec[cols.name]))
		}
		if cols.wkt >= 0 {
			if w := strings.TrimSpace(rec[cols.wkt]); w != "" {
				if _, err := wkt.Unmarshal(w); err != nil {
					fail(header[cols.wkt], "not WKT geometry (%v); write e.g. LINESTRING (lon lat, lon lat) or POINT (lon lat), or leave it empty", err)
				}
				seg.WKT = w
			}
		}
		if cols.lon >= 0 {
			lon, lat := strings.TrimSpace(rec[cols.lon]), strings.TrimSpace(rec[cols.lat])
			if lon != "" || lat != "" {
				x, errx := parseNumber(lon)
				y, erry := parseNumber(lat)
				switch {
				case errx != nil || x < -180 || x > 180:
					fail(header[cols.lon], "%q is not a longitude (-180 to 180 degrees)", lon)
				case erry != nil || y < -90 || y > 90:
					fail(header[cols.lat], "%q is not a latitude (-90 to 90 degrees)", lat)
				default:
					seg.Lon, seg.Lat, seg.HasPoint = x, y, true
				}
			}
		}
		if cols.lastTreated >= 0 {
			v := strings.TrimSpace(rec[cols.lastTreated])
			y, msg := lastTreatedYear(v, sc.StartYear)
			if msg != "" {
				fail(header[cols.lastTreated], "%s", msg)
			}
			seg.LastTreated = y
		}
		if bad {
			continue
		}
		if q == 0 {
			inv.ZeroQuantity++
			continue
		}
		if prio != nil {
			cond := index
			if math.IsNaN(cond) {
				cond = c.Scale.States[state].Value
			}
			prio.env[varCondition], prio.env[varQuantity], prio.env[varState] = cond, q, float64(state+1)
			for name, i := range prio.cols {
				v := strings.TrimSpace(rec[i])
				x, err := parseNumber(v)
				if err != nil {
					what := fmt.Sprintf("%q is not a number", v)
					if v == "" {
						what = "empty"
					}
					fail(header[i], "%s, and the priority expression uses it (as %s); fill it with a number", what, name)
					continue
				}
				prio.env[name] = x
			}
			if bad {
				continue
			}
			out, err := run.Run(prio.prog, prio.env)
			if err != nil {
				fail("priority", "%s", firstTextLine(err.Error()))
				continue
			}
			p, _ := out.(float64)
			if math.IsNaN(p) || math.IsInf(p, 0) {
				fail("priority", "the expression gives %v here (a division by zero?); it must give a finite number", p)
				continue
			}
			seg.Priority = p
		}
		sums[k][state].add(billionths)
		segs[k] = append(segs[k], seg)
	}
	if inv.Rows == 0 && ci.count == 0 {
		ci.add(headerLine, "", "no segment rows under the header; add one row per segment")
	}
	return segs, sums
}

func csvErrLine(err error, dflt int) int {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		if pe.StartLine > 0 {
			return pe.StartLine
		}
		return pe.Line
	}
	return dflt
}

func csvErrText(err error) string {
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		return fmt.Sprintf("cannot read the file: %v", err)
	}
	switch {
	case errors.Is(pe.Err, csv.ErrBareQuote):
		return `a quote (") inside a field without quotes around it; put the whole field in quotes and double the quotes inside, e.g. "Weir St ""north"""`
	case errors.Is(pe.Err, csv.ErrQuote):
		return fmt.Sprintf(`a quoted field opened here is not closed properly (line %d); every quoted field ends with a quote followed by the delimiter or the line end`, pe.Line)
	}
	return fmt.Sprintf("cannot read the CSV: %v", pe.Err)
}

func blankRecord(rec []string) bool {
	for _, f := range rec {
		if strings.TrimSpace(f) != "" {
			return false
		}
	}
	return true
}

func validRecord(rec []string) bool {
	for _, f := range rec {
		if !utf8.ValidString(f) {
			return false
		}
	}
	return true
}

func sameName(a, b string) bool { return a == b || strings.EqualFold(a, b) }

func classByName(sc *Scenario, name string) int {
	if k := sc.classIndex(name); k >= 0 {
		return k
	}
	for k := range sc.Classes {
		if strings.EqualFold(sc.Classes[k].Name, name) {
			return k
		}
	}
	return -1
}

func classNames(sc *Scenario) string {
	names := make([]string, len(sc.Classes))
	for k := range sc.Classes {
		names[k] = sc.Classes[k].Name
	}
	return strings.Join(names, ", ")
}

func scaleLabel(s *Scale) string {
	if s.Preset != "" && s.Name == PresetPrefix+s.Preset {
		return "the " + s.Name + " scale"
	}
	return fmt.Sprintf("scale %q", s.Name)
}

// conditionOf reads a condition cell: a state name (any case), or an index
// value placed with Scale.StateOf. It returns state -1 when the cell is
// neither; index is NaN unless the cell was a number.
func conditionOf(s *Scale, cell string) (state int, index float64) {
	if i := s.StateIndex(cell); i >= 0 {
		return i, math.NaN()
	}
	for i, st := range s.States {
		if strings.EqualFold(st.Name, cell) {
			return i, math.NaN()
		}
	}
	v, err := parseNumber(cell)
	if err != nil {
		return -1, math.NaN()
	}
	return s.StateOf(v), v
}

var errNotNumber = errors.New("not a number")

// parseNumber reads a plain decimal number (digits, one point, an optional
// sign and exponent); strconv alone would also take "inf", "nan", hex
// floats and underscores, which no spreadsheet writes.
func parseNumber(s string) (float64, error) {
	if s == "" {
		return 0, errNotNumber
	}
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c >= '0' && c <= '9', c == '.', c == '-', c == '+', c == 'e', c == 'E':
		default:
			return 0, errNotNumber
		}
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, errNotNumber
	}
	return v, nil
}

// parseQuantity reads a quantity as a float and as a whole number of
// billionths of a unit, so that quantities add up exactly whatever the
// order of the rows.
func parseQuantity(s string) (float64, int64, error) {
	v, err := parseNumber(s)
	if err != nil {
		return 0, 0, err
	}
	if math.Abs(v) >= maxExactSum {
		return v, 0, errNotNumber
	}
	if b, ok := decimalBillionths(s); ok {
		return v, b, nil
	}
	// More than nine decimals, or an exponent: round to billionths.
	return v, int64(math.Round(v * 1e9)), nil
}

// decimalBillionths reads "123.456" as 123456000000 when it has at most
// nine decimals and no exponent.
func decimalBillionths(s string) (int64, bool) {
	neg := false
	switch {
	case strings.HasPrefix(s, "-"):
		neg, s = true, s[1:]
	case strings.HasPrefix(s, "+"):
		s = s[1:]
	}
	whole, frac, _ := strings.Cut(s, ".")
	if len(frac) > 9 || strings.ContainsAny(s, "eE+-") || len(whole) > 10 {
		return 0, false
	}
	var n int64
	for i := 0; i < len(whole); i++ {
		n = n*10 + int64(whole[i]-'0')
	}
	for i := 0; i < 9; i++ {
		n *= 10
		if i < len(frac) {
			n += int64(frac[i] - '0')
		}
	}
	if neg {
		n = -n
	}
	return n, true
}

// maxExactSum bounds quantities and their sums (9.2e18 billionths).
const maxExactSum = 9e9

// exactSum adds quantities exactly, in billionths of a unit.
type exactSum struct {
	n        int64
	overflow bool
}

func (e *exactSum) add(b int64) {
	if e.n > math.MaxInt64-b {
		e.overflow = true
	}
	e.n += b
}

// float returns the sum, correctly rounded to a float64.
func (e *exactSum) float() (float64, bool) {
	if e.overflow {
		return 0, false
	}
	s := strconv.FormatInt(e.n, 10)
	for len(s) < 10 {
		s = "0" + s
	}
	v, err := strconv.ParseFloat(s[:len(s)-9]+"."+s[len(s)-9:], 64)
	return v, err == nil
}
