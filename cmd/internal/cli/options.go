package cli

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
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
	f.StringVar(&o.out, "out", "", "write to this file instead of standard output (for csv: a directory gets one file per table)")
	f.StringVar(&o.table, "table", defaultTable, "table written by --format csv: "+strings.Join(tables, ", "))
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
			return r.text(w)
		}
	}
	if o.out == "" {
		return render1(cmd.OutOrStdout())
	}
	if o.format == "csv" && isDir(o.out) {
		// One file per table, each written whole or not at all.
		for _, name := range o.tables {
			path := filepath.Join(o.out, name+".csv")
			if err := writeFileAtomic(path, func(w io.Writer) error { return r.csv(w, name) }); err != nil {
				return err
			}
		}
		fmt.Fprintf(cmd.ErrOrStderr(), "wrote %d tables to %s\n", len(o.tables), o.out)
		return nil
	}
	if err := writeFileAtomic(o.out, render1); err != nil {
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
	fill := table
	switch o.format {
	case "json":
		fill = json
	case "csv":
		fill = csv
	}
	if o.out == "" {
		return fill(cmd.OutOrStdout())
	}
	if err := writeFileAtomic(o.out, fill); err != nil {
		return err
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "wrote %s\n", o.out)
	return nil
}

func isDir(path string) bool {
	st, err := os.Stat(path)
	return err == nil && st.IsDir()
}

// writeFileAtomic writes through a temporary file in the same folder and
// renames it into place, so a failed run never leaves half a file.
func writeFileAtomic(path string, fill func(io.Writer) error) error {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp*")
	if err != nil {
		return &exitError{code: exitFailure, err: fmt.Errorf("cannot write %s: %w", path, err)}
	}
	keep := false
	defer func() {
		if !keep {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err := fill(tmp); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	// CreateTemp makes the file private (0600); once complete, make it
	// readable like any other written file, since output is handed on.
	if err := tmp.Chmod(0o644); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	keep = true
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

// loadScenario reads and checks a scenario file.
func loadScenario(path string) (*scenarios.Scenario, error) {
	return scenarios.LoadFile(path)
}
