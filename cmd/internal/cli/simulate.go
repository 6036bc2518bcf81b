package cli

import (
	"io"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

func newSimulateCmd() *cobra.Command {
	var out outputOptions
	var solve solveOptions
	var sim simulateOptions
	policy := scenarios.PolicyPlan
	cmd := &cobra.Command{
		Use:   "simulate FILE",
		Short: "Uncertainty bands: simulate the plan segment by segment",
		Long: `Simulate plans the scenario, then runs the plan many times at segment level.
In each run every piece (a segment of the class's inventory list, or a piece
cut from its quantity) gets its treatment at random with the plan's
share for its state and year, then moves to its next state at random from
that treatment's row. A small network behaves like a few dice, so the runs
spread around the plan's deterministic figures.

It reports, per class and for the network and per year, the 5th, 50th and
95th percentile over the runs of the good, fair and poor shares, of the
average index and of spend, and for each target the share of runs in which it
holds, year by year and in every year. The output says which sources of
uncertainty the bands include.

Pieces: a class with segment_size in the scenario is cut into pieces of
that size; else a class read from an inventory list (inventory_csv) moves
segment by segment, and other classes are cut into their unit's default
piece (0.5 lane-km, 0.25 lane-mi, 100 m, 500 m2, 1 each; larger when a class
would have more than 5,000 pieces); one smaller piece takes any remainder. The piece size sets the spread: give sizes
that match real pieces with segment_size in the scenario, or for one run
with --lot-size, for all classes (--lot-size 0.5) or per class (--lot-size
bridge-decks=450); a size given for a class with an inventory list replaces
its segments with pieces. The output warns when a class has more than
10,000 pieces (bands likely too narrow) or fewer than 20.

Matrix uncertainty (--matrix-uncertainty dirichlet or bootstrap) draws each
run's matrices from their sampling distribution, for classes whose matrix
comes from a fit result; a matrix typed into the scenario has none.

The same seed gives the same output, byte for byte, on any number of cores.`,
		Example: `  # Bands for the demo plan, 1000 runs
  wearplan simulate scenarios/examples/marrowby.yaml

  # The demo's segments replaced by pieces: half-lane-km roads, decks of 450 m2
  wearplan simulate scenarios/examples/marrowby.yaml --lot-size 0.5 --lot-size bridge-decks=450

  # How sure is the do-nothing forecast, as JSON
  wearplan simulate scenarios/examples/marrowby.yaml --policy do-nothing --format json --out bands.json`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := out.validate(); err != nil {
				return err
			}
			opt, err := sim.options(solve)
			if err != nil {
				return err
			}
			opt.Policy = policy
			sc, err := loadScenario(cmd, args[0], segmentsOnly)
			if err != nil {
				return err
			}
			r, err := scenarios.SimulateContext(cmd.Context(), sc, opt)
			if err != nil {
				return simulateError("", err)
			}
			return out.emit(cmd, renderers{
				json: func(w io.Writer) error { return render.SimulationJSON(w, r) },
				csv:  func(w io.Writer, table string) error { return render.SimulationCSV(w, r, table) },
				text: func(w io.Writer) error { return render.SimulationText(w, r) },
			})
		},
	}
	out.registerTables(cmd, render.SimulationCSVTables, "bands")
	solve.register(cmd)
	sim.register(cmd)
	cmd.Flags().StringVar(&policy, "policy", scenarios.PolicyPlan, "what the runs follow: plan or do-nothing")
	return cmd
}
