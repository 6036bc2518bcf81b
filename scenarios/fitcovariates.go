package scenarios

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"wearplan/markov"
)

// FitCovariates is an ordered model of the yearly drop in state from
// covariates (markov.OrderedModel), with the matrices it gives at chosen
// covariate values, ready for a scenario (deterioration: {fit: FILE, at:
// NAME}).
type FitCovariates struct {
	// Link is logit or probit; Pairs the pairs fitted.
	Link  string `yaml:"link" json:"link"`
	Pairs int    `yaml:"pairs" json:"pairs"`
	// Coefficients per unit of each covariate: positive means larger drops
	// (faster wear) as the covariate grows.
	Coefficients []FitCoefficient `yaml:"coefficients" json:"coefficients"`
	// Thresholds per starting state, at the covariates' means.
	Thresholds []FitThresholds `yaml:"thresholds" json:"thresholds"`
	// LogLikelihood, and Without: the same model with no covariates (its
	// own thresholds at their maximum); LikelihoodRatio tests the
	// covariates together.
	LogLikelihood   float64     `yaml:"log_likelihood" json:"log_likelihood"`
	Without         float64     `yaml:"log_likelihood_without_covariates" json:"log_likelihood_without_covariates"`
	LikelihoodRatio FitStatTest `yaml:"likelihood_ratio" json:"likelihood_ratio"`
	Iterations      int         `yaml:"iterations" json:"iterations"`
	GradientNorm    float64     `yaml:"gradient_norm" json:"gradient_norm"`
	// At holds the matrices at the chosen covariate values.
	At   []FitAt `yaml:"at" json:"at"`
	Note string  `yaml:"note" json:"note"`
}

// FitCoefficient is one covariate's coefficient.
type FitCoefficient struct {
	Covariate     string  `yaml:"covariate" json:"covariate"`
	Mean          float64 `yaml:"mean" json:"mean"`
	SD            float64 `yaml:"standard_deviation" json:"standard_deviation"`
	Coefficient   float64 `yaml:"coefficient" json:"coefficient"`
	StandardError float64 `yaml:"standard_error" json:"standard_error"`
	Z             float64 `yaml:"z" json:"z"`
	PValue        float64 `yaml:"p_value" json:"p_value"`
}

// FitThresholds are a starting state's thresholds μ_k (drop k or less
// below μ_k), with standard errors (null where a threshold is at the edge:
// a drop no pair shows).
type FitThresholds struct {
	State          string     `yaml:"state" json:"state"`
	Values         []float64  `yaml:"values" json:"values"`
	StandardErrors []*float64 `yaml:"standard_errors" json:"standard_errors"`
}

// FitAt is the model's matrix at one set of covariate values.
type FitAt struct {
	Name string `yaml:"name" json:"name"`
	// Extrapolated says some chosen value lies outside the values of the
	// pairs fitted.
	Extrapolated  bool             `yaml:"extrapolated" json:"extrapolated"`
	Values        []FitCovariateAt `yaml:"values" json:"values"`
	Deterioration FitDeterioration `yaml:"deterioration" json:"deterioration"`
	YearsInState  []*float64       `yaml:"years_in_state" json:"years_in_state"`
}

// FitCovariateAt is one covariate's value at a point; AtMean says it was
// not chosen and sits at its mean.
type FitCovariateAt struct {
	Covariate string  `yaml:"covariate" json:"covariate"`
	Value     float64 `yaml:"value" json:"value"`
	AtMean    bool    `yaml:"at_mean" json:"at_mean"`
}

func checkCovariateOptions(opt *FitOptions) error {
	if len(opt.Covariates) == 0 {
		if len(opt.At) > 0 {
			return errors.New("values to evaluate covariates at, but no covariates")
		}
		return nil
	}
	if opt.Method == MethodYearsInState {
		return errors.New("covariates need a fitted method (counting or interval); years-in-state is judgement")
	}
	if opt.KeepImprovements {
		return errors.New("the covariate model is of drops in condition; it cannot keep pairs that improve without work")
	}
	if opt.Link == "" {
		opt.Link = string(markov.Logit)
	}
	if opt.Link != string(markov.Logit) && opt.Link != string(markov.Probit) {
		return fmt.Errorf("link %q: use logit or probit", opt.Link)
	}
	for i, c := range opt.Covariates {
		if slices.Contains(opt.Covariates[:i], c) {
			return fmt.Errorf("covariate %q named twice", c)
		}
		if slices.Contains(opt.By, c) {
			return fmt.Errorf("column %q is both a covariate and a column to group by; use it one way", c)
		}
	}
	for i, a := range opt.At {
		if !slices.Contains(opt.Covariates, a.Covariate) {
			return fmt.Errorf("values for %q, which is not a covariate (covariates: %s)", a.Covariate, strings.Join(opt.Covariates, ", "))
		}
		if len(a.Values) == 0 {
			return fmt.Errorf("no values for covariate %q", a.Covariate)
		}
		for _, b := range opt.At[:i] {
			if b.Covariate == a.Covariate {
				return fmt.Errorf("values for covariate %q given twice; list them together", a.Covariate)
			}
		}
	}
	return nil
}

// covariateModel fits the ordered model to a class's (or family's) pairs
// and evaluates its matrices.
func covariateModel(pairs []markov.Pair, c *InspectionClass, who string, opt FitOptions, is *issues) (*FitCovariates, bool) {
	s := markov.Structure{OneStep: opt.OneStep}
	m, err := markov.OrderedMLE(pairs, len(c.Scale.States), opt.Covariates, markov.Link(opt.Link), s)
	if err != nil {
		var ce *markov.CollinearError
		var nd *markov.NoDataError
		switch {
		case errors.As(err, &ce):
			fitIssue(is, firstInspectionLine(c), who, "covariates: %v", ce)
		case errors.As(err, &nd):
			var names []string
			for _, r := range nd.Rows {
				names = append(names, strconv.Quote(c.Scale.States[r].Name))
			}
			fitIssue(is, firstInspectionLine(c), who, "covariates: no usable pair starts in or passes through state %s, so the model cannot describe it", strings.Join(names, ", "))
		default:
			fitIssue(is, firstInspectionLine(c), who, "covariates: %v", err)
		}
		return nil, false
	}
	out := &FitCovariates{Link: opt.Link, Pairs: m.Pairs, LogLikelihood: round(m.LogLikelihood, 4), Without: round(m.Null, 4),
		Iterations: m.Iterations, GradientNorm: sig(m.GradientNorm, 2), Coefficients: []FitCoefficient{}, Thresholds: []FitThresholds{}, At: []FitAt{}}
	lp := sig(m.LRPValue, 4)
	out.LikelihoodRatio = FitStatTest{Statistic: round(m.LR, 3), DF: len(m.Names), PValue: &lp}
	for k, name := range m.Names {
		z := m.Coef[k] / m.CoefSE[k]
		out.Coefficients = append(out.Coefficients, FitCoefficient{
			Covariate: name, Mean: sig(m.Mean[k], 6), SD: sig(m.SD[k], 6), Coefficient: sig(m.Coef[k], 6), StandardError: sig(m.CoefSE[k], 4),
			Z: round(z, 3), PValue: sig(2*distuv.UnitNormal.Survival(math.Abs(z)), 4),
		})
	}
	for i, th := range m.Thresholds {
		if len(th) == 0 {
			continue
		}
		ft := FitThresholds{State: c.Scale.States[i].Name}
		for k, v := range th {
			ft.Values = append(ft.Values, round(v, 5))
			if se := m.ThresholdSE[i][k]; !math.IsNaN(se) {
				ft.StandardErrors = append(ft.StandardErrors, ptr(sig(se, 4)))
			} else {
				ft.StandardErrors = append(ft.StandardErrors, nil)
			}
		}
		out.Thresholds = append(out.Thresholds, ft)
	}
	// Values outside those the pairs had are extrapolations.
	lo, hi := slices.Clone(m.Mean), slices.Clone(m.Mean)
	for _, pr := range pairs {
		for k, v := range pr.X {
			lo[k], hi[k] = math.Min(lo[k], v), math.Max(hi[k], v)
		}
	}
	for _, pt := range atPoints(m, opt.At) {
		t, err := m.Matrix(pt.x)
		if err != nil {
			fitIssue(is, 0, who, "covariates at %s: %v", pt.name, err)
			return nil, false
		}
		t = t.Rounded(fitDecimals)
		at := FitAt{Name: pt.name, Values: pt.values, Deterioration: FitDeterioration{Matrix: t.Rows()}}
		for k, v := range pt.x {
			at.Extrapolated = at.Extrapolated || v < lo[k] || v > hi[k]
		}
		for _, y := range t.YearsInState() {
			if math.IsInf(y, 1) {
				at.YearsInState = append(at.YearsInState, nil)
			} else {
				at.YearsInState = append(at.YearsInState, ptr(round(y, 2)))
			}
		}
		out.At = append(out.At, at)
	}
	if m.LRPValue < FamilyLevel {
		out.Note = "the covariates explain the drops better than the matrix alone at the 5% level"
	} else {
		out.Note = "no evidence at the 5% level that the covariates explain the drops: the class's matrix may serve as well"
	}
	out.Note += "; each pair's drops are modelled from the covariates at its first inspection, held for its interval, and a covariate acts linearly on the latent wear (use a transformed column, such as the logarithm of traffic, for another shape)"
	for _, a := range opt.At {
		k := slices.Index(m.Names, a.Covariate)
		for _, v := range a.Values {
			if v < lo[k] || v > hi[k] {
				out.Note += fmt.Sprintf("; %s=%g lies outside the values of the pairs (%g to %g): the matrix there is an extrapolation", a.Covariate, v, sig(lo[k], 6), sig(hi[k], 6))
			}
		}
	}
	return out, true
}

type atPoint struct {
	name   string
	x      []float64
	values []FitCovariateAt
}

// atPoints lists every combination of the chosen values, in the order
// given, the other covariates at their means; with none, the means.
func atPoints(m *markov.OrderedModel, at []CovariateValues) []atPoint {
	pts := []atPoint{{x: slices.Clone(m.Mean)}}
	for _, a := range at {
		c := slices.Index(m.Names, a.Covariate)
		var next []atPoint
		for _, p := range pts {
			for _, v := range a.Values {
				q := atPoint{name: strings.TrimSpace(p.name + " " + a.Covariate + "=" + strconv.FormatFloat(v, 'g', -1, 64)), x: slices.Clone(p.x)}
				q.x[c] = v
				next = append(next, q)
			}
		}
		pts = next
	}
	for k := range pts {
		if pts[k].name == "" {
			pts[k].name = "mean"
		}
		for c, name := range m.Names {
			chosen := slices.ContainsFunc(at, func(a CovariateValues) bool { return a.Covariate == name })
			pts[k].values = append(pts[k].values, FitCovariateAt{Covariate: name, Value: sig(pts[k].x[c], 6), AtMean: !chosen})
		}
	}
	return pts
}
