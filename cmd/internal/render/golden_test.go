package render_test

import (
	"bytes"
	"flag"
	"path/filepath"
	"testing"

	"wearplan/cmd/internal/goldentest"
	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

var update = flag.Bool("update", false, "rewrite the golden files of the renderers (go test ./cmd/internal/render -run Golden -update)")

// keswold is an invented water utility (two budget groups, counted
// assets, routine costs, targets the budget cannot meet).
const keswold = "../../../testdata/keswold-utility.yaml"

// golden compares got with testdata/golden/name, or rewrites it with
// -update.
func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	goldentest.Compare(t, filepath.Join("testdata", "golden", name), got, *update, "go test ./cmd/internal/render -run Golden -update")
}

func TestGoldenRenderers(t *testing.T) {
	sc, err := scenarios.LoadFile(keswold)
	if err != nil {
		t.Fatal(err)
	}
	plan, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	forecast, err := scenarios.Forecast(sc)
	if err != nil {
		t.Fatal(err)
	}
	sweep, err := scenarios.Sweep(sc, []float64{2e6, 3e6}, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name   string
		render func(*bytes.Buffer) error
	}{
		{"plan.txt", func(b *bytes.Buffer) error { return render.Text(b, plan) }},
		{"plan.json", func(b *bytes.Buffer) error { return render.JSON(b, plan) }},
		{"forecast.txt", func(b *bytes.Buffer) error { return render.Text(b, forecast) }},
		{"sweep.txt", func(b *bytes.Buffer) error { return render.SweepText(b, sweep) }},
		{"sweep.csv", func(b *bytes.Buffer) error { return render.SweepCSV(b, sweep) }},
	}
	for _, table := range render.CSVTables {
		cases = append(cases, struct {
			name   string
			render func(*bytes.Buffer) error
		}{"plan-" + table + ".csv", func(b *bytes.Buffer) error { return render.CSV(b, plan, table) }})
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var b bytes.Buffer
			if err := tc.render(&b); err != nil {
				t.Fatal(err)
			}
			golden(t, tc.name, b.Bytes())
		})
	}
}
