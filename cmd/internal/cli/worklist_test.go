package cli

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

const demoSegments = "../../../scenarios/examples/marrowby-segments-invented.csv"

func TestWorklistDemoTable(t *testing.T) {
	code, out, errs := run(t, "worklist", demo)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"Worklist 2027", "SEGMENT", "Plan against list", "confirm each segment", "Planning estimate only"} {
		if !strings.Contains(out, want) {
			t.Errorf("worklist output lacks %q", want)
		}
	}
	if strings.Contains(out, " NO ") {
		t.Errorf("a check is outside its tolerance:\n%s", out[strings.Index(out, "Plan against"):])
	}
}

func TestWorklistCSVKeyedBySegment(t *testing.T) {
	code, out, errs := run(t, "worklist", demo, "--years", "3", "--format", "csv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if rows[0][0] != "segment_id" {
		t.Fatalf("first column %q, want segment_id (the GIS join key)", rows[0][0])
	}
	// Every listed id is a row of the inventory, with the inventory's
	// quantity; at most once per year.
	inv, err := os.ReadFile(demoSegments)
	if err != nil {
		t.Fatal(err)
	}
	invRows, err := csv.NewReader(bytes.NewReader(inv)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	quantity := map[string]string{}
	for _, r := range invRows[1:] {
		quantity[r[0]] = r[3]
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	seen := map[string]bool{}
	years := map[string]bool{}
	for _, r := range rows[1:] {
		id, year := r[col["segment_id"]], r[col["year"]]
		q, ok := quantity[id]
		if !ok {
			t.Fatalf("segment %s is not in the inventory", id)
		}
		a, _ := strconv.ParseFloat(q, 64)
		b, _ := strconv.ParseFloat(r[col["quantity"]], 64)
		if a != b {
			t.Errorf("%s: quantity %v, the inventory says %v", id, b, a)
		}
		if seen[id+"/"+year] {
			t.Errorf("%s listed twice in %s", id, year)
		}
		seen[id+"/"+year] = true
		years[year+" "+r[col["basis"]]] = true
	}
	if !years["2027 plan"] || !years["2028 indicative"] || !years["2029 indicative"] {
		t.Errorf("years and bases listed: %v", years)
	}
}

func TestWorklistGeoJSON(t *testing.T) {
	code, out, errs := run(t, "worklist", demo, "--format", "geojson")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	// The shape RFC 7946 gives a FeatureCollection: features with a
	// geometry object (type and coordinates, positions [longitude,
	// latitude]) and properties.
	var doc struct {
		Type     string `json:"type"`
		Caution  string `json:"caution"`
		Features []struct {
			Type     string `json:"type"`
			ID       string `json:"id"`
			Geometry struct {
				Type        string          `json:"type"`
				Coordinates json.RawMessage `json:"coordinates"`
			} `json:"geometry"`
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Type != "FeatureCollection" || len(doc.Features) == 0 || !strings.Contains(doc.Caution, "inspection") {
		t.Fatalf("type %q, %d features, caution %q", doc.Type, len(doc.Features), doc.Caution)
	}
	for _, f := range doc.Features {
		var positions [][2]float64
		switch f.Geometry.Type {
		case "Point":
			var p [2]float64
			if err := json.Unmarshal(f.Geometry.Coordinates, &p); err != nil {
				t.Fatalf("%s: %v", f.ID, err)
			}
			positions = [][2]float64{p}
		case "LineString":
			if err := json.Unmarshal(f.Geometry.Coordinates, &positions); err != nil {
				t.Fatalf("%s: %v", f.ID, err)
			}
		default:
			t.Fatalf("%s: geometry type %q", f.ID, f.Geometry.Type)
		}
		for _, p := range positions {
			if p[0] < -180 || p[0] > 180 || p[1] < -90 || p[1] > 90 {
				t.Errorf("%s: position %v is not longitude, latitude", f.ID, p)
			}
		}
		if f.Type != "Feature" || f.Properties["segment_id"] != f.ID || f.Properties["treatment"] == "" {
			t.Errorf("feature %s: %+v", f.ID, f.Properties)
		}
	}
}

func TestWorklistDeterministicAndAtomic(t *testing.T) {
	for _, format := range []string{"table", "csv", "json", "geojson"} {
		_, a, _ := run(t, "worklist", demo, "--years", "2", "--format", format)
		_, b, _ := run(t, "worklist", demo, "--years", "2", "--format", format)
		if a != b || a == "" {
			t.Errorf("%s: output differs between two runs", format)
		}
	}
	dir := t.TempDir()
	out := filepath.Join(dir, "list.csv")
	code, _, errs := run(t, "worklist", demo, "--format", "csv", "--out", out)
	if code != 0 || !strings.Contains(errs, "segments listed") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 1 {
		t.Errorf("files left: %v", entries)
	}
}

func TestWorklistRefuses(t *testing.T) {
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	noGeometry := strings.Replace(string(data), "  priority: aadt\n", "  priority: aadt\n  columns: {wkt: no_such_geometry}\n", 1)
	// A segment list without geometry columns (invented rows).
	dir := t.TempDir()
	plain := filepath.Join(dir, "plain.yaml")
	small, err := os.ReadFile("../../../testdata/marrowby-small.yaml")
	if err != nil {
		t.Fatal(err)
	}
	scenario := strings.Replace(string(small), "classes:\n", "inventory_csv: plain.csv\nclasses:\n", 1)
	for _, line := range strings.Split(scenario, "\n") {
		if strings.Contains(line, "inventory: {") {
			scenario = strings.Replace(scenario, line+"\n", "", 1)
		}
	}
	var rows strings.Builder
	rows.WriteString("id,class,quantity,condition\n")
	for i := range 40 {
		fmt.Fprintf(&rows, "L%d,local-asphalt,0.%d5,%d\nC%d,culverts,1,%d\n", i, i%9+1, (i*37)%100, i, (i*53)%100)
	}
	for name, text := range map[string]string{plain: scenario, filepath.Join(dir, "plain.csv"): rows.String()} {
		if err := os.WriteFile(name, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if code, _, errs := run(t, "worklist", plain, "--format", "csv"); code != 0 {
		t.Fatalf("the list without geometry does not plan: exit %d: %s", code, errs)
	}
	for _, c := range []struct {
		name string
		args []string
		msg  string
	}{
		{"no years", []string{"worklist", demo, "--years", "0"}, "--years 0"},
		{"past the horizon", []string{"worklist", demo, "--years", "21"}, "between 1 and 20"},
		{"unknown format", []string{"worklist", demo, "--format", "xlsx"}, "choose one of table, csv, json, geojson"},
		{"inline inventory", []string{"worklist", "../../../testdata/marrowby-small.yaml"}, "no class has a segment list"},
		{"no geometry for geojson", []string{"worklist", plain, "--format", "geojson"}, "the inventory has no geometry"},
		{"geometry column missing", []string{"worklist", demoCopy(t, "m.yaml", noGeometry), "--format", "geojson"}, `no column "no_such_geometry"`},
	} {
		code, out, errs := run(t, c.args...)
		if code != exitInput || !strings.Contains(errs, c.msg) || out != "" {
			t.Errorf("%s: exit %d, stdout %d bytes, stderr:\n%s", c.name, code, len(out), errs)
		}
	}
}

func TestCheckSummarisesInventory(t *testing.T) {
	code, out, errs := run(t, "check", demo)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	inv, err := os.ReadFile(demoSegments)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(inv)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	perClass := map[string]int{}
	for _, r := range rows[1:] {
		perClass[r[1]]++
	}
	n := len(rows) - 1 // a few thousand: written with a thousands comma
	want := []string{fmt.Sprintf("inventory marrowby-segments-invented.csv: %d,%03d rows read", n/1000, n%1000), "geometry: WKT", "priority: aadt"}
	for class, n := range perClass {
		want = append(want, fmt.Sprintf("%s %d segments", class, n))
	}
	for _, w := range want {
		if !strings.Contains(out, w) {
			t.Errorf("check output lacks %q:\n%s", w, out)
		}
	}
}
