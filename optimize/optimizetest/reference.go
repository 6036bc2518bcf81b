package optimizetest

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"testing"
)

// RequireTool returns the path of the external program name. When it is
// not installed the test is skipped, or fails under
// WEARPLAN_REQUIRE_REFERENCE=1 (CI), so that a missing reference program
// cannot pass unnoticed. Call it at the top of a test, before subtests or
// slow work, so that a missing program skips the whole test.
func RequireTool(t testing.TB, name string) string {
	t.Helper()
	path, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("WEARPLAN_REQUIRE_REFERENCE") != "" {
			t.Fatalf("%s not found; install it (make deps-test) to run the reference checks", name)
		}
		t.Skipf("%s not found; run `make deps-test` to install it", name)
	}
	return path
}

// GlpsolObjective solves the model file at path with GLPK's glpsol and
// returns its raw solution: the objective of the model as the file poses
// it (a maximisation written to free MPS as the minimisation of its
// negation comes back negated), whether the solution is optimal, and
// whether it is primal feasible. format is glpsol's option for the file
// ("--freemps", "--lp"); options are further glpsol options, such as
// "--interior". A glpsol that fails or writes no solution fails the test.
func GlpsolObjective(t testing.TB, format, path string, options ...string) (objective float64, optimal, feasible bool) {
	t.Helper()
	glpsol := RequireTool(t, "glpsol")
	sol := path + ".sol"
	args := append([]string{format, path, "-w", sol}, options...)
	out, err := exec.Command(glpsol, args...).CombinedOutput()
	if err != nil {
		t.Fatalf("glpsol %s: %v\n%s", strings.Join(args, " "), err, out)
	}
	objective, optimal, feasible, err = ReadGlpsolSolution(sol)
	if err != nil {
		t.Fatalf("%v; glpsol's output:\n%.2000s", err, out)
	}
	return objective, optimal, feasible
}

// ReadGlpsolSolution reads the solution line of a raw solution file that
// glpsol wrote with -w: "s bas ROWS COLS PRIMAL DUAL OBJECTIVE" for the
// simplex, where PRIMAL and DUAL are "f" when feasible (optimal when
// both are), or "s ipt ROWS COLS STATUS OBJECTIVE" for the interior point,
// where STATUS "o" is optimal (and so feasible; other statuses say
// neither).
func ReadGlpsolSolution(path string) (objective float64, optimal, feasible bool, err error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, false, false, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fl := strings.Fields(sc.Text())
		if len(fl) < 6 || fl[0] != "s" {
			continue
		}
		switch {
		case fl[1] == "bas" && len(fl) == 7:
			feasible = fl[4] == "f"
			optimal = feasible && fl[5] == "f"
		case fl[1] == "ipt" && len(fl) == 6:
			optimal = fl[4] == "o"
			feasible = optimal
		default:
			continue
		}
		objective, err = strconv.ParseFloat(fl[len(fl)-1], 64)
		if err != nil {
			return 0, false, false, fmt.Errorf("glpsol solution %s: objective: %w", path, err)
		}
		return objective, optimal, feasible, nil
	}
	if err := sc.Err(); err != nil {
		return 0, false, false, err
	}
	return 0, false, false, errors.New("no solution line in glpsol's solution file " + path)
}
