package scenarios_test

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"math"
	"math/big"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"testing/fstest"

	"wearplan/scenarios"
)

// Inventory CSVs are read against a two-class scenario on the generic
// five-state preset (invented data; the town of Marrowby is invented).

const inventoryDir = "../testdata/bad-inventories"

// inventoryScenario names segments.csv at scenario level with the given
// extra inventory_csv options (e.g. ", delimiter: \";\"").
func inventoryScenario(options string) string {
	return `name: Marrowby inventory test (invented example)
start_year: 2030
horizon: 2
inventory_csv: {file: segments.csv` + options + `}
classes:
  - name: roads
    scale: preset:five-state
    unit: lane-km
    deterioration: {years_in_state: [4, 4, 4, 4]}
    treatments: []
  - name: culverts
    scale: preset:five-state
    unit: each
    deterioration: {years_in_state: [8, 6, 5, 4]}
    treatments: []
`
}

// loadWith loads scenario text with the given files beside it.
func loadWith(t *testing.T, scenario string, files map[string][]byte) (*scenarios.Scenario, error) {
	t.Helper()
	fsys := fstest.MapFS{"scenario.yaml": {Data: []byte(scenario)}}
	for name, data := range files {
		fsys[name] = &fstest.MapFile{Data: data}
	}
	return scenarios.Load(fsys, "scenario.yaml")
}

func readFixture(t *testing.T, name string) []byte {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(inventoryDir, name))
	if err != nil {
		t.Fatal(err)
	}
	return data
}

type wantIssue struct {
	line         int
	field, inMsg string
}

func findIssue(err error, w wantIssue, file string) bool {
	var ie *scenarios.InputError
	if !errors.As(err, &ie) {
		return false
	}
	for _, is := range ie.Issues {
		if is.File == file && is.Line == w.line && is.Field == w.field && strings.Contains(is.Msg, w.inMsg) {
			return true
		}
	}
	return false
}

func TestInventoryCorpusRefused(t *testing.T) {
	// What a user must be told about a broken segment export: the file, the
	// line and the column, and how to fix it (docs/scenario-format.md,
	// Segment lists: every problem with its line and column and what to do).
	for _, c := range []struct {
		file    string
		options string
		want    []wantIssue
	}{
		{"01-missing-id.csv", "", []wantIssue{{3, "id", "empty; every segment needs an id"}}},
		{"02-duplicate-id.csv", "", []wantIssue{{4, "id", `"R-001" is already used on line 2`}}},
		{"03-unknown-class.csv", "", []wantIssue{{4, "class", `unknown class "raods"; the scenario's classes are roads, culverts`}}},
		{"04-negative-quantity.csv", "", []wantIssue{{3, "quantity", "-0.250 is negative"}}},
		{"05-condition-outside-scale.csv", "", []wantIssue{{2, "condition", "104 is outside the preset:five-state scale, which runs 0 to 100"}}},
		{"06-non-numeric-quantity.csv", "", []wantIssue{{2, "quantity", `"0,412" is not a number`}}},
		{"07-empty-file.csv", "", []wantIssue{{1, "", "file is empty"}}},
		{"08-wrong-delimiter.csv", "", []wantIssue{{1, "", `add delimiter: ";" to inventory_csv`}}},
		{"09-missing-column.csv", "", []wantIssue{{1, "", `no column "condition"`}}},
		{"10-extra-field.csv", "", []wantIssue{{5, "", "6 fields, the header has 5"}}},
		{"11-unknown-state-name.csv", "", []wantIssue{{3, "condition", `"Fairish" is neither a number nor a state`}}},
		{"12-not-utf8.csv", "", []wantIssue{{4, "", "not UTF-8 text; save the file as UTF-8"}}},
		{"13-bare-quote.csv", "", []wantIssue{{3, "", "put the whole field in quotes"}}},
		{"14-bad-wkt.csv", "", []wantIssue{{3, "wkt", "not WKT geometry"}}},
		{"15-header-only.csv", "", []wantIssue{{1, "", "no segment rows"}}},
		{"16-empty-condition.csv", "", []wantIssue{{3, "condition", "skip_unrated: true"}}},
		{"17-quantity-with-unit.csv", "", []wantIssue{{3, "quantity", `"0.25 km" is not a number`}}},
		{"18-priority-not-number.csv", ", priority: aadt", []wantIssue{{3, "aadt", `"n/a" is not a number`}, {4, "aadt", "empty, and the priority expression uses it"}}},
		{"19-unclosed-quote.csv", "", []wantIssue{{2, "", "not closed properly"}}},
	} {
		t.Run(c.file, func(t *testing.T) {
			_, err := loadWith(t, inventoryScenario(c.options), map[string][]byte{"segments.csv": readFixture(t, c.file)})
			var ie *scenarios.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("want an input error, got %v", err)
			}
			for _, w := range c.want {
				if !findIssue(err, w, "segments.csv") {
					t.Errorf("no issue at segments.csv:%d on %q containing %q in:\n%v", w.line, w.field, w.inMsg, err)
				}
			}
			if strings.Contains(err.Error(), "panic") || strings.Contains(err.Error(), "goroutine") {
				t.Errorf("error reads like a crash: %v", err)
			}
		})
	}
}

// fiveState is the generic five-state scale as the test knows it (best
// first, 0-100 in 20-point bands); a value on a shared end counts in the
// worse state, as the scenario file documentation says.
var fiveState = []struct {
	name     string
	min, max float64
}{{"Very good", 80, 100}, {"Good", 60, 80}, {"Fair", 40, 60}, {"Poor", 20, 40}, {"Very poor", 0, 20}}

// independentSums aggregates a CSV by class and state with exact rational
// arithmetic, separately from the package: encoding/csv for the fields,
// big.Rat for the sums.
func independentSums(t *testing.T, data []byte, comma rune) map[string][]*big.Rat {
	t.Helper()
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	r := csv.NewReader(bytes.NewReader(data))
	r.Comma = comma
	r.FieldsPerRecord = -1
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[strings.ToLower(strings.TrimSpace(h))] = i
	}
	out := map[string][]*big.Rat{}
	for _, row := range rows[1:] {
		if strings.TrimSpace(strings.Join(row, "")) == "" {
			continue
		}
		class := strings.ToLower(strings.TrimSpace(row[col["class"]]))
		if out[class] == nil {
			out[class] = make([]*big.Rat, len(fiveState))
			for i := range out[class] {
				out[class][i] = new(big.Rat)
			}
		}
		cond := strings.TrimSpace(row[col["condition"]])
		state := -1
		for i, s := range fiveState {
			if strings.EqualFold(s.name, cond) {
				state = i
			}
		}
		if state < 0 {
			v, ok := new(big.Rat).SetString(cond)
			if !ok {
				t.Fatalf("condition %q", cond)
			}
			f, _ := v.Float64()
			for i := len(fiveState) - 1; i >= 0; i-- {
				if f >= fiveState[i].min && f <= fiveState[i].max {
					state = i
					break
				}
			}
		}
		q, ok := new(big.Rat).SetString(strings.TrimSpace(row[col["quantity"]]))
		if !ok {
			t.Fatalf("quantity %q", row[col["quantity"]])
		}
		out[class][state].Add(out[class][state], q)
	}
	return out
}

func TestInventoryCorpusAccepted(t *testing.T) {
	// What users expect a CSV reader to take: a UTF-8 byte-order mark
	// (spreadsheet programs write one; common practice, no source), CRLF
	// line ends and quoted fields with separators, doubled quotes and line
	// breaks inside (RFC 4180), another delimiter when told, header names in
	// any case with spaces, blank lines.
	for _, c := range []struct {
		file    string
		options string
		comma   rune
	}{
		{"a1-bom.csv", "", ','},
		{"a2-crlf.csv", "", ','},
		{"a3-quoted.csv", "", ','},
		{"a4-semicolon.csv", `, delimiter: ";"`, ';'},
		{"a5-case-spaces-blank-lines.csv", "", ','},
	} {
		t.Run(c.file, func(t *testing.T) {
			data := readFixture(t, c.file)
			sc, err := loadWith(t, inventoryScenario(c.options), map[string][]byte{"segments.csv": data})
			if err != nil {
				t.Fatal(err)
			}
			want := independentSums(t, data, c.comma)
			for _, cl := range sc.Classes {
				for i, q := range cl.Initial {
					w, _ := want[cl.Name][i].Float64()
					if q != w {
						t.Errorf("%s %s: %v, the CSV sums to %v", cl.Name, cl.Scale.States[i].Name, q, w)
					}
				}
				if cl.Inventory == nil || cl.Inventory.File != "segments.csv" {
					t.Errorf("%s: inventory source %+v", cl.Name, cl.Inventory)
				}
			}
			if n := len(sc.Classes[0].Segments) + len(sc.Classes[1].Segments); n != 5 {
				t.Errorf("%d segments, want the 5 rows", n)
			}
		})
	}
	// Quoted names come through whole.
	sc, err := loadWith(t, inventoryScenario(""), map[string][]byte{"segments.csv": readFixture(t, "a3-quoted.csv")})
	if err != nil {
		t.Fatal(err)
	}
	names := []string{}
	for _, s := range sc.Classes[0].Segments {
		names = append(names, s.Name)
	}
	if got := strings.Join(names, "|"); got != `Alder Row, Kiln St to Weir St|Brackenfold "upper" Lane|Cinder Walk`+"\n"+`continued on a second line` {
		t.Errorf("names %q", got)
	}
}

func TestInventoryExactSums(t *testing.T) {
	// Decimal quantities add up exactly whatever the row order: 0.1 ten
	// times is 1, where adding binary floats gives 0.9999999999999999 (IEEE
	// 754 cannot hold 0.1; common practice, no source).
	var b strings.Builder
	b.WriteString("id,class,quantity,condition\n")
	naive := 0.0
	for i := range 10 {
		fmt.Fprintf(&b, "R-%d,roads,0.1,90\n", i)
		naive += 0.1
	}
	b.WriteString("C-1,culverts,1,10\n")
	if naive == 1 {
		t.Fatal("the float sum is exact here; the check would prove nothing")
	}
	sc, err := loadWith(t, inventoryScenario(""), map[string][]byte{"segments.csv": []byte(b.String())})
	if err != nil {
		t.Fatal(err)
	}
	if got := sc.Classes[0].Initial[0]; got != 1 {
		t.Errorf("ten segments of 0.1 add up to %v, want exactly 1", got)
	}
}

func TestInventoryClassLevelAndSummary(t *testing.T) {
	csvText := "id,class,quantity,condition,aadt\n" +
		"R-1,roads,0.5,85,12000\n" +
		"R-2,roads,0.25,Poor,800\n" +
		"R-3,roads,0,50,100\n" + // zero quantity: left out, counted
		"R-4,roads,0.75,,100\n" + // unrated: left out with skip_unrated, counted
		"C-1,culverts,1,45,300\n"
	text := strings.Replace(inventoryScenario(""), "inventory_csv: {file: segments.csv}\n", "", 1)
	text = strings.Replace(text, "    unit: lane-km\n", "    unit: lane-km\n    inventory_csv: {file: segments.csv, skip_unrated: true, priority: \"aadt / 1000 + (100 - condition)\"}\n", 1)
	text = strings.Replace(text, "    unit: each\n", "    unit: each\n    inventory: {Fair: 3}\n", 1)
	sc, err := loadWith(t, text, map[string][]byte{"segments.csv": []byte(csvText)})
	if err != nil {
		t.Fatal(err)
	}
	roads := sc.Classes[0]
	if len(roads.Segments) != 2 {
		t.Fatalf("%d road segments, want R-1 and R-2", len(roads.Segments))
	}
	inv := roads.Inventory
	if inv.Rows != 5 || inv.OtherClass != 1 || inv.ZeroQuantity != 1 || inv.Unrated != 1 {
		t.Errorf("summary rows %d, other class %d, zero %d, unrated %d; want 5, 1, 1, 1", inv.Rows, inv.OtherClass, inv.ZeroQuantity, inv.Unrated)
	}
	// PCI-like 85 is Very good on the five-state scale (80-100); Poor by name.
	if roads.Initial[0] != 0.5 || roads.Initial[3] != 0.25 {
		t.Errorf("roads inventory %v", roads.Initial)
	}
	// The priority is the expression's value: 12000/1000 + (100-85) = 27;
	// for a state name, condition is the state's representative value
	// (Poor: 30): 0.8 + 70 = 70.8.
	if p := roads.Segments[0].Priority; math.Abs(p-27) > 1e-12 {
		t.Errorf("R-1 priority %v, want 27", p)
	}
	if p := roads.Segments[1].Priority; math.Abs(p-70.8) > 1e-12 {
		t.Errorf("R-2 priority %v, want 70.8", p)
	}
	if sc.Classes[1].Segments != nil || sc.Classes[1].Initial[2] != 3 {
		t.Errorf("culverts keep their inline inventory: %v", sc.Classes[1].Initial)
	}
	if len(sc.Inventories) != 1 || sc.Inventories[0].Classes[0].Segments != 2 || sc.Inventories[0].Classes[0].Quantity != 0.75 {
		t.Errorf("inventories %+v", sc.Inventories)
	}
}

func TestInventoryScenarioProblems(t *testing.T) {
	good := []byte("id,class,quantity,condition\nR-1,roads,1,90\nC-1,culverts,1,50\n")
	for _, c := range []struct {
		name   string
		text   string
		files  map[string][]byte
		line   int
		field  string
		inMsg  string
		inFile string
	}{
		{"outside the folder", strings.Replace(inventoryScenario(""), "file: segments.csv", "file: ../segments.csv", 1), nil, 4, "inventory_csv.file", "inside the scenario's folder", "scenario.yaml"},
		{"not found", inventoryScenario(""), map[string][]byte{}, 4, "inventory_csv.file", "file not found", "scenario.yaml"},
		{"both forms in a class", strings.Replace(inventoryScenario(""), "    unit: each\n", "    unit: each\n    inventory: {Fair: 3}\n    inventory_csv: other.csv\n", 1), map[string][]byte{"segments.csv": good}, 15, "classes[1] (culverts).inventory_csv", "not both", "scenario.yaml"},
		{"a class without rows", inventoryScenario(""), map[string][]byte{"segments.csv": []byte("id,class,quantity,condition\nR-1,roads,1,90\n")}, 4, "inventory_csv", `no segments of class "culverts"`, "scenario.yaml"},
		{"unknown priority column", inventoryScenario(", priority: traffic * 2"), map[string][]byte{"segments.csv": good}, 4, "inventory_csv.priority", `refers to "traffic", which is not a column`, "scenario.yaml"},
		{"priority not a number", inventoryScenario(`, priority: "condition > 3"`), map[string][]byte{"segments.csv": good}, 4, "inventory_csv.priority", "must give a number", "scenario.yaml"},
		{"bad delimiter", inventoryScenario(`, delimiter: ";;"`), map[string][]byte{"segments.csv": good}, 4, "inventory_csv.delimiter", "give one character", "scenario.yaml"},
		{"mapped column missing", inventoryScenario(", columns: {quantity: lane_km}"), map[string][]byte{"segments.csv": good}, 1, "", `no column "lane_km"`, "segments.csv"},
		{"unknown option", inventoryScenario(", skip_unrate: true"), map[string][]byte{"segments.csv": good}, 4, "inventory_csv.skip_unrate", `did you mean "skip_unrated"`, "scenario.yaml"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := loadWith(t, c.text, c.files)
			if !findIssue(err, wantIssue{c.line, c.field, c.inMsg}, c.inFile) {
				t.Errorf("no issue at %s:%d on %q containing %q in:\n%v", c.inFile, c.line, c.field, c.inMsg, err)
			}
		})
	}
	// From memory (Parse) a scenario cannot name files.
	if _, err := scenarios.Parse("mem.yaml", []byte(inventoryScenario(""))); err == nil || !strings.Contains(err.Error(), "not read from a file") {
		t.Errorf("Parse with inventory_csv: %v", err)
	}
}

func TestInventoryIssuesAreCapped(t *testing.T) {
	// A file that is wrong throughout (every quantity with its unit) lists
	// the first problems and counts the rest, instead of one line per row.
	var b strings.Builder
	b.WriteString("id,class,quantity,condition\n")
	for i := range 80 {
		fmt.Fprintf(&b, "R-%d,roads,%d km,90\n", i, i+1)
	}
	_, err := loadWith(t, inventoryScenario(""), map[string][]byte{"segments.csv": []byte(b.String())})
	var ie *scenarios.InputError
	if !errors.As(err, &ie) {
		t.Fatalf("want an input error, got %v", err)
	}
	if len(ie.Issues) > 60 || !strings.Contains(err.Error(), "and 30 more problems") {
		t.Errorf("%d issues listed; want 50 and a count of the other 30:\n%.500s", len(ie.Issues), err)
	}
}
