package cli

import (
	"io"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

func newSweepCmd() *cobra.Command {
	var out formatOptions
	var solve solveOptions
	var conf confidenceOptions
	var budgets string
	cmd := &cobra.Command{
		Use:   "sweep FILE --budget FROM:TO:STEP",
		Short: "Trade-off between a level yearly budget and condition",
		Long: `Sweep plans the scenario once per yearly budget (the same amount every year,
replacing budget.yearly; budget groups keep their caps), each with the
max-condition objective and the scenario's targets, and prints per budget the
condition score, the network's poor share and average index at the end of
the horizon, total spend and whether the targets hold. It also finds the
least level budget that holds today's network condition to the end of the
horizon, and the least that meets the scenario's targets. Budgets are
planned in parallel on the available cores (large models in four chains of
neighbouring budgets, each point starting from the one before); the output
is in budget order and the same on any machine.`,
		Example: `  # Twenty budgets from 2 to 6.75 million
  wearplan sweep scenarios/examples/marrowby.yaml --budget 2e6:6.75e6:250000
  # A list of budgets, as CSV for a chart
  wearplan sweep scenarios/examples/marrowby.yaml --budget 3e6,4e6,4.5e6,5e6 --format csv`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			solveOpt, err := solve.scenarioOptions()
			if err != nil {
				return err
			}
			if err := conf.apply(&solveOpt); err != nil {
				return err
			}
			if err := out.validate(); err != nil {
				return err
			}
			list, err := parseBudgets(budgets)
			if err != nil {
				return err
			}
			sc, err := loadScenario(cmd, args[0], totalsOnly)
			if err != nil {
				return err
			}
			r, err := scenarios.SweepContext(cmd.Context(), sc, list, solveOpt)
			if err != nil {
				return err
			}
			return out.write(cmd,
				func(w io.Writer) error { return render.SweepText(w, r) },
				func(w io.Writer) error { return render.JSONOf(w, r) },
				func(w io.Writer) error { return render.SweepCSV(w, r) })
		},
	}
	out.register(cmd)
	solve.register(cmd)
	conf.register(cmd)
	cmd.Flags().StringVar(&budgets, "budget", "", "yearly budgets: FROM:TO:STEP (e.g. 2e6:6e6:500000) or a list (3e6,4e6,5e6)")
	return cmd
}

// parseBudgets reads FROM:TO:STEP or a comma-separated list.
func parseBudgets(s string) ([]float64, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return nil, usageError("--budget is required: FROM:TO:STEP (e.g. 2e6:6e6:500000) or a list (3e6,4e6,5e6)")
	}
	num := func(f string) (float64, error) {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil {
			return 0, usageError("--budget %q: %q is not a number; write amounts like 4500000 or 4.5e6", s, f)
		}
		return v, nil
	}
	if strings.Contains(s, ":") {
		parts := strings.Split(s, ":")
		if len(parts) != 3 {
			return nil, usageError("--budget %q: a range is FROM:TO:STEP, e.g. 2e6:6e6:500000", s)
		}
		var v [3]float64
		for i, p := range parts {
			x, err := num(p)
			if err != nil {
				return nil, err
			}
			v[i] = x
		}
		out, err := scenarios.BudgetRange(v[0], v[1], v[2])
		if err != nil {
			return nil, usageError("--budget: %w", err)
		}
		return out, nil
	}
	var out []float64
	for _, f := range strings.Split(s, ",") {
		x, err := num(f)
		if err != nil {
			return nil, err
		}
		if x < 0 {
			return nil, usageError("--budget: %g is negative; budgets are zero or more", x)
		}
		out = append(out, x)
	}
	if len(out) > scenarios.MaxSweepPoints {
		return nil, usageError("--budget: %d budgets; a sweep takes at most %d", len(out), scenarios.MaxSweepPoints)
	}
	return out, nil
}
