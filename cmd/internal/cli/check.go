package cli

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
)

func newCheckCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "check FILE...",
		Short: "Validate scenario files without planning",
		Long: `Check reads each scenario file strictly and reports every problem at once,
with its line and field: unknown keys, wrong types, matrices whose rows do not
sum to 1, moves to a better state without work, unknown states or treatments,
budgets and targets that make no sense. Nothing is written.`,
		Example: `  # Validate the demo scenario
  wearplan check scenarios/examples/marrowby.yaml`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			for _, path := range args {
				sc, err := loadScenario(path)
				if err != nil {
					return err
				}
				classes := make([]string, len(sc.Classes))
				for k, c := range sc.Classes {
					classes[k] = fmt.Sprintf("%s (%s %s)", c.Name, render.Quantity(c.Total()), c.Unit)
				}
				budget := "no budget cap"
				if sc.Budget != nil {
					budget = fmt.Sprintf("network budget %s %s in %d", render.Money(sc.Budget[0]), sc.Currency, sc.StartYear)
				}
				fmt.Fprintf(cmd.OutOrStdout(), "%s: ok: %q, %d-%d, %d classes: %s; %s; %d targets; objective %s\n",
					path, sc.Name, sc.StartYear, sc.Year(sc.Horizon), len(sc.Classes), strings.Join(classes, ", "), budget, len(sc.Targets), sc.Objective)
			}
			return nil
		},
	}
}
