package scenarios

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

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

// maxListed bounds the problems listed one by one; the rest are counted.
const maxListed = 20

// InspectionOptions say how to read an inspection export.
type InspectionOptions struct {
	// Columns names the columns; empty names take the defaults.
	Columns InspectionColumns
	// Separator between fields; 0 means a comma.
	Separator rune
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
// and columns asset, class, inspected (a year such as 2021 or an ISO date
// such as 2021-06-14), condition (an index value mapped through the
// class's scale, or a state name) and optional work (non-empty when work
// was done since the asset's previous inspection; 0, no, n, false, none
// and - also mean no work). Extra columns are ignored. Every problem is
// reported with its line in an *InputError; name is used in messages.
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
	lr := &lineLimitReader{r: bufio.NewReaderSize(r, 1<<16), limit: MaxLineBytes}
	cr := csv.NewReader(lr)
	if opt.Separator != 0 {
		cr.Comma = opt.Separator
	}
	cr.ReuseRecord = true
	header, err := cr.Read()
	if err != nil {
		switch {
		case errors.Is(err, io.EOF):
			is.add(0, "", "file is empty; an inspection export needs a header line naming the columns %s, %s, %s, %s", cols.Asset, cols.Class, cols.Inspected, cols.Condition)
		case lr.tooLong > 0:
			is.add(lr.tooLong, "", "line is longer than %d bytes; is this an inspection export (CSV text)?", MaxLineBytes)
		default:
			is.add(csvLine(err), "", "cannot read the header: %s", csvMessage(err))
		}
		return nil, is.err()
	}
	idx, ok := mapColumns(header, cols, opt.By, opt.Covariates, cr.Comma, is)
	if !ok {
		return nil, is.err()
	}
	rd := &inspectionReader{
		opt:     opt,
		idx:     idx,
		is:      is,
		byClass: map[string]int{},
		only:    map[string]bool{},
		unknown: map[string]*lineList{},
	}
	for _, c := range opt.Only {
		rd.only[c] = true
	}
	out := &Inspections{Source: name}
	rd.out = out
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			if lr.tooLong > 0 {
				is.add(lr.tooLong, "", "line is longer than %d bytes; is this an inspection export (CSV text)? A quote left open can also swallow the rest of the file", MaxLineBytes)
				break
			}
			var pe *csv.ParseError
			if errors.As(err, &pe) && errors.Is(pe.Err, csv.ErrFieldCount) {
				out.Rows++
				rd.bad(pe.Line, "", "%d fields where the header has %d; check the separator (--separator) and quotes", len(rec), len(header))
				continue
			}
			is.add(csvLine(err), "", "%s; check quotes in the line (a quote left open runs on into the next lines)", csvMessage(err))
			break
		}
		out.Rows++
		line, _ := cr.FieldPos(0)
		rd.row(rec, line)
	}
	rd.finish()
	if err := is.err(); err != nil {
		return nil, err
	}
	if out.Rows == 0 {
		is.add(1, "", "the file has a header but no inspections")
		return nil, is.err()
	}
	return out, nil
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

func mapColumns(header []string, cols InspectionColumns, by, covariates []string, comma rune, is *issues) (columnIndex, bool) {
	for i, h := range header {
		if !utf8.ValidString(h) {
			is.add(1, "", "the header is not UTF-8 text (column %d); save the export as UTF-8", i+1)
			return columnIndex{}, false
		}
	}
	norm := make([]string, len(header))
	for i, h := range header {
		h = strings.TrimPrefix(h, "\ufeff") // byte-order mark from spreadsheet exports
		norm[i] = strings.ToLower(strings.TrimSpace(h))
	}
	find := func(want string) (int, bool) {
		w := strings.ToLower(strings.TrimSpace(want))
		at := -1
		for i, h := range norm {
			if h == w {
				if at >= 0 {
					is.add(1, "", "column %q appears twice in the header (columns %d and %d); rename one", want, at+1, i+1)
					return -1, false
				}
				at = i
			}
		}
		return at, true
	}
	var idx columnIndex
	var missing []string
	ok := true
	for _, c := range []struct {
		at   *int
		name string
		key  string
	}{{&idx.asset, cols.Asset, "asset"}, {&idx.class, cols.Class, "class"}, {&idx.inspected, cols.Inspected, "inspected"}, {&idx.condition, cols.Condition, "condition"}} {
		i, fine := find(c.name)
		ok = ok && fine
		if i < 0 && fine {
			missing = append(missing, fmt.Sprintf("%q (map another name with --column %s=HEADER)", c.name, c.key))
		}
		*c.at = i
	}
	w, fine := find(cols.Work)
	ok = ok && fine
	idx.work = w
	for _, extra := range []struct {
		names []string
		at    *[]int
		what  string
	}{{by, &idx.by, "to group by"}, {covariates, &idx.covariates, "of covariate values"}} {
		for _, name := range extra.names {
			i, fine := find(name)
			ok = ok && fine
			if i < 0 && fine {
				is.add(1, "", "no column %q %s; the header reads %q", name, extra.what, strings.Join(header, string(comma)))
				ok = false
			}
			*extra.at = append(*extra.at, i)
		}
	}
	if len(missing) > 0 {
		found := strings.Join(header, string(comma))
		if len(header) == 1 {
			if i := strings.IndexAny(header[0], ";\t|"); i >= 0 {
				sep := header[0][i : i+1]
				if sep == "\t" {
					sep = "tab"
				}
				is.add(1, "", "the header %q reads as one column: the file looks separated by %q, not %q; try --separator %q", found, sep, string(comma), sep)
				return idx, false
			}
		}
		is.add(1, "", "missing column %s; the header reads %q", strings.Join(missing, ", "), found)
		return idx, false
	}
	return idx, ok
}

type inspectionReader struct {
	opt     InspectionOptions
	idx     columnIndex
	is      *issues
	out     *Inspections
	byClass map[string]int
	assets  []map[string]int
	only    map[string]bool
	unknown map[string]*lineList
	listed  int
	more    int
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
	if rd.listed >= maxListed {
		rd.more++
		return
	}
	rd.listed++
	rd.is.add(line, field, format, args...)
}

type badRows struct {
	lines   lineList
	example string
}

func (rd *inspectionReader) row(rec []string, line int) {
	for i, f := range rec {
		if !utf8.ValidString(f) {
			rd.bad(line, "", "not UTF-8 text (column %d); save the export as UTF-8", i+1)
			return
		}
	}
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
	t, msg := parseInspected(rec[rd.idx.inspected])
	if msg != "" {
		rd.bad(line, cols.Inspected, "%s", msg)
		return
	}
	state, msg := c.Scale.ParseCondition(rec[rd.idx.condition])
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
			f, err := parseNumber(v)
			switch {
			case v == "":
				rd.bad(line, rd.opt.Covariates[i], "empty; a covariate needs a number on every row")
				return 0, nil, false
			case err != nil:
				rd.bad(line, rd.opt.Covariates[i], "%q is not a number; a covariate is a plain number such as 5400 or 12.5", v)
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
	if rd.more > 0 {
		rd.is.add(0, "", "and %d more problems like those above; fix them, or leave such rows out with --skip-bad-rows", rd.more)
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

// parseInspected reads a year (2021, taken as mid-year) or an ISO date
// (2021-06-14, optionally followed by a time, which is ignored) as a time
// in years.
func parseInspected(text string) (float64, string) {
	t := strings.TrimSpace(text)
	bad := fmt.Sprintf("inspected %q is not a year (2021) or an ISO date (2021-06-14)", t)
	if t == "" {
		return 0, "inspected is empty; give the year (2021) or the ISO date (2021-06-14)"
	}
	if len(t) == 4 {
		y, err := strconv.Atoi(t)
		if err != nil {
			return 0, bad
		}
		if y < minYear || y > maxYear {
			return 0, fmt.Sprintf("inspected year %d is not plausible; give the year (2021) or the ISO date (2021-06-14)", y)
		}
		return float64(y) + 0.5, ""
	}
	if len(t) > 10 && (t[10] == 'T' || t[10] == ' ') {
		t = t[:10]
	}
	d, err := time.Parse("2006-01-02", t)
	if err != nil {
		return 0, bad
	}
	y := d.Year()
	if y < minYear || y > maxYear {
		return 0, fmt.Sprintf("inspected year %d is not plausible; give the year (2021) or the ISO date (2021-06-14)", y)
	}
	days := 365.0
	if time.Date(y, 12, 31, 0, 0, 0, 0, time.UTC).YearDay() == 366 {
		days = 366
	}
	return float64(y) + float64(d.YearDay()-1)/days, ""
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

// csvLine is the line where the record with the problem starts: for a
// quote left open, the line it was opened on.
func csvLine(err error) int {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return pe.StartLine
	}
	return 0
}

func csvMessage(err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// lineLimitReader fails a read once a line grows past limit bytes, and
// remembers that line's number.
type lineLimitReader struct {
	r       *bufio.Reader
	limit   int
	line    int // current line, 1-based once reading starts
	run     int // bytes since the last newline
	tooLong int
}

var errLineTooLong = errors.New("line too long")

func (l *lineLimitReader) Read(p []byte) (int, error) {
	if l.tooLong > 0 {
		return 0, errLineTooLong
	}
	if l.line == 0 {
		l.line = 1
	}
	n, err := l.r.Read(p)
	for i := 0; i < n; {
		k := bytes.IndexByte(p[i:n], '\n')
		if k < 0 {
			l.run += n - i
			break
		}
		l.run += k
		if l.run > l.limit {
			break
		}
		l.line++
		l.run = 0
		i += k + 1
	}
	if l.run > l.limit {
		l.tooLong = l.line
		return 0, errLineTooLong
	}
	return n, err
}
