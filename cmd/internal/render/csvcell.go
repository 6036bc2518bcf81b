package render

import "strings"

// sheetSafe returns the rows with every cell that a spreadsheet program
// would take for a formula written as text: a leading apostrophe (the
// common practice that Excel, LibreOffice and Google Sheets read as "this
// cell is text" and do not show), before a cell that starts with =, +, -,
// @, a tab or a carriage return and is not a number. A name such as
// "=HYPERLINK(...)" in an inventory then reaches the spreadsheet as text
// instead of running; negative numbers stay numbers. Cells are changed in
// place.
func sheetSafe(rows [][]string) [][]string {
	for _, row := range rows {
		for i, cell := range row {
			if formulaLike(cell) {
				row[i] = "'" + cell
			}
		}
	}
	return rows
}

func formulaLike(cell string) bool {
	if cell == "" {
		return false
	}
	switch cell[0] {
	case '=', '+', '-', '@', '\t', '\r':
		return !plainNumber(cell)
	}
	return false
}

// plainNumber says whether s is a decimal number as renderers write them:
// a sign, digits with at most one point, and an optional exponent (no
// "Inf", no hex, which a spreadsheet would not read as numbers).
func plainNumber(s string) bool {
	if s[0] == '-' || s[0] == '+' {
		s = s[1:]
	}
	mantissa, exp, hasExp := strings.Cut(strings.ToLower(s), "e")
	whole, frac, _ := strings.Cut(mantissa, ".")
	digits := func(t string) bool {
		for i := 0; i < len(t); i++ {
			if t[i] < '0' || t[i] > '9' {
				return false
			}
		}
		return true
	}
	if whole+frac == "" || !digits(whole) || !digits(frac) {
		return false
	}
	if hasExp {
		exp = strings.TrimLeft(exp, "+-")
		return exp != "" && digits(exp)
	}
	return true
}
