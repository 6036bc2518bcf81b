package render

import (
	"bytes"
	"encoding/csv"
	"testing"
)

func TestSheetSafe(t *testing.T) {
	// OWASP's "CSV Injection" page lists =, +, -, @, tab and carriage
	// return as the characters that start a formula in spreadsheet
	// programs, and a leading apostrophe as the way to store the cell as
	// text (from memory). Numbers, negative ones included, must stay
	// numbers.
	for _, c := range []struct{ in, want string }{
		{"=HYPERLINK(\"http://x\",\"y\")", "'=HYPERLINK(\"http://x\",\"y\")"},
		{"+1+2", "'+1+2"},
		{"-2+3", "'-2+3"},
		{"@SUM(A1)", "'@SUM(A1)"},
		{"\tx", "'\tx"},
		{"\rx", "'\rx"},
		{"-Inf", "'-Inf"},
		{"-12.5", "-12.5"},
		{"+3", "+3"},
		{"-1e-05", "-1e-05"},
		{"-.5", "-.5"},
		{"-", "'-"},
		{"Kiln Street", "Kiln Street"},
		{"", ""},
		{"a=b", "a=b"},
	} {
		t.Run(c.in, func(t *testing.T) {
			rows := sheetSafe([][]string{{c.in}})
			if rows[0][0] != c.want {
				t.Errorf("%q became %q, want %q", c.in, rows[0][0], c.want)
			}
		})
	}
	// Through a CSV writer and back, the apostrophe is part of the cell.
	var b bytes.Buffer
	cw := csv.NewWriter(&b)
	if err := cw.WriteAll(sheetSafe([][]string{{"=1+1", "-3"}})); err != nil {
		t.Fatal(err)
	}
	got, err := csv.NewReader(&b).ReadAll()
	if err != nil || got[0][0] != "'=1+1" || got[0][1] != "-3" {
		t.Errorf("read back %q (%v)", got, err)
	}
}
