package render

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/encoding/wkt"

	"wearplan/scenarios"
)

// WorklistText writes a worklist as terminal tables: the segments per
// year, the check against the plan, notes and the caution.
func WorklistText(w io.Writer, wl *scenarios.Worklist) error {
	ew := &errWriter{w: w}
	last := wl.StartYear + wl.Years - 1
	span := fmt.Sprint(wl.StartYear)
	if last != wl.StartYear {
		span = fmt.Sprintf("%d-%d", wl.StartYear, last)
	}
	ew.printf("%s\nWorklist %s from the plan (status %s): %d segments listed\n", wl.Scenario, span, wl.Status, len(wl.Items))
	cur := wl.Currency
	if cur == "" {
		cur = "currency units"
	}
	for y := wl.StartYear; y <= last; y++ {
		basis := "the plan's work on today's condition"
		if y > wl.StartYear {
			basis = "indicative: placed from expected condition"
		}
		ew.printf("\n%d (%s; cost in %s at that year's prices)\n", y, basis, cur)
		t := table{header: []string{"SEGMENT", "NAME", "CLASS", "STATE", "TREATMENT", "QUANTITY", "UNIT", "COST"}, right: []bool{false, false, false, false, false, true, false, true}}
		for _, it := range wl.Items {
			if it.Year == y {
				t.rows = append(t.rows, []string{it.Segment, it.Name, it.Class, it.State, it.Treatment, SegmentQuantity(it.Quantity), it.Unit, Money(it.Cost)})
			}
		}
		if len(t.rows) == 0 {
			t.rows = append(t.rows, []string{"-", "no work listed", "", "", "", "", "", ""})
		}
		tabulate(ew, t)
	}
	ew.printf("\nPlan against list (per year, class, state and treatment; the list may differ from the plan by up to the tolerance:\nthe largest segment of the state, two for indicative years)\n")
	t := table{header: []string{"YEAR", "CLASS", "STATE", "TREATMENT", "PLANNED", "LISTED", "SEGMENTS", "TOLERANCE", "UNIT", "WITHIN"}, right: []bool{false, false, false, false, true, true, true, true, false, false}}
	for _, c := range wl.Checks {
		ok := "yes"
		if !c.Within() {
			ok = "NO"
		}
		t.rows = append(t.rows, []string{fmt.Sprint(c.Year), c.Class, c.State, c.Treatment, Quantity(c.Planned), Quantity(c.Listed), fmt.Sprint(c.Segments), Quantity(c.Tolerance), c.Unit, ok})
	}
	if len(t.rows) == 0 {
		t.rows = append(t.rows, []string{"-", "no work planned", "", "", "", "", "", "", "", ""})
	}
	tabulate(ew, t)
	for _, warn := range wl.Warnings {
		ew.printf("\nNote: %s\n", warn)
	}
	ew.printf("\n%s\n", wrap(wl.Caution, 100))
	return ew.err
}

// WorklistCSV writes one row per segment and year, keyed by segment id so
// that it joins back onto the inventory in a GIS.
func WorklistCSV(w io.Writer, wl *scenarios.Worklist) error {
	cw := csv.NewWriter(w)
	cur := strings.ToLower(wl.Currency)
	if cur == "" {
		cur = "currency"
	}
	rows := [][]string{{"segment_id", "year", "basis", "class", "name", "state", "condition", "treatment", "quantity", "unit", "cost_" + cur, "rank", "priority", "inventory_line"}}
	opt := func(v *float64) string {
		if v == nil {
			return ""
		}
		return Plain(*v)
	}
	for _, it := range wl.Items {
		rows = append(rows, []string{it.Segment, fmt.Sprint(it.Year), it.Basis, it.Class, it.Name, it.State, opt(it.Condition), it.Treatment,
			Plain(it.Quantity), it.Unit, Plain(it.Cost), fmt.Sprint(it.Rank), opt(it.Priority), fmt.Sprint(it.Line)})
	}
	if err := cw.WriteAll(sheetSafe(rows)); err != nil {
		return err
	}
	return cw.Error()
}

// WorklistJSON writes the worklist with its checks.
func WorklistJSON(w io.Writer, wl *scenarios.Worklist) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(wl)
}

// geoJSONGeometry is a GeoJSON geometry object (RFC 7946): orb's geometry
// types encode to GeoJSON coordinates as they are.
type geoJSONGeometry struct {
	Type        string            `json:"type"`
	Coordinates orb.Geometry      `json:"coordinates,omitempty"`
	Geometries  []geoJSONGeometry `json:"geometries,omitempty"`
}

func toGeoJSON(g orb.Geometry) geoJSONGeometry {
	if c, ok := g.(orb.Collection); ok {
		out := geoJSONGeometry{Type: c.GeoJSONType(), Geometries: []geoJSONGeometry{}}
		for _, part := range c {
			out.Geometries = append(out.Geometries, toGeoJSON(part))
		}
		return out
	}
	if b, ok := g.(orb.Bound); ok {
		g = b.ToPolygon()
	}
	return geoJSONGeometry{Type: g.GeoJSONType(), Coordinates: g}
}

type geoJSONFeature struct {
	Type       string           `json:"type"`
	ID         string           `json:"id"`
	Geometry   *geoJSONGeometry `json:"geometry"`
	Properties map[string]any   `json:"properties"`
}

// WorklistGeoJSON writes the worklist as a GeoJSON FeatureCollection (RFC
// 7946), one feature per segment and year, with the geometry of the
// inventory's WKT or lon/lat columns (coordinates as written: GeoJSON
// readers expect longitude and latitude in WGS 84). The scenario name and
// the caution are foreign members of the collection.
func WorklistGeoJSON(w io.Writer, wl *scenarios.Worklist) error {
	features := make([]geoJSONFeature, 0, len(wl.Items))
	for _, it := range wl.Items {
		f := geoJSONFeature{Type: "Feature", ID: it.Segment, Properties: map[string]any{
			"segment_id": it.Segment, "year": it.Year, "basis": it.Basis, "class": it.Class, "name": it.Name, "state": it.State,
			"treatment": it.Treatment, "quantity": it.Quantity, "unit": it.Unit, "cost": it.Cost, "rank": it.Rank,
		}}
		switch {
		case it.WKT != "":
			g, err := wkt.Unmarshal(it.WKT)
			if err != nil {
				return fmt.Errorf("segment %s (%s:%d): geometry: %w", it.Segment, it.File, it.Line, err)
			}
			gj := toGeoJSON(g)
			f.Geometry = &gj
		case it.Lon != nil:
			gj := toGeoJSON(orb.Point{*it.Lon, *it.Lat})
			f.Geometry = &gj
		}
		features = append(features, f)
	}
	doc := struct {
		Type     string           `json:"type"`
		Name     string           `json:"name"`
		Caution  string           `json:"caution"`
		Features []geoJSONFeature `json:"features"`
	}{"FeatureCollection", wl.Scenario, wl.Caution, features}
	enc := json.NewEncoder(w)
	return enc.Encode(doc)
}
