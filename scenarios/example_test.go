package scenarios_test

import (
	"fmt"
	"testing/fstest"

	"wearplan/scenarios"
)

// A class on the PCI preset reads its segments from a CSV; the condition
// column holds PCI values, placed in the seven ASTM D6433 rating classes.
// (Invented data: the town of Marrowby and its streets are invented.)
func ExampleLoad_inventoryCSV() {
	fsys := fstest.MapFS{
		"roads.yaml": {Data: []byte(`name: Marrowby lanes (invented example)
start_year: 2027
horizon: 5
classes:
  - name: lanes
    scale: preset:pci-astm-d6433
    unit: lane-km
    replacement_cost: 600000
    inventory_csv: lanes.csv
    deterioration: {years_in_state: [5, 5, 4, 4, 4, 3]}
    treatments: []
`)},
		"lanes.csv": {Data: []byte("id,quantity,condition,name\n" +
			"L1,0.40,92,Tallow Lane\nL2,0.25,86,Pike Row\nL3,0.30,85.5,Pike Row\nL4,0.50,40,Quern Street\n")},
	}
	sc, err := scenarios.Load(fsys, "roads.yaml")
	if err != nil {
		fmt.Println(err)
		return
	}
	c := sc.Classes[0]
	for i, st := range c.Scale.States {
		if c.Initial[i] > 0 {
			fmt.Printf("%s (%s): %g %s\n", st.Name, c.Scale.Group[i], c.Initial[i], c.Unit)
		}
	}
	inv := sc.Inventories[0]
	fmt.Printf("%s: %d rows, %d segments of %s\n", inv.File, inv.Rows, inv.Classes[0].Segments, inv.Classes[0].Class)
	// Output:
	// Good (good): 0.65 lane-km
	// Satisfactory (good): 0.3 lane-km
	// Very Poor (poor): 0.5 lane-km
	// lanes.csv: 4 rows, 4 segments of lanes
}

// The plan's first-year work, assigned to whole segments in priority order
// (here the busiest first). Of the 0.5 lane-km of Poor to overlay, Quern
// Street (0.3) is listed and Pike Row (0.5) is not: its midpoint lies past
// the planned 0.5, and segments are never split.
func ExampleMakeWorklist() {
	fsys := fstest.MapFS{
		"lanes.yaml": {Data: []byte(`name: Marrowby lanes (invented example)
start_year: 2027
horizon: 3
classes:
  - name: lanes
    scale: preset:five-state
    unit: lane-km
    replacement_cost: 600000
    inventory_csv: {file: lanes.csv, priority: aadt}
    deterioration: {years_in_state: [5, 4, 4, 3]}
    treatments: [overlay]
treatments:
  - {name: overlay, applies_to: [Fair, Poor, Very poor], cost: 100000, effect: {to: Very good}}
budget:
  yearly: 100000
`)},
		"lanes.csv": {Data: []byte("id,quantity,condition,aadt,name\n" +
			"L1,0.40,92,900,Tallow Lane\nL2,0.50,35,300,Pike Row\nL3,0.30,30,4000,Quern Street\n" +
			"L4,0.50,15,2500,Kiln Street\nL5,0.60,55,1200,Weir Street\n")},
	}
	sc, err := scenarios.Load(fsys, "lanes.yaml")
	if err != nil {
		fmt.Println(err)
		return
	}
	plan, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	w, err := scenarios.MakeWorklist(sc, plan, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, c := range w.Checks {
		fmt.Printf("plan: %s %.2f %s of %s\n", c.Treatment, c.Planned, c.Unit, c.State)
	}
	for _, it := range w.Items {
		fmt.Printf("%d %s %s (%s): %s %.2f %s\n", it.Year, it.Segment, it.Name, it.State, it.Treatment, it.Quantity, it.Unit)
	}
	// Output:
	// plan: overlay 0.50 lane-km of Poor
	// plan: overlay 0.50 lane-km of Very poor
	// 2027 L3 Quern Street (Poor): overlay 0.30 lane-km
	// 2027 L4 Kiln Street (Very poor): overlay 0.50 lane-km
}
