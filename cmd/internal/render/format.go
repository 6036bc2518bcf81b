// Package render writes scenario results as terminal tables, CSV and JSON.
// It only formats: every number it prints comes from a scenarios.Result.
package render

import (
	"math"
	"strconv"
	"strings"
)

// thousands formats v with d decimals and comma thousands separators.
func thousands(v float64, d int) string {
	if math.IsNaN(v) {
		return "-"
	}
	s := strconv.FormatFloat(math.Abs(v), 'f', d, 64)
	intPart, frac := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		intPart, frac = s[:i], s[i:]
	}
	var b strings.Builder
	if v < 0 && strings.Trim(s, "0.") != "" {
		b.WriteByte('-')
	}
	for i, c := range intPart {
		if i > 0 && (len(intPart)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	b.WriteString(frac)
	return b.String()
}

// Money formats an amount of money in whole currency units.
func Money(v float64) string { return thousands(v, 0) }

// Quantity formats a quantity with one decimal, or with two significant
// digits when it would otherwise print as 0.0.
func Quantity(v float64) string {
	if v != 0 && math.Abs(v) < 0.05 {
		return strconv.FormatFloat(v, 'g', 2, 64)
	}
	return thousands(v, 1)
}

// Percent formats a share (0-1) as a percentage with one decimal.
func Percent(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	return strconv.FormatFloat(100*v, 'f', 1, 64) + "%"
}

// Index formats an average index with the precision its scale needs: two
// decimals for small values (0-9 ratings), one for larger ones (0-100).
func Index(v float64) string {
	d := 1
	if math.Abs(v) < 10 {
		d = 2
	}
	return strconv.FormatFloat(v, 'f', d, 64)
}

// Plain formats a number for machine-readable output: the shortest form
// that reads back as the same float64, without an exponent (4000000, not
// 4e+06), and 0 for negative zero.
func Plain(v float64) string {
	if v == 0 {
		return "0"
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// SegmentQuantity formats a segment's quantity as inventories give it: up
// to three decimals, trailing zeros dropped (0.386 lane-km, 372 m2).
func SegmentQuantity(v float64) string {
	s := thousands(v, 3)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}

// Counted says whether a class's unit counts items (culverts "each")
// rather than measuring a quantity (lane-km, m2).
func Counted(unit string) bool {
	switch strings.ToLower(strings.TrimSpace(unit)) {
	case "each", "ea", "ea.", "item", "items", "no", "no.", "nr", "number", "count", "pcs":
		return true
	}
	return false
}

// UnitWord names a class's quantity in running text: the unit, or "items"
// for a counted unit ("share of lane-km", "share of items").
func UnitWord(unit string) string {
	if Counted(unit) {
		return "items"
	}
	return unit
}

// PerUnit writes a unit price's unit: "per lane-km", or "each" for a
// counted unit ("USD 38,000 each").
func PerUnit(unit string) string {
	if Counted(unit) {
		return "each"
	}
	return "per " + unit
}
