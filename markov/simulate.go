package markov

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"
)

// Lot is a quantity of one class that moves through the condition states as
// one piece: a segment of an inventory, or a lot cut from a class's quantity
// in one state. Every unit of a lot is in the same state in every year.
type Lot struct {
	// Class indexes the classes handed to Simulate.
	Class int
	// State is the lot's state at the start of year 1 (0 = best).
	State int
	// Quantity is the lot's size in the class's unit (lane-km, m2, each).
	Quantity float64
}

// SimClass is one class as the simulation sees it: which action a lot gets
// in each year and state, and where each action takes it.
type SimClass struct {
	// Policy[t][i][a] is the probability that a lot in state i at the start
	// of year t+1 is given action a in that year. Each Policy[t][i] sums to 1;
	// Policy has one entry per simulated year.
	Policy [][][]float64
	// Rows[a][i] is the distribution at the end of the year of a lot that
	// was in state i at its start and was given action a: the action's year
	// transition. It is nil where a cannot be taken in state i. Every run
	// uses Rows unless Draw is set.
	Rows [][][]float64
	// Draw, when set, returns the rows of one run in the shape of Rows,
	// drawn with the run's own random numbers (matrix uncertainty). It is
	// called once per run, from several goroutines at once, so it must only
	// read shared data.
	Draw func(rng *rand.Rand) ([][][]float64, error)
}

// SimOptions size a simulation.
type SimOptions struct {
	// Years is the number of simulated years; Runs the number of runs.
	Years, Runs int
	// Seed fixes every random number: the same seed and inputs give the
	// same runs whatever the number of workers.
	Seed uint64
	// Workers is the number of runs simulated at once; 0 means GOMAXPROCS.
	Workers int
}

// RunOutcome is what one run produced.
type RunOutcome struct {
	// Quantity[k][t][i] is the quantity of class k in state i at the end of
	// year t; Quantity[k][0] is the start of year 1.
	Quantity [][][]float64
	// Treated[k][t][i][a] is the quantity of class k in state i at the start
	// of year t+1 given action a in that year.
	Treated [][][][]float64
	// Rows[k] are the rows class k used in this run (Rows, or Draw's).
	Rows [][][][]float64
}

// Streams of random numbers per run: each class has one for its lots and
// one for its matrix draws. Changing one class's matrices (or switching
// matrix uncertainty on) then leaves every other class's random numbers
// unchanged, and a class's lots keep theirs when only its matrix source
// changes in a way that does not move them (common random numbers).
func lotStream(class int) uint64    { return uint64(class) << 1 }
func matrixStream(class int) uint64 { return uint64(class)<<1 | 1 }

// mix64 is the SplitMix64 finaliser (Steele, Lea and Flood, 2014): a
// bijection of 64-bit words that spreads every input bit over the output.
func mix64(z uint64) uint64 {
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// runSource returns the PCG generator of one stream of one run. Its two
// seed words are SplitMix64 hashes of (seed, run, stream), so every run has
// its own stream that depends on nothing but those three numbers.
func runSource(seed uint64, run int, stream uint64) *rand.PCG {
	hi := mix64(mix64(seed) + uint64(run))
	lo := mix64(hi ^ mix64(stream+0x9e3779b97f4a7c15))
	return rand.NewPCG(hi, lo)
}

// picker draws from a discrete distribution by inverse CDF: outcome to[k]
// when the uniform number falls below cum[k]. Outcomes with probability 0
// are left out; a distribution with a single outcome needs no draw.
type picker struct {
	to  []int32
	cum []float64
}

func newPicker(p []float64) picker {
	var pk picker
	total := 0.0
	for j, v := range p {
		if v > 0 {
			total += v
			pk.to = append(pk.to, int32(j))
			pk.cum = append(pk.cum, total)
		}
	}
	// The last outcome takes everything left, so that rounding in the
	// running sum can never leave a uniform number without an outcome.
	if n := len(pk.cum); n > 0 {
		for k := range pk.cum {
			pk.cum[k] /= total
		}
		pk.cum[n-1] = math.Inf(1)
	}
	return pk
}

// uniform returns a float64 in [0, 1) from 53 random bits, as
// math/rand/v2's Float64 does, without the interface call.
func uniform(src *rand.PCG) float64 { return float64(src.Uint64()>>11) * 0x1p-53 }

func (pk *picker) draw(src *rand.PCG) int {
	if len(pk.to) == 1 {
		return int(pk.to[0])
	}
	u := uniform(src)
	k := 0
	for u >= pk.cum[k] {
		k++
	}
	return int(pk.to[k])
}

// simShape is the size of each class, fixed across runs.
type simShape struct {
	states, actions int
	policy          []picker // [t*states+i]
}

// checkDistribution reports a probability vector that is not one.
func checkDistribution(p []float64, n int) error {
	if len(p) != n {
		return fmt.Errorf("has %d entries, want %d", len(p), n)
	}
	sum := 0.0
	for j, v := range p {
		if math.IsNaN(v) || v < 0 || v > 1 {
			return fmt.Errorf("entry %d is %g, outside [0, 1]", j+1, v)
		}
		sum += v
	}
	if math.Abs(sum-1) > RowSumTolerance {
		return fmt.Errorf("sums to %.12g, want 1", sum)
	}
	return nil
}

func prepareClass(k int, c *SimClass, years int) (simShape, error) {
	if len(c.Policy) != years {
		return simShape{}, fmt.Errorf("class %d: policy for %d years, want %d", k, len(c.Policy), years)
	}
	ns := len(c.Policy[0])
	if ns < 1 {
		return simShape{}, fmt.Errorf("class %d: policy has no states", k)
	}
	na := len(c.Policy[0][0])
	sh := simShape{states: ns, actions: na, policy: make([]picker, years*ns)}
	for t, byState := range c.Policy {
		if len(byState) != ns {
			return simShape{}, fmt.Errorf("class %d year %d: policy for %d states, want %d", k, t+1, len(byState), ns)
		}
		for i, p := range byState {
			if err := checkDistribution(p, na); err != nil {
				return simShape{}, fmt.Errorf("class %d year %d state %d: action probabilities %v", k, t+1, i+1, err)
			}
			sh.policy[t*ns+i] = newPicker(p)
		}
	}
	if c.Draw == nil {
		if err := sh.checkRows(c.Rows, c.Policy); err != nil {
			return simShape{}, fmt.Errorf("class %d: %w", k, err)
		}
	}
	return sh, nil
}

// checkRows verifies one run's rows: the shape, each row a distribution,
// and a row for every action the policy may take.
func (sh *simShape) checkRows(rows [][][]float64, policy [][][]float64) error {
	if len(rows) != sh.actions {
		return fmt.Errorf("rows for %d actions, want %d", len(rows), sh.actions)
	}
	for a, byState := range rows {
		if len(byState) != sh.states {
			return fmt.Errorf("action %d: rows for %d states, want %d", a, len(byState), sh.states)
		}
		for i, row := range byState {
			if row == nil {
				continue
			}
			if err := checkDistribution(row, sh.states); err != nil {
				return fmt.Errorf("action %d state %d: year transition %v", a, i+1, err)
			}
		}
	}
	for t, byState := range policy {
		for i, p := range byState {
			for a, v := range p {
				if v > 0 && rows[a][i] == nil {
					return fmt.Errorf("year %d state %d: action %d has probability %g but cannot be taken there", t+1, i+1, a, v)
				}
			}
		}
	}
	return nil
}

// Simulate runs the classes' lots through the years opt.Runs times and
// calls each with every run's outcome. In each year a lot in state i gets
// action a with probability Policy[t][i][a] and then moves to state j with
// probability Rows[a][i][j]; lots move independently of each other.
//
// Runs are spread over opt.Workers goroutines. Run r draws its random
// numbers from its own streams (runSource(opt.Seed, r, ...), one for each
// class's lots and one for each class's matrix draws), and lots are
// visited in the order given, so every run's outcome depends only on the
// seed, the run index and the inputs, never on scheduling. each may be
// called from several goroutines at once, for different runs and in any
// order; the outcome it receives is reused after it returns, so it must
// copy what it keeps (typically into a slot of its own per run). When runs
// fail, Simulate returns the error of the lowest-numbered one.
func Simulate(classes []SimClass, lots []Lot, opt SimOptions, each func(run int, out *RunOutcome) error) error {
	if opt.Years < 1 {
		return fmt.Errorf("simulate: %d years; simulate at least 1", opt.Years)
	}
	if opt.Runs < 1 {
		return fmt.Errorf("simulate: %d runs; give at least 1", opt.Runs)
	}
	if len(classes) == 0 {
		return errors.New("simulate: no classes")
	}
	shapes := make([]simShape, len(classes))
	for k := range classes {
		var err error
		if shapes[k], err = prepareClass(k, &classes[k], opt.Years); err != nil {
			return fmt.Errorf("simulate: %w", err)
		}
	}
	for n, l := range lots {
		switch {
		case l.Class < 0 || l.Class >= len(classes):
			return fmt.Errorf("simulate: lot %d: class %d out of range", n+1, l.Class)
		case l.State < 0 || l.State >= shapes[l.Class].states:
			return fmt.Errorf("simulate: lot %d: state %d outside the %d-state scale", n+1, l.State+1, shapes[l.Class].states)
		case math.IsNaN(l.Quantity) || math.IsInf(l.Quantity, 0) || l.Quantity < 0:
			return fmt.Errorf("simulate: lot %d: quantity %g must be a finite number of zero or more", n+1, l.Quantity)
		}
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, opt.Runs)

	var (
		next    atomic.Int64
		mu      sync.Mutex
		failRun = opt.Runs // lowest failed run so far
		failErr error
		wg      sync.WaitGroup
	)
	failedBefore := func(run int) bool {
		mu.Lock()
		defer mu.Unlock()
		return failRun < run
	}
	fail := func(run int, err error) {
		mu.Lock()
		defer mu.Unlock()
		if run < failRun {
			failRun, failErr = run, err
		}
	}
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w := newSimWorker(classes, shapes, opt.Years)
			for {
				run := int(next.Add(1) - 1)
				if run >= opt.Runs || failedBefore(run) {
					return
				}
				if err := w.run(classes, lots, opt.Seed, run); err != nil {
					fail(run, fmt.Errorf("simulate: run %d: %w", run+1, err))
					continue
				}
				if err := each(run, &w.out); err != nil {
					fail(run, err)
				}
			}
		}()
	}
	wg.Wait()
	return failErr
}

// simWorker holds one goroutine's buffers, reused run after run.
type simWorker struct {
	shapes []simShape
	years  int
	out    RunOutcome
	rows   [][]picker  // [k][a*states+i]
	srcs   []*rand.PCG // [k]: the lots' stream of the current run
	// flat views of out.Quantity and out.Treated per class
	qty     [][]float64 // [k][t*states+i]
	treated [][]float64 // [k][(t*states+i)*actions+a]
}

func newSimWorker(classes []SimClass, shapes []simShape, years int) *simWorker {
	w := &simWorker{shapes: shapes, years: years}
	nk := len(classes)
	w.out = RunOutcome{Quantity: make([][][]float64, nk), Treated: make([][][][]float64, nk), Rows: make([][][][]float64, nk)}
	w.rows = make([][]picker, nk)
	w.srcs = make([]*rand.PCG, nk)
	w.qty = make([][]float64, nk)
	w.treated = make([][]float64, nk)
	for k, sh := range shapes {
		ns, na := sh.states, sh.actions
		w.qty[k] = make([]float64, (years+1)*ns)
		w.treated[k] = make([]float64, years*ns*na)
		w.rows[k] = make([]picker, na*ns)
		w.out.Quantity[k] = make([][]float64, years+1)
		for t := range w.out.Quantity[k] {
			w.out.Quantity[k][t] = w.qty[k][t*ns : (t+1)*ns : (t+1)*ns]
		}
		w.out.Treated[k] = make([][][]float64, years)
		for t := range w.out.Treated[k] {
			w.out.Treated[k][t] = make([][]float64, ns)
			for i := range ns {
				off := (t*ns + i) * na
				w.out.Treated[k][t][i] = w.treated[k][off : off+na : off+na]
			}
		}
	}
	return w
}

func (w *simWorker) run(classes []SimClass, lots []Lot, seed uint64, run int) error {
	for k := range classes {
		c := &classes[k]
		sh := &w.shapes[k]
		rows := c.Rows
		w.srcs[k] = runSource(seed, run, lotStream(k))
		if c.Draw != nil {
			var err error
			if rows, err = c.Draw(rand.New(runSource(seed, run, matrixStream(k)))); err != nil {
				return fmt.Errorf("class %d: %w", k, err)
			}
			if err := sh.checkRows(rows, c.Policy); err != nil {
				return fmt.Errorf("class %d: drawn %w", k, err)
			}
		}
		w.out.Rows[k] = rows
		for a, byState := range rows {
			for i, row := range byState {
				if row != nil {
					w.rows[k][a*sh.states+i] = newPicker(row)
				} else {
					w.rows[k][a*sh.states+i] = picker{}
				}
			}
		}
		clear(w.qty[k])
		clear(w.treated[k])
	}
	years := w.years
	for _, l := range lots {
		k := l.Class
		src := w.srcs[k]
		sh := &w.shapes[k]
		ns, na := sh.states, sh.actions
		qty, treated, rows, policy := w.qty[k], w.treated[k], w.rows[k], sh.policy
		s, q := l.State, l.Quantity
		qty[s] += q
		for t := range years {
			a := policy[t*ns+s].draw(src)
			treated[(t*ns+s)*na+a] += q
			s = rows[a*ns+s].draw(src)
			qty[(t+1)*ns+s] += q
		}
	}
	return nil
}
