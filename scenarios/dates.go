package scenarios

import (
	"fmt"
	"strconv"
	"strings"
	"time"
)

// DateFormat says how the dates of an export are written: the order of
// day, month and year and the character between them. The zero value is
// ISO 8601 (2021-06-14). Whatever the format, a year alone (2021, taken as
// mid-year) and an ISO date are read too, and a time after the date (after
// a space or a T) is ignored.
type DateFormat struct {
	// order holds 'D', 'M' and 'Y' in the order written; sep separates
	// them. Zero for ISO.
	order [3]byte
	sep   byte
}

// ParseDateFormat reads a date-format setting: "" or "ISO" for ISO dates,
// or DD, MM and YYYY in any order with one separator among / . - and
// space, such as DD/MM/YYYY (day first), MM/DD/YYYY or DD.MM.YYYY. Days
// and months may be written with one digit or two in the data.
func ParseDateFormat(s string) (DateFormat, error) {
	t := strings.ToUpper(strings.TrimSpace(s))
	if t == "" || t == "ISO" || t == "YYYY-MM-DD" {
		return DateFormat{}, nil
	}
	bad := fmt.Errorf("%q: write the date format as DD/MM/YYYY (day first), MM/DD/YYYY, DD.MM.YYYY, YYYY/MM/DD or ISO (2021-06-14), with / . - or a space between the parts", s)
	var f DateFormat
	for i, part := range strings.FieldsFunc(t, func(r rune) bool { return strings.ContainsRune("/.- ", r) }) {
		if i > 2 {
			return DateFormat{}, bad
		}
		switch part {
		case "DD", "D":
			f.order[i] = 'D'
		case "MM", "M":
			f.order[i] = 'M'
		case "YYYY":
			f.order[i] = 'Y'
		default:
			return DateFormat{}, bad
		}
	}
	seps := strings.Trim(t, "DMY")
	if f.order[2] == 0 || len(seps) == 0 || !strings.ContainsRune("/.- ", rune(seps[0])) || strings.Count(t, seps[:1]) != 2 {
		return DateFormat{}, bad
	}
	f.sep = seps[0]
	if !strings.ContainsRune(string(f.order[:]), 'D') || !strings.ContainsRune(string(f.order[:]), 'M') || !strings.ContainsRune(string(f.order[:]), 'Y') {
		return DateFormat{}, bad
	}
	return f, nil
}

// String writes the format as the setting is written.
func (f DateFormat) String() string {
	if f.sep == 0 {
		return "ISO (YYYY-MM-DD)"
	}
	parts := make([]string, 3)
	for i, c := range f.order {
		parts[i] = map[byte]string{'D': "DD", 'M': "MM", 'Y': "YYYY"}[c]
	}
	return strings.Join(parts, string(f.sep))
}

// parse reads an inspected cell as a time in years (2021-06-14 is 2021 +
// 164/365), or says what is wrong.
func (f DateFormat) parse(text string) (float64, string) {
	t := strings.TrimSpace(text)
	if t == "" {
		return 0, "inspected is empty; give the year (2021) or the date (" + f.example() + ")"
	}
	if len(t) == 4 {
		y, err := strconv.Atoi(t)
		if err != nil {
			return 0, f.bad(t)
		}
		if y < minYear || y > maxYear {
			return 0, fmt.Sprintf("inspected year %d is not plausible; give the year (2021) or the date (%s)", y, f.example())
		}
		return float64(y) + 0.5, ""
	}
	if i := strings.IndexAny(t, " T"); i >= 8 {
		t = t[:i] // a time after the date
	}
	d, ok := time.Time{}, false
	if len(t) == 10 && t[4] == '-' && t[7] == '-' {
		var err error
		d, err = time.Parse("2006-01-02", t)
		ok = err == nil
	} else if f.sep != 0 {
		d, ok = f.parseDate(t)
	}
	if !ok {
		return 0, f.bad(t)
	}
	y := d.Year()
	if y < minYear || y > maxYear {
		return 0, fmt.Sprintf("inspected year %d is not plausible; give the year (2021) or the date (%s)", y, f.example())
	}
	days := 365.0
	if time.Date(y, 12, 31, 0, 0, 0, 0, time.UTC).YearDay() == 366 {
		days = 366
	}
	return float64(y) + float64(d.YearDay()-1)/days, ""
}

// parseDate reads a date written in the format, checking that the day
// exists (no 31 June).
func (f DateFormat) parseDate(t string) (time.Time, bool) {
	parts := strings.Split(t, string(f.sep))
	if len(parts) != 3 {
		return time.Time{}, false
	}
	var day, month, year int
	for i, p := range parts {
		width := map[byte]int{'D': 2, 'M': 2, 'Y': 4}[f.order[i]]
		if len(p) == 0 || len(p) > width || (f.order[i] == 'Y' && len(p) != 4) {
			return time.Time{}, false
		}
		v, err := strconv.Atoi(p)
		if err != nil || v < 0 || strings.ContainsAny(p, "+-") {
			return time.Time{}, false
		}
		switch f.order[i] {
		case 'D':
			day = v
		case 'M':
			month = v
		case 'Y':
			year = v
		}
	}
	d := time.Date(year, time.Month(month), day, 0, 0, 0, 0, time.UTC)
	if month < 1 || month > 12 || day < 1 || d.Day() != day {
		return time.Time{}, false
	}
	return d, true
}

func (f DateFormat) example() string {
	if f.sep == 0 {
		return "ISO, 2021-06-14"
	}
	d := time.Date(2021, 6, 14, 0, 0, 0, 0, time.UTC)
	parts := make([]string, 3)
	for i, c := range f.order {
		switch c {
		case 'D':
			parts[i] = fmt.Sprintf("%02d", d.Day())
		case 'M':
			parts[i] = fmt.Sprintf("%02d", int(d.Month()))
		case 'Y':
			parts[i] = strconv.Itoa(d.Year())
		}
	}
	return strings.Join(parts, string(f.sep))
}

// bad says that t is not a date, and which setting would read it when it
// looks like a date written day first or month first.
func (f DateFormat) bad(t string) string {
	if f.sep != 0 {
		return fmt.Sprintf("inspected %q is not a year (2021) or a date in the format %s (%s) or ISO (2021-06-14)", t, f, f.example())
	}
	msg := fmt.Sprintf("inspected %q is not a year (2021) or an ISO date (2021-06-14)", t)
	for _, sep := range "/.-" {
		parts := strings.Split(t, string(sep))
		if len(parts) != 3 || len(parts[2]) != 4 {
			continue
		}
		a, errA := strconv.Atoi(parts[0])
		b, errB := strconv.Atoi(parts[1])
		if errA != nil || errB != nil || a < 1 || b < 1 || a > 31 || b > 31 {
			continue
		}
		s := string(sep)
		switch {
		case a > 12:
			return msg + fmt.Sprintf("; for dates written day first, set the date format to DD%sMM%sYYYY", s, s)
		case b > 12:
			return msg + fmt.Sprintf("; for dates written month first, set the date format to MM%sDD%sYYYY", s, s)
		}
		return msg + fmt.Sprintf("; set the date format to DD%sMM%sYYYY or MM%sDD%sYYYY, as the export writes its dates", s, s, s, s)
	}
	return msg
}
