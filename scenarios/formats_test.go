package scenarios_test

import (
	"errors"
	"strings"
	"testing"
	"time"

	"wearplan/scenarios"
)

// Exports as many agencies write them: decimal commas, other delimiters,
// day-first dates. Each is read when the setting says so, and refused by
// line, naming the setting, when it does not. Invented data (Marrowby and
// Quernholt are invented towns).

func TestInventoryDecimalComma(t *testing.T) {
	csvText := "id;class;quantity;condition\n" +
		"R-1;roads;0,5;85,5\n" + // 85.5: Very good on the five-state scale (80-100)
		"R-2;roads;0,25;35\n" + // Poor (20-40)
		"R-3;roads;1,125;Fair\n" +
		"C-1;culverts;1;19,99\n" // Very poor (0-20)
	sc, err := loadWith(t, inventoryScenario(`, delimiter: ";", decimal: ","`), map[string][]byte{"segments.csv": []byte(csvText)})
	if err != nil {
		t.Fatal(err)
	}
	// Sums by hand from the rows above.
	wantRoads := []float64{0.5, 0, 1.125, 0.25, 0}
	for i, q := range sc.Classes[0].Initial {
		if q != wantRoads[i] {
			t.Errorf("roads state %d: %v, want %v", i, q, wantRoads[i])
		}
	}
	if sc.Classes[1].Initial[4] != 1 {
		t.Errorf("culverts %v, want 1 in Very poor", sc.Classes[1].Initial)
	}
	if got := sc.Classes[0].Segments[0].Index; got != 85.5 {
		t.Errorf("R-1's index %v, want 85.5", got)
	}

	// The same file without the setting: every value with a comma is
	// reported at its line, with the setting that reads it.
	_, err = loadWith(t, inventoryScenario(`, delimiter: ";"`), map[string][]byte{"segments.csv": []byte(csvText)})
	for _, w := range []wantIssue{
		{2, "quantity", `"0,5" is not a number (the quantity in lane-km); it has a decimal comma: add decimal: ","`},
		{2, "condition", `"85,5" is not a number; it has a decimal comma`},
		{3, "quantity", `"0,25" is not a number`},
		{4, "quantity", `"1,125" is not a number`},
		{5, "condition", `"19,99" is not a number`},
	} {
		if !findIssue(err, w, "segments.csv") {
			t.Errorf("no issue at line %d on %q containing %q in:\n%v", w.line, w.field, w.inMsg, err)
		}
	}

	// With decimal commas, a point is refused: 1.234 could be a thousands
	// separator.
	_, err = loadWith(t, inventoryScenario(`, delimiter: ";", decimal: ","`), map[string][]byte{"segments.csv": []byte("id;class;quantity;condition\nR-1;roads;1.234;50\n")})
	if !findIssue(err, wantIssue{2, "quantity", "read with decimal commas"}, "segments.csv") {
		t.Errorf("a point with decimal commas: %v", err)
	}
	_, err = loadWith(t, inventoryScenario(`, decimal: ";"`), map[string][]byte{"segments.csv": []byte(csvText)})
	if !findIssue(err, wantIssue{4, "inventory_csv.decimal", `the decimal mark is "." (the default) or ","`}, "scenario.yaml") {
		t.Errorf("a bad decimal setting: %v", err)
	}
}

func TestReadInspectionsDecimalCommaAndDayFirst(t *testing.T) {
	text := "asset;class;inspected;condition\n" +
		"A1;local-asphalt;2/7/2021;90,4\n" + // 2 July 2021; 90.4 is Good (86-100)
		"A1;local-asphalt;14/06/2022;84,5\n" + // 14 June; 84.5 is Satisfactory (71-85)
		"A1;local-asphalt;2023;70\n" // a year alone, mid-year
	dmy, err := scenarios.ParseDateFormat("DD/MM/YYYY")
	if err != nil {
		t.Fatal(err)
	}
	ins, err := readCSV(t, text, scenarios.InspectionOptions{Delimiter: ';', Decimal: ',', DateFormat: dmy})
	if err != nil {
		t.Fatal(err)
	}
	h := ins.Classes[0].Histories[0]
	// Day of the year from the standard library's calendar, independently
	// of the reader: 2021 is not a leap year, so a year has 365 days.
	yearDay := func(y int, m time.Month, d int) float64 {
		return float64(y) + float64(time.Date(y, m, d, 0, 0, 0, 0, time.UTC).YearDay()-1)/365
	}
	wantTimes := []float64{yearDay(2021, time.July, 2), yearDay(2022, time.June, 14), 2023.5}
	wantStates := []int{0, 1, 2}
	for k, in := range h {
		if d := in.Time - wantTimes[k]; d*d > 1e-20 || in.State != wantStates[k] {
			t.Errorf("inspection %d: time %v state %d, want %v and %d", k, in.Time, in.State, wantTimes[k], wantStates[k])
		}
	}

	// Without the settings: each value reported by line, with the setting
	// that reads it.
	_, err = readCSV(t, strings.ReplaceAll(text, ";", ","), scenarios.InspectionOptions{})
	var ie *scenarios.InputError
	if !errors.As(err, &ie) {
		t.Fatalf("want an input error, got %v", err)
	}
	_, err = readCSV(t, text, scenarios.InspectionOptions{Delimiter: ';'})
	for _, w := range []struct {
		line int
		msg  string
	}{
		{2, `inspected "2/7/2021" is not a year (2021) or an ISO date (2021-06-14); set the date format to DD/MM/YYYY or MM/DD/YYYY`},
		{3, `for dates written day first, set the date format to DD/MM/YYYY`},
	} {
		if !hasIssue(err, w.line, w.msg) {
			t.Errorf("no problem on line %d containing %q in:\n%v", w.line, w.msg, err)
		}
	}
	_, err = readCSV(t, text, scenarios.InspectionOptions{Delimiter: ';', DateFormat: dmy})
	if !hasIssue(err, 2, `condition "90,4" is not a number; it has a decimal comma: set the decimal mark to ","`) {
		t.Errorf("decimal comma without the setting: %v", err)
	}
	// A date that does not exist is refused in any format.
	_, err = readCSV(t, "asset;class;inspected;condition\nA1;local-asphalt;31/06/2022;80\n", scenarios.InspectionOptions{Delimiter: ';', DateFormat: dmy})
	if !hasIssue(err, 2, `inspected "31/06/2022" is not a year (2021) or a date in the format DD/MM/YYYY`) {
		t.Errorf("31 June: %v", err)
	}
}

func hasIssue(err error, line int, msg string) bool {
	var ie *scenarios.InputError
	if !errors.As(err, &ie) {
		return false
	}
	for _, is := range ie.Issues {
		if is.Line == line && strings.Contains(is.Msg, msg) {
			return true
		}
	}
	return false
}

func TestParseDateFormat(t *testing.T) {
	for _, c := range []struct {
		in, want string
		ok       bool
	}{
		{"", "ISO (YYYY-MM-DD)", true},
		{"iso", "ISO (YYYY-MM-DD)", true},
		{"DD/MM/YYYY", "DD/MM/YYYY", true},
		{"mm/dd/yyyy", "MM/DD/YYYY", true},
		{"DD.MM.YYYY", "DD.MM.YYYY", true},
		{"YYYY/MM/DD", "YYYY/MM/DD", true},
		{"D-M-YYYY", "DD-MM-YYYY", true},
		{"DD/MM/YY", "", false},
		{"DD/MM-YYYY", "", false},
		{"DD/DD/YYYY", "", false},
		{"DD/MM", "", false},
		{"DD/MM/YYYY/HH", "", false},
	} {
		t.Run(c.in, func(t *testing.T) {
			f, err := scenarios.ParseDateFormat(c.in)
			if (err == nil) != c.ok {
				t.Fatalf("err = %v, want ok %v", err, c.ok)
			}
			if c.ok && f.String() != c.want {
				t.Errorf("%q reads as %s, want %s", c.in, f, c.want)
			}
		})
	}
}

func TestParseDelimiterAndDecimal(t *testing.T) {
	for in, want := range map[string]rune{"": ',', ";": ';', "tab": '\t', `\t`: '\t', "|": '|'} {
		if got, err := scenarios.ParseDelimiter(in); err != nil || got != want {
			t.Errorf("delimiter %q: %q, %v; want %q", in, got, err, want)
		}
	}
	for _, bad := range []string{";;", `"`, "\n", "\ufeff"} {
		if _, err := scenarios.ParseDelimiter(bad); err == nil {
			t.Errorf("delimiter %q accepted", bad)
		}
	}
	for in, want := range map[string]rune{"": '.', ".": '.', ",": ','} {
		if got, err := scenarios.ParseDecimal(in); err != nil || got != want {
			t.Errorf("decimal %q: %q, %v; want %q", in, got, err, want)
		}
	}
	if _, err := scenarios.ParseDecimal(";"); err == nil {
		t.Error("decimal \";\" accepted")
	}
}
