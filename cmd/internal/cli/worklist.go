package cli

import (
	"fmt"
	"io"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

var worklistFormats = []string{"table", "csv", "json", "geojson"}

func newWorklistCmd() *cobra.Command {
	var solve solveOptions
	var format, out string
	var years int
	cmd := &cobra.Command{
		Use:   "worklist FILE",
		Short: "List the plan's work by named segment of the inventory",
		Long: `Worklist plans the scenario, then assigns the plan's quantities per class,
state and treatment to whole segments of the inventory CSV (inventory_csv),
in priority order: the inventory's priority expression (highest first) when
it has one, then worst condition, then largest quantity. A segment is never
split and appears at most once a year; per class, state and treatment the
listed quantity is within one segment's quantity of the plan's.

The first year follows today's condition from the inventory. With --years N,
years 2 to N are indicative: segments are placed in states from their
expected condition (the Markov forecast of each segment, given the work
listed for it), fitted to the plan's expected quantities.

CSV has one row per segment and year, keyed by segment id to join back onto
the inventory in a GIS; GeoJSON carries the inventory's geometry (WKT or
lon/lat columns). The list is indicative: crews and engineers confirm each
segment by inspection.`,
		Example: `  # The first year's work by segment, as tables
  wearplan worklist scenarios/examples/marrowby.yaml

  # Three years, keyed by segment id for a GIS join
  wearplan worklist scenarios/examples/marrowby.yaml --years 3 --format csv --out worklist.csv

  # With the inventory's geometry, for a map
  wearplan worklist scenarios/examples/marrowby.yaml --format geojson --out worklist.geojson`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			solveOpt, err := solve.scenarioOptions()
			if err != nil {
				return err
			}
			if !slices.Contains(worklistFormats, format) {
				return usageError("--format %q: choose one of %s", format, strings.Join(worklistFormats, ", "))
			}
			keep := segmentsOnly
			if format == "json" || format == "geojson" {
				keep = everything
			}
			sc, err := loadScenario(cmd, args[0], keep)
			if err != nil {
				return err
			}
			if years < 1 || years > sc.Horizon {
				return usageError("--years %d: list between 1 and %d years (the scenario's horizon)", years, sc.Horizon)
			}
			segments, geometry := false, false
			for _, c := range sc.Classes {
				if c.Segments != nil {
					segments = true
					geometry = geometry || c.Inventory.Geometry != ""
				}
			}
			if !segments {
				return usageError("%s: no class has a segment list; give the classes' inventory as a CSV with inventory_csv: FILE (one row per segment: id, class, quantity, condition)", args[0])
			}
			if format == "geojson" && !geometry {
				return usageError("%s: the inventory has no geometry (a wkt column, or lon and lat columns), so there is nothing to map; use --format csv and join on segment_id", args[0])
			}
			r, err := scenarios.PlanContext(cmd.Context(), sc, solveOpt)
			if err != nil {
				return err
			}
			wl, err := scenarios.MakeWorklist(sc, r, years)
			if err != nil {
				return err
			}
			write := func(w io.Writer) error {
				switch format {
				case "csv":
					return render.WorklistCSV(w, wl)
				case "json":
					return render.WorklistJSON(w, wl)
				case "geojson":
					return render.WorklistGeoJSON(w, wl)
				default:
					return render.WorklistText(printableText(w), wl)
				}
			}
			outs := outputsOf(cmd)
			if out == "" {
				err = write(cmd.OutOrStdout())
			} else if err = outs.file(out, "--out", write); err == nil {
				fmt.Fprintf(cmd.ErrOrStderr(), "wrote %s (%d segments listed)\n", out, len(wl.Items))
			}
			if err != nil {
				return err
			}
			if r.Status == scenarios.TargetsNotMet {
				warnShortfalls(cmd, r)
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&format, "format", "table", "output format: "+strings.Join(worklistFormats, ", "))
	f.StringVar(&out, "out", "", "write to this file instead of standard output")
	registerForce(cmd)
	f.IntVar(&years, "years", 1, "years to list: the first from the plan, the others indicative")
	solve.register(cmd)
	return cmd
}
