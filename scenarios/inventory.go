package scenarios

import (
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"math"
	"path"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"github.com/expr-lang/expr/vm"
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
	// Family is the segment's family key (the values of the columns its
	// class's fit groups by, joined with "/"); "" unless the class is split
	// by family.
	Family string
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
	// families tallies each (class, family) whose class is split by
	// family (splitFamilies).
	families map[classFamily]*familyTally
}

// classFamily keys the quantities of one family of one class.
type classFamily struct {
	class  int
	family string
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
	// digests records the SHA-256 of each file read to the end.
	digests map[string]string
	opt     LoadOptions
}

// fileInventoryCSV is inventory_csv: a file name, or the file with options.
type fileInventoryCSV struct {
	File        string       `yaml:"file"`
	Delimiter   string       `yaml:"delimiter"`
	Decimal     string       `yaml:"decimal"`
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

// Limits of a segment list: a record (a line, or a quoted field over
// several lines) holds a segment's geometry at most; an id is a key, not
// a text.
const (
	maxSegmentLine = maxWKTBytes + 64<<10
	maxIDBytes     = 256
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
	ids := newSegmentIDs()
	var files []*Inventory
	for _, j := range jobs {
		if inv := readInventory(sc, f, j, ids, len(files), is); inv != nil {
			files = append(files, inv)
		}
	}
	ids.report(files, is)
}

// readInventory reads one inventory CSV into the classes it supplies and
// returns what it read (nil when the file could not be opened).
func readInventory(sc *Scenario, f *fileScenario, j inventoryJob, ids *segmentIDs, fileIndex int, is *issues) *Inventory {
	spec := j.spec
	fileLine := spec.Lines.of("file")
	if strings.TrimSpace(spec.File) == "" {
		is.add(spec.Lines.of(""), j.field+".file", "missing; name the CSV file, relative to the scenario's folder")
		return nil
	}
	if f.source.fsys == nil {
		is.add(fileLine, j.field, "cannot read %q: the scenario was not read from a file; load it with LoadFile or Load", spec.File)
		return nil
	}
	name := path.Join(path.Dir(f.source.name), strings.TrimSpace(spec.File))
	if !fs.ValidPath(name) || strings.HasPrefix(spec.File, "/") {
		is.add(fileLine, j.field+".file", "%q: give a path inside the scenario's folder (no .. and no leading /); copy or link the file next to the scenario", spec.File)
		return nil
	}
	format := csvFormat{holder: "inventory_csv"}
	var err error
	if format.delimiter, err = ParseDelimiter(spec.Delimiter); err != nil {
		is.add(spec.Lines.of("delimiter"), j.field+".delimiter", "%v", err)
		return nil
	}
	if format.decimal, err = ParseDecimal(spec.Decimal); err != nil {
		is.add(spec.Lines.of("decimal"), j.field+".decimal", "%v", err)
		return nil
	}
	fh, err := openInput(f.source.fsys, name, 0, f.source.digests)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			is.add(fileLine, j.field+".file", "%s: file not found; the path is relative to the scenario's folder", name)
		} else {
			is.add(fileLine, j.field+".file", "%s %s", name, describeOpenError(err))
		}
		return nil
	}
	defer fh.Close()
	// Room for the ids of a list of rows of about 100 bytes (a segment
	// list with a line geometry), each id about 10 bytes.
	ids.startFile(fileIndex, int(min(fh.size/100, 1<<27)), 10)

	fileIssues := &issues{file: name}
	r := &segmentReader{
		sc: sc, job: j, ids: ids, keep: f.source.opt,
		inv: &Inventory{File: name, Priority: strings.TrimSpace(spec.Priority)},
		in:  newCSVInput(fh, format, maxSegmentLine, fileIssues),
	}
	r.read(is)
	bad := fileIssues.count() > 0
	is.addAll(fileIssues.err())
	if bad || r.sums == nil {
		return r.inv
	}
	for k, takes := range j.takes {
		c := &sc.Classes[k]
		if !takes || c.Scale == nil {
			continue
		}
		c.Inventory = r.inv
		if !r.keep.CountSegments {
			c.Segments = r.segs[k]
		}
		for i := range c.Initial {
			v, ok := r.sums[k][i].float()
			if !ok {
				is.add(fileLine, j.field, "the quantities of class %q in state %q add up past %g; check the quantity column's unit", c.Name, c.Scale.States[i].Name, maxExactSum)
			}
			c.Initial[i] = v
		}
		c.LastTreated, c.datedSegments = r.lastTreatedShares(k, c.Initial), r.dated[k]
		ic := InventoryClass{Class: c.Name, Unit: c.Unit, Segments: r.counts[k], Quantity: c.Total()}
		r.inv.Classes = append(r.inv.Classes, ic)
		if ic.Segments == 0 {
			hint := "check the class column's spelling"
			if j.only >= 0 {
				hint = "rows are kept when their class column names the class; check its spelling, or drop the class column"
			}
			is.add(fileLine, j.field, "%s has no segments of class %q; %s", name, c.Name, hint)
		}
	}
	sc.Inventories = append(sc.Inventories, r.inv)
	return r.inv
}

// lastTreatedShares turns the quantities of class k by the year of their
// last treatment into the shares of each state's quantity, latest year
// first: what the plan needs of the segments' years, whether the segments
// are kept or only counted.
func (r *segmentReader) lastTreatedShares(k int, initial []float64) []LastTreated {
	var out []LastTreated
	for _, y := range slices.Backward(slices.Sorted(maps.Keys(r.treated[k]))) {
		lt := LastTreated{Year: y, Share: make([]float64, len(initial))}
		for i, sum := range r.treated[k][y] {
			if v, _ := sum.float(); initial[i] > 0 {
				lt.Share[i] = min(v/initial[i], 1)
			}
		}
		out = append(out, lt)
	}
	return out
}

// columns are the positions of the roles in a CSV's header, -1 if absent.
type columns struct {
	id, class, quantity, condition, name, wkt, lon, lat, lastTreated int
}

// segmentReader reads the rows of one segment list.
type segmentReader struct {
	sc   *Scenario
	job  inventoryJob
	in   *csvInput
	inv  *Inventory
	cols columns
	prio *priorityProgram
	run  vm.VM
	ids  *segmentIDs
	keep LoadOptions
	// Per class: the segments kept (unless only counted), their number
	// and their quantities' exact sums by state.
	segs   [][]Segment
	counts []int
	sums   [][]exactSum
	// families[k] holds the columns of class k's families when the class
	// is split by family (families.go).
	families [][]int
	// treated[k] sums class k's quantities by the year of their last
	// treatment and by state; dated[k] counts its segments that give one.
	treated []map[int][]exactSum
	dated   []int
	// row is the current row's line and whether a problem was found in it.
	line int
	bad  bool
}

// read reads the header and the rows; is takes problems of the scenario
// (the priority expression); the file's own go to r.in.is.
func (r *segmentReader) read(is *issues) {
	if !r.in.readHeader("id,class,quantity,condition") || !r.findColumns() {
		return
	}
	var ok bool
	if r.families, ok = familyColumns(r.sc, r.job, r.in); !ok {
		return
	}
	header := r.in.header
	r.inv.idColumn = header[r.cols.id]
	switch {
	case r.cols.wkt >= 0:
		r.inv.Geometry = "WKT"
	case r.cols.lon >= 0:
		r.inv.Geometry = "lon/lat"
	}
	if r.inv.Priority != "" {
		if r.prio, ok = compilePriority(r.inv.Priority, header, r.job.field+".priority", r.job.spec.Lines.of("priority"), is); !ok {
			return
		}
	}
	n := len(r.sc.Classes)
	r.segs, r.counts, r.sums = make([][]Segment, n), make([]int, n), make([][]exactSum, n)
	r.treated, r.dated = make([]map[int][]exactSum, n), make([]int, n)
	for k := range r.sc.Classes {
		if r.job.takes[k] && r.sc.Classes[k].Scale != nil {
			r.sums[k] = make([]exactSum, len(r.sc.Classes[k].Scale.States))
		}
	}
	// The WKT check, the costliest per row, runs on the goroutine that
	// reads ahead.
	var prepare func([]string) any
	if r.cols.wkt >= 0 {
		prepare = func(rec []string) any { return checkWKT(strings.TrimSpace(rec[r.cols.wkt])) }
	}
	r.in.each(prepare, func(rec []string, wktProblem any) {
		r.inv.Rows++
		msg, _ := wktProblem.(string)
		r.row(rec, msg)
	})
	if r.inv.Rows == 0 && r.in.is.count() == 0 {
		r.in.is.add(r.in.headerLine, "", "no segment rows under the header; add one row per segment")
	}
}

// findColumns finds the roles in the header, reporting what is missing.
func (r *segmentReader) findColumns() bool {
	var given fileColumns
	if r.job.spec.Columns != nil {
		given = *r.job.spec.Columns
	}
	ok := true
	find := func(role, mapped string, required bool) int {
		want := role
		if mapped != "" {
			want = mapped
		}
		i, unique := r.in.column(want)
		if !unique {
			ok = false
			return -1
		}
		if i >= 0 || (mapped == "" && !required) {
			return i
		}
		ok = false
		if d, one := r.in.oneColumn(); one {
			r.in.is.add(r.in.headerLine, "", "the header reads as one column %q: the file seems to separate columns with %q; add delimiter: %q to inventory_csv", r.in.header[0], delimiterName(d), delimiterName(d))
			return -1
		}
		how := fmt.Sprintf("or map yours with columns: {%s: YOUR_COLUMN}", role)
		if mapped != "" {
			how = fmt.Sprintf("columns: {%s: %s} names it", role, mapped)
		}
		what := fmt.Sprintf("%q", want)
		if want != role {
			what = fmt.Sprintf("%q (the %s column)", want, role)
		}
		r.in.is.add(r.in.headerLine, "", "no column %s; the header has %s; add the column, %s", what, r.in.headerList(), how)
		return -1
	}
	r.cols = columns{
		id:        find("id", given.ID, true),
		quantity:  find("quantity", given.Quantity, true),
		condition: find("condition", given.Condition, true),
		class:     find("class", given.Class, r.job.only < 0),
		name:      find("name", given.Name, false),
		wkt:       find("wkt", given.WKT, false),
		lon:       find("lon", given.Lon, false),
		lat:       find("lat", given.Lat, false),
		// The year of the last work, for classes whose treatments keep
		// intervals (treatments.History).
		lastTreated: find("last_treated", given.LastTreated, false),
	}
	if ok && (r.cols.lon < 0) != (r.cols.lat < 0) {
		r.in.is.add(r.in.headerLine, "", "give both lon and lat columns for point geometry, or neither")
		ok = false
	}
	return ok
}

// fail reports a problem in the current row's column.
func (r *segmentReader) fail(field, format string, args ...any) {
	r.in.is.add(r.line, field, format, args...)
	r.bad = true
}

// row reads one segment; wktProblem is what checkWKT said of its WKT.
func (r *segmentReader) row(rec []string, wktProblem string) {
	r.line, r.bad = r.in.line, false
	k, ok := r.classOf(rec)
	if !ok {
		return
	}
	c := &r.sc.Classes[k]
	if c.Scale == nil {
		return // the scale's problems are reported already
	}
	id := r.id(rec)
	q, billionths := r.quantity(rec, c)
	cs := strings.TrimSpace(rec[r.cols.condition])
	if cs == "" && r.job.spec.SkipUnrated && !r.bad {
		r.inv.Unrated++
		return
	}
	state, index := r.condition(c, cs)
	seg := Segment{ID: id, Line: r.line, State: state, Index: index, Quantity: q}
	if r.cols.name >= 0 {
		seg.Name = strings.TrimSpace(rec[r.cols.name])
	}
	r.geometry(rec, wktProblem, &seg)
	if r.cols.lastTreated >= 0 {
		y, msg := lastTreatedYear(strings.TrimSpace(rec[r.cols.lastTreated]), r.sc.StartYear)
		if msg != "" {
			r.fail(r.in.header[r.cols.lastTreated], "%s", msg)
		}
		seg.LastTreated = y
	}
	if r.bad {
		return
	}
	if q == 0 {
		r.inv.ZeroQuantity++
		return
	}
	if r.prio != nil {
		cond := index
		if math.IsNaN(cond) {
			cond = c.Scale.States[state].Value
		}
		p, field, msg := r.prio.value(&r.run, rec, r.in.header, r.in.format, cond, q, state)
		if msg != "" {
			r.fail(field, "%s", msg)
			return
		}
		seg.Priority = p
	}
	r.sums[k][state].add(billionths)
	if y := seg.LastTreated; y > 0 {
		if r.treated[k] == nil {
			r.treated[k] = map[int][]exactSum{}
		}
		if r.treated[k][y] == nil {
			r.treated[k][y] = make([]exactSum, len(c.Scale.States))
		}
		r.treated[k][y][state].add(billionths)
		r.dated[k]++
	}
	if at := r.families[k]; at != nil {
		seg.Family = familyKey(rec, at)
		r.inv.addFamily(k, seg.Family, len(c.Scale.States), state, billionths, r.line)
	}
	r.counts[k]++
	r.ids.add(id, r.line)
	if !r.keep.CountSegments {
		// Clone what is kept, so as not to hold the whole row in memory.
		seg.ID, seg.Name, seg.WKT = strings.Clone(seg.ID), strings.Clone(seg.Name), strings.Clone(seg.WKT)
		if s := r.segs[k]; len(s) == cap(s) {
			// Double, where append grows large slices by a quarter:
			// fewer copies of a million segments.
			r.segs[k] = append(make([]Segment, 0, 2*cap(s)+1024), s...)
		}
		r.segs[k] = append(r.segs[k], seg)
	}
}

// classOf returns the row's class; false when the row is of another
// class (counted) or its class cell is wrong (reported).
func (r *segmentReader) classOf(rec []string) (int, bool) {
	k := r.job.only
	if r.cols.class < 0 {
		return k, true
	}
	col := r.in.header[r.cols.class]
	cname := strings.TrimSpace(rec[r.cols.class])
	if r.job.only >= 0 {
		if !sameName(cname, r.sc.Classes[r.job.only].Name) {
			r.inv.OtherClass++
			return k, false
		}
		return k, true
	}
	k = classByName(r.sc, cname)
	switch {
	case cname == "":
		r.fail(col, "empty; name the segment's asset class (%s)", classNames(r.sc))
	case k < 0:
		r.fail(col, "unknown class %q; the scenario's classes are %s", cname, classNames(r.sc))
	case !r.job.takes[k]:
		r.fail(col, "class %q gives its own inventory in the scenario; drop its rows here or its inventory there", cname)
	default:
		return k, true
	}
	return k, false
}

func (r *segmentReader) id(rec []string) string {
	id := strings.TrimSpace(rec[r.cols.id])
	switch {
	case id == "":
		r.fail(r.in.header[r.cols.id], "empty; every segment needs an id (it keys the worklist)")
	case len(id) > maxIDBytes:
		r.fail(r.in.header[r.cols.id], "an id of %d bytes; ids are keys of at most %d bytes", len(id), maxIDBytes)
	}
	return id
}

func (r *segmentReader) quantity(rec []string, c *Class) (float64, int64) {
	col := r.in.header[r.cols.quantity]
	qs := strings.TrimSpace(rec[r.cols.quantity])
	q, billionths, err := parseQuantity(qs, r.in.format)
	switch {
	case qs == "":
		r.fail(col, "empty; give the segment's quantity in %s", c.Unit)
	case errors.Is(err, errQuantityRange):
		r.fail(col, "%s is %g or more; no segment is that large: check the quantity column's unit", qs, maxExactSum)
	case err != nil:
		r.fail(col, "%q is not a number (the quantity in %s); %s", qs, c.Unit, r.in.format.numberHint(err))
	case q < 0:
		r.fail(col, "%s is negative; a quantity is zero or more", qs)
	}
	return q, billionths
}

// condition reads the condition cell: a state name or an index value.
func (r *segmentReader) condition(c *Class, cs string) (int, float64) {
	col := r.in.header[r.cols.condition]
	if cs == "" {
		r.fail(col, "empty; give an index value or a state name of %s, or set skip_unrated: true on inventory_csv to leave unrated segments out", scaleLabel(c.Scale))
		return -1, math.NaN()
	}
	state, index, err := conditionOf(c.Scale, cs, r.in.format)
	if state < 0 {
		switch {
		case errors.Is(err, errDecimalComma) || errors.Is(err, errDecimalPoint):
			r.fail(col, "%q is not a number; %s", cs, r.in.format.numberHint(err))
		case math.IsNaN(index):
			r.fail(col, "%q is neither a number nor a state of %s (states: %s)", cs, scaleLabel(c.Scale), stateList(c.Scale))
		default:
			r.fail(col, "%s is outside %s, which runs %s to %s", cs, scaleLabel(c.Scale), num(math.Min(c.Scale.Best, c.Scale.Worst)), num(math.Max(c.Scale.Best, c.Scale.Worst)))
		}
	}
	return state, index
}

// geometry reports the row's WKT problem (checked ahead), checks its
// lon/lat and, when kept, copies either.
func (r *segmentReader) geometry(rec []string, wktProblem string, seg *Segment) {
	keep := !r.keep.CountSegments && !r.keep.NoGeometry
	if r.cols.wkt >= 0 {
		if w := strings.TrimSpace(rec[r.cols.wkt]); w != "" {
			if wktProblem != "" {
				r.fail(r.in.header[r.cols.wkt], "%s", wktProblem)
			} else if keep {
				seg.WKT = w
			}
		}
	}
	if r.cols.lon < 0 {
		return
	}
	lon, lat := strings.TrimSpace(rec[r.cols.lon]), strings.TrimSpace(rec[r.cols.lat])
	if lon == "" && lat == "" {
		return
	}
	x, errx := r.in.format.number(lon)
	y, erry := r.in.format.number(lat)
	switch {
	case errx != nil || x < -180 || x > 180:
		r.fail(r.in.header[r.cols.lon], "%q is not a longitude (-180 to 180 degrees)", lon)
	case erry != nil || y < -90 || y > 90:
		r.fail(r.in.header[r.cols.lat], "%q is not a latitude (-90 to 90 degrees)", lat)
	case keep:
		seg.Lon, seg.Lat, seg.HasPoint = x, y, true
	}
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
// neither; index is NaN unless the cell was a number, and err says why a
// cell that looks like a number could not be read.
func conditionOf(s *Scale, cell string, f csvFormat) (state int, index float64, err error) {
	if i := s.StateIndex(cell); i >= 0 {
		return i, math.NaN(), nil
	}
	for i, st := range s.States {
		if strings.EqualFold(st.Name, cell) {
			return i, math.NaN(), nil
		}
	}
	v, err := f.number(cell)
	if err != nil {
		return -1, math.NaN(), err
	}
	return s.StateOf(v), v, nil
}

// parseQuantity reads a quantity as a float and as a whole number of
// billionths of a unit, so that quantities add up exactly whatever the
// order of the rows.
func parseQuantity(s string, f csvFormat) (float64, int64, error) {
	plain, err := f.plain(s)
	if err != nil {
		return 0, 0, err
	}
	v, err := f.number(s)
	if err != nil {
		return 0, 0, err
	}
	if math.Abs(v) >= maxExactSum {
		return v, 0, errQuantityRange
	}
	if b, ok := decimalBillionths(plain); ok {
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

// errQuantityRange: a quantity of maxExactSum or more.
var errQuantityRange = errors.New("quantity out of range")

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
