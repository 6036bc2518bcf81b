package cli

import (
	"io"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

func newLongRunCmd() *cobra.Command {
	var out formatOptions
	var solve solveOptions
	cmd := &cobra.Command{
		Use:   "longrun FILE",
		Short: "The steady-state policy: what it costs every year, forever, to sustain a level of service",
		Long: `Longrun solves the steady-state Markov decision linear program (Golabi,
Kulkarni and Way, 1982) for every class and the network: for each state, the
share treated with each treatment every year; the long-run condition that
policy sustains; and its annual cost at start-year prices, treatment spend
and routine cost apart. With min-cost it is the least annual cost that meets
the targets in the long run (their years are ignored; hold means no worse
than today); with max-condition, the best long-run condition the first
year's budget buys every year.`,
		Example: `  # What it costs every year to keep the demo network within its targets
  wearplan longrun scenarios/examples/marrowby.yaml
  # The policy as CSV (one row per class, state and treatment)
  wearplan longrun scenarios/examples/marrowby.yaml --format csv --out policy.csv`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			solveOpt, err := solve.scenarioOptions()
			if err != nil {
				return err
			}
			if err := out.validate(); err != nil {
				return err
			}
			sc, err := loadScenario(cmd, args[0], totalsOnly)
			if err != nil {
				return err
			}
			r, err := scenarios.LongRunContext(cmd.Context(), sc, solveOpt)
			if err != nil {
				return err
			}
			if err := out.write(cmd,
				func(w io.Writer) error { return render.LongRunText(w, r) },
				func(w io.Writer) error { return render.JSONOf(w, r) },
				func(w io.Writer) error { return render.LongRunCSV(w, r) }); err != nil {
				return err
			}
			if r.Status == scenarios.TargetsNotMet {
				cmd.PrintErrln("warning: the targets cannot all hold in the long run within the annual budget; see the targets table")
			}
			return nil
		},
	}
	out.register(cmd)
	solve.register(cmd)
	return cmd
}
