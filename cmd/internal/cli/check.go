package cli

import (
	"fmt"
	"slices"
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
budgets, targets and ring-fenced money that make no sense; for inventory
CSVs, every bad row with its line and column, and a summary of what was read.
It lists every target and ring-fenced amount the plan must keep, and notes
what looks wrong but is allowed (a treatment that leaves a state worse than
doing nothing). Nothing is written.`,
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
				for _, line := range guardrails(sc) {
					fmt.Fprintf(cmd.OutOrStdout(), "  %s\n", line)
				}
				for _, note := range sc.Notes {
					fmt.Fprintf(cmd.OutOrStdout(), "  note: %s\n", note)
				}
			}
			return nil
		},
	}
}

// guardrails lists what the plan must keep: every target, and the money
// ring-fenced for classes and budget groups.
func guardrails(sc *scenarios.Scenario) []string {
	var out []string
	for _, t := range sc.Targets {
		out = append(out, "target: "+t.Label)
	}
	for _, m := range sc.MinSpends {
		who := "class " + m.Name
		if m.Group {
			who = fmt.Sprintf("budget group %s (%s)", m.Name, strings.Join(m.Classes, ", "))
		}
		out = append(out, fmt.Sprintf("ring-fenced: %s at least %s %s a year", who, render.Money(m.Yearly[0]), sc.Currency))
		if !sameEveryYear(m.Yearly) {
			out[len(out)-1] = fmt.Sprintf("ring-fenced: %s at least %s to %s %s a year (by year)", who, render.Money(slices.Min(m.Yearly)), render.Money(slices.Max(m.Yearly)), sc.Currency)
		}
	}
	return out
}

func sameEveryYear(v []float64) bool {
	for _, x := range v {
		if x != v[0] {
			return false
		}
	}
	return true
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
