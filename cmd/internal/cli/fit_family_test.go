package cli

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// hollinBase is the shape of a trial scenario (the invented town of
// Hollin Brook): no scales: section, a class naming a preset, a segment
// list with a traffic band column, and the matrix from a fit file by
// family; hollin.yaml extends it.
const hollinBase = `name: Hollin Brook roads (invented)
start_year: 2027
horizon: 10
currency: GBP
classes:
  - name: roads
    scale: preset:five-state
    unit: lane-km
    inventory_csv: hollin-segments.csv
    deterioration: {fit: hollin-fit.yaml}
    treatments: [overlay]
    replacement_cost: 900000
treatments:
  - {name: overlay, applies_to: [Poor, Very poor], cost: 150000, effect: {to: Very good}}
budget: {yearly: 1500000}
targets:
  - {class: roads, group: poor, max_share: 0.3}
`

// hollinExport writes an invented inspection export: roads in three
// traffic bands, inspected every one, two or three years, whose yearly
// drop follows an ordered logit in traffic (aadt) and age.
func hollinExport(t *testing.T, path string) {
	t.Helper()
	r := rand.New(rand.NewPCG(18, 2027))
	values := []int{90, 70, 50, 30, 10}
	var b strings.Builder
	b.WriteString("asset,class,inspected,condition,traffic_band,aadt,age,data\n")
	for a := range 900 {
		band := []string{"light", "medium", "heavy"}[a%3]
		aadt := []float64{800, 4000, 12000}[a%3] * (0.7 + 0.6*r.Float64())
		age := 2 + r.IntN(25)
		every := 1 + a%3
		s := r.IntN(4)
		for y := 2014; y <= 2025; y += every {
			if y > 2014 {
				for range every {
					eta := 0.00012*(aadt-5000) + 0.03*float64(age-15)
					u, drop := r.Float64(), 2
					for k, mu := range []float64{1.6, 3.4} {
						if u < 1/(1+math.Exp(-(mu-eta))) {
							drop = k
							break
						}
					}
					s = min(4, s+drop)
				}
			}
			fmt.Fprintf(&b, "HB-%04d,roads,%d,%d,%s,%.0f,%d,invented\n", a, y, values[s]-r.IntN(5), band, aadt, age+y-2014)
		}
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// From an invented export to a plan: fit by traffic band with covariates,
// save the fit file next to a scenario that extends the trial's shape,
// and plan it; the roads are split by the segment list's traffic band.
func TestFitFamiliesAndCovariatesThenPlan(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write("hollin-base.yaml", hollinBase)
	write("hollin.yaml", "extends: hollin-base.yaml\nbudget: {yearly: 2000000}\n")
	write("hollin-segments.csv", "id,class,quantity,condition,traffic_band\nR1,roads,1.5,90,heavy\nR2,roads,2.25,30,light\nR3,roads,0.75,50,medium\nR4,roads,1,10,heavy\n")
	export := filepath.Join(dir, "hollin-inspections-invented.csv")
	hollinExport(t, export)
	code, out, errs := run(t, "fit", export, "--scenario", filepath.Join(dir, "hollin.yaml"), "--method", "interval", "--bootstrap", "0",
		"--by", "traffic_band", "--covariate", "aadt", "--covariate", "age", "--at", "aadt=1000,10000", "--save", filepath.Join(dir, "hollin-fit.yaml"))
	if code != 0 {
		t.Fatalf("fit: exit %d: %s", code, errs)
	}
	for _, want := range []string{"-- roads by family (traffic_band) --", "Do the families differ? likelihood-ratio chi-square", "the families differ",
		"-- roads with covariates (aadt, age) --", "ordered logit model of the yearly drop", "aadt=1000", "family: heavy, at: NAME"} {
		if !strings.Contains(out, want) {
			t.Errorf("fit output lacks %q", want)
		}
	}
	code, out, errs = run(t, "check", filepath.Join(dir, "hollin.yaml"))
	if code != 0 || !strings.Contains(out, "roads (heavy) (2.5 lane-km)") || !strings.Contains(out, "note: class roads is split by family of traffic_band") {
		t.Fatalf("check: exit %d: %s%s", code, out, errs)
	}
	if code, _, errs = run(t, "plan", filepath.Join(dir, "hollin.yaml")); code != 0 {
		t.Fatalf("plan: exit %d: %s", code, errs)
	}

	// Bad input named: an unknown column, a covariate that is not a
	// number, --at without the covariate.
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--by", "band"}, `no column "band" to group by`},
		{[]string{"--covariate", "data"}, `data: "invented" is not a number`},
		{[]string{"--at", "aadt=5"}, "--at gives covariate values: name the covariates with --covariate COLUMN"},
		{[]string{"--covariate", "aadt", "--at", "speed=5"}, "speed is not a covariate"},
	} {
		code, _, errs := run(t, append([]string{"fit", export, "--scenario", filepath.Join(dir, "hollin.yaml"), "--bootstrap", "0"}, c.args...)...)
		if code != exitInput || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, %s", c.args, code, errs)
		}
	}
}
