package cli

import (
	"slices"

	"github.com/spf13/cobra"

	"wearplan/scenarios"
)

func newForecastCmd() *cobra.Command {
	var out outputOptions
	var rule string
	cmd := &cobra.Command{
		Use:   "forecast FILE",
		Short: "Roll today's condition forward with no work done",
		Long: `Forecast carries each class's condition forward year by year through its
one-year transition matrix with no treatment at all, and reports the
good/fair/poor shares and average index per class and for the network, and
which targets doing nothing would break.
With --rule worst-first it spends each year's budget the way many agencies do
without an optimizer: worst states first, each with the cheapest of its
treatments that leaves it better at the end of the year than doing nothing,
as much as the money allows (the plan command reports this rule's condition
score next to the optimised one).`,
		Example: `  # Do-nothing forecast of the demo as a table
  wearplan forecast scenarios/examples/marrowby.yaml

  # Level-of-service figures per year as CSV
  wearplan forecast scenarios/examples/marrowby.yaml --format csv --table service
  # The same budget spent worst first, for comparison with plan
  wearplan forecast scenarios/examples/marrowby.yaml --rule worst-first`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := out.validate(); err != nil {
				return err
			}
			if !slices.Contains(scenarios.Rules, scenarios.Rule(rule)) {
				return usageError("--rule %q: choose none or worst-first", rule)
			}
			sc, err := loadScenario(cmd, args[0], totalsOnly)
			if err != nil {
				return err
			}
			r, err := scenarios.ForecastRule(sc, scenarios.Rule(rule))
			if err != nil {
				return err
			}
			return out.write(cmd, r)
		},
	}
	out.register(cmd, "service")
	cmd.Flags().StringVar(&rule, "rule", "none", "work done: none, or worst-first (the budget spent on the worst states first)")
	return cmd
}
