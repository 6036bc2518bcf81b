package cli

import (
	"errors"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// simulateFlags maps each simulation option to the flag that sets it.
var simulateFlags = map[string]string{
	"runs":               "--runs",
	"policy":             "--policy",
	"matrix uncertainty": "--matrix-uncertainty",
	"dirichlet prior":    "--dirichlet-prior",
	"lot size":           "--lot-size",
}

func newSimulateCmd() *cobra.Command {
	var out outputOptions
	var solve solveOptions
	var opt scenarios.SimulateOptions
	var lotSizes []string
	cmd := &cobra.Command{
		Use:   "simulate FILE",
		Short: "Uncertainty bands: simulate the plan segment by segment",
		Long: `Simulate plans the scenario, then runs the plan many times at segment level.
In each run every segment (of the class's inventory list, or a lot cut from
its quantity) gets its treatment at random with the plan's
share for its state and year, then moves to its next state at random from
that treatment's row. A small network behaves like a few dice, so the runs
spread around the plan's deterministic figures.

It reports, per class and for the network and per year, the 5th, 50th and
95th percentile over the runs of the good, fair and poor shares, of the
average index and of spend, and for each target the share of runs in which it
holds, year by year and in every year. The output says which sources of
uncertainty the bands include.

Segments: a class read from an inventory list (inventory_csv) moves segment
by segment. Other classes are cut into lots of one unit of quantity (one
culvert, one m2 of deck, one lane-km) plus one smaller lot for any fraction.
The lot size sets the spread: give sizes that match real pieces with
--lot-size, for all classes (--lot-size 0.5) or per class (--lot-size
bridge-decks=450); a size given for a class with an inventory list replaces
its segments with lots.

Matrix uncertainty (--matrix-uncertainty dirichlet or bootstrap) draws each
run's matrices from their sampling distribution, for classes whose matrix
comes from a fit result; a matrix typed into the scenario has none.

The same seed gives the same output, byte for byte, on any number of cores.`,
		Example: `  # Bands for the demo plan, 1000 runs
  wearplan simulate scenarios/examples/marrowby.yaml

  # The demo's segments replaced by lots: half-lane-km roads, decks of 450 m2
  wearplan simulate scenarios/examples/marrowby.yaml --lot-size 0.5 --lot-size bridge-decks=450

  # How sure is the do-nothing forecast, as JSON
  wearplan simulate scenarios/examples/marrowby.yaml --policy do-nothing --format json --out bands.json`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := out.validate(); err != nil {
				return err
			}
			if err := parseLotSizes(lotSizes, &opt); err != nil {
				return err
			}
			if !(opt.Prior > 0) {
				return usageError("--dirichlet-prior %g: give a positive number (0.5 is Jeffreys' prior, 1 the uniform prior)", opt.Prior)
			}
			sc, err := loadScenario(args[0])
			if err != nil {
				return err
			}
			so, err := solve.scenarioOptions()
			if err != nil {
				return err
			}
			opt.Timeout, opt.Solver = so.Timeout, so.Solver
			r, err := scenarios.Simulate(sc, opt)
			var oe *scenarios.OptionError
			if errors.As(err, &oe) {
				return usageError("%s: %s", simulateFlags[oe.Option], oe.Msg)
			}
			if err != nil {
				return err
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
	f := cmd.Flags()
	f.IntVar(&opt.Runs, "runs", 1000, "number of simulated runs")
	f.Uint64Var(&opt.Seed, "seed", 1, "random seed: the same seed gives the same output")
	f.StringVar(&opt.Policy, "policy", scenarios.PolicyPlan, "what the runs follow: plan or do-nothing")
	f.StringVar(&opt.Matrix, "matrix-uncertainty", scenarios.MatrixNone, "draw matrices per run: none, dirichlet (posterior of fitted counts) or bootstrap (fitted replicates)")
	f.Float64Var(&opt.Prior, "dirichlet-prior", 0.5, "symmetric Dirichlet prior for --matrix-uncertainty dirichlet: 0.5 (Jeffreys) or 1 (uniform)")
	f.StringArrayVar(&lotSizes, "lot-size", nil, "size of the lots cut from the quantities, in each class's unit: SIZE for all classes or CLASS=SIZE (repeatable; default: the inventory list's segments, else 1)")
	return cmd
}

// parseLotSizes reads --lot-size values: SIZE or CLASS=SIZE.
func parseLotSizes(values []string, opt *scenarios.SimulateOptions) error {
	for _, v := range values {
		name, size, perClass := "", v, false
		if i := strings.LastIndex(v, "="); i >= 0 {
			name, size, perClass = strings.TrimSpace(v[:i]), v[i+1:], true
		}
		x, err := strconv.ParseFloat(strings.TrimSpace(size), 64)
		if err != nil || !(x > 0) || math.IsInf(x, 0) {
			return usageError("--lot-size %q: give a positive size in the class's unit, as SIZE (all classes) or CLASS=SIZE, e.g. --lot-size 0.5 or --lot-size bridge-decks=450", v)
		}
		switch {
		case perClass && name == "":
			return usageError("--lot-size %q: the class name before = is missing, e.g. bridge-decks=450", v)
		case perClass:
			if opt.ClassLotSize == nil {
				opt.ClassLotSize = map[string]float64{}
			}
			if _, dup := opt.ClassLotSize[name]; dup {
				return usageError("--lot-size: class %q is given twice; keep one size per class", name)
			}
			opt.ClassLotSize[name] = x
		case opt.LotSize != 0:
			return usageError("--lot-size %q: a size for all classes is already given (%s); give it once, and CLASS=SIZE for exceptions", v, strconv.FormatFloat(opt.LotSize, 'g', -1, 64))
		default:
			opt.LotSize = x
		}
	}
	return nil
}
