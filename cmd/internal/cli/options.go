package cli

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/optimize"
	"wearplan/scenarios"
)

// outputOptions are the flags every reporting command shares.
type outputOptions struct {
	format string
	out    string
	table  string
	tables []string // the tables --format csv can write
}

var resultFormats = []string{"table", "json", "csv"}

// register adds the output flags of a command that prints a Result.
func (o *outputOptions) register(cmd *cobra.Command, defaultTable string) {
	o.registerTables(cmd, render.CSVTables, defaultTable)
}

// registerTables adds the output flags with the command's own CSV tables.
func (o *outputOptions) registerTables(cmd *cobra.Command, tables []string, defaultTable string) {
	o.tables = tables
	f := cmd.Flags()
	f.StringVar(&o.format, "format", "table", "output format: "+strings.Join(resultFormats, ", "))
	f.StringVar(&o.out, "out", "", "write to this file instead of standard output (for csv: a folder, created if missing, gets one file per table; a FILE.csv gets --table)")
	f.StringVar(&o.table, "table", defaultTable, "table written by --format csv: "+strings.Join(tables, ", "))
	registerForce(cmd)
}

// registerForce adds --force, which lets --out replace a file the run read
// (outputsOf reads it).
func registerForce(cmd *cobra.Command) {
	cmd.Flags().Bool("force", false, "let --out replace a file this run reads (the scenario, a base, a segment list, a fit file)")
}

func (o *outputOptions) validate() error {
	if !slices.Contains(resultFormats, o.format) {
		return usageError("--format %q: choose one of %s", o.format, strings.Join(resultFormats, ", "))
	}
	if !slices.Contains(o.tables, o.table) {
		return usageError("--table %q: choose one of %s", o.table, strings.Join(o.tables, ", "))
	}
	return nil
}

// renderers are one result's writers in each format.
type renderers struct {
	json func(io.Writer) error
	csv  func(w io.Writer, table string) error
	text func(io.Writer) error
}

// write renders r in the chosen format to standard output or to --out.
func (o *outputOptions) write(cmd *cobra.Command, r *scenarios.Result) error {
	return o.emit(cmd, renderers{
		json: func(w io.Writer) error { return render.JSON(w, r) },
		csv:  func(w io.Writer, table string) error { return render.CSV(w, r, table) },
		text: func(w io.Writer) error { return render.Text(w, r) },
	})
}

// emit writes with the chosen renderer to standard output or to --out.
func (o *outputOptions) emit(cmd *cobra.Command, r renderers) error {
	render1 := func(w io.Writer) error {
		switch o.format {
		case "json":
			return r.json(w)
		case "csv":
			return r.csv(w, o.table)
		default:
			return r.text(printableText(w))
		}
	}
	if o.out == "" {
		return render1(cmd.OutOrStdout())
	}
	outs := outputsOf(cmd)
	if o.format == "csv" && isSetTarget(o.out) {
		files := make([]setFile, len(o.tables))
		for i, name := range o.tables {
			files[i] = setFile{name: name + ".csv", fill: func(w io.Writer) error { return r.csv(w, name) }}
		}
		if err := outs.set(o.out, "--out", files); err != nil {
			return err
		}
		fmt.Fprintf(cmd.ErrOrStderr(), "wrote %d tables to %s\n", len(o.tables), o.out)
		return nil
	}
	if err := outs.file(o.out, "--out", render1); err != nil {
		return err
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "wrote %s\n", o.out)
	return nil
}

// formatOptions are the output flags of commands whose results are not a
// plan (longrun, sweep, compare): one table, one file.
type formatOptions struct {
	format string
	out    string
}

func (o *formatOptions) register(cmd *cobra.Command) {
	f := cmd.Flags()
	f.StringVar(&o.format, "format", "table", "output format: "+strings.Join(resultFormats, ", "))
	f.StringVar(&o.out, "out", "", "write to this file instead of standard output")
	registerForce(cmd)
}

func (o *formatOptions) validate() error {
	if !slices.Contains(resultFormats, o.format) {
		return usageError("--format %q: choose one of %s", o.format, strings.Join(resultFormats, ", "))
	}
	return nil
}

// write renders with the function of the chosen format, to standard output
// or (whole or not at all) to --out.
func (o *formatOptions) write(cmd *cobra.Command, table, json, csv func(io.Writer) error) error {
	fill := func(w io.Writer) error { return table(printableText(w)) }
	switch o.format {
	case "json":
		fill = json
	case "csv":
		fill = csv
	}
	if o.out == "" {
		return fill(cmd.OutOrStdout())
	}
	outs := outputsOf(cmd)
	if err := outs.file(o.out, "--out", fill); err != nil {
		return err
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "wrote %s\n", o.out)
	return nil
}

// solveOptions are the flags of commands that run the optimizer.
type solveOptions struct {
	timeout time.Duration
	solver  string
}

func (o *solveOptions) register(cmd *cobra.Command) {
	cmd.Flags().DurationVar(&o.timeout, "timeout", 5*time.Minute, "give up on a solve after this long (e.g. 30s, 10m)")
	cmd.Flags().StringVar(&o.solver, "solver", "auto", "auto, flat (one LP, the reference) or decomposed (column generation, for large networks); auto picks by model size")
}

func (o *solveOptions) scenarioOptions() (scenarios.Options, error) {
	m, err := optimize.ParseMethod(o.solver)
	if err != nil {
		return scenarios.Options{}, usageError("--solver %q: choose one of auto, flat, decomposed", o.solver)
	}
	return scenarios.Options{Timeout: o.timeout, Solver: m}, nil
}

// confidenceOptions are the flags of the search for plans that meet
// targets with a stated confidence (plan, report, compare, sweep); they
// matter only when a target states one.
type confidenceOptions struct {
	runs int
	seed uint64
}

func (o *confidenceOptions) register(cmd *cobra.Command) {
	f := cmd.Flags()
	f.IntVar(&o.runs, "confidence-runs", scenarios.DefaultConfidenceRuns, "for targets with a confidence: simulated runs each plan is measured on")
	f.Uint64Var(&o.seed, "confidence-seed", 1, "for targets with a confidence: random seed of those runs")
}

// apply checks the flags and sets them in the scenario options.
func (o *confidenceOptions) apply(opt *scenarios.Options) error {
	if o.runs < 100 || o.runs > scenarios.MaxRuns {
		return usageError("--confidence-runs %d: give between 100 and %d (the share of runs meeting a target needs at least 100 to mean much; 1000 is the default)", o.runs, scenarios.MaxRuns)
	}
	if o.seed == 0 {
		return usageError("--confidence-seed 0: give a seed of 1 or more")
	}
	opt.Confidence = scenarios.ConfidenceOptions{Runs: o.runs, Seed: o.seed}
	return nil
}

// robustOptions are the flags of a robust plan (plan --robust).
type robustOptions struct {
	samples int
	from    string
	seed    uint64
}

var robustFlagNames = []string{"robust", "robust-matrices", "robust-seed"}

func (o *robustOptions) register(cmd *cobra.Command) {
	f := cmd.Flags()
	f.IntVar(&o.samples, "robust", 0, "plan so that the targets hold under N matrix sets drawn for the classes fitted from inspections, and compare with the ordinary plan")
	f.StringVar(&o.from, "robust-matrices", scenarios.MatrixBootstrap, "how --robust draws matrices: bootstrap (the fit's replicates) or dirichlet (each row from the posterior of its counts)")
	f.Uint64Var(&o.seed, "robust-seed", 1, "random seed of the --robust draws")
}

// changed says whether a robust flag other than --robust was given.
func (o *robustOptions) changed(cmd *cobra.Command) bool {
	for _, name := range robustFlagNames[1:] {
		if cmd.Flags().Changed(name) {
			return true
		}
	}
	return false
}

func (o *robustOptions) options(cmd *cobra.Command) (*scenarios.RobustOptions, error) {
	if !cmd.Flags().Changed("robust") {
		return nil, usageError("--robust-matrices and --robust-seed need --robust N")
	}
	return &scenarios.RobustOptions{Samples: o.samples, From: o.from, Seed: o.seed}, nil
}

// simulateOptions are the flags that set up a simulation, shared by
// simulate and report --bands (which adds the bands to the report). The
// policy is not among them: simulate has --policy, and a report's bands are
// always those of the plan it shows.
type simulateOptions struct {
	runs     int
	seed     uint64
	matrix   string
	prior    float64
	lotSizes []string
}

// simulateFlagNames are the flags simulateOptions registers.
var simulateFlagNames = []string{"runs", "seed", "matrix-uncertainty", "dirichlet-prior", "lot-size"}

// simulateFlags maps each simulation option (scenarios.OptionError.Option)
// to the flag that sets it.
var simulateFlags = map[string]string{
	"runs":               "--runs",
	"policy":             "--policy",
	"matrix uncertainty": "--matrix-uncertainty",
	"dirichlet prior":    "--dirichlet-prior",
	"lot size":           "--lot-size",
	"robust samples":     "--robust",
	"robust matrices":    "--robust-matrices",
}

func (o *simulateOptions) register(cmd *cobra.Command) {
	f := cmd.Flags()
	f.IntVar(&o.runs, "runs", 1000, "number of simulated runs")
	f.Uint64Var(&o.seed, "seed", 1, "random seed: the same seed gives the same output")
	f.StringVar(&o.matrix, "matrix-uncertainty", scenarios.MatrixNone, "draw matrices per run: none, dirichlet (posterior of fitted counts) or bootstrap (fitted replicates)")
	f.Float64Var(&o.prior, "dirichlet-prior", 0.5, "symmetric Dirichlet prior for --matrix-uncertainty dirichlet: 0.5 (Jeffreys) or 1 (uniform)")
	f.StringArrayVar(&o.lotSizes, "lot-size", nil, "size of the pieces each class moves as, in its unit: SIZE for all classes or CLASS=SIZE (repeatable; default: the class's segment_size, else its segment list's segments, else its unit's default piece, e.g. 0.5 lane-km, 500 m2, 1 each)")
}

// changed returns the first simulation flag given on the command line, or "".
func (o *simulateOptions) changed(cmd *cobra.Command) string {
	for _, name := range simulateFlagNames {
		if cmd.Flags().Changed(name) {
			return "--" + name
		}
	}
	return ""
}

// options checks the flags and returns the simulation options they set,
// with the solver's timeout and method. The policy is left for the caller.
func (o *simulateOptions) options(solve solveOptions) (scenarios.SimulateOptions, error) {
	so, err := solve.scenarioOptions()
	if err != nil {
		return scenarios.SimulateOptions{}, err
	}
	opt := scenarios.SimulateOptions{Runs: o.runs, Seed: o.seed, Matrix: o.matrix, Prior: o.prior, Timeout: so.Timeout, Solver: so.Solver}
	if err := parseLotSizes(o.lotSizes, &opt); err != nil {
		return opt, err
	}
	if !(opt.Prior > 0) {
		return opt, usageError("--dirichlet-prior %g: give a positive number (0.5 is Jeffreys' prior, 1 the uniform prior)", opt.Prior)
	}
	return opt, nil
}

// simulateError turns an option the simulation refused into a usage error
// that names the flag, after prefix (a file name, or ""); other errors pass
// unchanged.
func simulateError(prefix string, err error) error {
	var oe *scenarios.OptionError
	if errors.As(err, &oe) {
		flag, ok := simulateFlags[oe.Option]
		if !ok {
			flag = oe.Option
		}
		if prefix != "" {
			flag = prefix + ": " + flag
		}
		return usageError("%s: %s", flag, oe.Msg)
	}
	return err
}

// parseLotSizes reads --lot-size values: SIZE or CLASS=SIZE.
func parseLotSizes(values []string, opt *scenarios.SimulateOptions) error {
	for _, v := range values {
		name, size, perClass := "", v, false
		if i := strings.LastIndex(v, "="); i >= 0 {
			name, size, perClass = strings.TrimSpace(v[:i]), v[i+1:], true
		}
		x, err := strconv.ParseFloat(strings.TrimSpace(size), 64)
		if err != nil || !(x > 0) || math.IsInf(x, 0) {
			return usageError("--lot-size %q: give a positive size in the class's unit, as SIZE (all classes) or CLASS=SIZE, e.g. --lot-size 0.5 or --lot-size bridge-decks=450", v)
		}
		switch {
		case perClass && name == "":
			return usageError("--lot-size %q: the class name before = is missing, e.g. bridge-decks=450", v)
		case perClass:
			if opt.ClassLotSize == nil {
				opt.ClassLotSize = map[string]float64{}
			}
			if _, dup := opt.ClassLotSize[name]; dup {
				return usageError("--lot-size: class %q is given twice; keep one size per class", name)
			}
			opt.ClassLotSize[name] = x
		case opt.LotSize != 0:
			return usageError("--lot-size %q: a size for all classes is already given (%s); give it once, and CLASS=SIZE for exceptions", v, strconv.FormatFloat(opt.LotSize, 'g', -1, 64))
		default:
			opt.LotSize = x
		}
	}
	return nil
}

// loadScenario reads and checks a scenario file, keeping of its segment
// lists what opt says, and notes the files it read as the run's inputs
// (which --out may not replace).
func loadScenario(cmd *cobra.Command, path string, opt scenarios.LoadOptions) (*scenarios.Scenario, error) {
	sc, err := scenarios.LoadFileWith(path, opt)
	if err != nil {
		return nil, err
	}
	outputsOf(cmd).readScenario(path, sc)
	return sc, nil
}

// Segment lists as commands need them: totals only for those that plan by
// state, segments without geometry for simulations, everything for the
// worklist.
var (
	totalsOnly   = scenarios.LoadOptions{CountSegments: true}
	segmentsOnly = scenarios.LoadOptions{NoGeometry: true}
	everything   = scenarios.LoadOptions{}
)
