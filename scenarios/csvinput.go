package scenarios

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// One CSV input layer reads every CSV file wearplan takes (segment lists,
// inspection exports): a UTF-8 byte-order mark is dropped, CRLF and LF line
// ends are both read, fields may be quoted (RFC 4180: delimiters, quotes
// and line breaks inside), blank rows are skipped, and the header's names
// are matched trimmed and in any case. Every record is checked to be UTF-8
// text with as many fields as the header, and every problem is reported
// with the line where its record starts. A line, or a quoted field running
// over several lines, longer than the reader's limit stops the reading: no
// CSV file has such lines, and a quote left open would otherwise gather the
// rest of the file into one field. Numbers are read with the file's decimal
// mark. The readers of each kind of file add what their columns mean.

// csvFormat says how a CSV file is written.
type csvFormat struct {
	// delimiter between fields (a comma when 0).
	delimiter rune
	// decimal is the decimal mark of numbers, '.' or ',' ('.' when 0).
	decimal rune
	// holder names where the settings are written, for hints: a scenario
	// key such as "inventory_csv", or "" for a reader's options.
	holder string
}

func (f csvFormat) comma() rune {
	if f.delimiter == 0 {
		return ','
	}
	return f.delimiter
}

func (f csvFormat) point() rune {
	if f.decimal == 0 {
		return '.'
	}
	return f.decimal
}

// ParseDelimiter reads a delimiter setting: one character, "tab" or "\t"
// for a tab; "" is the default comma. A quote or a line break cannot
// delimit fields.
func ParseDelimiter(s string) (rune, error) {
	switch s {
	case "":
		return ',', nil
	case `\t`, "tab", "TAB", "Tab":
		return '\t', nil
	}
	r, size := utf8.DecodeRuneInString(s)
	if size != len(s) || r == '"' || r == '\r' || r == '\n' || r == utf8.RuneError || r == '\ufeff' {
		return 0, fmt.Errorf("%q: give one character, e.g. \",\" (the default), \";\" or \"\\t\" for tabs", s)
	}
	return r, nil
}

// ParseDecimal reads a decimal-mark setting: "." (the default, also for
// "") or ",".
func ParseDecimal(s string) (rune, error) {
	switch s {
	case "", ".":
		return '.', nil
	case ",":
		return ',', nil
	}
	return 0, fmt.Errorf("%q: the decimal mark is \".\" (the default) or \",\"", s)
}

// delimiterName writes a delimiter as a setting is written.
func delimiterName(r rune) string {
	if r == '\t' {
		return `\t`
	}
	return string(r)
}

// csvInput reads one CSV file: its header, then its records.
type csvInput struct {
	format csvFormat
	cr     *csv.Reader
	limit  *recordLimitReader
	// is takes the problems of the file as a whole (header, a line too
	// long); bad takes those of one record, which a reader may count
	// instead of failing (is.add by default).
	is  *issues
	bad func(line int, field, format string, args ...any)
	// header holds the column names, trimmed; cols maps each name
	// (trimmed, lower case) to its columns.
	header []string
	cols   map[string][]int
	// headerLine and line are where the header and the current record
	// start.
	headerLine, line int
	// The reading state, owned by whichever goroutine reads (see each):
	// at is where the record just read starts, records counts the records
	// read (blank ones aside), nextLine is where the next record starts at
	// the latest (for a message about a quote left open).
	at, records, nextLine int
	stopped               bool
	// sink, when set, takes the problems found while reading ahead, to be
	// reported in order with those of the records (see each).
	sink func(csvProblem)
}

// csvProblem is a problem found while reading: of one record (row: told
// through bad, which a reader may count instead) or of the file.
type csvProblem struct {
	row         bool
	line        int
	field, text string
}

// report tells of a problem now, or hands it to the sink.
func (in *csvInput) report(p csvProblem) {
	if in.sink != nil {
		in.sink(p)
		return
	}
	in.apply(p)
}

func (in *csvInput) apply(p csvProblem) {
	if p.row {
		in.bad(p.line, p.field, "%s", p.text)
	} else {
		in.is.add(p.line, p.field, "%s", p.text)
	}
}

// newCSVInput reads r with the given format and line limit (bytes).
func newCSVInput(r io.Reader, format csvFormat, maxLine int, is *issues) *csvInput {
	br := bufio.NewReaderSize(r, 1<<16)
	if bom, err := br.Peek(3); err == nil && string(bom) == "\uFEFF" {
		br.Discard(3)
	}
	lr := &recordLimitReader{r: br, limit: maxLine}
	cr := csv.NewReader(lr)
	cr.Comma = format.comma()
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	in := &csvInput{format: format, cr: cr, limit: lr, is: is}
	in.bad = is.add
	return in
}

// readHeader reads the header line; example names the columns a header of
// this kind of file has, for the message about an empty file.
func (in *csvInput) readHeader(example string) bool {
	rec, ok := in.read(true)
	if !ok {
		if !in.stopped {
			in.is.add(1, "", "file is empty; the first line must be a header naming the columns, e.g. %s", example)
		}
		return false
	}
	in.headerLine = in.at
	for _, h := range rec {
		if !utf8.ValidString(h) {
			in.is.add(in.headerLine, "", "the header is not UTF-8 text; save the file as UTF-8 (\"CSV UTF-8\" in spreadsheet programs)")
			return false
		}
	}
	in.header = make([]string, len(rec))
	in.cols = map[string][]int{}
	for i, h := range rec {
		in.header[i] = strings.TrimSpace(h)
		if key := normalColumn(h); key != "" {
			in.cols[key] = append(in.cols[key], i)
		}
	}
	return true
}

// normalColumn is how header names are compared: trimmed, any case.
func normalColumn(s string) string { return strings.ToLower(strings.TrimSpace(s)) }

// column returns the position of the column named name (any case), -1
// when there is none; a name the header gives twice is reported (the
// reader cannot tell which column is meant) and gives -1 and false.
func (in *csvInput) column(name string) (int, bool) {
	at := in.cols[normalColumn(name)]
	switch len(at) {
	case 0:
		return -1, true
	case 1:
		return at[0], true
	}
	in.is.add(in.headerLine, "", "column %q appears twice in the header (columns %d and %d); rename one", in.header[at[0]], at[0]+1, at[1]+1)
	return -1, false
}

// oneColumn returns, when the header reads as a single column holding
// another likely delimiter, that delimiter.
func (in *csvInput) oneColumn() (rune, bool) {
	if len(in.header) != 1 {
		return 0, false
	}
	for _, d := range []rune{';', '\t', '|', ','} {
		if d != in.format.comma() && strings.ContainsRune(in.header[0], d) {
			return d, true
		}
	}
	return 0, false
}

// headerList quotes the header's names, for messages.
func (in *csvInput) headerList() string { return quotedList(in.header) }

// quotedList writes names quoted and comma-separated.
func quotedList(ss []string) string {
	q := make([]string, len(ss))
	for i, s := range ss {
		q[i] = strconv.Quote(s)
	}
	return strings.Join(q, ", ")
}

// next returns the next data record with as many fields as the header,
// all UTF-8, skipping blank records and reporting the others by line
// (through bad). It returns false at the end of the file or when reading
// cannot go on. The record is valid until the next call; in.line is
// where it starts.
func (in *csvInput) next() ([]string, bool) {
	rec, ok := in.nextRecord()
	in.line = in.at
	return rec, ok
}

// nextRecord is next without setting in.line, for reading ahead.
func (in *csvInput) nextRecord() ([]string, bool) {
	for {
		rec, ok := in.read(false)
		if !ok {
			return nil, false
		}
		if rec == nil || blankRecord(rec) {
			continue
		}
		in.records++
		if len(rec) != len(in.header) {
			d := delimiterName(in.format.comma())
			in.report(csvProblem{row: true, line: in.at, text: fmt.Sprintf("%d fields, the header has %d; check for a missing or extra %q, or a field with %q in it that needs quotes (or the delimiter setting)", len(rec), len(in.header), d, d)})
			continue
		}
		if i := invalidField(rec); i >= 0 {
			in.report(csvProblem{row: true, line: in.at, field: in.header[i], text: fmt.Sprintf("not UTF-8 text (column %d); save the file as UTF-8 (\"CSV UTF-8\" in spreadsheet programs)", i+1)})
			continue
		}
		return rec, true
	}
}

// readAhead is how many records each hands over at a time.
const readAhead = 1024

// each reads the data records on another goroutine, which also calls
// prepare on each (work that needs nothing but the record, such as
// checking a geometry: it must not touch shared state), and calls use with
// each record and what prepare made of it, in file order, on this
// goroutine, with in.line set; problems found while reading are reported
// in their place among use's. So reading and checking the records share
// two processors, and the result is the same as one record after another.
func (in *csvInput) each(prepare func(rec []string) any, use func(rec []string, prep any)) {
	type item struct {
		rec  []string
		line int
		prep any
		prob *csvProblem
	}
	batches := make(chan []item, 4)
	go func() {
		defer close(batches)
		batch := make([]item, 0, readAhead)
		// The batch's records share one slice of fields (encoding/csv
		// reuses its record's slice): one allocation per batch, not per
		// record.
		var fields []string
		in.sink = func(p csvProblem) { batch = append(batch, item{prob: &p}) }
		for {
			rec, ok := in.nextRecord()
			if !ok {
				break
			}
			if cap(fields)-len(fields) < len(rec) {
				fields = make([]string, 0, readAhead*len(rec))
			}
			start := len(fields)
			fields = append(fields, rec...)
			rec = fields[start:len(fields):len(fields)]
			it := item{rec: rec, line: in.at}
			if prepare != nil {
				it.prep = prepare(rec)
			}
			if batch = append(batch, it); len(batch) >= readAhead {
				batches <- batch
				batch = make([]item, 0, readAhead)
			}
		}
		if len(batch) > 0 {
			batches <- batch
		}
	}()
	for batch := range batches {
		for _, it := range batch {
			if it.prob != nil {
				in.apply(*it.prob)
				continue
			}
			in.line = it.line
			use(it.rec, it.prep)
		}
	}
	in.sink = nil
}

// read returns the next record, nil for one that could not be parsed (and
// was reported), or false at the end or when reading must stop.
func (in *csvInput) read(header bool) ([]string, bool) {
	if in.stopped {
		return nil, false
	}
	in.limit.startRecord()
	rec, err := in.cr.Read()
	if err == io.EOF {
		return nil, false
	}
	if err == nil {
		in.at, _ = in.cr.FieldPos(0)
		last, _ := in.cr.FieldPos(len(rec) - 1)
		in.nextLine = last + 1
		return rec, true
	}
	var pe *csv.ParseError
	var le *lineTooLong
	switch {
	case errors.As(err, &le):
		in.stopped = true
		if le.record {
			in.report(csvProblem{line: max(in.nextLine, 1), text: fmt.Sprintf("a quoted field opened on this line or after it runs on past %d bytes; a quote left open gathers the following lines into one field: close it, or double the quotes inside quoted fields", in.limit.limit)})
		} else {
			in.report(csvProblem{line: le.line, text: fmt.Sprintf("line is longer than %d bytes; is this a CSV text file? (a quote left open can also run on into the following lines)", in.limit.limit)})
		}
		return nil, false
	case errors.As(err, &pe):
		line := pe.StartLine
		if line == 0 {
			line = pe.Line
		}
		in.at = line
		if errors.Is(pe.Err, csv.ErrQuote) {
			// A quoted field not closed: encoding/csv has read on to the
			// end of the line or of the file; nothing after it is sure.
			in.stopped = pe.Line > line
			in.report(csvProblem{line: line, text: fmt.Sprintf("a quoted field opened on this line is not closed properly (reading stopped on line %d); every quoted field ends with a quote followed by the delimiter or the line end: check quotes in the line (a quote left open runs on into the following lines)", pe.Line)})
			return nil, !in.stopped
		}
		if header {
			in.report(csvProblem{line: line, text: csvErrText(pe)})
			in.stopped = true
			return nil, false
		}
		in.records++
		in.report(csvProblem{row: true, line: line, text: csvErrText(pe)})
		return nil, true
	}
	in.stopped = true
	in.report(csvProblem{text: fmt.Sprintf("cannot read the file: %v", err)})
	return nil, false
}

func csvErrText(pe *csv.ParseError) string {
	if errors.Is(pe.Err, csv.ErrBareQuote) {
		return `a quote (") inside a field without quotes around it; put the whole field in quotes and double the quotes inside, e.g. "Weir St ""north"""`
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

// invalidField returns the first field that is not UTF-8 text, or -1.
func invalidField(rec []string) int {
	for i, f := range rec {
		if !utf8.ValidString(f) {
			return i
		}
	}
	return -1
}

// Numbers.

var (
	errNotNumber = errors.New("not a number")
	// errDecimalComma: a number with a decimal comma in a file read with
	// decimal points.
	errDecimalComma = errors.New("decimal comma")
	// errDecimalPoint: a point in a number of a file read with decimal
	// commas (a decimal point, or a thousands separator).
	errDecimalPoint = errors.New("point with decimal commas")
)

// number reads a plain decimal number with the file's decimal mark: digits,
// one decimal mark, an optional sign and exponent. strconv alone would
// also take "inf", "nan", hex floats and underscores, which no spreadsheet
// writes; thousands separators are refused, since 1.234 means one thing
// with decimal points and another with decimal commas.
func (f csvFormat) number(s string) (float64, error) {
	plain, err := f.plain(s)
	if err != nil {
		return 0, err
	}
	v, err := strconv.ParseFloat(plain, 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, errNotNumber
	}
	return v, nil
}

// plain returns s with a decimal point, after checking it holds only what
// a number may.
func (f csvFormat) plain(s string) (string, error) {
	if s == "" {
		return "", errNotNumber
	}
	points, commas := 0, 0
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c >= '0' && c <= '9', c == '-', c == '+', c == 'e', c == 'E':
		case c == '.':
			points++
		case c == ',':
			commas++
		default:
			return "", errNotNumber
		}
	}
	if f.point() == ',' {
		switch {
		case points > 0:
			return "", errDecimalPoint
		case commas > 1:
			return "", errNotNumber
		}
		return strings.Replace(s, ",", ".", 1), nil
	}
	if commas > 0 {
		if commas == 1 && points == 0 {
			if _, err := strconv.ParseFloat(strings.Replace(s, ",", ".", 1), 64); err == nil {
				return "", errDecimalComma
			}
		}
		return "", errNotNumber
	}
	return s, nil
}

// numberHint says how to write a number that could not be read, or which
// setting reads it.
func (f csvFormat) numberHint(err error) string {
	switch {
	case errors.Is(err, errDecimalComma) && f.holder != "":
		return fmt.Sprintf(`it has a decimal comma: add decimal: "," to %s to read decimal commas (or write a point)`, f.holder)
	case errors.Is(err, errDecimalComma):
		return `it has a decimal comma: set the decimal mark to "," to read decimal commas (or write a point)`
	case errors.Is(err, errDecimalPoint):
		return "the file is read with decimal commas: write 1234,5, with no point and no thousands separator"
	case f.point() == ',':
		return "write a plain number such as 0,412 (no unit, no thousands separator, a comma for decimals)"
	}
	return "write a plain number such as 0.412 (no unit, no thousands separator, a point for decimals)"
}

// Limits on lines and records.

// lineTooLong is the error of a line (or, when record, a record of several
// lines) past the limit.
type lineTooLong struct {
	line   int
	record bool
}

func (e *lineTooLong) Error() string { return fmt.Sprintf("line %d too long", e.line) }

// recordLimitReader fails a read once a line, or all that was read since
// the current record started, grows past limit bytes, and counts lines.
// encoding/csv reads ahead by at most a buffer (4 KiB), so a record is
// stopped somewhat past the limit, never before it.
type recordLimitReader struct {
	r     io.Reader
	limit int
	line  int // current line, 1-based
	run   int // bytes since the last newline
	since int // bytes since the current record started
	err   error
}

func (l *recordLimitReader) startRecord() { l.since = 0 }

func (l *recordLimitReader) Read(p []byte) (int, error) {
	if l.err != nil {
		return 0, l.err
	}
	if l.line == 0 {
		l.line = 1
	}
	n, err := l.r.Read(p)
	l.since += n
	for i := 0; i < n; {
		k := bytes.IndexByte(p[i:n], '\n')
		if k < 0 {
			l.run += n - i
			break
		}
		if l.run+k > l.limit {
			l.run += k
			break
		}
		l.line++
		l.run = 0
		i += k + 1
	}
	switch {
	case l.run > l.limit:
		l.err = &lineTooLong{line: l.line}
	case l.since > l.limit+8<<10:
		l.err = &lineTooLong{line: l.line, record: true}
	}
	if l.err != nil {
		return 0, l.err
	}
	return n, err
}
