package optimize_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"sync"
	"testing"

	"wearplan/optimize"
	"wearplan/optimize/optimizetest"
	"wearplan/scenarios"
	"wearplan/scenarios/scenariotest"
)

// generatedCases is the size of the generated agreement set. `make
// check-long` runs all of them (WEARPLAN_LONG=1); `make test` a fixed
// sample of every fifth, 60 scenarios.
const generatedCases = 300

// generated returns the numbers of the generated scenarios this run
// checks, and loads scenario n: each is drawn from its own seed, so the
// sample is the same scenarios as in the full set.
func generated() []int {
	var out []int
	for n := 0; n < generatedCases; n++ {
		if os.Getenv("WEARPLAN_LONG") != "" || n%5 == 0 {
			out = append(out, n)
		}
	}
	return out
}

func generatedScenario(t *testing.T, n int) *scenarios.Scenario {
	t.Helper()
	data := scenariotest.Generate(rand.New(rand.NewPCG(2027, uint64(n))), n, scenariotest.Spec{})
	sc, err := scenarios.Parse(fmt.Sprintf("generated%03d.json", n), data)
	if err != nil {
		t.Fatalf("generated scenario %d: %v", n, err)
	}
	return sc
}

// relative compares two objectives in the model's units relative to their
// own size (not to 1): an objective near zero must agree near zero.
func relative(a, b float64) float64 {
	d := math.Abs(a - b)
	if d == 0 {
		return 0
	}
	return d / math.Max(math.Abs(a), math.Abs(b))
}

// TestAgreesWithGLPKOnGeneratedScenarios: on generated invented scenarios
// covering every option of the format that the model reads (see package
// scenariotest), each of the three solver settings gives the status that
// GLPK 5.0's glpsol gives on the exported model solved in the same
// lexicographic order (ReferenceAnswer), and the least total shortfall,
// the primary objective and the tie-break objective within 1e-6 of
// glpsol's, relative to their size. GLPK is an independent simplex code;
// 1e-6 is a thousand times the holds' tolerances (1e-10 in wearplan, 1e-9
// given glpsol).
func TestAgreesWithGLPKOnGeneratedScenarios(t *testing.T) {
	optimizetest.RequireTool(t, "glpsol")
	statuses := map[optimize.Status]int{}
	for _, n := range generated() {
		sc := generatedScenario(t, n)
		t.Run(fmt.Sprintf("scenario%03d", n), func(t *testing.T) {
			p, err := sc.Problem()
			if err != nil {
				t.Fatal(err)
			}
			ref := optimize.ReferenceAnswer(t, p)
			statuses[ref.Status]++
			for _, m := range []optimize.Method{optimize.Auto, optimize.Flat, optimize.Decomposed} {
				plan, err := optimize.SolveWith(p, optimize.Options{Method: m})
				if err != nil {
					t.Fatalf("%s: %v", m, err)
				}
				if plan.Status != ref.Status {
					_, _, short := optimize.ModelObjectives(p, plan)
					t.Errorf("%s: status %s, glpsol %s (shortfall %.3g, glpsol %.3g)", m, plan.Status, ref.Status, short, ref.Shortfall)
					continue
				}
				if plan.Status == optimize.Infeasible {
					continue
				}
				prim, sec, short := optimize.ModelObjectives(p, plan)
				for _, c := range []struct {
					what     string
					got, ref float64
				}{{"least shortfall", short, ref.Shortfall}, {"primary objective", prim, ref.Primary}, {"tie-break objective", sec, ref.Secondary}} {
					if r := relative(c.got, c.ref); r > 1e-6 && math.Abs(c.got-c.ref) > 1e-12 {
						t.Errorf("%s (%s): %s %.12g, glpsol %.12g (relative %.2g)", m, plan.Stats.Method, c.what, c.got, c.ref, r)
					}
				}
				for _, w := range plan.Warnings {
					t.Errorf("%s: warning %q on a scenario glpsol solves", m, w)
				}
			}
		})
	}
	t.Logf("statuses: %v", statuses)
	if statuses[optimize.Optimal] < len(generated())/4 || statuses[optimize.TargetsNotMet] < len(generated())/10 || statuses[optimize.Infeasible] < 1 {
		t.Errorf("statuses %v: the generator no longer covers optimal plans, unmet targets and budgets that cannot hold", statuses)
	}
}

// TestAnswersDoNotDependOnLoad: the plans of the agreement sample (full
// plans with funding answers, by the automatic choice and by the
// decomposition) are byte for byte the same JSON with every core busy as
// on a quiet machine. A wall-clock limit anywhere in the solver paths
// would let a busy machine change an answer; stalls are counted in
// simplex iterations instead.
func TestAnswersDoNotDependOnLoad(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: plans the agreement sample four times")
	}
	run := func() [][]byte {
		var out [][]byte
		for _, n := range generated() {
			sc := generatedScenario(t, n)
			for _, m := range []optimize.Method{optimize.Auto, optimize.Decomposed} {
				r, err := scenarios.Plan(sc, scenarios.Options{Solver: m})
				var b []byte
				if err != nil {
					b = []byte(err.Error())
				} else if b, err = json.Marshal(r); err != nil {
					t.Fatal(err)
				}
				out = append(out, b)
			}
		}
		return out
	}
	quiet := run()
	stop := make(chan struct{})
	var wg sync.WaitGroup
	for range runtime.NumCPU() {
		wg.Add(1)
		go func() {
			defer wg.Done()
			x := 1.0
			for {
				select {
				case <-stop:
					return
				default:
				}
				for i := 0; i < 1e5; i++ {
					x = math.Sqrt(x + 1)
				}
			}
		}()
	}
	busy := run()
	close(stop)
	wg.Wait()
	for i := range quiet {
		if !bytes.Equal(quiet[i], busy[i]) {
			t.Errorf("plan %d (scenario %d, %s): different JSON under load", i, generated()[i/2], []string{"auto", "decomposed"}[i%2])
		}
	}
}
