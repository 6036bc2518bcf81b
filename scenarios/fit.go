package scenarios

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/stat"

	"wearplan/markov"
)

// FitCaution is the paragraph every fit report carries.
const FitCaution = "Statistical estimate only. These matrices summarise how the inspected assets changed " +
	"between inspections; they depend on the quality and coverage of the records, and on treating every " +
	"asset of a class alike. Before a fitted matrix drives budgets or decisions about specific assets, " +
	"qualified people should review it against local experience, and local codes, standards and licensed " +
	"practice govern."

// FitFormat is the version of the fit file written by WriteFitFile.
const FitFormat = 1

// Decimals of the reported matrices: enough that rounding moves a
// probability by at most 5e-7, far below any estimate's standard error.
const fitDecimals = 6

// Fit methods.
const (
	MethodCounting     = "counting"
	MethodInterval     = "interval"
	MethodYearsInState = "years-in-state"
)

// FitMethods returns the method names in the order the command offers them.
func FitMethods() []string { return []string{MethodCounting, MethodInterval, MethodYearsInState} }

// FitOptions say how to fit.
type FitOptions struct {
	// Method is counting, interval or years-in-state.
	Method string
	// OneStep restricts moves to one state a year (always so for
	// years-in-state).
	OneStep bool
	// KeepImprovements keeps pairs that improve without recorded work and
	// allows moves to better states in the matrix.
	KeepImprovements bool
	// Bootstrap is the number of resamples of assets (0 for none), Seed
	// their seed.
	Bootstrap int
	Seed      int
	// YearsInState gives, per class, the expected years in each state but
	// the worst (method years-in-state).
	YearsInState map[string][]float64
	// ScalesFrom names the file the scales came from, for the record.
	ScalesFrom string
	// By names the columns the inspections were grouped into families by
	// (InspectionOptions.By): each class then gets a matrix per family and
	// a test of whether the families differ. MergeAlike merges, step by
	// step, the two families that differ least while a test cannot tell
	// them apart at FamilyLevel.
	By         []string
	MergeAlike bool
	// Covariates names numeric columns of the export (InspectionOptions.
	// Covariates): each class (and family) then also gets an ordered model
	// of the yearly drop in state from them (markov.OrderedMLE) with Link
	// logit (the default) or probit, and its matrices at the values At
	// names (every combination, the other covariates at their means; at
	// the means alone when At is empty).
	Covariates []string
	Link       string
	At         []CovariateValues

	// ctx is the context of one call (FitContext sets it on its copy);
	// nil means context.Background().
	ctx context.Context
}

// CovariateValues are values of one covariate at which to evaluate a
// covariate model's matrix.
type CovariateValues struct {
	Covariate string
	Values    []float64
}

// FamilyLevel is the significance level at which families are told apart:
// merged (MergeAlike) only while a test of the two cannot reject their
// sameness at it, and reported as differing below it.
const FamilyLevel = 0.05

// FitResult is what `wearplan fit` found, class by class. It is also the
// schema of the fit file (WriteFitFile, and `deterioration: {fit: FILE}` in
// a scenario); docs/json.md (fit) documents it.
type FitResult struct {
	Format     int    `yaml:"wearplan_fit" json:"wearplan_fit"`
	Source     string `yaml:"source" json:"source"`
	ScalesFrom string `yaml:"scales_from" json:"scales_from"`
	Method     string `yaml:"method" json:"method"`
	OneStep    bool   `yaml:"one_step" json:"one_step"`
	// KeepImprovements says pairs improving without work were kept.
	KeepImprovements bool `yaml:"keep_improvements" json:"keep_improvements"`
	Bootstrap        int  `yaml:"bootstrap" json:"bootstrap"`
	Seed             int  `yaml:"seed" json:"seed"`
	// Rows counts the data rows read; Skipped those of other classes;
	// BadRows those left out as unreadable.
	Rows     int        `yaml:"rows" json:"rows"`
	Skipped  int        `yaml:"skipped_rows" json:"skipped_rows"`
	BadRows  int        `yaml:"bad_rows" json:"bad_rows"`
	Caution  string     `yaml:"caution" json:"caution"`
	Warnings []string   `yaml:"warnings" json:"warnings"`
	Classes  []FitClass `yaml:"classes" json:"classes"`
	Lines    lines      `yaml:"-" json:"-"`
}

// FitClass is one class's fitted matrix and its evidence.
type FitClass struct {
	Class string `yaml:"class" json:"class"`
	// Family names a family of the class (an entry of Families); Members
	// lists the values of the By columns it covers (more than one when
	// families were merged). Empty for the class itself.
	Family  string   `yaml:"family,omitempty" json:"family,omitempty"`
	Members []string `yaml:"members,omitempty" json:"members,omitempty"`
	// Scale and States are given for the class; its families share them.
	Scale  string   `yaml:"scale,omitempty" json:"scale,omitempty"`
	States []string `yaml:"states,omitempty" json:"states,omitempty"`
	Method string   `yaml:"method" json:"method"`
	// By names the columns that define the class's families (fit by
	// family), and Homogeneity tests whether they differ.
	By          []string        `yaml:"by,omitempty" json:"by,omitempty"`
	Homogeneity *FitHomogeneity `yaml:"homogeneity,omitempty" json:"homogeneity,omitempty"`
	// MergedHomogeneity tests the families left after merging (MergeAlike).
	MergedHomogeneity *FitHomogeneity `yaml:"homogeneity_after_merging,omitempty" json:"homogeneity_after_merging,omitempty"`
	// Deterioration is the block to paste into the scenario's class.
	Deterioration FitDeterioration `yaml:"deterioration" json:"deterioration"`
	// PerState holds figures per state, best first.
	PerState []FitState `yaml:"per_state" json:"per_state"`
	// GoodnessOfFit is nil when no data were given.
	GoodnessOfFit *FitTest `yaml:"goodness_of_fit" json:"goodness_of_fit"`
	// Notes say what a reader of the matrix should know.
	Notes         []string       `yaml:"notes" json:"notes"`
	Data          *FitData       `yaml:"data" json:"data"`
	MeanCondition []FitCondition `yaml:"mean_condition" json:"mean_condition"`
	Optimizer     *FitOptimizer  `yaml:"optimizer" json:"optimizer"`
	Counts        []FitCounts    `yaml:"counts" json:"counts"`
	Bootstrap     *FitReplicates `yaml:"bootstrap" json:"bootstrap"`
	// Selection compares the pairs left out for work with those kept; nil
	// when no pair had work.
	Selection *FitSelection `yaml:"selection,omitempty" json:"selection,omitempty"`
	// Covariates is the ordered model of the yearly drop (FitOptions.
	// Covariates), nil without covariates.
	Covariates *FitCovariates `yaml:"covariates,omitempty" json:"covariates,omitempty"`
	// Merges lists the merging of families (MergeAlike), in order.
	Merges []FitMerge `yaml:"merges,omitempty" json:"merges,omitempty"`
	// Families holds each family's fit, in the class's layout.
	Families []FitClass `yaml:"families,omitempty" json:"families,omitempty"`
	Lines    lines      `yaml:"-" json:"-"`
}

// FitHomogeneity tests whether a class's families deteriorate by one
// matrix (markov.Homogeneity).
type FitHomogeneity struct {
	Families int `yaml:"families" json:"families"`
	// LikelihoodRatio is 2(Σ L_family - L_class) with its chi-square
	// p-value; AndersonGoodman is Pearson's chi-square of the same
	// hypothesis (counting method only).
	LikelihoodRatio *FitStatTest `yaml:"likelihood_ratio" json:"likelihood_ratio"`
	AndersonGoodman *FitStatTest `yaml:"anderson_goodman_chi_square" json:"anderson_goodman_chi_square"`
	// Differ says the likelihood-ratio p-value is below FamilyLevel.
	Differ bool   `yaml:"differ" json:"differ"`
	Note   string `yaml:"note" json:"note"`
}

// FitMerge is one step of merging families that do not differ: the two
// merged, the test that could not tell them apart, and the new family.
type FitMerge struct {
	Merged []string    `yaml:"merged" json:"merged"`
	Into   string      `yaml:"into" json:"into"`
	Test   FitStatTest `yaml:"likelihood_ratio" json:"likelihood_ratio"`
}

// FitSelection compares, per starting state, the pairs left out because
// work was recorded between them with the pairs kept, and says whether the
// work looks condition-driven enough to bias the staying probabilities
// (markov.WorkSelection).
type FitSelection struct {
	States []FitSelectionState `yaml:"states" json:"states"`
	// ByState is the chi-square test that the share of pairs with work is
	// the same from every starting state.
	ByState FitStatTest `yaml:"work_share_by_state" json:"work_share_by_state"`
	// ByYears is the trend test that, from the same state, the share rises
	// with the interval; nil when every pair has the same interval.
	ByYears         *FitStatTest `yaml:"work_share_by_interval" json:"work_share_by_interval"`
	ConditionDriven bool         `yaml:"condition_driven" json:"condition_driven"`
	// Warning is empty unless the possible bias exceeds sampling error.
	Warning string `yaml:"warning" json:"warning"`
}

// FitSelectionState is one starting state's comparison.
type FitSelectionState struct {
	State     string  `yaml:"state" json:"state"`
	Kept      int     `yaml:"pairs_kept" json:"pairs_kept"`
	Work      int     `yaml:"pairs_with_work" json:"pairs_with_work"`
	WorkShare float64 `yaml:"work_share" json:"work_share"`
	KeptYears float64 `yaml:"mean_years_kept" json:"mean_years_kept"`
	WorkYears float64 `yaml:"mean_years_with_work" json:"mean_years_with_work"`
	// The work pairs by their later condition (after the work) against
	// the first.
	WorkEndedBetter int `yaml:"work_ended_better" json:"work_ended_better"`
	WorkEndedSame   int `yaml:"work_ended_same" json:"work_ended_same"`
	WorkEndedWorse  int `yaml:"work_ended_worse" json:"work_ended_worse"`
	// Stay is the estimate; StayIfLeft what it would be had every work
	// pair left the state before the work (the largest bias).
	Stay       float64 `yaml:"stay" json:"stay"`
	StayIfLeft float64 `yaml:"stay_if_work_pairs_had_left" json:"stay_if_work_pairs_had_left"`
	StayError  float64 `yaml:"stay_standard_error" json:"stay_standard_error"`
	Flagged    bool    `yaml:"flagged" json:"flagged"`
}

// FitStatTest is a test statistic with its p-value: a chi-square with
// degrees of freedom, or a standard normal z (DF 0).
type FitStatTest struct {
	Statistic float64  `yaml:"statistic" json:"statistic"`
	DF        int      `yaml:"degrees_of_freedom" json:"degrees_of_freedom"`
	PValue    *float64 `yaml:"p_value" json:"p_value"`
}

// FitDeterioration is the matrix as a scenario's deterioration block.
type FitDeterioration struct {
	Matrix           [][]float64 `yaml:"matrix" json:"matrix"`
	AllowImprovement bool        `yaml:"allow_improvement,omitempty" json:"allow_improvement,omitempty"`
	Lines            lines       `yaml:"-" json:"-"`
	rowLines         []int
}

// FitState holds one state's figures. Pointers are nil where a figure does
// not apply (the worst state never leaves; no bootstrap was run).
type FitState struct {
	State string `yaml:"state" json:"state"`
	// Pairs used that start in this state.
	Pairs int     `yaml:"pairs" json:"pairs"`
	Stay  float64 `yaml:"stay" json:"stay"`
	// StayLow and StayHigh bound the 95% bootstrap percentile interval.
	StayLow  *float64 `yaml:"stay_low" json:"stay_low"`
	StayHigh *float64 `yaml:"stay_high" json:"stay_high"`
	// YearsInState is 1/(1 - stay), with the interval it maps to.
	YearsInState     *float64 `yaml:"years_in_state" json:"years_in_state"`
	YearsInStateLow  *float64 `yaml:"years_in_state_low" json:"years_in_state_low"`
	YearsInStateHigh *float64 `yaml:"years_in_state_high" json:"years_in_state_high"`
	// YearsToWorst is the expected time to first reach the worst state,
	// with its standard deviation.
	YearsToWorst   *float64 `yaml:"years_to_worst" json:"years_to_worst"`
	YearsToWorstSD *float64 `yaml:"years_to_worst_sd" json:"years_to_worst_sd"`
}

// FitTest is the chi-square goodness of fit.
type FitTest struct {
	Statistic float64  `yaml:"chi_square" json:"chi_square"`
	DF        int      `yaml:"degrees_of_freedom" json:"degrees_of_freedom"`
	PValue    *float64 `yaml:"p_value" json:"p_value"`
	Rows      int      `yaml:"rows" json:"rows"`
	Cells     int      `yaml:"cells" json:"cells"`
	Pairs     int      `yaml:"pairs" json:"pairs"`
	Pooled    bool     `yaml:"pooled" json:"pooled"`
	Note      string   `yaml:"note" json:"note"`
}

// FitData counts every step from rows to the pairs used.
type FitData struct {
	Rows        int `yaml:"rows" json:"rows"`
	Assets      int `yaml:"assets" json:"assets"`
	Inspections int `yaml:"inspections" json:"inspections"`
	Duplicates  int `yaml:"duplicates_dropped" json:"duplicates_dropped"`
	Conflicts   int `yaml:"conflicts_dropped" json:"conflicts_dropped"`
	OutOfOrder  int `yaml:"out_of_order" json:"out_of_order"`
	Pairs       int `yaml:"pairs" json:"pairs"`
	WithWork    int `yaml:"with_work" json:"with_work"`
	TooClose    int `yaml:"under_half_a_year" json:"under_half_a_year"`
	TooFar      int `yaml:"over_50_years" json:"over_50_years"`
	Improved    int `yaml:"improved_without_work" json:"improved_without_work"`
	// ImprovedKept says the improving pairs were used.
	ImprovedKept bool `yaml:"improved_kept" json:"improved_kept"`
	Impossible   int  `yaml:"beyond_one_state_a_year" json:"beyond_one_state_a_year"`
	Used         int  `yaml:"used" json:"used"`
	// UsedByMethod is the number of used pairs the method uses (the
	// counting method uses one-year pairs only).
	UsedByMethod int           `yaml:"used_by_method" json:"used_by_method"`
	ByYears      []FitInterval `yaml:"by_interval" json:"by_interval"`
}

// FitInterval counts the pairs used with one interval.
type FitInterval struct {
	Years int `yaml:"years" json:"years"`
	Pairs int `yaml:"pairs" json:"pairs"`
}

// FitCondition compares observed and predicted mean condition index of
// the readings taken Years after each asset's first inspection (before
// any recorded work): predicted from the first inspection (the
// deterioration curve) and from each asset's previous inspection.
type FitCondition struct {
	Years        int     `yaml:"years" json:"years"`
	Readings     int     `yaml:"readings" json:"readings"`
	Observed     float64 `yaml:"observed" json:"observed"`
	FromFirst    float64 `yaml:"predicted_from_first" json:"predicted_from_first"`
	FromPrevious float64 `yaml:"predicted_from_previous" json:"predicted_from_previous"`
}

// FitOptimizer reports the interval method's numerical maximisation: its
// stopping rules (the Karush-Kuhn-Tucker conditions of the maximum over
// each row, and the log-likelihood's relative change over the last
// iteration) and how many starts reached the best value.
type FitOptimizer struct {
	LogLikelihood float64 `yaml:"log_likelihood" json:"log_likelihood"`
	Iterations    int     `yaml:"iterations" json:"iterations"`
	Status        string  `yaml:"status" json:"status"`
	Starts        int     `yaml:"starts" json:"starts"`
	StartsAtBest  int     `yaml:"starts_at_best" json:"starts_at_best"`
	Rounds        int     `yaml:"rounds" json:"rounds"`
	// RelativeChange is the log-likelihood's relative change over the
	// last iteration.
	RelativeChange float64 `yaml:"relative_change" json:"relative_change"`
	// KKT holds the conditions' residuals and the tolerance they meet.
	KKT FitKKT `yaml:"kkt" json:"kkt"`
}

// FitKKT is the check of the Karush-Kuhn-Tucker conditions at the
// estimate, in mean log-likelihood per pair per unit of probability:
// DualInfeasibility is the most any allowed entry would gain from
// probability moved into it (zero or less at a maximum), Complementarity
// the largest entry times its gain or loss (zero at a maximum).
type FitKKT struct {
	DualInfeasibility float64 `yaml:"dual_infeasibility" json:"dual_infeasibility"`
	Complementarity   float64 `yaml:"complementarity" json:"complementarity"`
	Tolerance         float64 `yaml:"tolerance" json:"tolerance"`
	Satisfied         bool    `yaml:"satisfied" json:"satisfied"`
}

// FitCounts holds the transition counts of the pairs used with one
// interval, one row per starting state.
type FitCounts struct {
	Years int         `yaml:"years" json:"years"`
	Rows  [][]float64 `yaml:"rows" json:"rows"`
}

// FitReplicates holds the bootstrap: the matrix fitted to each resample
// of assets, for intervals now and for drawing matrix uncertainty later.
type FitReplicates struct {
	Seed       int           `yaml:"seed" json:"seed"`
	Requested  int           `yaml:"requested" json:"requested"`
	Failed     int           `yaml:"failed" json:"failed"`
	Replicates [][][]float64 `yaml:"replicates" json:"replicates"`
}

// fitIssue records a problem that stops a class from being fitted.
func fitIssue(is *issues, line int, class, format string, args ...any) {
	is.add(line, "class "+class, format, args...)
}

// Fit estimates a matrix for each class of the inspections. Problems that
// stop a class (no pairs, a state no pair informs...) are reported
// together in an *InputError naming the file and, where there is one, a
// line.
func Fit(ins *Inspections, opt FitOptions) (*FitResult, error) {
	return FitContext(context.Background(), ins, opt)
}

// FitContext is Fit with a context: once ctx is done no further class,
// family or bootstrap resample is fitted (the fit under way finishes), and
// it returns an error wrapping ctx.Err(), and no result.
func FitContext(ctx context.Context, ins *Inspections, opt FitOptions) (*FitResult, error) {
	opt.ctx = ctx
	r, err := fit(ins, opt)
	return finish(ctx, r, err)
}

// fit is Fit under opt's context.
func fit(ins *Inspections, opt FitOptions) (*FitResult, error) {
	if err := stopped(orBackground(opt.ctx)); err != nil {
		return nil, err
	}
	if !slices.Contains(FitMethods(), opt.Method) {
		return nil, fmt.Errorf("unknown method %q; use %s", opt.Method, strings.Join(FitMethods(), ", "))
	}
	if opt.Method == MethodYearsInState && opt.KeepImprovements {
		return nil, errors.New("years-in-state never improves; drop keep-improvements")
	}
	if opt.Bootstrap < 0 {
		return nil, fmt.Errorf("bootstrap %d: give zero or more resamples", opt.Bootstrap)
	}
	if err := checkCovariateOptions(&opt); err != nil {
		return nil, err
	}
	res := newFitResult(opt)
	res.Source, res.Rows, res.Skipped, res.BadRows = ins.Source, ins.Rows, ins.Skipped, ins.BadRows
	res.Warnings = append(res.Warnings, ins.Warnings...)
	is := &issues{file: ins.Source}
	for k := range ins.Classes {
		c := &ins.Classes[k]
		fc, ok := fitWhole(c, opt, is)
		if ok {
			if fc.Selection != nil && fc.Selection.Warning != "" {
				res.Warnings = append(res.Warnings, "class "+fc.Selection.Warning)
			}
			res.Classes = append(res.Classes, *fc)
		}
	}
	if err := is.err(); err != nil {
		return nil, err
	}
	if len(res.Classes) == 0 {
		return nil, &InputError{Issues: []*Issue{{File: ins.Source, Msg: "no class to fit"}}}
	}
	return res, nil
}

// JudgedClass is a class whose matrix comes from expected years in state.
type JudgedClass struct {
	Name  string
	Scale *Scale
	Years []float64
}

// FitFromJudgement builds the years-in-state matrices of classes without
// inspection data, with the figures they imply.
func FitFromJudgement(classes []JudgedClass, opt FitOptions) (*FitResult, error) {
	opt.Method = MethodYearsInState
	opt.Bootstrap = 0
	res := newFitResult(opt)
	res.Source = "expert judgement (no inspection data)"
	is := &issues{file: "--years-in-state"}
	for _, jc := range classes {
		p, ok := judgedMatrix(jc.Name, jc.Scale, jc.Years, is)
		if !ok {
			continue
		}
		fc := &FitClass{Class: jc.Name, Scale: jc.Scale.Name, States: stateNames(jc.Scale), Method: MethodYearsInState}
		describe(fc, p, jc.Scale, nil)
		fc.Notes = append(fc.Notes, "matrix from expected years in each state (judgement), not estimated from data")
		res.Classes = append(res.Classes, *fc)
	}
	if err := is.err(); err != nil {
		return nil, err
	}
	return res, nil
}

func newFitResult(opt FitOptions) *FitResult {
	res := &FitResult{
		Format: FitFormat, ScalesFrom: opt.ScalesFrom, Method: opt.Method,
		OneStep: opt.OneStep || opt.Method == MethodYearsInState, KeepImprovements: opt.KeepImprovements,
		Bootstrap: opt.Bootstrap, Seed: opt.Seed, Caution: FitCaution, Warnings: []string{},
	}
	if opt.Method == MethodYearsInState {
		res.Bootstrap = 0
	}
	return res
}

func stateNames(s *Scale) []string {
	out := make([]string, len(s.States))
	for i, st := range s.States {
		out[i] = st.Name
	}
	return out
}

func judgedMatrix(class string, s *Scale, years []float64, is *issues) (*markov.Transition, bool) {
	n := len(s.States)
	if len(years) != n-1 {
		fitIssue(is, 0, class, "%d expected years in state for the %d states of scale %q; give one for each state but the worst (%d)", len(years), n, s.Name, n-1)
		return nil, false
	}
	p, err := markov.FromYearsInState(years)
	if err != nil {
		for _, e := range flatten(err) {
			var ee *markov.EntryError
			if errors.As(e, &ee) {
				fitIssue(is, 0, class, "years in state %q: %s", s.States[ee.Row].Name, ee.Reason)
				continue
			}
			fitIssue(is, 0, class, "%v", e)
		}
		return nil, false
	}
	return p.Rounded(fitDecimals), true
}

// firstLine is the line of an asset's first inspection, for messages.
func firstInspectionLine(c *InspectionClass) int {
	for _, h := range c.Histories {
		if len(h) > 0 {
			return h[0].Ref
		}
	}
	return 0
}

// groupFit is what the family tests need from a fit: the counts the
// method used, the estimate before rounding and its log-likelihood.
type groupFit struct {
	counts *markov.Counts
	p      *markov.Transition
	ll     float64
}

// fitClass fits one class, or one family of a class (who names it in
// messages: "roads" or "roads, family heavy (traffic)").
func fitClass(c *InspectionClass, who string, opt FitOptions, is *issues) (*FitClass, *groupFit, bool) {
	ctx := orBackground(opt.ctx)
	if ctx.Err() != nil {
		return nil, nil, false // Fit returns the context's error
	}
	n := len(c.Scale.States)
	s := markov.Structure{OneStep: opt.OneStep || opt.Method == MethodYearsInState, Improvement: opt.KeepImprovements}
	sample, readings, prep, err := markov.Prepare(c.Histories, n, s)
	if err != nil {
		fitIssue(is, 0, who, "%v", err)
		return nil, nil, false
	}
	fc := &FitClass{Class: c.Name, Scale: c.Scale.Name, States: stateNames(c.Scale), Method: opt.Method}
	fc.Data = &FitData{
		Rows: c.Rows, Assets: prep.Assets, Inspections: prep.Inspections, Duplicates: c.Duplicates, Conflicts: c.Conflicts,
		OutOfOrder: c.OutOfOrder, Pairs: prep.Pairs, WithWork: prep.WithWork, TooClose: prep.TooClose, TooFar: prep.TooFar,
		Improved: prep.Improved, ImprovedKept: prep.ImprovedKept, Impossible: prep.Impossible, Used: prep.Used,
		ByYears: []FitInterval{},
	}
	for _, y := range prep.ByYears {
		fc.Data.ByYears = append(fc.Data.ByYears, FitInterval{Years: y.Years, Pairs: y.Pairs})
	}
	switch {
	case prep.Pairs == 0:
		fitIssue(is, firstInspectionLine(c), who, "no asset has two inspections (%d assets, one inspection each), so there is no change to fit; an export with several years of inspections is needed", prep.Assets)
		return nil, nil, false
	case prep.Used == 0 && prep.WithWork == prep.Pairs:
		fitIssue(is, firstInspectionLine(c), who, "all %d pairs of consecutive inspections have work recorded between them, so none shows deterioration alone; check the work column (empty, 0 or no mean no work)", prep.Pairs)
		return nil, nil, false
	case prep.Used == 0:
		fitIssue(is, firstInspectionLine(c), who, "none of the %d pairs of consecutive inspections can be used (%s)", prep.Pairs, exclusionSummary(prep))
		return nil, nil, false
	}
	noteExclusions(fc, prep, c.Name)

	// Estimate.
	var p *markov.Transition
	var info markov.IntervalFit
	used := sample
	fitted := true
	switch opt.Method {
	case MethodCounting:
		used = sample.Filter(func(pr markov.Pair) bool { return pr.Years == 1 })
		if len(used.Pairs()) == 0 {
			fitIssue(is, firstInspectionLine(c), who, "no pairs of inspections one year apart (intervals used: %s); the counting method needs yearly pairs: use --method interval", intervalList(prep))
			return nil, nil, false
		}
		if len(used.Pairs()) < prep.Used/2 {
			fc.Notes = append(fc.Notes, fmt.Sprintf("only %d of %d usable pairs are one year apart; --method interval would use them all", len(used.Pairs()), prep.Used))
		}
		p, err = markov.CountingMLE(used.Counts(), s)
	case MethodInterval:
		p, info, err = markov.IntervalMLE(sample.Counts(), s, nil)
		if err == nil {
			fc.Optimizer = optimizerReport(info)
		}
	case MethodYearsInState:
		years, ok := opt.YearsInState[c.Name]
		if !ok {
			fitIssue(is, firstInspectionLine(c), who, "method years-in-state needs the class's expected years in each state: --years-in-state %s=D1,D2,...", c.Name)
			return nil, nil, false
		}
		p, ok = judgedMatrix(c.Name, c.Scale, years, is)
		if !ok {
			return nil, nil, false
		}
		fitted = false
		fc.Notes = append(fc.Notes, "matrix from expected years in each state (judgement); the data only test it")
	}
	if err != nil {
		var nd *markov.NoDataError
		if errors.As(err, &nd) {
			names := make([]string, len(nd.Rows))
			for k, r := range nd.Rows {
				names[k] = strconv.Quote(c.Scale.States[r].Name)
			}
			hint := "use --method interval (pairs of any interval), gather more inspections, or set the matrix by judgement"
			if who != c.Name {
				hint = "this family is too small for a matrix of its own: group the assets by another column, put this value with another family in the export, or fit the class without families"
			}
			fitIssue(is, firstInspectionLine(c), who, "no usable pair starts in state %s, so its row cannot be estimated; %s", strings.Join(names, ", "), hint)
			return nil, nil, false
		}
		fitIssue(is, firstInspectionLine(c), who, "%v", err)
		return nil, nil, false
	}
	gf := &groupFit{counts: used.Counts(), p: p}
	switch {
	case info.Iterations > 0:
		gf.ll = info.LogLikelihood
	case fitted:
		gf.ll = markov.LogLikelihood(gf.counts, p)
	}
	p = p.Rounded(fitDecimals)
	fc.Data.UsedByMethod = len(used.Pairs())
	if opt.Method == MethodYearsInState {
		fc.Data.UsedByMethod = prep.Used
	}

	// Bootstrap.
	var reps []*markov.Transition
	if fitted && opt.Bootstrap > 0 {
		fitFn := func(cn *markov.Counts) (*markov.Transition, error) {
			// Checked between resamples: drawing one is cheap beside
			// fitting it, and Fit returns the context's error.
			if err := stopped(ctx); err != nil {
				return nil, err
			}
			if opt.Method == MethodCounting {
				return markov.CountingMLE(cn, s)
			}
			r, _, err := markov.IntervalMLE(cn, s, p)
			return r, err
		}
		b := markov.BootstrapAssets(used, opt.Bootstrap, uint64(opt.Seed), fitFn)
		fc.Bootstrap = &FitReplicates{Seed: opt.Seed, Requested: opt.Bootstrap, Failed: b.Failed, Replicates: [][][]float64{}}
		for _, r := range b.Replicates {
			r = r.Rounded(fitDecimals)
			reps = append(reps, r)
			fc.Bootstrap.Replicates = append(fc.Bootstrap.Replicates, r.Rows())
		}
		if b.Failed > 0 {
			why := ""
			if b.FirstError != nil {
				why = " (" + b.FirstError.Error() + ")"
			}
			fc.Notes = append(fc.Notes, fmt.Sprintf("%d of %d bootstrap resamples could not be fitted%s and are left out, so the intervals understate the uncertainty of sparse states", b.Failed, opt.Bootstrap, why))
		}
	}
	describe(fc, p, c.Scale, reps)

	// The covariate model.
	if fitted && len(opt.Covariates) > 0 {
		cv, ok := covariateModel(used.Pairs(), c, who, opt, is)
		if !ok {
			return nil, nil, false
		}
		fc.Covariates = cv
	}

	// Pairs per starting state.
	for _, pr := range used.Pairs() {
		fc.PerState[pr.From].Pairs++
	}
	for i := range fc.PerState {
		if k := fc.PerState[i].Pairs; i < n-1 && k > 0 && k < 30 {
			fc.Notes = append(fc.Notes, fmt.Sprintf("state %q: only %d pairs start there; its row is uncertain", c.Scale.States[i].Name, k))
		}
	}

	// Goodness of fit.
	x := markov.TransitionChiSquare(used.Pairs(), p, fitted)
	fc.GoodnessOfFit = &FitTest{Statistic: round(x.Statistic, 4), DF: x.DF, Rows: x.Rows, Cells: x.Cells, Pairs: int(x.Pairs), Pooled: x.Pooled}
	switch {
	case x.DF == 0:
		fc.GoodnessOfFit.Note = "nothing left to test: the pairs come from too few calendar years (or too few pairs) for a comparison beyond the fitted numbers"
	default:
		pv := sig(x.PValue, 4)
		fc.GoodnessOfFit.PValue = &pv
		if x.PValue < 0.05 {
			fc.GoodnessOfFit.Note = "p below 0.05: the pairs differ from the matrix by more than chance would explain (deterioration may differ between years or intervals); review before use"
		} else {
			fc.GoodnessOfFit.Note = "p of 0.05 or more: no evidence against the matrix at the 5% level"
		}
		if x.Pooled {
			fc.GoodnessOfFit.Note += "; cells were pooled to expect at least 5 pairs, which makes the p-value approximate"
		}
	}

	// Pairs left out for work against the pairs kept.
	if fitted && prep.WithWork > 0 {
		fc.Selection = selectionReport(who, c.Scale, prep.Selection, p)
	}

	// Observed against predicted mean condition.
	values := make([]float64, n)
	for i, st := range c.Scale.States {
		values[i] = st.Value
	}
	points, err := markov.MeanCondition(readings, p, values)
	if err != nil {
		fitIssue(is, 0, who, "%v", err)
		return nil, nil, false
	}
	fc.MeanCondition = []FitCondition{}
	for _, pt := range points {
		fc.MeanCondition = append(fc.MeanCondition, FitCondition{Years: pt.Years, Readings: pt.Readings, Observed: round(pt.Observed, 3),
			FromFirst: round(pt.FromFirst, 3), FromPrevious: round(pt.FromPrevious, 3)})
	}

	// Counts of the pairs the method used.
	counts := used.Counts()
	fc.Counts = []FitCounts{}
	for _, g := range counts.Gaps() {
		fc.Counts = append(fc.Counts, FitCounts{Years: g, Rows: counts.Matrix(g)})
	}
	return fc, gf, true
}

// selectionReport compares the work and kept pairs of a class (or
// family) and words the warning, with its figures, when work looks
// condition-driven enough to bias the staying probabilities.
func selectionReport(name string, scale *Scale, w *markov.WorkSelection, p *markov.Transition) *FitSelection {
	n := p.States()
	stay := make([]float64, n)
	for i := range stay {
		stay[i] = p.At(i, i)
	}
	d := w.Diagnose(stay)
	out := &FitSelection{States: []FitSelectionState{}, ConditionDriven: d.ConditionDriven}
	for _, st := range d.States {
		out.States = append(out.States, FitSelectionState{
			State: scale.States[st.State].Name, Kept: st.Kept, Work: st.Work, WorkShare: round(st.WorkShare, 4),
			KeptYears: round(st.KeptYears, 2), WorkYears: round(st.WorkYears, 2),
			WorkEndedBetter: st.WorkBetter, WorkEndedSame: st.WorkSame, WorkEndedWorse: st.WorkWorse,
			Stay: st.Stay, StayIfLeft: round(st.StayIfLeft, 4), StayError: round(st.StayError, 4), Flagged: st.Flagged,
		})
	}
	if d.ByState.DF > 0 {
		pv := sig(d.ByState.PValue, 4)
		out.ByState = FitStatTest{Statistic: round(d.ByState.Statistic, 3), DF: d.ByState.DF, PValue: &pv}
	}
	if d.ByYears.Groups > 0 {
		pv := sig(d.ByYears.PValue, 4)
		out.ByYears = &FitStatTest{Statistic: round(d.ByYears.Z, 3), PValue: &pv}
	}
	if !d.Warn {
		return out
	}
	var states []string
	for _, st := range d.States {
		if !st.Flagged {
			continue
		}
		states = append(states, fmt.Sprintf("%s: %s of %s pairs (%.0f%%) had work, %.1f years apart on average (pairs kept %.1f); stay %.3f, %.3f if every one of them had left the state",
			scale.States[st.State].Name, groupDigits(st.Work), groupDigits(st.Kept+st.Work), 100*st.WorkShare, st.WorkYears, st.KeptYears, st.Stay, st.StayIfLeft))
	}
	drivenBy := fmt.Sprintf("the share of pairs with work differs between starting states (chi-square %.1f on %d degrees of freedom, p %s)", d.ByState.Statistic, d.ByState.DF, pText(d.ByState.PValue))
	if d.ByYears.Groups > 0 && d.ByYears.Z > 0 && d.ByYears.PValue < markov.SelectionLevel {
		out.Warning = fmt.Sprintf("%s: work between inspections looks decided on deterioration during the interval: %s, and from the same state pairs further apart had work more often (trend z = %.2f, p %s). "+
			"The pairs left out for work are then mostly assets that dropped, so the staying probabilities are too HIGH (deterioration too slow, years in state too long), by up to: %s.",
			name, drivenBy, d.ByYears.Z, pText(d.ByYears.PValue), strings.Join(states, "; "))
		return out
	}
	out.Warning = fmt.Sprintf("%s: work between inspections is condition-driven: %s. "+
		"If work was chosen on the condition found at the first inspection of each pair, the estimate is not biased; if it followed deterioration between inspections, "+
		"the pairs left out are mostly assets that dropped, and the staying probabilities are too HIGH (deterioration too slow, years in state too long), by up to: %s. Check how work was chosen.",
		name, drivenBy, strings.Join(states, "; "))
	return out
}

// groupDigits writes a count with commas between thousands: 12,345.
func groupDigits(n int) string {
	s := strconv.Itoa(n)
	for i := len(s) - 3; i > 0 && s[i-1] != '-'; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// pText writes a p-value for a sentence: "= 0.023" or "< 0.0001".
func pText(p float64) string {
	if p < 0.0001 {
		return "< 0.0001"
	}
	return "= " + strconv.FormatFloat(sig(p, 2), 'g', -1, 64)
}

func optimizerReport(info markov.IntervalFit) *FitOptimizer {
	return &FitOptimizer{
		LogLikelihood: round(info.LogLikelihood, 4), Iterations: info.Iterations, Status: info.Status,
		Starts: info.Starts, StartsAtBest: info.StartsAtBest, Rounds: info.Rounds, RelativeChange: sig(info.RelativeChange, 2),
		KKT: FitKKT{DualInfeasibility: sig(info.DualInfeasibility, 2), Complementarity: sig(info.Complementarity, 2),
			Tolerance: markov.KKTTolerance, Satisfied: info.KKT},
	}
}

// describe fills the deterioration block and per-state figures from the
// (rounded) matrix and the bootstrap replicates.
func describe(fc *FitClass, p *markov.Transition, scale *Scale, reps []*markov.Transition) {
	n := p.States()
	fc.Deterioration = FitDeterioration{Matrix: p.Rows()}
	for i := 0; i < n; i++ {
		for j := 0; j < i; j++ {
			if p.At(i, j) > 0 {
				fc.Deterioration.AllowImprovement = true
			}
		}
	}
	if fc.Notes == nil {
		fc.Notes = []string{}
	}
	yis := p.YearsInState()
	abs, absErr := p.YearsToWorst()
	if absErr != nil {
		fc.Notes = append(fc.Notes, "years to the worst state cannot be computed: some state never reaches it under this matrix")
	}
	fc.PerState = make([]FitState, n)
	for i := 0; i < n; i++ {
		st := FitState{State: scale.States[i].Name, Stay: p.At(i, i)}
		if !math.IsInf(yis[i], 1) {
			st.YearsInState = ptr(round(yis[i], 2))
		}
		if absErr == nil && i < n-1 {
			st.YearsToWorst = ptr(round(abs.Mean[i], 2))
			st.YearsToWorstSD = ptr(round(math.Sqrt(math.Max(abs.Variance[i], 0)), 2))
		}
		if len(reps) > 0 && (i < n-1 || fc.Deterioration.AllowImprovement) {
			stays := make([]float64, len(reps))
			for r, rep := range reps {
				stays[r] = rep.At(i, i)
			}
			slices.Sort(stays)
			// Percentile interval (Efron and Tibshirani, 1993, ch. 13).
			lo := stat.Quantile(0.025, stat.Empirical, stays, nil)
			hi := stat.Quantile(0.975, stat.Empirical, stays, nil)
			st.StayLow, st.StayHigh = ptr(lo), ptr(hi)
			if hi < 1 {
				st.YearsInStateLow, st.YearsInStateHigh = ptr(round(1/(1-lo), 2)), ptr(round(1/(1-hi), 2))
			}
		}
		fc.PerState[i] = st
	}
}

func exclusionSummary(p markov.Preparation) string {
	var parts []string
	add := func(n int, what string) {
		if n > 0 {
			parts = append(parts, fmt.Sprintf("%d %s", n, what))
		}
	}
	add(p.WithWork, "with work between")
	add(p.TooClose, "under half a year apart")
	add(p.TooFar, "over 50 years apart")
	if !p.ImprovedKept {
		add(p.Improved, "improving without recorded work")
	}
	add(p.Impossible, "dropping more states than years")
	return strings.Join(parts, ", ")
}

func intervalList(p markov.Preparation) string {
	var parts []string
	for _, y := range p.ByYears {
		parts = append(parts, fmt.Sprintf("%d pairs %d years apart", y.Pairs, y.Years))
	}
	return strings.Join(parts, ", ")
}

func refList(refs []markov.RefPair, total int) string {
	parts := make([]string, len(refs))
	for k, r := range refs {
		parts[k] = fmt.Sprintf("%d-%d", r.First, r.Second)
	}
	s := strings.Join(parts, ", ")
	if total > len(refs) {
		s += fmt.Sprintf(" and %d more", total-len(refs))
	}
	return s
}

func noteExclusions(fc *FitClass, p markov.Preparation, class string) {
	if fc.Notes == nil {
		fc.Notes = []string{}
	}
	if p.Improved > 0 {
		if p.ImprovedKept {
			fc.Notes = append(fc.Notes, fmt.Sprintf("%d pairs improve without recorded work and were kept (keep-improvements; lines %s)", p.Improved, refList(p.ImprovedExamples, p.Improved)))
		} else {
			fc.Notes = append(fc.Notes, fmt.Sprintf("%d pairs improve without recorded work, probably data errors or unrecorded work, and were left out (lines %s); --keep-improvements keeps them", p.Improved, refList(p.ImprovedExamples, p.Improved)))
		}
	}
	if p.Impossible > 0 {
		fc.Notes = append(fc.Notes, fmt.Sprintf("%d pairs drop more states than years and were left out under --one-step (lines %s)", p.Impossible, refList(p.ImpossibleExamples, p.Impossible)))
	}
	if p.TooClose > 0 {
		fc.Notes = append(fc.Notes, fmt.Sprintf("%d pairs are under half a year apart and were left out (lines %s)", p.TooClose, refList(p.TooCloseExamples, p.TooClose)))
	}
	if p.TooFar > 0 {
		fc.Notes = append(fc.Notes, fmt.Sprintf("%d pairs are over %d years apart and were left out", p.TooFar, markov.MaxIntervalYears))
	}
}

func ptr(v float64) *float64 { return &v }

// round rounds to d decimals; sig to d significant digits. Reported
// figures are rounded so that files stay readable; the matrix itself is
// rounded by markov.Transition.Rounded.
func round(v float64, d int) float64 {
	p := math.Pow(10, float64(d))
	return math.Round(v*p) / p
}

func sig(v float64, d int) float64 {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	f, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', d, 64), 64)
	return f
}
