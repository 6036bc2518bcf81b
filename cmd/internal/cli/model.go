package cli

import (
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"wearplan/optimize"
	"wearplan/scenarios"
)

// modelWriters maps a --write-model file extension to its writer.
var modelWriters = map[string]func(io.Writer, *optimize.Model) error{
	".lp":  optimize.WriteLP,
	".mps": optimize.WriteMPS,
}

func checkModelPath(path string) error {
	if path == "" {
		return nil
	}
	if _, ok := modelWriters[strings.ToLower(filepath.Ext(path))]; !ok {
		return usageError("--write-model %q: name a file ending in .lp (CPLEX LP format) or .mps (free MPS format)", path)
	}
	return nil
}

// writeModel writes the flat LP of the scenario, the model that the plan
// solves first, in the format the file extension names. It is written
// before solving, so that a model that is slow or fails in lp_solve can be
// taken to another solver.
func writeModel(cmd *cobra.Command, sc *scenarios.Scenario, path string, robust *scenarios.RobustOptions) error {
	var m *optimize.Model
	if robust != nil {
		var err error
		if m, err = scenarios.RobustModel(sc, *robust); err != nil {
			return simulateError("", err)
		}
	} else {
		p, err := sc.Problem()
		if err != nil {
			return err
		}
		if m, err = optimize.BuildModel(p); err != nil {
			return err
		}
	}
	m.Notes = append([]string{fmt.Sprintf("scenario %q from %s; written by wearplan %s", sc.Name, sc.Source, Version)}, m.Notes...)
	write := modelWriters[strings.ToLower(filepath.Ext(path))]
	if err := outputsOf(cmd).file(path, "--write-model", func(w io.Writer) error { return write(w, m) }); err != nil {
		return err
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "wrote the model (%d rows, %d columns) to %s\n", len(m.Rows), len(m.Cols), path)
	return nil
}
