package scenarios

import (
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"

	"wearplan/markov"
)

// InspectionColumns names the columns of an inspection export.
type InspectionColumns struct {
	Asset, Class, Inspected, Condition, Work string
}

// DefaultInspectionColumns returns the column names wearplan expects:
// asset, class, inspected, condition and (optional) work.
func DefaultInspectionColumns() InspectionColumns {
	return InspectionColumns{Asset: "asset", Class: "class", Inspected: "inspected", Condition: "condition", Work: "work"}
}

// MaxLineBytes bounds one line of an inspection export. Real exports have
// lines of a few hundred bytes; a longer line is a sign of a binary file or
// a broken quote that swallowed the rest of the file.
const MaxLineBytes = 64 << 10

// InspectionOptions say how to read an inspection export.
type InspectionOptions struct {
	// Columns names the columns; empty names take the defaults.
	Columns InspectionColumns
	// Delimiter between fields; 0 means a comma (ParseDelimiter reads
	// the setting).
	Delimiter rune
	// Decimal is the decimal mark of condition values: '.' (also 0) or
	// ',' (ParseDecimal reads the setting).
	Decimal rune
	// DateFormat is how dates are written (ParseDateFormat); the zero
	// value reads ISO dates (2021-06-14). Years alone (2021) and ISO
	// dates are read whatever the format.
	DateFormat DateFormat
	// ScaleFor returns the condition scale of a class, or nil when the
	// class is unknown (an error naming the lines).
	ScaleFor func(class string) *Scale
	// Only, when not empty, limits reading to these classes; rows of other
	// classes are counted in Skipped.
	Only []string
	// SkipBadRows leaves out rows that cannot be read (bad date, condition
	// outside the scale, unknown class...) with a warning instead of
	// failing.
	SkipBadRows bool
	// By names columns whose values put each inspection in a family of
	// assets (several columns: the values joined with "/"); Covariates
	// names columns of numbers carried with each inspection. Both are
	// read on every row; other extra columns are ignored.
	By, Covariates []string
}

// Inspections is an inspection export read and checked: for each class,
// each asset's inspections in time order.
type Inspections struct {
	Source string
	// Rows is the number of data rows (header excluded).
	Rows int
	// Skipped rows belong to classes not asked for; BadRows were left out
	// under SkipBadRows.
	Skipped, BadRows int
	// Classes in order of first appearance.
	Classes []InspectionClass
	// Warnings say what was dropped or reordered, with lines.
	Warnings []string
}

// InspectionClass holds one class's inspections.
type InspectionClass struct {
	Name  string
	Scale *Scale
	// Rows is the number of rows read for the class.
	Rows int
	// Assets and Histories are parallel: Histories[a] holds asset a's
	// inspections in time order, each with its line number as Ref.
	Assets    []string
	Histories [][]markov.Inspection
	// Families lists the families met (By), sorted; an inspection's
	// Stratum is its family's index here. Nil without By.
	Families []string
	// Duplicates repeat an inspection (same asset, same date, same
	// condition); Conflicts give the same asset and date two conditions.
	// Both are dropped. OutOfOrder counts inspections listed before an
	// earlier one of the same asset (they are sorted by date).
	Duplicates, Conflicts, OutOfOrder int
}

// ReadInspections reads an inspection export: a CSV file with a header
// and columns asset, class, inspected (a year such as 2021, or a date: ISO,
// 2021-06-14, or as the date format says), condition (an index value mapped
// through the class's scale, or a state name) and optional work (non-empty
// when work was done since the asset's previous inspection; 0, no, n,
// false, none and - also mean no work). Extra columns are ignored. Every
// problem is reported with its line in an *InputError; name is used in
// messages.
func ReadInspections(r io.Reader, name string, opt InspectionOptions) (*Inspections, error) {
	cols := opt.Columns
	def := DefaultInspectionColumns()
	for _, p := range []struct {
		v *string
		d string
	}{{&cols.Asset, def.Asset}, {&cols.Class, def.Class}, {&cols.Inspected, def.Inspected}, {&cols.Condition, def.Condition}, {&cols.Work, def.Work}} {
		if strings.TrimSpace(*p.v) == "" {
			*p.v = p.d
		}
	}
	opt.Columns = cols
	if opt.ScaleFor == nil {
		return nil, errors.New("reading inspections: no scale lookup given")
	}
	is := &issues{file: name}
	in := newCSVInput(r, csvFormat{delimiter: opt.Delimiter, decimal: opt.Decimal}, MaxLineBytes, is)
	if !in.readHeader(strings.Join([]string{cols.Asset, cols.Class, cols.Inspected, cols.Condition}, string(in.format.comma()))) {
		return nil, is.err()
	}
	idx, ok := mapColumns(in, cols, opt.By, opt.Covariates)
	if !ok {
		return nil, is.err()
	}
	out := &Inspections{Source: name}
	rd := &inspectionReader{
		opt:     opt,
		format:  in.format,
		idx:     idx,
		is:      is,
		out:     out,
		byClass: map[string]int{},
		only:    map[string]bool{},
		unknown: map[string]*lineList{},
	}
	for _, c := range opt.Only {
		rd.only[c] = true
	}
	in.bad = rd.bad
	for {
		rec, ok := in.next()
		if !ok {
			break
		}
		rd.row(rec, in.line)
	}
	out.Rows = in.records
	rd.finish()
	if err := is.err(); err != nil {
		return nil, err
	}
	if out.Rows == 0 {
		is.add(in.headerLine, "", "the file has a header but no inspections")
		return nil, is.err()
	}
	return out, nil
}

// ReadInspectionsFile reads the inspection export at path with
// ReadInspections, after checking that it is a regular file (a folder, a
// pipe or a device is refused before it is opened).
func ReadInspectionsFile(path string, opt InspectionOptions) (*Inspections, error) {
	fsys, name, err := openScenarioFolder(path)
	if err != nil {
		return nil, err
	}
	defer fsys.Close()
	f, err := openInput(fsys, name, 0, nil)
	if err != nil {
		return nil, &InputError{Issues: []*Issue{{File: printable(path), Msg: describeOpenError(err)}}}
	}
	defer f.Close()
	return ReadInspections(f, path, opt)
}

// lineList records the lines of one recurring problem.
type lineList struct {
	first []int
	count int
}

func (l *lineList) add(line int) {
	if len(l.first) < 3 {
		l.first = append(l.first, line)
	}
	l.count++
}

// merge adds the lines of m, keeping the first ones in order.
func (l *lineList) merge(m *lineList) {
	l.first = append(l.first, m.first...)
	slices.Sort(l.first)
	l.first = l.first[:min(len(l.first), 3)]
	l.count += m.count
}

func (l *lineList) String() string {
	parts := make([]string, len(l.first))
	for i, v := range l.first {
		parts[i] = strconv.Itoa(v)
	}
	s := strings.Join(parts, ", ")
	if l.count > len(l.first) {
		s += fmt.Sprintf(" and %d more", l.count-len(l.first))
	}
	if l.count == 1 {
		return "line " + s
	}
	return "lines " + s
}

type columnIndex struct {
	asset, class, inspected, condition, work int // work is -1 when absent
	by, covariates                           []int
}

func mapColumns(in *csvInput, cols InspectionColumns, by, covariates []string) (columnIndex, bool) {
	var idx columnIndex
	var missing []string
	ok := true
	for _, c := range []struct {
		at   *int
		name string
		key  string
	}{{&idx.asset, cols.Asset, "asset"}, {&idx.class, cols.Class, "class"}, {&idx.inspected, cols.Inspected, "inspected"}, {&idx.condition, cols.Condition, "condition"}} {
		i, unique := in.column(c.name)
		ok = ok && unique
		if i < 0 && unique {
			missing = append(missing, fmt.Sprintf("%q (map another name with --column %s=HEADER)", c.name, c.key))
		}
		*c.at = i
	}
	w, unique := in.column(cols.Work)
	ok = ok && unique
	idx.work = w
	for _, extra := range []struct {
		names []string
		at    *[]int
		what  string
	}{{by, &idx.by, "to group by"}, {covariates, &idx.covariates, "of covariate values"}} {
		for _, name := range extra.names {
			i, unique := in.column(name)
			ok = ok && unique
			if i < 0 && unique {
				in.is.add(in.headerLine, "", "no column %q %s; the header reads %q", name, extra.what, strings.Join(in.header, string(in.format.comma())))
				ok = false
			}
			*extra.at = append(*extra.at, i)
		}
	}
	if len(missing) > 0 {
		found := strings.Join(in.header, string(in.format.comma()))
		if d, one := in.oneColumn(); one {
			in.is.add(in.headerLine, "", "the header %q reads as one column: the file looks delimited by %q, not %q; set the delimiter to %q", found, delimiterName(d), delimiterName(in.format.comma()), delimiterName(d))
			return idx, false
		}
		in.is.add(in.headerLine, "", "missing column %s; the header reads %q", strings.Join(missing, ", "), found)
		return idx, false
	}
	return idx, ok
}

type inspectionReader struct {
	opt     InspectionOptions
	format  csvFormat
	idx     columnIndex
	is      *issues
	out     *Inspections
	byClass map[string]int
	assets  []map[string]int
	only    map[string]bool
	unknown map[string]*lineList
	badKind map[string]*badRows
	// families[k] maps class k's family keys to their index; xs is a
	// block the covariates of the inspections are cut from.
	families []map[string]int
	xs       []float64
}

// bad records a row that cannot be used: an error, or under SkipBadRows a
// warning that counts such rows by column and quotes the first.
func (rd *inspectionReader) bad(line int, field, format string, args ...any) {
	if rd.opt.SkipBadRows {
		rd.out.BadRows++
		if rd.badKind == nil {
			rd.badKind = map[string]*badRows{}
		}
		kind := field
		if kind == "" {
			kind = "(whole row)"
		}
		b := rd.badKind[kind]
		if b == nil {
			b = &badRows{example: fmt.Sprintf(format, args...)}
			rd.badKind[kind] = b
		}
		b.lines.add(line)
		return
	}
	rd.is.add(line, field, format, args...)
}

type badRows struct {
	lines   lineList
	example string
}

func (rd *inspectionReader) row(rec []string, line int) {
	cols := rd.opt.Columns
	class := strings.TrimSpace(rec[rd.idx.class])
	if class == "" {
		rd.bad(line, cols.Class, "class is empty; every inspection needs its asset class")
		return
	}
	if len(rd.only) > 0 && !rd.only[class] {
		rd.out.Skipped++
		return
	}
	k, seen := rd.byClass[class]
	if !seen {
		scale := rd.opt.ScaleFor(class)
		if scale == nil {
			l := rd.unknown[class]
			if l == nil {
				l = &lineList{}
				rd.unknown[class] = l
			}
			l.add(line)
			if rd.opt.SkipBadRows {
				rd.out.BadRows++
			}
			return
		}
		k = len(rd.out.Classes)
		rd.byClass[strings.Clone(class)] = k
		rd.out.Classes = append(rd.out.Classes, InspectionClass{Name: strings.Clone(class), Scale: scale})
		rd.assets = append(rd.assets, map[string]int{})
		rd.families = append(rd.families, map[string]int{})
	}
	c := &rd.out.Classes[k]
	asset := strings.TrimSpace(rec[rd.idx.asset])
	if asset == "" {
		rd.bad(line, cols.Asset, "asset is empty; every inspection needs the asset's identifier")
		return
	}
	t, msg := rd.opt.DateFormat.parse(rec[rd.idx.inspected])
	if msg != "" {
		rd.bad(line, cols.Inspected, "%s", msg)
		return
	}
	state, msg := c.Scale.parseCondition(rec[rd.idx.condition], rd.format)
	if msg != "" {
		rd.bad(line, cols.Condition, "%s", msg)
		return
	}
	work := false
	if rd.idx.work >= 0 {
		work = workDone(rec[rd.idx.work])
	}
	stratum, x, ok := rd.extras(rec, line, k)
	if !ok {
		return
	}
	a, ok := rd.assets[k][asset]
	if !ok {
		a = len(c.Assets)
		asset = strings.Clone(asset)
		rd.assets[k][asset] = a
		c.Assets = append(c.Assets, asset)
		c.Histories = append(c.Histories, nil)
	}
	c.Histories[a] = append(c.Histories[a], markov.Inspection{Time: t, State: state, Work: work, Ref: line, Stratum: stratum, X: x})
	c.Rows++
}

// extras reads the family and covariate columns of a row of class k: the
// family's index and the covariates, cut from a shared block.
func (rd *inspectionReader) extras(rec []string, line, k int) (int, []float64, bool) {
	stratum := 0
	if len(rd.idx.by) > 0 {
		parts := make([]string, len(rd.idx.by))
		for i, at := range rd.idx.by {
			parts[i] = strings.TrimSpace(rec[at])
			if parts[i] == "" {
				rd.bad(line, rd.opt.By[i], "empty; the fit groups assets by this column, so every inspection needs a value")
				return 0, nil, false
			}
		}
		key := strings.Join(parts, "/")
		f, seen := rd.families[k][key]
		if !seen {
			f = len(rd.families[k])
			rd.families[k][strings.Clone(key)] = f
		}
		stratum = f
	}
	var x []float64
	if p := len(rd.idx.covariates); p > 0 {
		if len(rd.xs) < p {
			rd.xs = make([]float64, 4096*p)
		}
		x, rd.xs = rd.xs[:p:p], rd.xs[p:]
		for i, at := range rd.idx.covariates {
			v := strings.TrimSpace(rec[at])
			f, err := rd.format.number(v)
			switch {
			case v == "":
				rd.bad(line, rd.opt.Covariates[i], "empty; a covariate needs a number on every row")
				return 0, nil, false
			case err != nil:
				rd.bad(line, rd.opt.Covariates[i], "%q is not a number; %s", v, rd.format.numberHint(err))
				return 0, nil, false
			}
			x[i] = f
		}
	}
	return stratum, x, true
}

// finish reports unknown classes, sorts each asset's inspections by date
// and drops duplicates, with warnings naming the lines.
func (rd *inspectionReader) finish() {
	names := sortedKeys(rd.unknown)
	for _, class := range names {
		l := rd.unknown[class]
		msg := fmt.Sprintf("class %q (%s) has no condition scale: it is not a class of the scenario; add it to the scenario, fit only some classes with --class, or use --scale NAME for every class", class, l)
		if rd.opt.SkipBadRows {
			rd.out.Warnings = append(rd.out.Warnings, fmt.Sprintf("%s: %s; left out", rd.out.Source, msg))
			continue
		}
		rd.is.add(l.first[0], rd.opt.Columns.Class, "%s", msg)
	}
	for _, kind := range sortedKeys(rd.badKind) {
		b := rd.badKind[kind]
		rd.out.Warnings = append(rd.out.Warnings, fmt.Sprintf("%s: %d row(s) left out for %s (%s), the first: %s", rd.out.Source, b.lines.count, kind, &b.lines, b.example))
	}
	for k := range rd.out.Classes {
		c := &rd.out.Classes[k]
		if len(rd.idx.by) > 0 {
			// Families in sorted order, so that output does not depend on
			// the order of the rows.
			c.Families = sortedKeys(rd.families[k])
			remap := make([]int, len(c.Families))
			for i, key := range c.Families {
				remap[rd.families[k][key]] = i
			}
			for _, h := range c.Histories {
				for i := range h {
					h[i].Stratum = remap[h[i].Stratum]
				}
			}
		}
		var order, dup, conflict lineList
		for a, h := range c.Histories {
			sorted := slices.IsSortedFunc(h, func(x, y markov.Inspection) int { return compareTime(x.Time, y.Time) })
			if !sorted {
				for i := 1; i < len(h); i++ {
					if h[i].Time < h[i-1].Time {
						order.add(h[i].Ref)
					}
				}
				slices.SortStableFunc(h, func(x, y markov.Inspection) int { return compareTime(x.Time, y.Time) })
			}
			c.Histories[a] = dedupe(h, &dup, &conflict)
		}
		c.OutOfOrder, c.Duplicates, c.Conflicts = order.count, dup.count, conflict.count
		src := rd.out.Source
		if order.count > 0 {
			rd.out.Warnings = append(rd.out.Warnings, fmt.Sprintf("%s: class %s: %d inspection(s) listed after a later inspection of the same asset (%s); sorted by date", src, c.Name, order.count, &order))
		}
		if dup.count > 0 {
			rd.out.Warnings = append(rd.out.Warnings, fmt.Sprintf("%s: class %s: %d duplicate inspection(s) (same asset, date and condition as an earlier line; %s); dropped", src, c.Name, dup.count, &dup))
		}
		if conflict.count > 0 {
			rd.out.Warnings = append(rd.out.Warnings, fmt.Sprintf("%s: class %s: %d inspection(s) give an asset two different conditions on the same date (%s); all of them dropped", src, c.Name, conflict.count, &conflict))
		}
	}
}

func compareTime(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// dedupe drops repeats of the same date from a sorted history: identical
// conditions keep the first; different conditions drop them all. Work
// recorded on a dropped inspection moves to the next one kept, so a pair
// never spans unrecorded work.
func dedupe(h []markov.Inspection, dup, conflict *lineList) []markov.Inspection {
	out := h[:0]
	carry := false
	for i := 0; i < len(h); {
		j := i + 1
		for j < len(h) && h[j].Time == h[i].Time {
			j++
		}
		group := h[i:j]
		work := carry
		same := true
		for _, in := range group {
			work = work || in.Work
			same = same && in.State == group[0].State
		}
		switch {
		case len(group) == 1:
			kept := group[0]
			kept.Work = work
			out = append(out, kept)
			carry = false
		case same:
			for _, in := range group[1:] {
				dup.add(in.Ref)
			}
			kept := group[0]
			kept.Work = work
			out = append(out, kept)
			carry = false
		default:
			for _, in := range group {
				conflict.add(in.Ref)
			}
			carry = work
		}
		i = j
	}
	return out
}

// workDone reads the work column: empty and the usual words for "no"
// mean no work; anything else means work was done.
func workDone(text string) bool {
	switch strings.ToLower(strings.TrimSpace(text)) {
	case "", "0", "no", "n", "false", "none", "-":
		return false
	}
	return true
}
