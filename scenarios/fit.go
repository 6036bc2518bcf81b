package scenarios

import (
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
}

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
	Class  string   `yaml:"class" json:"class"`
	Scale  string   `yaml:"scale" json:"scale"`
	States []string `yaml:"states" json:"states"`
	Method string   `yaml:"method" json:"method"`
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
	Lines         lines          `yaml:"-" json:"-"`
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

// FitOptimizer reports the interval method's numerical maximisation.
type FitOptimizer struct {
	LogLikelihood float64 `yaml:"log_likelihood" json:"log_likelihood"`
	Iterations    int     `yaml:"iterations" json:"iterations"`
	Status        string  `yaml:"status" json:"status"`
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
	if !slices.Contains(FitMethods(), opt.Method) {
		return nil, fmt.Errorf("unknown method %q; use %s", opt.Method, strings.Join(FitMethods(), ", "))
	}
	if opt.Method == MethodYearsInState && opt.KeepImprovements {
		return nil, errors.New("years-in-state never improves; drop keep-improvements")
	}
	if opt.Bootstrap < 0 {
		return nil, fmt.Errorf("bootstrap %d: give zero or more resamples", opt.Bootstrap)
	}
	res := newFitResult(opt)
	res.Source, res.Rows, res.Skipped, res.BadRows = ins.Source, ins.Rows, ins.Skipped, ins.BadRows
	res.Warnings = append(res.Warnings, ins.Warnings...)
	is := &issues{file: ins.Source}
	for k := range ins.Classes {
		c := &ins.Classes[k]
		fc, ok := fitClass(c, opt, is)
		if ok {
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

func fitClass(c *InspectionClass, opt FitOptions, is *issues) (*FitClass, bool) {
	n := len(c.Scale.States)
	s := markov.Structure{OneStep: opt.OneStep || opt.Method == MethodYearsInState, Improvement: opt.KeepImprovements}
	sample, readings, prep, err := markov.Prepare(c.Histories, n, s)
	if err != nil {
		fitIssue(is, 0, c.Name, "%v", err)
		return nil, false
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
		fitIssue(is, firstInspectionLine(c), c.Name, "no asset has two inspections (%d assets, one inspection each), so there is no change to fit; an export with several years of inspections is needed", prep.Assets)
		return nil, false
	case prep.Used == 0 && prep.WithWork == prep.Pairs:
		fitIssue(is, firstInspectionLine(c), c.Name, "all %d pairs of consecutive inspections have work recorded between them, so none shows deterioration alone; check the work column (empty, 0 or no mean no work)", prep.Pairs)
		return nil, false
	case prep.Used == 0:
		fitIssue(is, firstInspectionLine(c), c.Name, "none of the %d pairs of consecutive inspections can be used (%s)", prep.Pairs, exclusionSummary(prep))
		return nil, false
	}
	noteExclusions(fc, prep, c.Name)

	// Estimate.
	var p *markov.Transition
	used := sample
	fitted := true
	switch opt.Method {
	case MethodCounting:
		used = sample.Filter(func(pr markov.Pair) bool { return pr.Years == 1 })
		if len(used.Pairs()) == 0 {
			fitIssue(is, firstInspectionLine(c), c.Name, "no pairs of inspections one year apart (intervals used: %s); the counting method needs yearly pairs: use --method interval", intervalList(prep))
			return nil, false
		}
		if len(used.Pairs()) < prep.Used/2 {
			fc.Notes = append(fc.Notes, fmt.Sprintf("only %d of %d usable pairs are one year apart; --method interval would use them all", len(used.Pairs()), prep.Used))
		}
		p, err = markov.CountingMLE(used.Counts(), s)
	case MethodInterval:
		var info markov.IntervalFit
		p, info, err = markov.IntervalMLE(sample.Counts(), s, nil)
		if err == nil {
			fc.Optimizer = &FitOptimizer{LogLikelihood: round(info.LogLikelihood, 4), Iterations: info.Iterations, Status: info.Status}
		}
	case MethodYearsInState:
		years, ok := opt.YearsInState[c.Name]
		if !ok {
			fitIssue(is, firstInspectionLine(c), c.Name, "method years-in-state needs the class's expected years in each state: --years-in-state %s=D1,D2,...", c.Name)
			return nil, false
		}
		p, ok = judgedMatrix(c.Name, c.Scale, years, is)
		if !ok {
			return nil, false
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
			fitIssue(is, firstInspectionLine(c), c.Name, "no usable pair starts in state %s, so its row cannot be estimated; %s", strings.Join(names, ", "), hint)
			return nil, false
		}
		fitIssue(is, firstInspectionLine(c), c.Name, "%v", err)
		return nil, false
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

	// Observed against predicted mean condition.
	values := make([]float64, n)
	for i, st := range c.Scale.States {
		values[i] = st.Value
	}
	points, err := markov.MeanCondition(readings, p, values)
	if err != nil {
		fitIssue(is, 0, c.Name, "%v", err)
		return nil, false
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
	return fc, true
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
