package scenarios_test

import (
	"strings"
	"testing"

	"wearplan/scenarios"
)

// An export read with family and covariate columns and fitted by family
// with covariates: an error or a fit, never a panic.
func FuzzFitFamiliesCovariates(f *testing.F) {
	f.Add(covariateExport(3, 20))
	f.Add("asset,class,inspected,condition,traffic,age\nA,culverts,2015,90,x,1\nA,culverts,2016,70,1e9,\n")
	f.Fuzz(func(t *testing.T, text string) {
		if len(text) > 1<<16 {
			return
		}
		opt := scenarios.InspectionOptions{By: []string{"traffic"}, Covariates: []string{"age"}}
		ins, err := readCSV(t, text, opt)
		if err != nil {
			return
		}
		_, _ = scenarios.Fit(ins, scenarios.FitOptions{Method: scenarios.MethodCounting, By: opt.By, Covariates: opt.Covariates, MergeAlike: strings.Contains(text, "merge")})
	})
}
