package cli

import (
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/report"
	"wearplan/scenarios"
)

var reportFormats = []string{"html", "md", "xlsx"}

func newReportCmd() *cobra.Command {
	var solve solveOptions
	var conf confidenceOptions
	var sim simulateOptions
	var withBands bool
	var format, out, date, sweep string
	cmd := &cobra.Command{
		Use:   "report FILE [FILE...]",
		Short: "Write the plan as an HTML page, Markdown or an Excel workbook",
		Long: `Report plans each scenario file and writes the report planners hand on:

  html  one self-contained page (no scripts, nothing loaded from anywhere):
        a one-page summary (targets met or not, score, the funding gap in one
        sentence, the network's level of service and condition chart), then
        per scenario the level-of-service table (per class and network: today
        and the end of year 1, 5, 10 and the last), charts (condition shares
        per year for the network and each class, spend against budget),
        targets, funding (least level budgets that meet the targets and hold
        today's condition, extra money by year, the money per missed target,
        routine costs), spend by class and budget group (stacked bars against
        the caps and tables), the work program, the asset management plan
        indicators (remaining life, depreciated replacement cost, consumption
        and renewal ratios, with definitions and sources), the assumptions
        (scales, deterioration matrices, treatments and costs, escalation,
        discount rate, weights, budget, targets), the caution paragraph and
        run details (wearplan version, SHA-256 of each input file, date);
  md    the same content as Markdown tables, for pasting into documents
        (charts are in the HTML report only);
  xlsx  a workbook: About, Summary (with a chart), then one sheet each for
        the work program, condition by year, level of service, spend and
        budget, spend by class, funding, targets, indicators, renewal ratios,
        remaining life and inputs; numbers are stored as numbers (money
        rounded to cents) with units in the headers.

Several files make a comparison report: level of service and spend side by
side, then a section for each scenario. The date defaults to today; give
--date to make the report reproducible: the same files, version and date
give the same HTML and Markdown, byte for byte.

--bands also simulates each plan at segment level, as wearplan simulate does
(--runs, --seed, --lot-size, --matrix-uncertainty and --dirichlet-prior set
it up the same way), and adds how sure the forecast is: for the network and
each class a chart of the poor and good shares with the plan, the median and
the 5th-95th percentile band of the runs; the poor share's range in the
level-of-service table; the probability that each target is met; which
sources of uncertainty the bands include; and in the workbook the sheets
Bands and Target probabilities. The same seed gives the same report.`,
		Example: `  # The demo as a web page
  wearplan report scenarios/examples/marrowby.yaml --out marrowby.html

  # The same as Markdown with a fixed date, and as a workbook
  wearplan report scenarios/examples/marrowby.yaml --format md --date 2027-01-15 --out marrowby.md
  wearplan report scenarios/examples/marrowby.yaml --format xlsx --out marrowby.xlsx

  # Two funding options side by side
  wearplan report scenarios/examples/marrowby.yaml scenarios/examples/marrowby-reduced.yaml --out options.html

  # With the condition score against yearly budget from 2 to 6 million
  wearplan report scenarios/examples/marrowby.yaml --sweep 2e6:6e6:500000 --out marrowby.html

  # With uncertainty bands from 1000 simulated runs (seed 7)
  wearplan report scenarios/examples/marrowby.yaml --bands --seed 7 --out marrowby.html`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			solveOpt, err := solve.scenarioOptions()
			if err != nil {
				return err
			}
			if err := conf.apply(&solveOpt); err != nil {
				return err
			}
			if !slices.Contains(reportFormats, format) {
				return usageError("--format %q: choose one of %s", format, strings.Join(reportFormats, ", "))
			}
			if format == "xlsx" && out == "" {
				return usageError("--format xlsx writes a binary workbook: name the file with --out FILE.xlsx")
			}
			if date == "" {
				date = time.Now().Format(time.DateOnly)
			} else if _, err := time.Parse(time.DateOnly, date); err != nil {
				return usageError("--date %q: give the date as YYYY-MM-DD, e.g. 2027-01-15", date)
			}
			var simOpt scenarios.SimulateOptions
			if withBands {
				var err error
				if simOpt, err = sim.options(solve); err != nil {
					return err
				}
				simOpt.Policy = scenarios.PolicyPlan
			} else if flag := sim.changed(cmd); flag != "" {
				return usageError("%s sets up the uncertainty bands: add --bands", flag)
			}
			var sweepBudgets []float64
			if sweep != "" {
				if len(args) != 1 {
					return usageError("--sweep draws condition against budget for one scenario; give one file")
				}
				var err error
				if sweepBudgets, err = parseBudgets(sweep); err != nil {
					return err
				}
			}
			rep := &report.Report{Details: report.Details{Version: Version, Date: date}}
			keep := totalsOnly
			if withBands {
				keep = segmentsOnly
			}
			for _, path := range args {
				sc, err := loadScenario(cmd, path, keep)
				if err != nil {
					return err
				}
				r, err := scenarios.PlanContext(cmd.Context(), sc, solveOpt)
				if err != nil {
					return err
				}
				if r.Status == scenarios.TargetsNotMet {
					fmt.Fprintf(cmd.ErrOrStderr(), "%s: ", path)
					warnShortfalls(cmd, r)
				}
				run := report.Run{Scenario: sc, Result: r}
				if withBands {
					prefix := ""
					if len(args) > 1 {
						prefix = path
					}
					if run.Simulation, err = scenarios.SimulateContext(cmd.Context(), sc, simOpt); err != nil {
						return simulateError(prefix, err)
					}
				}
				rep.Runs = append(rep.Runs, run)
				for _, in := range sc.Inputs {
					// Names are relative to the scenario's folder; show them
					// as the user would type them.
					rep.Details.Inputs = append(rep.Details.Inputs, report.InputFile{Path: filepath.Join(filepath.Dir(path), filepath.FromSlash(in.Name)), SHA256: in.SHA256})
				}
			}
			if sweepBudgets != nil {
				sr, err := scenarios.SweepContext(cmd.Context(), rep.Runs[0].Scenario, sweepBudgets, solveOpt)
				if err != nil {
					return err
				}
				rep.Sweep = &report.Sweep{Scenario: sr.Scenario, Currency: sr.Currency, TargetsBudget: sr.TargetsBudget, HoldBudget: sr.HoldBudget, Notes: sr.Warnings}
				rep.Sweep.Budget, rep.Sweep.BudgetVaries = scenarioBudget(rep.Runs[0].Scenario)
				for _, pt := range sr.Points {
					if !pt.Planned() {
						continue // no plan, no score to chart; the sweep command lists it
					}
					rep.Sweep.Points = append(rep.Sweep.Points, report.SweepPoint{Budget: pt.Budget, ConditionScore: pt.ConditionScore, Status: pt.Status,
						EndPoorShare: pt.EndPoorShare, TargetsMet: pt.TargetsMet, Targets: pt.Targets})
				}
			}
			write := func(w io.Writer) error {
				switch format {
				case "md":
					return report.Markdown(printableText(w), rep)
				case "xlsx":
					return report.Workbook(w, rep)
				default:
					return report.HTML(w, rep)
				}
			}
			if out == "" {
				return write(cmd.OutOrStdout())
			}
			outs := outputsOf(cmd)
			if err := outs.file(out, "--out", write); err != nil {
				return err
			}
			fmt.Fprintf(cmd.ErrOrStderr(), "wrote %s\n", out)
			return nil
		},
	}
	cmd.Flags().StringVar(&format, "format", "html", "report format: "+strings.Join(reportFormats, ", "))
	cmd.Flags().StringVar(&out, "out", "", "write to this file instead of standard output (required for xlsx)")
	registerForce(cmd)
	cmd.Flags().StringVar(&sweep, "sweep", "", "also plan these yearly budgets and chart condition against budget: FROM:TO:STEP or a list (one scenario only)")
	cmd.Flags().StringVar(&date, "date", "", "report date as YYYY-MM-DD (default today); fix it for reproducible output")
	cmd.Flags().BoolVar(&withBands, "bands", false, "also simulate each plan and show uncertainty bands and target probabilities (set up with --runs, --seed, --lot-size, --matrix-uncertainty)")
	solve.register(cmd)
	conf.register(cmd)
	sim.register(cmd)
	return cmd
}

// scenarioBudget is the scenario's yearly network budget for the sweep
// chart's mark: the amount when level, else the mean of the capped years
// (varies is then true); nil without a cap.
func scenarioBudget(sc *scenarios.Scenario) (*float64, bool) {
	sum, n, varies := 0.0, 0, false
	for _, b := range sc.Budget {
		if math.IsInf(b, 1) {
			continue
		}
		if n > 0 && b != sum/float64(n) {
			varies = true
		}
		sum += b
		n++
	}
	if n == 0 {
		return nil, false
	}
	mean := sum / float64(n)
	return &mean, varies
}
