package scenarios

import (
	"strconv"
	"testing"
	"time"
)

// FuzzLastTreatedYear: a segment list's last_treated cell is read as empty
// (not known), a year or an ISO date, or refused with a message; a year is
// never returned with a message, nor one outside the calendar years wearplan
// accepts or not before the plan's first year.
func FuzzLastTreatedYear(f *testing.F) {
	for _, s := range []string{"", "2024", "2026", "2027", "1850", "2024-06-30", "2024-13-01", "14/08/2019", "last spring", "20x4", "+2024", "-2024", "02024", " 2024"} {
		f.Add(s)
	}
	const start = 2027
	f.Fuzz(func(t *testing.T, cell string) {
		year, msg := lastTreatedYear(cell, start)
		switch {
		case cell == "":
			if year != 0 || msg != "" {
				t.Fatalf("empty cell: %d %q", year, msg)
			}
		case msg != "":
			if year != 0 {
				t.Fatalf("%q: year %d with the message %q", cell, year, msg)
			}
		case year < minYear || year >= start:
			t.Fatalf("%q: year %d accepted for a plan starting in %d", cell, year, start)
		default:
			// Accepted: the cell is that year, or a date in it.
			d, err := time.Parse(time.DateOnly, cell)
			if v, aerr := strconv.Atoi(cell); (aerr != nil || v != year) && (err != nil || d.Year() != year) {
				t.Fatalf("%q read as %d", cell, year)
			}
		}
	})
}
