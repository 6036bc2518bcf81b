package scenarios_test

import (
	"fmt"
	"strings"

	"wearplan/scenarios"
)

// An inspection export of four invented Marrowby culverts, rated by state
// name once a year (the work column is empty: no work between
// inspections), read through the demo scenario's five-state scale and
// fitted by counting. Of the four pairs starting Very good, three stayed;
// every other state's pairs all moved one state down.
func ExampleFit() {
	export := `asset,class,inspected,condition,work
C1,culverts,2021,Very good,
C1,culverts,2022,Very good,
C1,culverts,2023,Good,
C2,culverts,2021,Very good,
C2,culverts,2022,Very good,
C2,culverts,2023,Very good,
C3,culverts,2021,Good,
C3,culverts,2022,Fair,
C4,culverts,2021,Fair,
C4,culverts,2022,Poor,
C4,culverts,2023,Very poor,
`
	set, err := scenarios.LoadScaleSet("examples/marrowby.yaml")
	if err != nil {
		fmt.Println(err)
		return
	}
	ins, err := scenarios.ReadInspections(strings.NewReader(export), "culverts.csv", scenarios.InspectionOptions{ScaleFor: set.ForClass})
	if err != nil {
		fmt.Println(err)
		return
	}
	res, err := scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting})
	if err != nil {
		fmt.Println(err)
		return
	}
	c := res.Classes[0]
	fmt.Printf("%s: %d pairs used\n", c.Class, c.Data.Used)
	for i, row := range c.Deterioration.Matrix {
		fmt.Printf("%-9s %.2f\n", c.States[i], row)
	}
	// Output:
	// culverts: 7 pairs used
	// Very good [0.75 0.25 0.00 0.00 0.00]
	// Good      [0.00 0.00 1.00 0.00 0.00]
	// Fair      [0.00 0.00 0.00 1.00 0.00]
	// Poor      [0.00 0.00 0.00 0.00 1.00]
	// Very poor [0.00 0.00 0.00 0.00 1.00]
}
