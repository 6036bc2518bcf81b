// Command benchtable times wearplan and general-purpose LP solvers on the
// same generated plan models in one run and prints one Markdown table
// (make bench). Each peer solves the flat model exported as free MPS, in its
// own process with a time limit, so a hopeless peer shows as "> N s".
//
//	go run ./optimize/internal/benchtable [-timeout 60s] [-reps 3]
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"time"

	"wearplan/optimize"
	"wearplan/optimize/optimizetest"
)

// sizes are the benchmark models: a binding yearly budget, the
// max-condition objective, no targets (the seed of optimize's benchmarks);
// the last is the largest with a 6-year interval on every third treatment,
// so that its classes are widened with the years since work (10 condition
// states x 6 years).
var sizes = []optimize.GenSpec{
	{Classes: 4, States: 5, Treatments: 4, Years: 20, BudgetShare: 0.15},
	{Classes: 20, States: 7, Treatments: 6, Years: 30, BudgetShare: 0.15},
	{Classes: 60, States: 10, Treatments: 8, Years: 40, BudgetShare: 0.15},
	{Classes: 60, States: 10, Treatments: 8, Years: 40, BudgetShare: 0.15, Interval: 6},
}

// result is one solver's run on one model.
type result struct {
	secs    float64
	timeout bool
	failed  string
	obj     float64 // the flat model's objective (maximised: mean score on 0-1)
	haveObj bool
	peakMiB float64
}

func (r result) cell() string {
	switch {
	case r.timeout:
		return fmt.Sprintf("> %s", fmtSecs(r.secs))
	case r.failed != "":
		return "failed (" + r.failed + ")"
	}
	return fmtSecs(r.secs)
}

func fmtSecs(s float64) string {
	switch {
	case s < 0.1:
		return fmt.Sprintf("%.1f ms", s*1000)
	case s < 10:
		return fmt.Sprintf("%.2f s", s)
	}
	return fmt.Sprintf("%.0f s", s)
}

type peer struct {
	name string
	args func(mps, sol string) (string, []string)
	// objective reads the optimum (of the minimisation in the file).
	objective func(out []byte, sol string) (float64, error)
}

var peers = []peer{
	{"glpsol simplex", func(mps, sol string) (string, []string) {
		return "glpsol", []string{"--freemps", mps, "-w", sol}
	}, glpsolObjective},
	{"glpsol --interior", func(mps, sol string) (string, []string) {
		return "glpsol", []string{"--freemps", mps, "--interior", "-w", sol}
	}, glpsolObjective},
	{"clp -barrier", func(mps, sol string) (string, []string) {
		return "clp", []string{mps, "-barrier"}
	}, clpObjective},
	{"lp_solve CLI", func(mps, sol string) (string, []string) {
		return "lp_solve", []string{"-fmps", mps, "-S1"}
	}, lpSolveObjective},
}

func main() {
	timeout := flag.Duration("timeout", 60*time.Second, "time limit of each peer run and of wearplan's flat solve")
	reps := flag.Int("reps", 3, "wearplan runs per model (the fastest is reported)")
	sweepOnly := flag.Bool("sweep", false, "time only the budget sweep")
	only := flag.String("models", "", "comma-separated models to time (e.g. 60x10x8x40,60x10x8x40-interval6); all by default, then the sweep")
	flag.Parse()
	dir, err := os.MkdirTemp("", "wearplan-bench")
	if err != nil {
		fatal(err)
	}
	defer os.RemoveAll(dir)

	fmt.Printf("wearplan benchmark, %s, %d cores (GOMAXPROCS %d), load average at start %s\n", time.Now().UTC().Format("2006-01-02 15:04 UTC"), runtime.NumCPU(), runtime.GOMAXPROCS(0), loadAvg())
	fmt.Printf("Generated models (optimize.Generate, seed 1): binding yearly budget, max-condition, no targets; -intervalN: every third treatment waits N years after any work (classes widened with the years since work). wearplan: fastest of %d runs of the whole plan (optimum and tie-break); flat = lp_solve through golp, in process; peers: one run each on the exported flat MPS file, wall time including reading it, limit %s. Peak = resident-set high-water mark.\n\n", *reps, *timeout)
	header := []string{"model (C x S x T x Y)", "flat cols", "flat rows", "wearplan decomposed", "pricing rounds / master solves", "peak", "wearplan flat"}
	for _, pr := range peers {
		header = append(header, pr.name)
	}
	header = append(header, "fastest peer / decomposed", "optima agree")
	fmt.Println("| " + strings.Join(header, " | ") + " |")
	fmt.Println("|" + strings.Repeat("---|", len(header)))

	if *sweepOnly {
		sweep()
		return
	}
	for _, spec := range sizes {
		if *only != "" && !slices.Contains(strings.Split(*only, ","), spec.String()) {
			continue
		}
		p := optimize.Generate(rand.New(rand.NewPCG(1, 1)), spec)
		m, err := optimize.BuildModel(p)
		if err != nil {
			fatal(err)
		}
		mps := filepath.Join(dir, spec.String()+".mps")
		f, err := os.Create(mps)
		if err != nil {
			fatal(err)
		}
		if err := optimize.WriteMPS(f, m); err != nil {
			fatal(err)
		}
		f.Close()

		dec, stats := runWearplan(p, optimize.Decomposed, *reps, 0)
		flat, _ := runWearplan(p, optimize.Flat, *reps, *timeout)
		row := []string{spec.String(), strconv.Itoa(len(m.Cols)), strconv.Itoa(len(m.Rows)), dec.cell(), fmt.Sprintf("%d / %d", stats.Iterations, stats.Solves), fmt.Sprintf("%.0f MiB", dec.peakMiB), flat.cell()}
		fastest := math.Inf(1)
		worst, compared := 0.0, 0
		agree := func(r result) {
			if r.haveObj && dec.haveObj {
				worst = math.Max(worst, math.Abs(r.obj-dec.obj)/math.Max(1, math.Abs(dec.obj)))
				compared++
			}
		}
		agree(flat)
		for _, pr := range peers {
			r := runPeer(pr, mps, *timeout)
			row = append(row, r.cell())
			if r.failed == "" && !r.timeout {
				fastest = math.Min(fastest, r.secs)
			}
			agree(r)
		}
		ratio := "-"
		if !math.IsInf(fastest, 1) && dec.failed == "" {
			ratio = fmt.Sprintf("%.1fx", fastest/dec.secs)
		}
		agreement := "- (no other optimum)"
		if compared > 0 {
			agreement = fmt.Sprintf("within %.0e", math.Max(worst, 1e-12))
		}
		row = append(row, ratio, agreement)
		fmt.Println("| " + strings.Join(row, " | ") + " |")
	}
	if *only != "" {
		fmt.Printf("\nload average at end %s\n", loadAvg())
		return
	}
	sweep()
	fmt.Printf("\nload average at end %s\n", loadAvg())
}

// runWearplan solves p reps times with the method and returns the fastest
// run, its solver statistics and the peak resident set of the runs.
func runWearplan(p *optimize.Problem, method optimize.Method, reps int, timeout time.Duration) (result, optimize.Stats) {
	q := *p
	q.Timeout = timeout
	best := result{secs: math.Inf(1)}
	var stats optimize.Stats
	optimizetest.ResetPeakRSS()
	for i := 0; i < reps; i++ {
		start := time.Now()
		plan, err := optimize.SolveWith(&q, optimize.Options{Method: method})
		secs := time.Since(start).Seconds()
		if err != nil {
			var se *optimize.SolverError
			if errors.As(err, &se) && se.Status == optimize.StatusTimeout {
				return result{secs: timeout.Seconds(), timeout: true}, stats
			}
			return result{failed: err.Error()}, stats
		}
		if secs < best.secs {
			best = result{secs: secs, obj: plan.ConditionScore / 100, haveObj: true}
			stats = plan.Stats
		}
		if method == optimize.Flat && secs > 10 {
			break // one slow flat run is enough
		}
	}
	best.peakMiB = optimizetest.PeakRSS()
	return best, stats
}

func runPeer(pr peer, mps string, timeout time.Duration) result {
	sol := mps + "." + strings.ReplaceAll(pr.name, " ", "") + ".sol"
	name, args := pr.args(mps, sol)
	if _, err := exec.LookPath(name); err != nil {
		return result{failed: name + " not installed"}
	}
	ctx, cancel := context.WithTimeout(context.Background(), timeout)
	defer cancel()
	cmd := exec.CommandContext(ctx, name, args...)
	start := time.Now()
	out, err := cmd.CombinedOutput()
	secs := time.Since(start).Seconds()
	if ctx.Err() != nil {
		return result{secs: timeout.Seconds(), timeout: true}
	}
	r := result{secs: secs}
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
		r.peakMiB = float64(ru.Maxrss) / 1024
	}
	if err != nil && name != "lp_solve" { // lp_solve exits with its status code
		r.failed = err.Error()
		return r
	}
	obj, oerr := pr.objective(out, sol)
	if oerr != nil {
		r.failed = oerr.Error()
		return r
	}
	r.obj, r.haveObj = -obj, true // the file minimises the negated score
	return r
}

// glpsolObjective reads the objective from glpsol's raw solution file
// (the simplex's or the interior point's, whichever glpsol wrote).
func glpsolObjective(_ []byte, sol string) (float64, error) {
	obj, optimal, _, err := optimizetest.ReadGlpsolSolution(sol)
	if err == nil && !optimal {
		// glpsol writes a solution file even when it gives up (a basis
		// singular to working precision): its objective is no optimum.
		return 0, errors.New("no optimum")
	}
	return obj, err
}

func clpObjective(out []byte, _ string) (float64, error) {
	for _, line := range strings.Split(string(out), "\n") {
		// "Optimal objective -0.953291337 - 19673 iterations time 4.212"
		if f := strings.Fields(line); len(f) >= 3 && f[0] == "Optimal" && f[1] == "objective" {
			return strconv.ParseFloat(f[2], 64)
		}
	}
	return 0, errors.New("no optimum")
}

func lpSolveObjective(out []byte, _ string) (float64, error) {
	for _, line := range strings.Split(string(out), "\n") {
		// "Value of objective function: -0.84240613"
		if v, ok := strings.CutPrefix(strings.TrimSpace(line), "Value of objective function:"); ok {
			return strconv.ParseFloat(strings.TrimSpace(v), 64)
		}
	}
	return 0, errors.New("no optimum: " + firstLine(out))
}

func firstLine(b []byte) string {
	s := strings.TrimSpace(string(b))
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		s = s[:i]
	}
	return s
}

// sweep times a 20-point budget sweep of the 20 x 7 x 6 x 30 model solved
// cold (each point on its own) and warm (each point from the previous
// point's policies), and checks that both give the same optima.
func sweep() {
	base := optimize.Generate(rand.New(rand.NewPCG(1, 1)), sizes[1])
	points := make([]*optimize.Problem, 20)
	for i := range points {
		q := *base
		q.Budget = make([]float64, len(base.Budget))
		for y := range q.Budget {
			q.Budget[y] = base.Budget[y] * (0.5 + 0.05*float64(i))
		}
		points[i] = &q
	}
	run := func(warm *optimize.Warm) (float64, []float64, int) {
		start := time.Now()
		var scores []float64
		rounds := 0
		for _, q := range points {
			plan, err := optimize.SolveWith(q, optimize.Options{Method: optimize.Decomposed, Warm: warm})
			if err != nil {
				fatal(err)
			}
			scores = append(scores, plan.ConditionScore)
			rounds += plan.Stats.Iterations
		}
		return time.Since(start).Seconds(), scores, rounds
	}
	cold, a, ra := run(nil)
	warm, b, rb := run(&optimize.Warm{})
	worst := 0.0
	for i := range a {
		worst = math.Max(worst, math.Abs(a[i]-b[i])/a[i])
	}
	fmt.Printf("\n20-point budget sweep of the %s model (budgets 0.5x to 1.45x): cold %s (%d rounds), warm-started %s (%d rounds); optima agree within %.0e.\n", sizes[1], fmtSecs(cold), ra, fmtSecs(warm), rb, math.Max(worst, 1e-12))
}

func loadAvg() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return "?"
	}
	f := strings.Fields(string(b))
	return strings.Join(f[:3], " ")
}

func fatal(err error) {
	fmt.Fprintln(os.Stderr, "benchtable:", err)
	os.Exit(1)
}
