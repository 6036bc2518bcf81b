package cli

import (
	"github.com/spf13/cobra"

	"wearplan/scenarios"
)

func newForecastCmd() *cobra.Command {
	var out outputOptions
	cmd := &cobra.Command{
		Use:   "forecast FILE",
		Short: "Roll today's condition forward with no work done",
		Long: `Forecast carries each class's condition forward year by year through its
one-year transition matrix with no treatment at all, and reports the
good/fair/poor shares and average index per class and for the network, and
which targets doing nothing would break.`,
		Example: `  # Do-nothing forecast of the demo as a table
  wearplan forecast scenarios/examples/marrowby.yaml

  # Level-of-service figures per year as CSV
  wearplan forecast scenarios/examples/marrowby.yaml --format csv --table service`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := out.validate(); err != nil {
				return err
			}
			sc, err := loadScenario(args[0])
			if err != nil {
				return err
			}
			r, err := scenarios.Forecast(sc)
			if err != nil {
				return err
			}
			return out.write(cmd, r)
		},
	}
	out.register(cmd, "service")
	return cmd
}
