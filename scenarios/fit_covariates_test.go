package scenarios_test

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"strings"
	"testing"
	"testing/fstest"

	"wearplan/scenarios"
)

// covariateExport writes yearly inspections of culverts whose yearly drop
// follows an ordered logit in traffic and age (synthetic, generated in the
// test from known parameters: coefficients 0.2 per thousand vehicles and
// 0.05 per year of age, thresholds 2.0 and 3.8 from every state).
func covariateExport(seed uint64, assets int) string {
	r := rand.New(rand.NewPCG(seed, 95))
	values := []int{90, 70, 50, 30, 10}
	var b strings.Builder
	b.WriteString("asset,class,inspected,condition,traffic,age\n")
	for a := range assets {
		s := a % 4
		traffic := math.Max(0.1, 5+2*r.NormFloat64())
		age0 := 5 + r.IntN(30)
		for y := 0; y <= 5; y++ {
			if y > 0 {
				eta := 0.2*(traffic-5) + 0.05*(float64(age0+y-1)-20)
				u, drop := r.Float64(), 2
				for k, mu := range []float64{2.0, 3.8} {
					if u < 1/(1+math.Exp(-(mu-eta))) {
						drop = k
						break
					}
				}
				s = min(4, s+drop)
			}
			fmt.Fprintf(&b, "C%05d,culverts,%d,%d,%.2f,%d\n", a, 2015+y, values[s], traffic, age0+y)
		}
	}
	return b.String()
}

func TestFitCovariates(t *testing.T) {
	opt := scenarios.FitOptions{Method: scenarios.MethodCounting, Covariates: []string{"traffic", "age"},
		At: []scenarios.CovariateValues{{Covariate: "traffic", Values: []float64{2, 8}}}}
	ins, err := readCSV(t, covariateExport(1, 2000), scenarios.InspectionOptions{Covariates: opt.Covariates})
	if err != nil {
		t.Fatal(err)
	}
	res, err := scenarios.Fit(ins, opt)
	if err != nil {
		t.Fatal(err)
	}
	cv := res.Classes[0].Covariates
	for k, want := range []float64{0.2, 0.05} {
		c := cv.Coefficients[k]
		if math.Abs(c.Coefficient-want) > 3*c.StandardError {
			t.Errorf("%s: %.4f ± %.4f, truth %.2f", c.Covariate, c.Coefficient, c.StandardError, want)
		}
	}
	if len(cv.At) != 2 || cv.At[0].Name != "traffic=2" || cv.At[1].Name != "traffic=8" || !cv.At[0].Values[1].AtMean {
		t.Fatalf("at %+v", cv.At)
	}
	// More traffic, faster wear: every staying probability lower.
	for i := range 4 {
		if cv.At[1].Deterioration.Matrix[i][i] >= cv.At[0].Deterioration.Matrix[i][i] {
			t.Errorf("state %d: stay %.4f at traffic 8, %.4f at 2", i, cv.At[1].Deterioration.Matrix[i][i], cv.At[0].Deterioration.Matrix[i][i])
		}
	}
	// A scenario takes a matrix at chosen values from the fit file.
	var fit bytes.Buffer
	if err := scenarios.WriteFitFile(&fit, res); err != nil {
		t.Fatal(err)
	}
	scenario := strings.Replace(familyScenario, "deterioration: {fit: fit.yaml, fit_class: culverts, family: heavy}", `deterioration: {fit: fit.yaml, fit_class: culverts, at: "traffic=8"}`, 1)
	scenario = strings.Replace(scenario, "deterioration: {fit: fit.yaml, fit_class: culverts}", "deterioration: {years_in_state: [5, 5, 5, 5]}", 1)
	fsys := fstest.MapFS{"s.yaml": {Data: []byte(scenario)}, "fit.yaml": {Data: fit.Bytes()}, "segments.csv": {Data: []byte("id,quantity,condition\nR1,1,90\n")}}
	sc, err := scenarios.Load(fsys, "s.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if got := sc.Classes[1].Transition.Rows(); !slices.Equal(got[0], cv.At[1].Deterioration.Matrix[0]) || sc.Classes[1].Evidence != nil {
		t.Errorf("paths use %v, want the matrix at traffic=8", got[0])
	}
	fsys["s.yaml"] = &fstest.MapFile{Data: []byte(strings.Replace(scenario, "traffic=8", "traffic=9", 1))}
	if _, err := scenarios.Load(fsys, "s.yaml"); err == nil || !strings.Contains(err.Error(), `no matrix at "traffic=9"; it has "traffic=2", "traffic=8"`) {
		t.Errorf("unknown at: %v", err)
	}
}

// Bad input for covariates: a value that is not a number (named with its
// column and lines), a constant and a collinear covariate (named, with the
// class).
func TestFitCovariateErrors(t *testing.T) {
	text := covariateExport(2, 300)
	lines := strings.Split(text, "\n")
	f := strings.Split(lines[9], ",") // line 10 of the file
	f[4] = "n/a"
	lines[9] = strings.Join(f, ",")
	_, err := readCSV(t, strings.Join(lines, "\n"), scenarios.InspectionOptions{Covariates: []string{"traffic", "age"}})
	if err == nil || !strings.Contains(err.Error(), `test.csv:10: traffic: "n/a" is not a number`) {
		t.Errorf("not a number: %v", err)
	}
	// lanes is 2 on every row; load is twice the traffic less the age.
	var with strings.Builder
	for k, line := range strings.Split(strings.TrimSpace(text), "\n") {
		f := strings.Split(line, ",")
		if k == 0 {
			with.WriteString(line + ",lanes,load\n")
			continue
		}
		var tr, age float64
		fmt.Sscan(f[4], &tr)
		fmt.Sscan(f[5], &age)
		fmt.Fprintf(&with, "%s,2,%g\n", line, 2*tr-age)
	}
	for _, c := range []struct {
		cov  []string
		want string
	}{
		{[]string{"traffic", "lanes"}, "class culverts: covariates: covariate lanes takes the single value 2 on every pair"},
		{[]string{"traffic", "age", "load"}, "class culverts: covariates: covariates traffic, age, load are collinear"},
	} {
		ins, err := readCSV(t, with.String(), scenarios.InspectionOptions{Covariates: c.cov})
		if err != nil {
			t.Fatal(err)
		}
		_, err = scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting, Covariates: c.cov})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v: %v", c.cov, err)
		}
	}
}

// The covariate model sums its pairs in a fixed layout of chunks (20,000
// pairs here: two chunks of 16,384 at most), so the fit file is the same
// byte for byte whatever the number of processors.
func TestFitCovariatesSameBytes(t *testing.T) {
	opt := scenarios.FitOptions{Method: scenarios.MethodCounting, Covariates: []string{"traffic", "age"}, By: []string{"band"}}
	text := strings.Replace(covariateExport(4, 4000), "traffic,age\n", "traffic,age,band\n", 1)
	var b strings.Builder
	for k, line := range strings.Split(strings.TrimSpace(text), "\n") {
		if k > 0 {
			line += []string{",north", ",south"}[len(line)%2]
		}
		b.WriteString(line + "\n")
	}
	fit := func(procs int) []byte {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		ins, err := readCSV(t, b.String(), scenarios.InspectionOptions{Covariates: opt.Covariates, By: opt.By})
		if err != nil {
			t.Fatal(err)
		}
		res, err := scenarios.Fit(ins, opt)
		if err != nil {
			t.Fatal(err)
		}
		var out bytes.Buffer
		if err := scenarios.WriteFitFile(&out, res); err != nil {
			t.Fatal(err)
		}
		return out.Bytes()
	}
	if !bytes.Equal(fit(1), fit(4)) {
		t.Error("the fit file differs between 1 and 4 processors")
	}
}
