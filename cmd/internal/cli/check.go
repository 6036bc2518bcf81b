package cli

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

func newCheckCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "check FILE...",
		Short: "Validate scenario files without planning",
		Long: `Check reads each scenario file strictly and reports every problem at once,
with its line and field: unknown keys, wrong types, matrices whose rows do not
sum to 1, moves to a better state without work, unknown states or treatments,
budgets and targets that make no sense; for inventory CSVs, every bad row
with its line and column, and a summary of what was read. Nothing is written.`,
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
				for _, inv := range sc.Inventories {
					fmt.Fprintf(cmd.OutOrStdout(), "  %s\n", inventorySummary(inv))
				}
				for _, n := range sc.Notes {
					fmt.Fprintf(cmd.OutOrStdout(), "  note: %s\n", n)
				}
			}
			return nil
		},
	}
}

// inventorySummary says in one line what was read from an inventory CSV.
func inventorySummary(inv *scenarios.Inventory) string {
	var parts []string
	for _, c := range inv.Classes {
		parts = append(parts, fmt.Sprintf("%s %d segments (%s %s)", c.Class, c.Segments, render.Quantity(c.Quantity), c.Unit))
	}
	var left []string
	for _, l := range []struct {
		n    int
		what string
	}{{inv.OtherClass, "of other classes"}, {inv.Unrated, "unrated"}, {inv.ZeroQuantity, "with zero quantity"}} {
		if l.n > 0 {
			left = append(left, fmt.Sprintf("%d %s", l.n, l.what))
		}
	}
	leftOut := "none left out"
	if len(left) > 0 {
		leftOut = "left out: " + strings.Join(left, ", ")
	}
	geometry, priority := "no geometry", "priority: worst condition first"
	if inv.Geometry != "" {
		geometry = "geometry: " + inv.Geometry
	}
	if inv.Priority != "" {
		priority = "priority: " + inv.Priority
	}
	return fmt.Sprintf("inventory %s: %s rows read; %s; %s; %s; %s", inv.File, render.Money(float64(inv.Rows)), strings.Join(parts, ", "), leftOut, geometry, priority)
}
