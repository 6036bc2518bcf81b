// Command benchtable times wearplan as a user times it, the whole `wearplan
// plan` process, beside general-purpose LP solvers on the same generated
// models in one run, and prints Markdown tables (make bench). Each model is
// written as a scenario file (scenarios.WriteProblem) that bin/wearplan,
// built once at the start, plans several times; the peers solve the flat
// model `plan --write-model` exports as free MPS. Every process runs with a
// time limit, so a hopeless or failing run shows as a cell ("> 60 s",
// "failed (...)") and the table carries on.
//
//	go run ./optimize/internal/benchtable [-timeout 60s] [-reps 5] [-models 20x7x6x30,...] [-sweep-only]
//
// With -scale it plans networks past state-wide instead (make
// bench-scale): 50 to 1,000 classes (500 with -big) of 10 states, 8
// treatments and 40 years, -seeds seeds each, then fits how the time grows
// with classes, states and years.
//
//	go run ./optimize/internal/benchtable -scale [-big] [-seeds 5] [-timeout 120s] [-catalogue]
package main

import (
	"bytes"
	"context"
	"encoding/json"
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
	"wearplan/scenarios"
)

// models are the table's rows: the two benchmark sizes on both
// generators. Generate's rows have a binding yearly budget, the
// max-condition objective and no targets (the seed of optimize's
// benchmarks); the catalogue rows (GenSpec.Catalogue) give every class its
// own copy of the treatment catalogue and add a binding network poor-share
// target.
var models = []optimize.GenSpec{
	{Classes: 20, States: 7, Treatments: 6, Years: 30, BudgetShare: 0.15},
	{Classes: 20, States: 7, Treatments: 6, Years: 30, Catalogue: true},
	{Classes: 60, States: 10, Treatments: 8, Years: 40, BudgetShare: 0.15},
	{Classes: 60, States: 10, Treatments: 8, Years: 40, Catalogue: true},
}

// run is one process's outcome.
type run struct {
	secs    float64
	timeout bool
	failed  string
	peakMiB float64 // resident-set high-water mark (GNU time's %M); NaN when not measured
	out     []byte  // standard output, when kept
}

// runs is the outcome of the same command run several times.
type runs struct {
	secs    []float64 // of the runs that finished
	timeout bool
	failed  string
	peakMiB float64
}

func (r runs) ok() bool { return r.failed == "" && !r.timeout && len(r.secs) > 0 }

func (r runs) min() float64 { return slices.Min(r.secs) }

func (r runs) median() float64 {
	s := slices.Sorted(slices.Values(r.secs))
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}

// cell shows the fastest run and the median ("0.42 s / 0.45 s"), or the
// one run, or why there is none.
func (r runs) cell(limit time.Duration) string {
	switch {
	case r.timeout:
		return "> " + fmtSecs(limit.Seconds())
	case r.failed != "":
		return "failed (" + r.failed + ")"
	case len(r.secs) == 1:
		return fmtSecs(r.secs[0])
	}
	return fmtSecs(r.min()) + " / " + fmtSecs(r.median())
}

func fmtPeak(mib float64) string {
	if math.IsNaN(mib) {
		return "?"
	}
	return fmt.Sprintf("%.0f MiB", mib)
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

// gnuTime is GNU time, which measures each process's peak memory: the
// ru_maxrss that wait4 returns to this program would not do, since Go
// starts a child sharing this process's memory until exec and Linux
// counts that memory in the child's high-water mark (a child of a
// 300 MiB benchtable reports at least 300 MiB).
const gnuTime = "/usr/bin/time"

// runProcess runs name with args under GNU time with a time limit,
// standard output discarded unless keep, and measures its wall time and
// peak resident set. Past the limit the process group is interrupted, as
// Ctrl-C would (wearplan then exits at once and GNU time still reports
// the peak), and killed 5 s later if anything is left.
func runProcess(limit time.Duration, keep bool, name string, args ...string) run {
	ctx, cancel := context.WithTimeout(context.Background(), limit)
	defer cancel()
	peakFile, err := os.CreateTemp("", "benchtable-peak")
	if err != nil {
		return run{failed: shorten(err.Error())}
	}
	peakFile.Close()
	defer os.Remove(peakFile.Name())
	cmd := exec.CommandContext(ctx, gnuTime, append([]string{"-f", "%M", "-o", peakFile.Name(), name}, args...)...)
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	cmd.Cancel = func() error {
		group := -cmd.Process.Pid
		time.AfterFunc(5*time.Second, func() { _ = syscall.Kill(group, syscall.SIGKILL) })
		return syscall.Kill(group, syscall.SIGINT)
	}
	var stdout, stderr bytes.Buffer
	if keep {
		cmd.Stdout = &stdout
	}
	cmd.Stderr = &stderr
	start := time.Now()
	err = cmd.Run()
	r := run{secs: time.Since(start).Seconds(), peakMiB: math.NaN()}
	if b, rerr := os.ReadFile(peakFile.Name()); rerr == nil {
		// "%M" is the last line; GNU time puts a line about a non-zero
		// exit status or a signal before it.
		lines := strings.Fields(strings.TrimSpace(string(b)))
		if len(lines) > 0 {
			if kib, perr := strconv.ParseFloat(lines[len(lines)-1], 64); perr == nil {
				r.peakMiB = kib / 1024
			}
		}
	}
	switch {
	case ctx.Err() != nil:
		r.timeout = true
	case err != nil:
		r.failed = shorten(err.Error() + ": " + firstLine(stderr.Bytes()))
	}
	r.out = stdout.Bytes()
	return r
}

// repeat runs a command reps times (stopping at the first run that times
// out or fails, and after one run that takes over 10 s: its time is
// already well measured).
func repeat(reps int, limit time.Duration, name string, args ...string) runs {
	var rs runs
	for i := 0; i < reps; i++ {
		r := runProcess(limit, false, name, args...)
		rs.peakMiB = math.Max(rs.peakMiB, r.peakMiB)
		if r.timeout || r.failed != "" {
			rs.timeout, rs.failed = r.timeout, r.failed
			return rs
		}
		rs.secs = append(rs.secs, r.secs)
		if r.secs > 10 {
			break
		}
	}
	return rs
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

// bench is one run of the program: its folder, binary and settings.
type bench struct {
	dir, bin string
	limit    time.Duration
	reps     int
}

func main() {
	limit := flag.Duration("timeout", 0, "time limit of every process and in-process solve (default 60s; 120s with -scale)")
	reps := flag.Int("reps", 3, "whole-process runs of wearplan per model (fastest and median reported)")
	sweepOnly := flag.Bool("sweep-only", false, "time only the 50-budget sweep")
	sweepOf := flag.String("sweep-models", "20x7x6x30,60x10x8x40", "comma-separated models the 50-budget sweep plans (the table's)")
	only := flag.String("models", "", "comma-separated models to time (e.g. 60x10x8x40,60x10x8x40-catalogue); all by default, then the sweep")
	scale := flag.Bool("scale", false, "plan networks past state-wide (50 to 1,000 classes) instead, and fit the growth")
	big := flag.Bool("big", false, "with -scale: also 500 classes")
	seeds := flag.Int("seeds", 5, "with -scale: seeds per size")
	catalogue := flag.Bool("catalogue", false, "with -scale: the catalogue generator instead of optimize.Generate's")
	bin := flag.String("bin", "bin/wearplan", "where to build wearplan")
	flag.Parse()
	if *limit == 0 {
		*limit = 60 * time.Second
		if *scale {
			*limit = 120 * time.Second
		}
	}
	if _, err := os.Stat(gnuTime); err != nil {
		fatal(fmt.Errorf("%s (GNU time, Debian package time) measures each process's peak memory: %w", gnuTime, err))
	}
	if err := build(*bin); err != nil {
		fatal(err)
	}
	dir, err := os.MkdirTemp("", "wearplan-bench")
	if err != nil {
		fatal(err)
	}
	defer os.RemoveAll(dir)
	b := &bench{dir: dir, bin: *bin, limit: *limit, reps: max(*reps, 1)}
	fmt.Printf("wearplan benchmark, %s, %d cores (GOMAXPROCS %d), load average at start %s\n", time.Now().UTC().Format("2006-01-02 15:04 UTC"), runtime.NumCPU(), runtime.GOMAXPROCS(0), loadAvg())
	switch {
	case *scale:
		b.scale(*big, *seeds, *catalogue)
	case *sweepOnly:
		b.sweeps(*sweepOf)
	default:
		b.table(*only)
		if *only == "" {
			b.sweeps(*sweepOf)
		}
	}
	fmt.Printf("\nload average at end %s\n", loadAvg())
}

// build builds the wearplan binary once, as `make build` does (the
// Makefile's cgo settings come through the environment).
func build(bin string) error {
	goTool, err := exec.LookPath("go") // the Makefile puts /usr/local/go/bin on the path
	if err != nil {
		return fmt.Errorf("building %s: %w", bin, err)
	}
	out, err := exec.Command(goTool, "build", "-o", bin, "./cmd/wearplan").CombinedOutput()
	if err != nil {
		return fmt.Errorf("go build -o %s ./cmd/wearplan: %v\n%s", bin, err, out)
	}
	return nil
}

// scenarioFile writes p as a scenario file in the bench's folder and reads
// it back as `plan` does, returning the path and the problem `plan` solves.
func (b *bench) scenarioFile(p *optimize.Problem, name string) (string, *optimize.Problem, error) {
	var buf bytes.Buffer
	if err := scenarios.WriteProblem(&buf, p, name); err != nil {
		return "", nil, err
	}
	path := filepath.Join(b.dir, name+".yaml")
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		return "", nil, err
	}
	sc, err := scenarios.LoadFile(path)
	if err != nil {
		return "", nil, err
	}
	q, err := sc.Problem()
	return path, q, err
}

// exportModel writes the flat model of the scenario as free MPS with
// `plan --write-model`, which writes it before solving: a plan that then
// fails or runs out of time still leaves the model.
func (b *bench) exportModel(file string) (string, error) {
	mps := strings.TrimSuffix(file, ".yaml") + ".mps"
	r := runProcess(b.limit, false, b.bin, "plan", file, "--format", "json", "--timeout", b.limit.String(), "--write-model", mps)
	if _, err := os.Stat(mps); err != nil {
		return "", fmt.Errorf("plan --write-model wrote no model (%s)", firstOf(r.failed, "timed out"))
	}
	return mps, nil
}

// table prints the main table: the whole `plan` process, the in-process
// solve and the peers on each model.
func (b *bench) table(only string) {
	fmt.Printf("Generated models, seed 1 (Generate: binding yearly budget, max-condition, no targets; -catalogue: GenSpec.Catalogue, every class with its own treatment copies, one shared scale, a binding level budget and network poor-share target), each written as a scenario file. `plan`: the whole `%s plan --format json FILE >/dev/null` process, fastest / median of %d runs; in process: optimize.SolveWith (auto) on the scenario's problem, fastest / median of %d. Peers: the MPS from `plan --write-model`, whole processes (run %d times when under 2 s, else once), limit %s. Peak = resident-set high-water mark of the process (GNU time's %%M).\n\n", b.bin, b.reps, b.reps, b.reps, b.limit)
	header := []string{"model (C x S x T x Y)", "flat cols", "flat rows", "`plan` whole process", "peak", "in-process solve", "rounds / master solves"}
	for _, pr := range peers {
		header = append(header, pr.name)
	}
	header = append(header, "fastest peer / `plan`", "optima agree")
	fmt.Println("| " + strings.Join(header, " | ") + " |")
	fmt.Println("|" + strings.Repeat("---|", len(header)))
	for _, spec := range models {
		if only != "" && !slices.Contains(strings.Split(only, ","), spec.String()) {
			continue
		}
		fmt.Println("| " + strings.Join(b.row(spec, len(header)), " | ") + " |")
	}
}

func (b *bench) row(spec optimize.GenSpec, width int) []string {
	row := []string{spec.String()}
	fail := func(why string) []string {
		for len(row) < width {
			row = append(row, why)
		}
		return row
	}
	p := optimize.Generate(rand.New(rand.NewPCG(1, 1)), spec)
	file, q, err := b.scenarioFile(p, spec.String())
	if err != nil {
		return fail("failed (" + shorten(err.Error()) + ")")
	}
	m, err := optimize.BuildModel(q)
	if err != nil {
		return fail("failed (" + shorten(err.Error()) + ")")
	}
	row = append(row, strconv.Itoa(len(m.Cols)), strconv.Itoa(len(m.Rows)))

	whole := repeat(b.reps, b.limit, b.bin, "plan", "--format", "json", "--timeout", b.limit.String(), file)
	row = append(row, whole.cell(b.limit), fmtPeak(whole.peakMiB))

	inproc, stats, obj, haveObj := b.solveInProcess(q)
	row = append(row, inproc.cell(b.limit), fmt.Sprintf("%d / %d", stats.Iterations, stats.Solves))

	mps, err := b.exportModel(file)
	fastest, worst, compared := math.Inf(1), 0.0, 0
	for _, pr := range peers {
		if err != nil {
			row = append(row, "no model")
			continue
		}
		r, pobj, ok := b.runPeer(pr, mps)
		row = append(row, r.cell(b.limit))
		if r.ok() {
			fastest = math.Min(fastest, r.min())
		}
		if ok && haveObj {
			worst = math.Max(worst, math.Abs(pobj-obj)/math.Max(1, math.Abs(obj)))
			compared++
		}
	}
	ratio := "-"
	if !math.IsInf(fastest, 1) && whole.ok() {
		ratio = fmt.Sprintf("%.1fx", fastest/whole.min())
	}
	agreement := "- (no peer's optimum)"
	if compared > 0 {
		agreement = fmt.Sprintf("within %.0e (%d peers)", math.Max(worst, 1e-12), compared)
	}
	return append(row, ratio, agreement)
}

// solveInProcess solves q reps times with the default method and returns
// the times, the fastest run's statistics and the optimum (mean score on
// 0-1, the flat model's objective).
func (b *bench) solveInProcess(q *optimize.Problem) (runs, optimize.Stats, float64, bool) {
	p := *q
	p.Timeout = b.limit
	var rs runs
	var stats optimize.Stats
	obj, have := 0.0, false
	for i := 0; i < b.reps; i++ {
		start := time.Now()
		plan, err := optimize.SolveWith(&p, optimize.Options{})
		secs := time.Since(start).Seconds()
		if err != nil {
			var se *optimize.SolverError
			if errors.As(err, &se) && se.Status == optimize.StatusTimeout {
				rs.timeout = true
			} else {
				rs.failed = shorten(err.Error())
			}
			return rs, stats, 0, false
		}
		if len(rs.secs) == 0 || secs < rs.min() {
			stats = plan.Stats
		}
		rs.secs = append(rs.secs, secs)
		obj, have = plan.ConditionScore/100, plan.Status == optimize.Optimal
		if secs > 10 {
			break
		}
	}
	return rs, stats, obj, have
}

// runPeer runs a peer on the model (again while each run takes under 2 s)
// and returns its runs and its optimum (mean score on 0-1).
func (b *bench) runPeer(pr peer, mps string) (runs, float64, bool) {
	sol := mps + "." + strings.ReplaceAll(pr.name, " ", "") + ".sol"
	name, args := pr.args(mps, sol)
	if _, err := exec.LookPath(name); err != nil {
		return runs{failed: name + " not installed"}, 0, false
	}
	var rs runs
	obj, have := 0.0, false
	for i := 0; i < b.reps; i++ {
		r := runProcess(b.limit, true, name, args...)
		rs.peakMiB = math.Max(rs.peakMiB, r.peakMiB)
		if r.timeout {
			return runs{timeout: true}, 0, false
		}
		if r.failed != "" && name != "lp_solve" { // lp_solve exits with its status code
			return runs{failed: r.failed}, 0, false
		}
		v, err := pr.objective(r.out, sol)
		if err != nil {
			return runs{failed: shorten(err.Error())}, 0, false
		}
		rs.secs = append(rs.secs, r.secs)
		obj, have = -v, true // the file minimises the negated score
		if r.secs > 2 {
			break
		}
	}
	return rs, obj, have
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

// sweepPoints is the number of budgets of the sweep row.
const sweepPoints = 50

func (b *bench) sweeps(models string) {
	for _, m := range strings.Split(models, ",") {
		b.sweep(m)
	}
}

// sweep times `wearplan sweep` over 50 level budgets from half to one and
// a half times the model's mean yearly budget, as one process with
// the time limit, and checks the optima of the lowest, middle and highest
// budgets against glpsol's interior point on each budget's exported model.
func (b *bench) sweep(model string) {
	i := slices.IndexFunc(models, func(s optimize.GenSpec) bool { return s.String() == model })
	if i < 0 {
		fmt.Printf("\n%d-budget sweep: no model %q\n", sweepPoints, model)
		return
	}
	sweepModel := models[i]
	p := optimize.Generate(rand.New(rand.NewPCG(1, 1)), sweepModel)
	mean := 0.0
	for _, v := range p.Budget {
		mean += v / float64(len(p.Budget))
	}
	budgets := make([]float64, sweepPoints)
	list := make([]string, sweepPoints)
	for i := range budgets {
		budgets[i] = math.Round(mean * (0.5 + float64(i)/float64(sweepPoints-1)))
		list[i] = strconv.FormatFloat(budgets[i], 'f', -1, 64)
	}
	name := sweepModel.String() + "-sweep"
	file, _, err := b.scenarioFile(p, name)
	if err != nil {
		fmt.Printf("\n%d-budget sweep of %s: failed (%v)\n", sweepPoints, sweepModel, err)
		return
	}
	limit := 2 * b.limit
	r := runProcess(limit, true, b.bin, "sweep", file, "--budget", strings.Join(list, ","), "--format", "json", "--timeout", limit.String())
	result := fmtSecs(r.secs) + ", peak " + fmtPeak(r.peakMiB)
	switch {
	case r.timeout:
		result = "> " + fmtSecs(limit.Seconds()) + " (did not finish)"
	case r.failed != "":
		result = "failed (" + r.failed + ")"
	}
	var out struct {
		Points []struct {
			Budget         float64 `json:"budget"`
			Status         string  `json:"status"`
			ConditionScore float64 `json:"condition_score"`
		} `json:"points"`
	}
	planned := 0
	if r.ok() {
		if err := json.Unmarshal(r.out, &out); err != nil {
			result += fmt.Sprintf(" (output not read: %v)", err)
		}
		for _, pt := range out.Points {
			if pt.Status == string(optimize.Optimal) {
				planned++
			}
		}
		result += fmt.Sprintf(", %d of %d points optimal", planned, sweepPoints)
	}
	fmt.Printf("\n%d-budget sweep of the %s model (`%s sweep FILE --budget B1,...,B%d --format json`, one whole process, level budgets %s to %s: 0.5x to 1.5x of the model's mean yearly budget; limit %s): %s.\n", sweepPoints, sweepModel, b.bin, sweepPoints, list[0], list[sweepPoints-1], limit, result)

	// Interior point solutions end at glpsol's own tolerances, not at a
	// vertex: 1e-6 relative is a hundred times the gap between glpsol
	// --interior and the simplex optimum seen on these models (1e-8).
	const tol = 1e-6
	fmt.Println("\n| sweep point | budget | `sweep`'s condition score | glpsol --interior on the point's exported model | relative difference |")
	fmt.Println("|---|---|---|---|---|")
	for _, i := range []int{0, sweepPoints / 2, sweepPoints - 1} {
		q := *p
		q.Budget = make([]float64, len(p.Budget))
		for y := range q.Budget {
			q.Budget[y] = budgets[i]
		}
		cells := []string{fmt.Sprintf("%d of %d", i+1, sweepPoints), list[i], "-", "-", "-"}
		have := false
		if i < len(out.Points) && out.Points[i].Budget == budgets[i] && out.Points[i].Status == string(optimize.Optimal) {
			cells[2] = strconv.FormatFloat(out.Points[i].ConditionScore, 'f', 9, 64)
			have = true
		} else if i < len(out.Points) {
			cells[2] = out.Points[i].Status
		}
		pfile, _, err := b.scenarioFile(&q, fmt.Sprintf("%s-point%d", name, i+1))
		var mps string
		if err == nil {
			mps, err = b.exportModel(pfile)
		}
		if err != nil {
			cells[3] = "failed (" + shorten(err.Error()) + ")"
		} else {
			pr, obj, ok := b.runPeer(peers[1], mps)
			switch {
			case !ok:
				cells[3] = pr.cell(b.limit)
			default:
				cells[3] = fmt.Sprintf("%.9f (%s)", 100*obj, fmtSecs(pr.min()))
				if have {
					d := math.Abs(out.Points[i].ConditionScore/100-obj) / math.Max(1e-12, math.Abs(obj))
					verdict := "agree"
					if d > tol {
						verdict = "DISAGREE"
					}
					cells[4] = fmt.Sprintf("%.1e (%s within %.0e)", d, verdict, tol)
				}
			}
		}
		fmt.Println("| " + strings.Join(cells, " | ") + " |")
	}
}

func (r run) ok() bool { return !r.timeout && r.failed == "" }

func loadAvg() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return "?"
	}
	f := strings.Fields(string(b))
	return strings.Join(f[:3], " ")
}

func firstLine(b []byte) string {
	s := strings.TrimSpace(string(b))
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		s = s[:i]
	}
	return s
}

// shorten keeps a message to one table cell.
func shorten(s string) string {
	s = strings.ReplaceAll(s, "|", "/")
	if len(s) > 90 {
		s = s[:87] + "..."
	}
	return s
}

func firstOf(s ...string) string {
	for _, v := range s {
		if v != "" {
			return v
		}
	}
	return ""
}

func fatal(err error) {
	fmt.Fprintln(os.Stderr, "benchtable:", err)
	os.Exit(1)
}
