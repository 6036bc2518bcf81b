package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

var fitFormats = []string{"table", "json", "csv", "md"}

// fitOptions are the flags of wearplan fit.
type fitOptions struct {
	scenario, scalesFile, scale string
	classes                     []string
	columns                     []string
	delimiter, decimal          string
	dateFormat                  string
	method                      string
	oneStep, keepImprovements   bool
	yearsInState                []string
	bootstrap                   int
	seed                        int
	skipBadRows                 bool
	by                          []string
	mergeAlike                  bool
	covariates, at              []string
	link                        string
	save                        string
	format, out, table          string
}

func newFitCmd() *cobra.Command {
	var o fitOptions
	cmd := &cobra.Command{
		Use:   "fit [INSPECTIONS.csv]",
		Short: "Estimate deterioration matrices from inspection history",
		Long: `Fit turns an inspection export into a one-year transition matrix per asset
class, with the evidence: how the data were prepared, how uncertain each
probability is, how well the matrix fits, and what it implies (years in each
state, years to reach the worst state).

The export is a CSV file with a header and the columns asset, class, inspected
(a year such as 2021 or an ISO date such as 2021-06-14), condition (an index
value, mapped to states through the class's scale, or a state name) and,
optionally, work (non-empty when work was done since the asset's previous
inspection; 0, no, n, false, none and - also mean no work). Other columns are
ignored; --column maps other header names.

Scales: --scenario FILE uses each class's scale from that scenario (every
class in the export must be one of its classes), read as check reads it
(extends, presets named in classes); --scale NAME uses one scale for every
class, read from --scales FILE (any scenario-syntax YAML file) or from
--scenario FILE; --scale preset:NAME needs no file.

Methods (--method):
  counting        pairs of inspections one year apart: p_ij = n_ij / n_i
                  (Anderson and Goodman, 1957); the default.
  interval        pairs of any whole number of years apart, each with
                  probability (P^years)_ij, maximised numerically.
  years-in-state  a matrix from expected years in each state (judgement,
                  --years-in-state CLASS=D1,D2,...); with an export, the data
                  only test it.

Pairs with work between them are left out; a pair that improves without
recorded work is a probable data error and is left out unless
--keep-improvements. --one-step allows at most one state a year. When work
looks condition-driven enough to bias the staying probabilities, the report
warns with the figures.

Families: --by COLUMN (repeat for several columns) fits a matrix per family
of assets (traffic band, surface, district...) besides the class's, and
tests whether the families differ (likelihood ratio; with counting, also
Anderson and Goodman's chi-square); --merge-alike merges families a test
cannot tell apart at the 5% level.

Covariates: --covariate COLUMN (repeat) also fits an ordered logit model of
the yearly drop in state from numeric columns (--link probit for ordered
probit), with standard errors and a likelihood-ratio test against the matrix
alone; --at COLUMN=V1,V2,... gives its matrices at those values (others at
their means), for a scenario to use with deterioration: {fit: FILE, at: NAME}.

--save FILE writes the fit file (YAML) that a scenario class can use with
deterioration: {fit: FILE}. Output is a statistical estimate for planning, to
be reviewed by qualified people before it drives decisions.`,
		Example: `  # Fit the invented Marrowby inspections with the demo scenario's scales
  wearplan fit scenarios/examples/marrowby-inspections.csv \
      --scenario scenarios/examples/marrowby.yaml --save out/marrowby-fit.yaml

  # Inspections every second year: maximum likelihood over any interval
  wearplan fit inspections.csv --scenario scenarios/examples/marrowby.yaml --method interval

  # An export with its own column names, one scale for every class
  wearplan fit export.csv --scales scenarios/examples/marrowby.yaml --scale pci \
      --column asset=SEGMENT_ID --column inspected=SURVEY_DATE --column condition=PCI

  # A matrix per traffic band, and a model of wear from traffic and age
  wearplan fit export.csv --scenario roads.yaml --method interval --by traffic_band \
      --covariate aadt --covariate age --at aadt=500,5000,20000 --save roads-fit.yaml

  # A matrix from judgement alone, with what it implies
  wearplan fit --scenario scenarios/examples/marrowby.yaml \
      --method years-in-state --years-in-state culverts=10,8,7,5`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error { return o.run(cmd, args) },
	}
	f := cmd.Flags()
	f.StringVar(&o.scenario, "scenario", "", "scenario whose classes' scales map conditions to states")
	f.StringVar(&o.scalesFile, "scales", "", "YAML file with a scales: section (used with --scale)")
	f.StringVar(&o.scale, "scale", "", "use this scale for every class")
	f.StringArrayVar(&o.classes, "class", nil, "fit only this class (repeat for several)")
	f.StringArrayVar(&o.columns, "column", nil, "map a column: asset|class|inspected|condition|work=HEADER (repeat)")
	f.StringVar(&o.delimiter, "delimiter", ",", `delimiter between the export's fields (one character; "tab" for tabs)`)
	f.StringVar(&o.delimiter, "separator", ",", "the same as --delimiter")
	_ = f.MarkDeprecated("separator", "use --delimiter")
	f.StringVar(&o.decimal, "decimal", ".", `decimal mark of the export's condition values: "." or ","`)
	f.StringVar(&o.dateFormat, "date-format", "ISO", "how the export writes dates: ISO (2021-06-14), DD/MM/YYYY (day first), MM/DD/YYYY, DD.MM.YYYY...; years alone and ISO dates are always read")
	f.StringVar(&o.method, "method", scenarios.MethodCounting, "estimation method: "+strings.Join(scenarios.FitMethods(), ", "))
	f.BoolVar(&o.oneStep, "one-step", false, "allow at most one state of change a year")
	f.BoolVar(&o.keepImprovements, "keep-improvements", false, "keep pairs that improve without recorded work (and allow such moves)")
	f.StringArrayVar(&o.yearsInState, "years-in-state", nil, "CLASS=D1,D2,...: expected years in each state but the worst (method years-in-state)")
	f.IntVar(&o.bootstrap, "bootstrap", 1000, "bootstrap resamples of assets for the intervals (0 for none)")
	f.IntVar(&o.seed, "seed", 1, "seed of the bootstrap: the same seed gives the same result")
	f.BoolVar(&o.skipBadRows, "skip-bad-rows", false, "leave out rows that cannot be read, with a warning, instead of stopping")
	f.StringArrayVar(&o.by, "by", nil, "fit a matrix per family of assets, by the values of this column (repeat for several columns)")
	f.BoolVar(&o.mergeAlike, "merge-alike", false, "with --by: merge families that a test cannot tell apart at the 5% level")
	f.StringArrayVar(&o.covariates, "covariate", nil, "model the yearly drop in state from this numeric column too (repeat for several)")
	f.StringArrayVar(&o.at, "at", nil, "COVARIATE=V1,V2,...: matrices of the covariate model at these values (repeat; others at their means)")
	f.StringVar(&o.link, "link", "logit", "covariate model: logit (ordered logit) or probit (ordered probit)")
	f.StringVar(&o.save, "save", "", "write the fit file (YAML) for scenarios to use with deterioration: {fit: FILE}")
	f.StringVar(&o.format, "format", "table", "report format: "+strings.Join(fitFormats, ", "))
	f.StringVar(&o.out, "out", "", "write the report to this file (for csv: a directory gets one file per table)")
	f.StringVar(&o.table, "table", "matrix", "table written by --format csv: "+strings.Join(render.FitCSVTables, ", "))
	registerForce(cmd)
	return cmd
}

func (o *fitOptions) validate(args []string) error {
	if !slices.Contains(fitFormats, o.format) {
		return usageError("--format %q: choose one of %s", o.format, strings.Join(fitFormats, ", "))
	}
	if !slices.Contains(render.FitCSVTables, o.table) {
		return usageError("--table %q: choose one of %s", o.table, strings.Join(render.FitCSVTables, ", "))
	}
	if !slices.Contains(scenarios.FitMethods(), o.method) {
		return usageError("--method %q: choose one of %s", o.method, strings.Join(scenarios.FitMethods(), ", "))
	}
	if o.bootstrap < 0 || o.bootstrap > 100000 {
		return usageError("--bootstrap %d: give 0 to 100000 resamples", o.bootstrap)
	}
	if o.seed < 0 {
		return usageError("--seed %d: give zero or a positive number", o.seed)
	}
	if o.scenario != "" && o.scalesFile != "" {
		return usageError("give --scenario or --scales, not both")
	}
	if o.scenario == "" && o.scalesFile == "" && !strings.HasPrefix(o.scale, scenarios.PresetPrefix) {
		return usageError("say where the condition scales come from: --scenario FILE (each class's scale), --scales FILE --scale NAME (one scale for every class), or --scale preset:NAME (a built-in scale for every class)")
	}
	if o.scalesFile != "" && o.scale == "" {
		return usageError("--scales FILE needs --scale NAME: the scale to use for every class")
	}
	if len(o.yearsInState) > 0 && o.method != scenarios.MethodYearsInState {
		return usageError("--years-in-state goes with --method years-in-state")
	}
	if o.method == scenarios.MethodYearsInState && o.keepImprovements {
		return usageError("--keep-improvements does not apply to --method years-in-state: a matrix from years in state never improves")
	}
	if len(o.by) > 0 && o.method == scenarios.MethodYearsInState {
		return usageError("--by fits a matrix per family from the data; --method years-in-state sets matrices by judgement")
	}
	if o.mergeAlike && len(o.by) == 0 {
		return usageError("--merge-alike merges families: give --by COLUMN")
	}
	for i, c := range o.by {
		if strings.TrimSpace(c) == "" || slices.Contains(o.by[:i], c) {
			return usageError("--by %q: name each column once", c)
		}
	}
	if len(o.covariates) > 0 && o.method == scenarios.MethodYearsInState {
		return usageError("--covariate fits a model from the data; --method years-in-state sets matrices by judgement")
	}
	if len(o.covariates) > 0 && o.keepImprovements {
		return usageError("--covariate models drops in condition; it cannot be used with --keep-improvements")
	}
	if len(o.at) > 0 && len(o.covariates) == 0 {
		return usageError("--at gives covariate values: name the covariates with --covariate COLUMN")
	}
	if o.link != "logit" && o.link != "probit" {
		return usageError("--link %q: choose logit or probit", o.link)
	}
	if len(args) == 0 && o.method != scenarios.MethodYearsInState {
		return usageError("give the inspection export (CSV); only --method years-in-state works without one")
	}
	return nil
}

// readOptions maps --delimiter, --decimal and --date-format to the
// reader's settings.
func (o *fitOptions) readOptions() (scenarios.InspectionOptions, error) {
	var opt scenarios.InspectionOptions
	var err error
	if opt.Delimiter, err = scenarios.ParseDelimiter(o.delimiter); err != nil {
		return opt, usageError("--delimiter %w", err)
	}
	if opt.Decimal, err = scenarios.ParseDecimal(o.decimal); err != nil {
		return opt, usageError("--decimal %w", err)
	}
	if opt.DateFormat, err = scenarios.ParseDateFormat(o.dateFormat); err != nil {
		return opt, usageError("--date-format %w", err)
	}
	return opt, nil
}

func (o *fitOptions) columnMap() (scenarios.InspectionColumns, error) {
	cols := scenarios.DefaultInspectionColumns()
	for _, c := range o.columns {
		key, header, ok := strings.Cut(c, "=")
		header = strings.TrimSpace(header)
		if !ok || header == "" {
			return cols, usageError("--column %q: write KEY=HEADER, e.g. --column inspected=SURVEY_DATE", c)
		}
		switch strings.ToLower(strings.TrimSpace(key)) {
		case "asset":
			cols.Asset = header
		case "class":
			cols.Class = header
		case "inspected":
			cols.Inspected = header
		case "condition":
			cols.Condition = header
		case "work":
			cols.Work = header
		default:
			return cols, usageError("--column %q: the key is one of asset, class, inspected, condition, work", c)
		}
	}
	return cols, nil
}

// atValues reads --at COVARIATE=V1,V2,...
func (o *fitOptions) atValues() ([]scenarios.CovariateValues, error) {
	var out []scenarios.CovariateValues
	for _, spec := range o.at {
		name, list, ok := strings.Cut(spec, "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" || strings.TrimSpace(list) == "" {
			return nil, usageError("--at %q: write COVARIATE=V1,V2,..., e.g. --at aadt=500,5000,20000", spec)
		}
		if !slices.Contains(o.covariates, name) {
			return nil, usageError("--at %q: %s is not a covariate; name it with --covariate %s", spec, name, name)
		}
		cv := scenarios.CovariateValues{Covariate: name}
		for _, f := range strings.Split(list, ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, usageError("--at %q: %q is not a number", spec, strings.TrimSpace(f))
			}
			cv.Values = append(cv.Values, v)
		}
		out = append(out, cv)
	}
	return out, nil
}

func (o *fitOptions) judgement() (map[string][]float64, []string, error) {
	out := map[string][]float64{}
	var order []string
	for _, spec := range o.yearsInState {
		class, list, ok := strings.Cut(spec, "=")
		class = strings.TrimSpace(class)
		if !ok || class == "" {
			return nil, nil, usageError("--years-in-state %q: write CLASS=D1,D2,... (years in each state but the worst)", spec)
		}
		if _, dup := out[class]; dup {
			return nil, nil, usageError("--years-in-state: class %q given twice", class)
		}
		var ys []float64
		for _, f := range strings.Split(list, ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
			if err != nil {
				return nil, nil, usageError("--years-in-state %q: %q is not a number", spec, strings.TrimSpace(f))
			}
			ys = append(ys, v)
		}
		out[class] = ys
		order = append(order, class)
	}
	return out, order, nil
}

func (o *fitOptions) run(cmd *cobra.Command, args []string) error {
	if err := o.validate(args); err != nil {
		return err
	}
	read, err := o.readOptions()
	if err != nil {
		return err
	}
	cols, err := o.columnMap()
	if err != nil {
		return err
	}
	judged, judgedOrder, err := o.judgement()
	if err != nil {
		return err
	}
	at, err := o.atValues()
	if err != nil {
		return err
	}
	source := o.scenario
	if o.scalesFile != "" {
		source = o.scalesFile
	}
	set := &scenarios.ScaleSet{Scales: map[string]*scenarios.Scale{}}
	if source != "" {
		if set, err = scenarios.LoadScaleSet(source); err != nil {
			return err
		}
	}
	outs := outputsOf(cmd)
	outs.read(source, "the file the scales come from")
	for _, b := range set.Bases {
		outs.read(filepath.Join(folderOf(source), filepath.FromSlash(b)), "a base scenario the scales come from")
	}
	if len(args) > 0 {
		outs.read(args[0], "the inspection export")
	}
	scaleFor := set.ForClass
	if o.scale != "" {
		s, ok := set.Scales[o.scale]
		if !ok && strings.HasPrefix(o.scale, scenarios.PresetPrefix) {
			if s, err = scenarios.PresetScale(o.scale); err != nil {
				return usageError("--scale: %w", err)
			}
			ok = true
			if source == "" {
				source = o.scale
			}
		}
		if !ok {
			return usageError("--scale %q: %s defines %s; or name a built-in scale, --scale preset:NAME", o.scale, source, strings.Join(set.Names(), ", "))
		}
		scaleFor = func(string) *scenarios.Scale { return s }
	}
	opt := scenarios.FitOptions{
		Method: o.method, OneStep: o.oneStep, KeepImprovements: o.keepImprovements,
		Bootstrap: o.bootstrap, Seed: o.seed, YearsInState: judged, ScalesFrom: source,
		By: o.by, MergeAlike: o.mergeAlike, Covariates: o.covariates, Link: o.link, At: at,
	}
	var res *scenarios.FitResult
	if len(args) == 0 {
		var classes []scenarios.JudgedClass
		for _, name := range judgedOrder {
			s := scaleFor(name)
			if s == nil {
				return usageError("--years-in-state %s: %s has no class %q (its classes: %s); or give --scale NAME", name, source, name, strings.Join(set.Classes, ", "))
			}
			classes = append(classes, scenarios.JudgedClass{Name: name, Scale: s, Years: judged[name]})
		}
		if len(classes) == 0 {
			return usageError("--method years-in-state without an export needs --years-in-state CLASS=D1,D2,...")
		}
		res, err = scenarios.FitFromJudgement(classes, opt)
	} else {
		read.Columns, read.ScaleFor, read.Only, read.SkipBadRows = cols, scaleFor, o.classes, o.skipBadRows
		read.By, read.Covariates = o.by, o.covariates
		res, err = o.fitFile(cmd.Context(), args[0], read, opt)
	}
	if err != nil {
		return err
	}
	if o.save != "" {
		if err := outs.file(o.save, "--save", func(w io.Writer) error { return scenarios.WriteFitFile(w, res) }); err != nil {
			return err
		}
		fmt.Fprintf(cmd.ErrOrStderr(), "wrote the fit file %s\n", o.save)
	}
	if err := o.write(cmd, res); err != nil {
		return err
	}
	if o.format != "table" && o.format != "md" {
		for _, w := range res.Warnings {
			fmt.Fprintf(cmd.ErrOrStderr(), "warning: %s\n", w)
		}
	}
	return nil
}

func (o *fitOptions) fitFile(ctx context.Context, path string, read scenarios.InspectionOptions, opt scenarios.FitOptions) (*scenarios.FitResult, error) {
	ins, err := scenarios.ReadInspectionsFile(path, read)
	if err != nil && !inContent(err) {
		return nil, err
	}
	if err != nil {
		return nil, withHint(err, "In wearplan fit the export's settings are --delimiter, --decimal and --date-format; --column maps column names, and --skip-bad-rows leaves rows that cannot be read out (with a warning).")
	}
	for _, c := range o.classes {
		found := false
		for _, ic := range ins.Classes {
			found = found || ic.Name == c
		}
		if !found {
			return nil, &scenarios.InputError{Issues: []*scenarios.Issue{{File: path, Field: "class", Msg: fmt.Sprintf("--class %s: no inspections of that class in the file", c)}}}
		}
	}
	return scenarios.FitContext(ctx, ins, opt)
}

func (o *fitOptions) write(cmd *cobra.Command, r *scenarios.FitResult) error {
	render1 := func(w io.Writer) error {
		switch o.format {
		case "json":
			return render.FitJSON(w, r)
		case "csv":
			return render.FitCSV(w, r, o.table)
		case "md":
			return render.FitMarkdown(printableText(w), r)
		default:
			return render.FitText(printableText(w), r)
		}
	}
	if o.out == "" {
		return render1(cmd.OutOrStdout())
	}
	outs := outputsOf(cmd)
	if o.format == "csv" && isSetTarget(o.out) {
		files := make([]setFile, len(render.FitCSVTables))
		for i, name := range render.FitCSVTables {
			files[i] = setFile{name: "fit-" + name + ".csv", fill: func(w io.Writer) error { return render.FitCSV(w, r, name) }}
		}
		if err := outs.set(o.out, "--out", files); err != nil {
			return err
		}
		fmt.Fprintf(cmd.ErrOrStderr(), "wrote %d tables to %s\n", len(render.FitCSVTables), o.out)
		return nil
	}
	if err := outs.file(o.out, "--out", render1); err != nil {
		return err
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "wrote %s\n", o.out)
	return nil
}

// inContent says whether an input error is about a file's content (some
// problem has a line) rather than about opening it.
func inContent(err error) bool {
	var ie *scenarios.InputError
	if errors.As(err, &ie) {
		for _, is := range ie.Issues {
			if is.Line > 0 {
				return true
			}
		}
	}
	return false
}
