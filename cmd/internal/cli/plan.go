package cli

import (
	"fmt"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

func newPlanCmd() *cobra.Command {
	var out outputOptions
	var solve solveOptions
	var conf confidenceOptions
	var robust robustOptions
	var strict bool
	var modelPath string
	cmd := &cobra.Command{
		Use:   "plan FILE",
		Short: "Choose the yearly treatment mix under the budget and targets",
		Long: `Plan builds the finite-horizon linear program of the scenario (every class,
state, treatment and year), solves it with lp_solve, and prints the work
program, spend against budget, condition per year and the targets.

With a budget the default objective is max-condition: the best mean network
condition the money buys. Without one it is min-cost: the least present-value
spend that meets the targets. When the targets cannot be met within the
budget, the plan reports status targets-not-met and, per target and year, how
far it falls short; it still exits 0 unless --strict is given (exit 3).

A target may state a confidence (confidence: 0.9 in the scenario): the plan
must then meet it, in every year it covers, in at least that share of
simulated runs. The plan is found by tightening the target in the LP by a
margin until the runs reach the confidence (--confidence-runs runs each,
seed --confidence-seed); the output gives the margin, the share of runs
reached with its standard error, and, when the budget cannot reach the
confidence, the least level budget that can. --strict also exits 3 when a
confidence is not reached.

--robust N plans against the uncertainty of matrices fitted from
inspections (deterioration: {fit: FILE}): it draws N sets of matrices
(--robust-matrices bootstrap: the fit's replicates; dirichlet: each row
from the posterior of its counts; seed --robust-seed) and finds the one
work program whose targets hold under the point estimate and under every
sample at once (the same treated quantities in every sample, never more
than a state holds). It prints that plan, the price of robustness against
the ordinary plan, and how the ordinary plan fares under the same samples.
--strict exits 3 when the targets cannot hold under every sample.

Large networks (dozens of classes, long horizons) are solved by column
generation over each class's policies instead of as one LP; --solver picks
flat or decomposed by hand, auto (the default) by model size. Both give the
same optimum to within 1e-6; where several plans are optimal they may pick
different ones.`,
		Example: `  # Plan the demo and print the tables
  wearplan plan scenarios/examples/marrowby.yaml

  # The JSON contract, for other tools
  wearplan plan scenarios/examples/marrowby.yaml --format json --out plan.json

  # A state-wide network: force the decomposition
  wearplan plan network.yaml --solver decomposed

  # Every table as CSV files in a folder
  mkdir -p out && wearplan plan scenarios/examples/marrowby.yaml --format csv --out out

  # A scenario whose targets say confidence: 0.9, measured on 2000 runs
  wearplan plan scenario.yaml --confidence-runs 2000

  # A plan whose targets hold under 30 matrix sets drawn from the fit's replicates
  wearplan plan fitted.yaml --robust 30

  # Also write the linear program in CPLEX LP format, to check with another solver
  wearplan plan scenarios/examples/marrowby.yaml --write-model marrowby.lp
  glpsol --lp marrowby.lp`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := out.validate(); err != nil {
				return err
			}
			if err := checkModelPath(modelPath); err != nil {
				return err
			}
			opt, err := solve.scenarioOptions()
			if err != nil {
				return err
			}
			if err := conf.apply(&opt); err != nil {
				return err
			}
			sc, err := loadScenario(cmd, args[0], totalsOnly)
			if err != nil {
				return err
			}
			var ro *scenarios.RobustOptions
			if cmd.Flags().Changed("robust") || robust.changed(cmd) {
				if ro, err = robust.options(cmd); err != nil {
					return err
				}
			}
			if modelPath != "" {
				if err := writeModel(cmd, sc, modelPath, ro); err != nil {
					return err
				}
			}
			var r *scenarios.Result
			if ro != nil {
				r, err = scenarios.PlanRobustContext(cmd.Context(), sc, *ro, opt)
				err = simulateError("", err)
			} else {
				r, err = scenarios.PlanContext(cmd.Context(), sc, opt)
			}
			if err != nil {
				return err
			}
			if err := out.write(cmd, r); err != nil {
				return err
			}
			if out.format != "table" || out.out != "" {
				// The tables end with these; other output needs them said.
				warnClasses(cmd, r)
			}
			if r.Status == scenarios.TargetsNotMet {
				warnShortfalls(cmd, r)
				if strict {
					return &exitError{code: exitTargets, err: fmt.Errorf("%s: targets cannot be met within the budget (--strict)", args[0])}
				}
			}
			if rb := r.Robust; rb != nil && !rb.HoldsUnderSamples {
				fmt.Fprintf(cmd.ErrOrStderr(), "warning: the targets cannot hold under every one of the %d matrix samples within the budget\n", rb.Samples)
				if strict {
					return &exitError{code: exitTargets, err: fmt.Errorf("%s: targets cannot hold under every matrix sample (--strict)", args[0])}
				}
			}
			if c := r.Confidence; c != nil && !c.Reached {
				warnConfidence(cmd, c)
				if strict {
					return &exitError{code: exitTargets, err: fmt.Errorf("%s: a target's confidence is not reached within the budget (--strict)", args[0])}
				}
			}
			return nil
		},
	}
	out.register(cmd, "work")
	solve.register(cmd)
	conf.register(cmd)
	robust.register(cmd)
	cmd.Flags().BoolVar(&strict, "strict", false, "exit with code 3 when the targets cannot be met")
	cmd.Flags().StringVar(&modelPath, "write-model", "", "also write the linear program solved first, as FILE.lp (CPLEX LP) or FILE.mps (free MPS), before solving")
	return cmd
}

// warnShortfalls names each missed target on standard error, so that the
// message is seen even when the tables go to a file.
func warnShortfalls(cmd *cobra.Command, r *scenarios.Result) {
	w := cmd.ErrOrStderr()
	fmt.Fprintln(w, "warning: the targets cannot all be met within the budget; this plan keeps the shortfall as small as possible:")
	for _, t := range r.Targets {
		if len(t.Shortfalls) == 0 {
			continue
		}
		fmt.Fprintf(w, "  - %s: short by %s\n", t.Target, shortfallText(t))
	}
}

// warnConfidence names each target whose confidence is not reached on
// standard error.
func warnConfidence(cmd *cobra.Command, c *scenarios.Confidence) {
	w := cmd.ErrOrStderr()
	fmt.Fprintf(w, "warning: not every target reaches its confidence: %s\n", c.Why)
	for _, ct := range c.Targets {
		if !ct.Reached {
			fmt.Fprintf(w, "  - %s: met in %s of %d runs, not %s\n", ct.Target, render.RunsMeeting(ct), c.Runs, render.Percent(ct.Confidence))
		}
	}
}

// warnClasses names on standard error each class the plan lets run down
// or gives no work (scenarios.ClassWarning), when the tables that end with
// them go elsewhere.
func warnClasses(cmd *cobra.Command, r *scenarios.Result) {
	for _, w := range r.ClassWarnings {
		fmt.Fprintf(cmd.ErrOrStderr(), "warning: %s\n", w.Text)
	}
}

func shortfallText(t scenarios.TargetOutcome) string {
	at := t.Shortfalls[0].Year
	for _, s := range t.Shortfalls {
		if s.Amount > render.WorstShortfall(t)-1e-12 {
			at = s.Year
			break
		}
	}
	return fmt.Sprintf("up to %s (worst in %d), %s", render.ShortfallAmount(t, render.WorstShortfall(t)), at, render.ShortfallYears(t))
}
