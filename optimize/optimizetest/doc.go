// Package optimizetest holds what wearplan's tests and benchmarks share
// when they check plans against outside programs or measure them, in the
// way net/http/httptest serves tests of net/http: ordinary Go code,
// imported only by _test.go files and by the benchmark table
// (optimize/internal/benchtable).
//
// Reference programs: RequireTool finds an external program such as GLPK's
// glpsol (Debian's glpk-utils), COIN-OR's clp (coinor-clp) or chromium. A
// missing program skips the test, except under WEARPLAN_REQUIRE_REFERENCE=1
// (set by .ci/run), where it fails it. GlpsolObjective solves an MPS or
// CPLEX LP file with glpsol and reads the status and objective from its raw
// solution file; ReadGlpsolSolution is the reading alone. The tests name
// the program they check against beside the check; this package only runs
// it.
//
// Dynamic programming: RelativeValueIteration solves an average-cost
// Markov decision process written out state by state (MDP), the
// independent check of the steady-state LP on classes widened with their
// treatment history.
//
// Measurements: PeakRSS and ResetPeakRSS read and restart the process's
// resident-set high-water mark (Linux), which includes lp_solve's C
// allocations that Go's -benchmem cannot see; CPUSeconds is the process's
// CPU time, which varies far less than wall time on a shared machine.
//
// The package imports nothing of wearplan, so that package optimize's own
// tests can use it without an import cycle. Package markov's benchmark keeps
// its own copy of the peak-memory reading: markov is the bottom of the
// one-way layout (cmd -> scenarios -> optimize -> treatments -> markov) and
// imports nothing from the optimize tree, tests included.
package optimizetest
