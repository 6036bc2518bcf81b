package scenarios

import (
	"fmt"
	"math"
	"strings"
)

// Pieces: a simulation moves each class as pieces that deteriorate
// independently of each other. The spread of a class's shares comes from
// how many pieces it has (n pieces, each poor with chance p, give a poor
// share with standard deviation sqrt(p(1-p)/n)), so the pieces should be
// the size the class is managed in: a road section, a footpath block, a
// deck, one culvert. A class with a segment list moves segment by segment;
// a class typed as quantities is cut into pieces of its segment_size, or
// else of the default size of its unit below.

// Bounds on the number of pieces of a class.
const (
	// MaxDefaultPieces is the most pieces a class is cut into by default:
	// a class too large for its unit's default size is cut into larger
	// pieces (the next size of 1, 2 or 5 times a power of ten).
	MaxDefaultPieces = 5000
	// ManyPieces and FewPieces are the counts beyond which a simulation
	// warns: more than ManyPieces independent pieces make bands that are
	// likely too narrow, fewer than FewPieces make shares move in coarse
	// steps.
	ManyPieces = 10000
	FewPieces  = 20
)

// unitPiece is the default piece size of one kind of unit.
type unitPiece struct {
	// names are the unit's spellings, lower case, without spaces.
	names []string
	size  float64
	// what says what a piece of that size is, for the output.
	what string
}

// unitPieces are the default piece sizes per unit kind: the size of the
// pieces such assets are commonly managed in (common practice; an
// agency's own sections are better, through segment_size or a segment
// list).
var unitPieces = []unitPiece{
	{[]string{"lane-km", "lanekm", "km", "kilometre", "kilometres", "kilometer", "kilometers", "centreline-km", "centerline-km", "lane-kilometre", "lane-kilometres", "lane-kilometer", "lane-kilometers"}, 0.5, "a road section of about 250 m of two lanes"},
	{[]string{"lane-mi", "lane-mile", "lane-miles", "lanemi", "mi", "mile", "miles", "centerline-mi", "centerline-mile", "centerline-miles"}, 0.25, "a road section of about 200 m of two lanes"},
	{[]string{"m", "metre", "metres", "meter", "meters", "lane-m", "linear-m", "lm", "m-of-pipe"}, 100, "a length between junctions or manholes"},
	{[]string{"ft", "foot", "feet", "lf", "linear-ft", "linear-feet"}, 300, "a length between junctions or manholes"},
	{[]string{"m2", "m²", "sqm", "sq-m", "square-metre", "square-metres", "square-meter", "square-meters"}, 500, "a bridge deck or a footpath block"},
	{[]string{"ft2", "ft²", "sqft", "sq-ft", "sf", "square-foot", "square-feet"}, 5000, "a bridge deck or a sidewalk block"},
	{[]string{"each", "ea", "no", "no.", "nr", "number", "item", "items", "unit", "units", "asset", "assets", "structure", "structures"}, 1, "one asset"},
}

// normalUnit writes a unit the way unitPieces lists it: lower case, runs
// of spaces and underscores as one hyphen.
func normalUnit(unit string) string {
	f := strings.FieldsFunc(strings.ToLower(strings.TrimSpace(unit)), func(r rune) bool { return r == ' ' || r == '_' || r == '\t' })
	return strings.Join(f, "-")
}

// pieceCount is the number of pieces a class's quantities make with
// pieces of size L: per state floor(q/L) pieces of L and one smaller piece
// for any remainder above 1e-9·L (CutLots).
func pieceCount(initial []float64, size float64) int {
	n := 0.0
	for _, q := range initial {
		n += math.Ceil(q/size - 1e-9)
	}
	return int(math.Min(n, math.MaxInt32))
}

// DefaultSegmentSize returns the size of the pieces a class typed as
// quantities (no segment list, no segment_size) is cut into, with the rule
// that chose it in words: the default size of its unit (unitPieces); for a
// unit not listed there, the size that cuts the class into about 1,000
// pieces; and in either case, when that makes more than MaxDefaultPieces
// pieces, the smallest size of 1, 2 or 5 times a power of ten that makes
// at most MaxDefaultPieces.
func DefaultSegmentSize(unit string, initial []float64) (float64, string) {
	total := 0.0
	for _, q := range initial {
		total += q
	}
	nu := normalUnit(unit)
	size, rule := 0.0, ""
	for _, up := range unitPieces {
		for _, name := range up.names {
			if name == nu {
				size = up.size
				rule = fmt.Sprintf("the default for %s, %s", unit, up.what)
			}
		}
	}
	if size == 0 {
		size = roundUp125(total / 1000)
		rule = fmt.Sprintf("no default for unit %q: about 1,000 pieces", unit)
	}
	if pieceCount(initial, size) > MaxDefaultPieces {
		for size = roundUp125(math.Max(size, total/MaxDefaultPieces)); pieceCount(initial, size) > MaxDefaultPieces; size = roundUp125(size * 1.5) {
		}
		rule += ", enlarged so that the class has at most 5,000 pieces"
	}
	return size, rule
}

// roundUp125 returns the smallest number of the form 1, 2 or 5 times a
// power of ten that is at least v (v > 0).
func roundUp125(v float64) float64 {
	if !(v > 0) || math.IsInf(v, 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(v)))
	for _, m := range []float64{1, 2, 5, 10} {
		// Relative slack, so that 0.5 stays 0.5 despite rounding in Log10.
		if m*p >= v*(1-1e-12) {
			return m * p
		}
	}
	return 10 * p
}

// pieceWarning says what a class's piece count means when it is outside
// FewPieces..ManyPieces, or "" inside.
func pieceWarning(c *Class, n int) string {
	switch {
	case n > ManyPieces:
		return fmt.Sprintf("class %q moves as %d pieces, more than %d: so many independent pieces make its bands too narrow to trust (real assets share weather, traffic and contractors); give the class a segment_size (or the run a piece size) the size of the pieces it is managed in", c.Name, n, ManyPieces)
	case n < FewPieces:
		return fmt.Sprintf("class %q moves as %d pieces, fewer than %d: its shares move in steps of about 1/%d of the class, so its percentiles are coarse; that is real if the class has so few assets, otherwise give segment_size the size of the pieces it is managed in", c.Name, n, FewPieces, max(n, 1))
	}
	return ""
}
