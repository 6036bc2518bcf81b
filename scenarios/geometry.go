package scenarios

import (
	"fmt"
	"math"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/encoding/wkt"
)

// Bounds on a WKT cell: the parser's work grows with the square of the
// nesting depth, and no geometry a segment list carries nests deeper than
// a collection of multipolygons (four levels of parentheses).
const (
	maxWKTDepth = 8
	maxWKTBytes = 1 << 20
)

// checkWKT says what is wrong with a WKT cell, or "" when it is empty or a
// geometry whose coordinates are all finite numbers.
func checkWKT(s string) string {
	if s == "" {
		return ""
	}
	if len(s) > maxWKTBytes {
		return fmt.Sprintf("WKT of %d bytes; a segment's geometry is at most %d bytes: simplify it", len(s), maxWKTBytes)
	}
	depth, deepest := 0, 0
	for i := 0; i < len(s); i++ {
		switch s[i] {
		case '(':
			depth++
			deepest = max(deepest, depth)
		case ')':
			depth--
		}
	}
	if deepest > maxWKTDepth {
		return fmt.Sprintf("parentheses nested %d deep; WKT geometry nests at most %d deep (a collection of multipolygons needs 4)", deepest, maxWKTDepth)
	}
	g, err := wkt.Unmarshal(s)
	if err != nil {
		return fmt.Sprintf("not WKT geometry (%v); write e.g. LINESTRING (lon lat, lon lat) or POINT (lon lat), or leave it empty", err)
	}
	if !finiteGeometry(g) {
		return "a coordinate is not a finite number (NaN or infinite); write numbers such as LINESTRING (-1.5 53.2, -1.49 53.21)"
	}
	return ""
}

// finiteGeometry says whether every coordinate of g is a finite number.
func finiteGeometry(g orb.Geometry) bool {
	finite := func(ps ...orb.Point) bool {
		for _, p := range ps {
			if math.IsNaN(p[0]) || math.IsInf(p[0], 0) || math.IsNaN(p[1]) || math.IsInf(p[1], 0) {
				return false
			}
		}
		return true
	}
	switch g := g.(type) {
	case orb.Point:
		return finite(g)
	case orb.MultiPoint:
		return finite(g...)
	case orb.LineString:
		return finite(g...)
	case orb.Ring:
		return finite(g...)
	case orb.MultiLineString:
		for _, l := range g {
			if !finite(l...) {
				return false
			}
		}
	case orb.Polygon:
		for _, r := range g {
			if !finite(r...) {
				return false
			}
		}
	case orb.MultiPolygon:
		for _, p := range g {
			if !finiteGeometry(p) {
				return false
			}
		}
	case orb.Collection:
		for _, c := range g {
			if !finiteGeometry(c) {
				return false
			}
		}
	case orb.Bound:
		return finite(g.Min, g.Max)
	}
	return true
}
