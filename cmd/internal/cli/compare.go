package cli

import (
	"io"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

func newCompareCmd() *cobra.Command {
	var out formatOptions
	var solve solveOptions
	var conf confidenceOptions
	var years string
	cmd := &cobra.Command{
		Use:   "compare FILE FILE...",
		Short: "Plan several funding alternatives and print them side by side",
		Long: `Compare plans each scenario (typically funding alternatives that extend one
base file) and prints them side by side: the level of service per class and
for the network at the chosen years (good/fair/poor shares and average
index), spend, present value, condition score, the targets each misses and
the extra money that would close them. Years are plan years counted from 1,
calendar years, or last.`,
		Example: `  # Current, reduced and increased funding for the demo town
  wearplan compare scenarios/examples/marrowby.yaml scenarios/examples/marrowby-reduced.yaml scenarios/examples/marrowby-increased.yaml
  # Chosen years, as CSV
  wearplan compare scenarios/examples/marrowby.yaml scenarios/examples/marrowby-reduced.yaml --years 2030,2036,last --format csv`,
		Args: cobra.MinimumNArgs(2),
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
			ys, err := scenarios.ParseYears(years)
			if err != nil {
				return usageError("--years: %w", err)
			}
			var scs []*scenarios.Scenario
			for _, path := range args {
				sc, err := loadScenario(cmd, path, totalsOnly)
				if err != nil {
					return err
				}
				sc.Source = path
				scs = append(scs, sc)
			}
			r, err := scenarios.CompareContext(cmd.Context(), scs, ys, solveOpt)
			if err != nil {
				return usageIfYears(err)
			}
			return out.write(cmd,
				func(w io.Writer) error { return render.CompareText(w, r) },
				func(w io.Writer) error { return render.JSONOf(w, r) },
				func(w io.Writer) error { return render.CompareCSV(w, r) })
		},
	}
	out.register(cmd)
	solve.register(cmd)
	conf.register(cmd)
	cmd.Flags().StringVar(&years, "years", "1,5,10,last", "years to show: plan years from 1, calendar years, or last")
	return cmd
}

// usageIfYears marks a year outside a plan's horizon as a command-line
// mistake (exit 2); other errors keep their kind.
func usageIfYears(err error) error {
	if scenarios.IsYearError(err) {
		return usageError("--years: %w", err)
	}
	return err
}
