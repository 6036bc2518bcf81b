// Package cli is the wearplan command tree: one file per command, shared
// options in options.go. Commands parse flags, call the domain packages and
// hand results to the renderers; they hold no planning logic.
package cli

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"wearplan/optimize"
	"wearplan/scenarios"
)

// Exit codes.
const (
	exitOK      = 0
	exitFailure = 1 // the run failed: solver, file system
	exitInput   = 2 // bad input or usage: fix the file or the command line
	exitTargets = 3 // --strict and the targets cannot be met
)

// Version is the wearplan version printed by --version and in reports.
var Version = "0.1.0-dev"

// exitError carries an exit code chosen by a command.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

// hintError adds a line of command-line hints to an error from a domain
// package, whose messages speak of settings, not of flags.
type hintError struct {
	err  error
	hint string
}

func (e *hintError) Error() string { return e.err.Error() + "\n" + e.hint }
func (e *hintError) Unwrap() error { return e.err }

// withHint returns err with the hint printed after it.
func withHint(err error, hint string) error { return &hintError{err: err, hint: hint} }

// usageError marks a mistake on the command line.
func usageError(format string, args ...any) error {
	return &exitError{code: exitInput, err: fmt.Errorf(format, args...)}
}

// Main runs the command line and returns the process exit code.
func Main(args []string, stdout, stderr io.Writer) int {
	// Standard output is buffered and written when the command ends: a
	// table, a CSV or a worklist would otherwise cost a system call per
	// row. Standard error is not, and whatever is buffered goes out before
	// each message on it, so that a terminal shows both in the order they
	// were written.
	out := bufio.NewWriterSize(stdout, outputBuffer)
	// Messages name files, classes and values from the input: no control
	// character in them reaches the terminal. The signal watcher runs on
	// a goroutine of its own and leaves the buffer alone: what it holds
	// is dropped when a signal stops the run.
	outs := newOutputs()
	outs.watchSignals(printableText(stderr))
	stderr = printableText(&flushingFirst{first: out, w: stderr})
	defer outs.unwatch()
	root := newRoot(out, stderr)
	root.SetArgs(args)
	err := root.ExecuteContext(withOutputs(context.Background(), outs))
	if ferr := out.Flush(); ferr != nil && err == nil {
		err = &exitError{code: exitFailure, err: fmt.Errorf("cannot write to standard output: %w", ferr)}
	}
	if err == nil {
		return exitOK
	}
	code := exitFailure
	var ee *exitError
	var ie *scenarios.InputError
	switch {
	case errors.As(err, &ee):
		code = ee.code
	case errors.As(err, &ie):
		code = exitInput
	case isCobraUsage(err):
		code = exitInput
	}
	fmt.Fprintf(stderr, "wearplan: %v\n", err)
	if hint := solverHint(err); hint != "" {
		fmt.Fprintln(stderr, hint)
	}
	if code == exitInput && !errors.As(err, &ie) {
		fmt.Fprintln(stderr, "Run 'wearplan help' or 'wearplan COMMAND --help' for usage and examples.")
	}
	return code
}

// solverHint is the command line's advice on a solver error (the domain's
// messages name no flags).
func solverHint(err error) string {
	var se *optimize.SolverError
	switch {
	case optimize.IsTimeout(err):
		return "Raise the limit with --timeout, or plan fewer years or classes."
	case errors.As(err, &se), errors.Is(err, optimize.ErrIterationCap), errors.Is(err, optimize.ErrStalled):
		return "wearplan tried both solvers (--solver flat and --solver decomposed) and lp_solve's other settings; please report the scenario with this message."
	}
	return ""
}

// outputBuffer is the size of the buffers in front of standard output and
// of every file written: large enough that a plan's JSON of a few
// megabytes takes a few dozen writes.
const outputBuffer = 64 << 10

// flushingFirst writes what first holds before each write to w.
type flushingFirst struct {
	first *bufio.Writer
	w     io.Writer
}

func (f *flushingFirst) Write(b []byte) (int, error) {
	// An error on standard output is reported when the command ends.
	_ = f.first.Flush()
	return f.w.Write(b)
}

// flushOutput writes out what a command has buffered for standard output:
// for a command that keeps running after it has printed something
// (serve).
func flushOutput(cmd *cobra.Command) {
	if f, ok := cmd.OutOrStdout().(interface{ Flush() error }); ok {
		_ = f.Flush()
	}
}

// isCobraUsage recognises cobra's own argument and flag errors.
func isCobraUsage(err error) bool {
	msg := err.Error()
	for _, p := range []string{"unknown command", "unknown flag", "unknown shorthand", "flag needs an argument", "invalid argument", "accepts ", "requires at least", "requires at most"} {
		if strings.Contains(msg, p) {
			return true
		}
	}
	return false
}

func newRoot(stdout, stderr io.Writer) *cobra.Command {
	root := &cobra.Command{
		Use:   "wearplan",
		Short: "Plan a funded multi-year maintenance work program from condition data",
		Long: `wearplan forecasts the condition of infrastructure asset classes with Markov
transition matrices and chooses the yearly treatment mix with a linear program,
under budget caps and condition targets.

Write a scenario file (YAML: asset classes, condition scales, deterioration,
treatments, budget, targets), check it, then forecast or plan it.
Output is a planning estimate, not an engineering assessment of any asset.`,
		Example: `  wearplan check scenarios/examples/marrowby.yaml
  wearplan forecast scenarios/examples/marrowby.yaml
  wearplan plan scenarios/examples/marrowby.yaml --format json --out plan.json
  wearplan worklist scenarios/examples/marrowby.yaml --format csv --out worklist.csv`,
		Version:       Version,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetOut(stdout)
	root.SetErr(stderr)
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return usageError("%w", err) })
	root.AddCommand(newCheckCmd(), newForecastCmd(), newPlanCmd(), newLongRunCmd(), newSweepCmd(), newCompareCmd(), newReportCmd(), newFitCmd(), newWorklistCmd(), newSimulateCmd(), newServeCmd())
	return root
}
