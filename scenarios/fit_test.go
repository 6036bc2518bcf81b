package scenarios_test

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"reflect"
	"strings"
	"testing"
	"testing/fstest"

	"wearplan/scenarios"
)

// syntheticCSV writes yearly inspections of assets deteriorating by rows
// (invented synthetic data), conditions as the representative index
// values of the demo's five-state scale (90, 70, 50, 30, 10), class
// culverts, ISO dates in summer.
func syntheticCSV(r *rand.Rand, rows [][]float64, assets, years int) string {
	values := []int{90, 70, 50, 30, 10}
	var b strings.Builder
	b.WriteString("asset,class,inspected,condition,work\n")
	for a := range assets {
		s := a % (len(rows) - 1)
		for y := 0; y <= years; y++ {
			if y > 0 {
				u := r.Float64()
				for j, p := range rows[s] {
					if u < p {
						s = j
						break
					}
					u -= p
				}
			}
			fmt.Fprintf(&b, "C%05d,culverts,%d-07-%02d,%d,\n", a, 2015+y, 1+r.IntN(28), values[s])
		}
	}
	return b.String()
}

var culvertTruth = [][]float64{
	{0.85, 0.12, 0.03, 0, 0},
	{0, 0.80, 0.18, 0.02, 0},
	{0, 0, 0.78, 0.22, 0},
	{0, 0, 0, 0.75, 0.25},
	{0, 0, 0, 0, 1},
}

// From a CSV export to a matrix: 2,000 synthetic culverts inspected every
// summer for six years, read through the demo scenario's five-state scale
// and fitted by counting. Each entry must lie within four binomial
// standard errors, sqrt(p(1-p)/n_i), of the matrix the data came from
// (Anderson and Goodman, 1957); zeros must stay zero.
func TestFitRecoversMatrixFromCSV(t *testing.T) {
	text := syntheticCSV(rand.New(rand.NewPCG(31, 7)), culvertTruth, 2000, 6)
	ins, err := readCSV(t, text, scenarios.InspectionOptions{})
	if err != nil {
		t.Fatal(err)
	}
	res, err := scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting, Bootstrap: 50, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	c := res.Classes[0]
	for i, row := range culvertTruth {
		ni := 0.0
		for _, v := range c.Counts[0].Rows[i] {
			ni += v
		}
		for j, want := range row {
			got := c.Deterioration.Matrix[i][j]
			if want == 0 || want == 1 {
				if got != want {
					t.Errorf("P[%d][%d] = %g, want %g", i, j, got, want)
				}
				continue
			}
			// Rounding to 6 decimals adds at most 5e-7.
			if se := math.Sqrt(want * (1 - want) / ni); math.Abs(got-want) > 4*se+5e-7 {
				t.Errorf("P[%d][%d] = %.4f, truth %.2f, beyond 4 standard errors (%.4f)", i, j, got, want, se)
			}
		}
		// The bootstrap interval of the staying probability must hold the
		// estimate (a percentile interval brackets the bulk of replicates
		// around it).
		if i < 4 {
			st := c.PerState[i]
			if st.StayLow == nil || *st.StayLow > st.Stay || *st.StayHigh < st.Stay {
				t.Errorf("state %d: interval %v-%v does not hold the estimate %g", i, st.StayLow, st.StayHigh, st.Stay)
			}
		}
	}
	if c.Data.Used != 2000*6 || c.Data.UsedByMethod != 12000 || c.Bootstrap == nil || len(c.Bootstrap.Replicates) != 50 {
		t.Errorf("data %+v, bootstrap %v", c.Data, c.Bootstrap != nil)
	}
	// Expected years in state 1/(1 - p_ii) and years to the worst state
	// agree with the chain's own figures (checked in markov against Kemeny
	// and Snell); here only their consistency with the reported stay.
	for _, st := range c.PerState[:4] {
		if math.Abs(*st.YearsInState-1/(1-st.Stay)) > 0.005 {
			t.Errorf("%s: years in state %g, 1/(1-stay) = %g", st.State, *st.YearsInState, 1/(1-st.Stay))
		}
	}
}

// The fit file written and read back gives the same result, and the same
// inspections and seed give the same bytes.
func TestFitFileRoundTrip(t *testing.T) {
	data, err := os.ReadFile("examples/marrowby-inspections.csv")
	if err != nil {
		t.Fatal(err)
	}
	fit := func(seed int) []byte {
		ins, err := readCSV(t, string(data), scenarios.InspectionOptions{})
		if err != nil {
			t.Fatal(err)
		}
		res, err := scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting, Bootstrap: 30, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		if err := scenarios.WriteFitFile(&b, res); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	a, b := fit(5), fit(5)
	if !bytes.Equal(a, b) {
		t.Fatal("two fits with the same seed differ")
	}
	if bytes.Equal(a, fit(6)) {
		t.Error("seeds 5 and 6 give the same file")
	}
	back, err := scenarios.ReadFitFile(fstest.MapFS{"fit.yaml": {Data: a}}, "fit.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var again bytes.Buffer
	if err := scenarios.WriteFitFile(&again, back); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a, again.Bytes()) {
		t.Error("the fit file read back and written again differs")
	}
}

// A class takes its matrix from a fit file: the same matrix as pasting
// the block inline.
func TestScenarioUsesFitFile(t *testing.T) {
	fitted := fitDemo(t)
	scen, err := os.ReadFile("examples/marrowby-fitted.yaml")
	if err != nil {
		t.Fatal(err)
	}
	sc, err := scenarios.Load(fstest.MapFS{"s.yaml": {Data: scen}, "marrowby-fit.yaml": {Data: fitted}}, "s.yaml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := scenarios.ReadFitFile(fstest.MapFS{"f.yaml": {Data: fitted}}, "f.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for k, c := range sc.Classes {
		want := res.Classes[k].Deterioration.Matrix
		if c.Name != res.Classes[k].Class || !reflect.DeepEqual(c.Transition.Rows(), want) {
			t.Errorf("class %s: matrix %v, fit file %v", c.Name, c.Transition.Rows(), want)
		}
	}
}

func fitDemo(t *testing.T) []byte {
	t.Helper()
	data, err := os.ReadFile("examples/marrowby-inspections.csv")
	if err != nil {
		t.Fatal(err)
	}
	ins, err := readCSV(t, string(data), scenarios.InspectionOptions{})
	if err != nil {
		t.Fatal(err)
	}
	res, err := scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting, Bootstrap: 5, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := scenarios.WriteFitFile(&b, res); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// Problems with fit references name the scenario line, and problems inside
// a fit file name the fit file and its line.
func TestScenarioFitReferenceProblems(t *testing.T) {
	fitted := fitDemo(t)
	scen, err := os.ReadFile("examples/marrowby-fitted.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// The line of the first class's fit reference in the scenario.
	fitLine := 0
	for n, l := range strings.Split(string(scen), "\n") {
		if strings.Contains(l, "{fit: marrowby-fit.yaml}") {
			fitLine = n + 1
			break
		}
	}
	// A fit file with a row that no longer sums to 1, and its line.
	badFit := strings.Replace(string(fitted), "- [0, 0, 0, 0.75,", "- [0, 0, 0, 0.85,", 1)
	badLine := 0
	for n, l := range strings.Split(badFit, "\n") {
		if strings.Contains(l, "- [0, 0, 0, 0.85,") {
			badLine = n + 1
			break
		}
	}
	if badFit == string(fitted) || fitLine == 0 {
		t.Fatal("test data changed; update the test")
	}
	replace := func(old, new string) []byte {
		out := strings.Replace(string(scen), old, new, 1)
		if out == string(scen) {
			t.Fatalf("%q not in the scenario", old)
		}
		return []byte(out)
	}
	cases := []struct {
		name  string
		files fstest.MapFS
		file  string
		line  int
		msg   string
	}{
		{"missing fit file", fstest.MapFS{"s.yaml": {Data: scen}}, "marrowby-fit.yaml", 0, "fit file not found"},
		{"no such class", fstest.MapFS{"s.yaml": {Data: replace("{fit: marrowby-fit.yaml}", "{fit: marrowby-fit.yaml, fit_class: sidewalks}")}, "marrowby-fit.yaml": {Data: fitted}}, "s.yaml", fitLine, `has no class "sidewalks"`},
		{"fit and matrix", fstest.MapFS{"s.yaml": {Data: replace("{fit: marrowby-fit.yaml}", "{fit: marrowby-fit.yaml, years_in_state: [5, 5, 4, 4, 4, 3]}")}, "marrowby-fit.yaml": {Data: fitted}}, "s.yaml", fitLine, "give one of fit, matrix or years_in_state"},
		{"path outside the folder", fstest.MapFS{"s.yaml": {Data: replace("{fit: marrowby-fit.yaml}", "{fit: ../marrowby-fit.yaml}")}}, "s.yaml", fitLine, "inside the scenario's folder"},
		{"states differ", fstest.MapFS{"s.yaml": {Data: replace("{name: Failed,       min: 0,  max: 10,  value: 5}", "{name: Gone,         min: 0,  max: 10,  value: 5}")}, "marrowby-fit.yaml": {Data: fitted}}, "s.yaml", fitLine, "was fitted on the states"},
		{"row sum in the fit file", fstest.MapFS{"s.yaml": {Data: scen}, "marrowby-fit.yaml": {Data: []byte(badFit)}}, "marrowby-fit.yaml", badLine, "sums to 1.1"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := scenarios.Load(tc.files, "s.yaml")
			var ie *scenarios.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("err = %v, want an input error", err)
			}
			for _, is := range ie.Issues {
				if is.File == tc.file && is.Line == tc.line && strings.Contains(is.Msg, tc.msg) {
					return
				}
			}
			t.Errorf("no problem in %s at line %d containing %q; got:\n%v", tc.file, tc.line, tc.msg, err)
		})
	}
	// Parse has no folder to read fit files from.
	if _, err := scenarios.Parse("s.yaml", scen); err == nil || !strings.Contains(err.Error(), "load the scenario from a file") {
		t.Errorf("Parse with fit: %v", err)
	}
}

// Judgement only: years in state 6, 5, 5, 6 give p_ii = 1 - 1/d, and
// 22 years from the best state to the worst (6+5+5+6; the sum of the
// expected sojourns, Kemeny and Snell's fundamental matrix for this chain).
// Tested against data, the judgement is not fitted: no parameters are
// subtracted from the degrees of freedom, and no bootstrap is run.
func TestFitFromJudgement(t *testing.T) {
	five := demoScales(t).Scales["five-state"]
	res, err := scenarios.FitFromJudgement([]scenarios.JudgedClass{{Name: "culverts", Scale: five, Years: []float64{6, 5, 5, 6}}}, scenarios.FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	c := res.Classes[0]
	if c.Deterioration.Matrix[0][0] != 0.833333 || c.Deterioration.Matrix[0][1] != 0.166667 || *c.PerState[0].YearsToWorst != 22 {
		t.Errorf("row 0 %v, years to worst %v", c.Deterioration.Matrix[0], *c.PerState[0].YearsToWorst)
	}
	if c.GoodnessOfFit != nil || c.Bootstrap != nil {
		t.Error("judgement alone has no data to test or resample")
	}
	if _, err := scenarios.FitFromJudgement([]scenarios.JudgedClass{{Name: "culverts", Scale: five, Years: []float64{6, 5}}}, scenarios.FitOptions{}); err == nil {
		t.Error("two years for a five-state scale accepted")
	}
	text := syntheticCSV(rand.New(rand.NewPCG(8, 8)), culvertTruth, 300, 4)
	ins, err := readCSV(t, text, scenarios.InspectionOptions{})
	if err != nil {
		t.Fatal(err)
	}
	withData, err := scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodYearsInState, Bootstrap: 100, YearsInState: map[string][]float64{"culverts": {6, 5, 5, 6}}})
	if err != nil {
		t.Fatal(err)
	}
	g := withData.Classes[0].GoodnessOfFit
	if g == nil || g.DF < 1 || withData.Classes[0].Bootstrap != nil || withData.Classes[0].Data.Impossible == 0 {
		t.Errorf("goodness of fit %+v, bootstrap %v, data %+v", g, withData.Classes[0].Bootstrap, withData.Classes[0].Data)
	}
}

// The interval method on the demo data uses every usable pair, and its
// matrix lies within the counting estimate's bootstrap intervals for the
// well-observed states (both estimate the same chain; the demo data come
// from one matrix).
func TestFitIntervalOnDemoData(t *testing.T) {
	data, err := os.ReadFile("examples/marrowby-inspections.csv")
	if err != nil {
		t.Fatal(err)
	}
	fit := func(method string) *scenarios.FitResult {
		ins, err := readCSV(t, string(data), scenarios.InspectionOptions{Only: []string{"culverts"}})
		if err != nil {
			t.Fatal(err)
		}
		res, err := scenarios.Fit(ins, scenarios.FitOptions{Method: method, Bootstrap: 200, Seed: 2})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	counting, interval := fit(scenarios.MethodCounting).Classes[0], fit(scenarios.MethodInterval).Classes[0]
	if interval.Data.UsedByMethod != interval.Data.Used || interval.Optimizer == nil {
		t.Errorf("interval method used %d of %d pairs", interval.Data.UsedByMethod, interval.Data.Used)
	}
	for i, st := range counting.PerState[:4] {
		got := interval.Deterioration.Matrix[i][i]
		if got < *st.StayLow || got > *st.StayHigh {
			t.Errorf("%s: interval estimate %.4f outside the counting interval %.4f-%.4f", st.State, got, *st.StayLow, *st.StayHigh)
		}
	}
}

// TestFitEvidenceFeedsSimulation: a class that takes its matrix from a fit
// file carries the fit's one-year counts and bootstrap replicates, and a
// simulation can draw its matrices from either.
func TestFitEvidenceFeedsSimulation(t *testing.T) {
	fitted := fitDemo(t)
	scen, err := os.ReadFile("examples/marrowby-fitted.yaml")
	if err != nil {
		t.Fatal(err)
	}
	fsys := fstest.MapFS{"s.yaml": {Data: scen}, "marrowby-fit.yaml": {Data: fitted}}
	sc, err := scenarios.Load(fsys, "s.yaml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := scenarios.ReadFitFile(fsys, "marrowby-fit.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for k, c := range sc.Classes {
		ev := c.Evidence
		if ev == nil || ev.Source != "marrowby-fit.yaml" {
			t.Fatalf("class %s: no evidence from the fit file", c.Name)
		}
		if len(ev.Replicates) != 5 {
			t.Errorf("class %s: %d replicates, the fit kept 5", c.Name, len(ev.Replicates))
		}
		var oneYear [][]float64
		for _, fc := range res.Classes[k].Counts {
			if fc.Years == 1 {
				oneYear = fc.Rows
			}
		}
		if !reflect.DeepEqual(ev.Counts, oneYear) {
			t.Errorf("class %s: counts %v, fit file one-year counts %v", c.Name, ev.Counts, oneYear)
		}
		// No move to a better state is allowed without work.
		for i := range ev.Allowed {
			for j := 0; j < i; j++ {
				if ev.Allowed[i][j] {
					t.Errorf("class %s: improvement %d->%d allowed", c.Name, i, j)
				}
			}
		}
	}
	for _, m := range []string{scenarios.MatrixDirichlet, scenarios.MatrixBootstrap} {
		r, err := scenarios.Simulate(sc, scenarios.SimulateOptions{Runs: 20, Seed: 3, Matrix: m})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		for _, c := range r.Classes {
			if c.Matrix == "as given" {
				t.Errorf("%s: class %s simulated with its matrix as given", m, c.Class)
			}
		}
	}
}
