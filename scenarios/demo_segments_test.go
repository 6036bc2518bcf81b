package scenarios_test

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// The demo's segment list, scenarios/examples/marrowby-segments-invented.csv,
// is INVENTED data made by demoSegments below. Marrowby, its streets,
// structures, traffic counts and conditions are all made up; the
// coordinates put the town in open sea on purpose, so that it can never be
// mistaken for a real place.
//
// Regenerate it (after changing the generator) with
//
//	WEARPLAN_WRITE_DEMO=1 go test ./scenarios -run TestDemoSegmentsFile
//
// The generator lays out segments so that, per class and state, their
// quantities add up exactly to demoInventory, the inventory the demo
// scenario gave inline before it read a segment list: the demo's plan is
// the same either way.

const demoSegmentsFile = "examples/marrowby-segments-invented.csv"

// demoClassSpec says how to cut one class into segments.
type demoClassSpec struct {
	class, prefix string
	states        []string
	// quantities per state in thousandths of a unit (exact integers).
	thousandths []int64
	// segment sizes in thousandths, min and max, in steps of step.
	minSize, maxSize, step int64
	// condition range per state: index values [lo, hi], or a state name.
	lo, hi []int
	byName bool
	// streets the segments lie along; lanes per street for roads.
	streets []string
	lanes   int64
	aadtLo  int
	aadtHi  int
	road    bool
	// lastTreated bounds, per state, the years between the segment's last
	// treatment and the plan's start (0, 0: not known), and known is the
	// chance in percent that a segment of the state has a year at all.
	lastLo, lastHi []int64
	known          []int64
}

// demoInventory is the demo's inventory per class and state (invented).
func demoInventory() []demoClassSpec {
	k := func(vs ...float64) []int64 {
		out := make([]int64, len(vs))
		for i, v := range vs {
			out[i] = int64(math.Round(v * 1000))
		}
		return out
	}
	demoPCI := []string{"Good", "Satisfactory", "Fair", "Poor", "Very poor", "Serious", "Failed"}
	pciLo := []int{86, 71, 56, 41, 26, 11, 0}
	pciHi := []int{100, 85, 70, 55, 40, 25, 10}
	// Years since the last work: recent in the best states, long ago in
	// the worst, and more often not known down the scale.
	roadLastLo := []int64{1, 2, 5, 8, 10, 12, 15}
	roadLastHi := []int64{6, 9, 12, 15, 18, 22, 25}
	roadKnown := []int64{90, 85, 75, 65, 55, 45, 35}
	arterials := []string{"Marrow Road", "Tannery Way", "Kilnbridge Road", "Fettle Street", "Sluice Avenue", "Furrow Road", "Quernstone Way", "Wharf Parade"}
	var locals []string
	for _, a := range []string{"Alder", "Bracken", "Cinder", "Damson", "Elver", "Fallow", "Gorse", "Hazel", "Ivy", "Juniper", "Kestrel", "Larch", "Medlar", "Nettle", "Osier", "Pippin", "Quince", "Rowan", "Sorrel", "Teasel", "Umber", "Vetch", "Willow", "Yarrow"} {
		for _, b := range []string{"Lane", "Row"} {
			locals = append(locals, a+" "+b)
		}
	}
	return []demoClassSpec{
		{class: "arterial-asphalt", prefix: "ART", states: demoPCI, thousandths: k(40, 45, 38, 25, 17, 10, 5),
			minSize: 150, maxSize: 800, step: 1, lo: pciLo, hi: pciHi, streets: arterials, lanes: 4, aadtLo: 8000, aadtHi: 30000, road: true,
			lastLo: roadLastLo, lastHi: roadLastHi, known: roadKnown},
		{class: "local-asphalt", prefix: "LOC", states: demoPCI, thousandths: k(70, 95, 110, 72, 40, 22, 11),
			minSize: 60, maxSize: 300, step: 1, lo: pciLo, hi: pciHi, streets: locals, lanes: 2, aadtLo: 150, aadtHi: 3000, road: true,
			lastLo: roadLastLo, lastHi: roadLastHi, known: roadKnown},
		{class: "bridge-decks", prefix: "BRD", states: []string{"Good (7-9)", "Satisfactory (6)", "Fair (5)", "Poor (4)", "Serious (3)", "Critical (0-2)"},
			thousandths: k(5200, 3900, 2700, 1600, 800, 300), minSize: 80_000, maxSize: 700_000, step: 1000,
			lo: []int{7, 6, 5, 4, 3, 0}, hi: []int{9, 6, 5, 4, 3, 2}, streets: arterials, aadtLo: 800, aadtHi: 26000,
			lastLo: []int64{1, 3, 6, 8, 10, 12}, lastHi: []int64{9, 12, 16, 20, 25, 30}, known: []int64{90, 80, 70, 60, 50, 40}},
		{class: "culverts", prefix: "CUL", states: []string{"Very good", "Good", "Fair", "Poor", "Very poor"},
			thousandths: k(38, 52, 41, 20, 9), minSize: 1000, maxSize: 1000, step: 1000, byName: true, streets: locals, aadtLo: 100, aadtHi: 6000,
			lastLo: []int64{1, 1, 2, 3, 4}, lastHi: []int64{4, 6, 8, 10, 12}, known: []int64{70, 60, 50, 40, 30}},
	}
}

// splitmix64 is a small fixed pseudo-random generator, so that the file
// does not change with the Go version's random number code.
type splitmix64 uint64

func (s *splitmix64) next() uint64 {
	*s += 0x9e3779b97f4a7c15
	z := uint64(*s)
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// between returns a whole number in [lo, hi].
func (s *splitmix64) between(lo, hi int64) int64 { return lo + int64(s.next()%uint64(hi-lo+1)) }

// demoStartYear is the demo scenario's start_year, from which the last
// treatment years are counted back.
const demoStartYear = 2027

// Marrowby's invented origin, in open sea (lon, lat in degrees).
const demoLon, demoLat = -30.42, -41.17

// demoSegments generates the segment list.
func demoSegments() []byte {
	rng := splitmix64(20270101)
	// The last treatments come from a stream of their own, so that the
	// columns before them are the same as before they were added.
	last := splitmix64(20270115)
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	w.Write([]string{"id", "class", "name", "quantity", "condition", "aadt", "wkt", "last_treated"})
	coord := func(v float64) string { return strconv.FormatFloat(v, 'f', 6, 64) }
	kmLat := 1 / 111.32
	kmLon := 1 / (111.32 * math.Cos(demoLat*math.Pi/180))
	for ci, spec := range demoInventory() {
		// Cut each state's quantity into segments, then shuffle them so that
		// condition varies along the streets.
		type piece struct {
			state int
			size  int64
		}
		var pieces []piece
		for st, total := range spec.thousandths {
			left := total
			for left > 0 {
				size := rng.between(spec.minSize/spec.step, spec.maxSize/spec.step) * spec.step
				if left-size < spec.minSize {
					size = left
				}
				pieces = append(pieces, piece{st, size})
				left -= size
			}
		}
		for i := len(pieces) - 1; i > 0; i-- {
			j := int(rng.between(0, int64(i)))
			pieces[i], pieces[j] = pieces[j], pieces[i]
		}
		// Lay the pieces end to end along the streets: street s runs
		// east-west when even, north-south when odd, 250 m apart, offset a
		// little per class.
		perStreet := (len(pieces) + len(spec.streets) - 1) / len(spec.streets)
		along := 0.0
		for n, p := range pieces {
			s := n / perStreet
			if n%perStreet == 0 {
				along = 0
			}
			name := spec.streets[s%len(spec.streets)]
			across, start := float64(s/2)*0.5+float64(ci)*0.03, float64(ci)*0.1
			pos := func(d float64) (float64, float64) {
				if s%2 == 1 {
					return demoLon + across*kmLon, demoLat + (start+d)*kmLat
				}
				return demoLon + (start+d)*kmLon, demoLat + across*kmLat
			}
			qty := fmt.Sprintf("%d.%03d", p.size/1000, p.size%1000)
			if spec.step == 1000 {
				qty = fmt.Sprint(p.size / 1000)
			}
			var geom, label string
			if spec.road {
				length := float64(p.size) / 1000 / float64(spec.lanes)
				ax, ay := pos(along)
				bx, by := pos(along + length)
				along += length
				geom = fmt.Sprintf("LINESTRING (%s %s, %s %s)", coord(ax), coord(ay), coord(bx), coord(by))
				label = fmt.Sprintf("%s, block %d", name, n%perStreet+1)
			} else {
				along += 0.4
				ax, ay := pos(along)
				geom = fmt.Sprintf("POINT (%s %s)", coord(ax), coord(ay))
				what := "deck"
				if spec.class == "culverts" {
					what = "culvert"
				}
				label = fmt.Sprintf("%s %s %d", name, what, n%perStreet+1)
			}
			cond := spec.states[p.state]
			if !spec.byName {
				cond = fmt.Sprint(rng.between(int64(spec.lo[p.state]), int64(spec.hi[p.state])))
			}
			aadt := rng.between(int64(spec.aadtLo), int64(spec.aadtHi))
			treated := ""
			if last.between(1, 100) <= spec.known[p.state] {
				treated = fmt.Sprint(demoStartYear - last.between(spec.lastLo[p.state], spec.lastHi[p.state]))
			}
			w.Write([]string{fmt.Sprintf("%s-%04d", spec.prefix, n+1), spec.class, label, qty, cond, fmt.Sprint(aadt), geom, treated})
		}
	}
	w.Flush()
	return b.Bytes()
}

func TestDemoSegmentsFile(t *testing.T) {
	want := demoSegments()
	if os.Getenv("WEARPLAN_WRITE_DEMO") == "1" {
		if err := os.WriteFile(demoSegmentsFile, want, 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("wrote %s (%d bytes)", demoSegmentsFile, len(want))
	}
	got, err := os.ReadFile(demoSegmentsFile)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Fatalf("%s is not what the generator makes; regenerate it with WEARPLAN_WRITE_DEMO=1 go test ./scenarios -run TestDemoSegmentsFile", demoSegmentsFile)
	}
	if rows := bytes.Count(got, []byte("\n")) - 1; rows < 2000 {
		t.Errorf("%d rows; the demo list should have a few thousand", rows)
	}
}

func TestDemoInventoryFromSegments(t *testing.T) {
	// The demo reads its inventory from the segment list; per class and
	// state the quantities are exactly the ones the generator was given (the
	// inline inventory the demo had before), so the demo's plan is unchanged.
	sc := loadDemo(t)
	specs := demoInventory()
	if len(sc.Classes) != len(specs) {
		t.Fatalf("%d classes, the generator has %d", len(sc.Classes), len(specs))
	}
	for k, spec := range specs {
		c := sc.Classes[k]
		if c.Name != spec.class || c.Inventory == nil || filepath.Base(c.Inventory.File) != filepath.Base(demoSegmentsFile) {
			t.Fatalf("class %d is %s from %+v, want %s from %s", k, c.Name, c.Inventory, spec.class, demoSegmentsFile)
		}
		for i, st := range spec.states {
			if c.Scale.States[i].Name != st {
				t.Fatalf("%s: state %d is %s, want %s", c.Name, i, c.Scale.States[i].Name, st)
			}
			if want := float64(spec.thousandths[i]) / 1000; c.Initial[i] != want {
				t.Errorf("%s %s: %v, want exactly %v", c.Name, st, c.Initial[i], want)
			}
		}
	}
	if !strings.Contains(string(demoSegments()[:200]), "id,class,name,quantity,condition,aadt,wkt") {
		t.Error("header changed")
	}
}
