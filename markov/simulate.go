package markov

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/stat/distuv"
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

// step is one possible outcome of a lot's year: the action it gets and
// the state it ends the year in, with the running sum of the outcomes'
// probabilities up to and including this one as a threshold on 53-bit
// random integers (cut) and its own probability (p).
type step struct {
	cut  uint64
	p    float64
	a, j int32
}

// stepPicker draws a lot's year, action and next state at once, from the
// joint distribution P(a, j) = policy(a)·row_a(j), by inverse CDF: outcome
// k when a uniform 53-bit integer falls below cut[k]. Outcomes with
// probability 0 are left out; a year with a single outcome needs no draw.
// One draw a lot-year instead of two, and the action follows from the same
// number.
type stepPicker []step

// uniform returns a float64 in [0, 1) from 53 random bits, as
// math/rand/v2's Float64 does, without the interface call.
func uniform(src *rand.PCG) float64 { return float64(src.Uint64()>>11) * 0x1p-53 }

func (sp stepPicker) draw(src *rand.PCG) (a, j int32) {
	if len(sp) == 1 {
		return sp[0].a, sp[0].j
	}
	u := src.Uint64() >> 11
	k := 0
	for u >= sp[k].cut {
		k++
	}
	return sp[k].a, sp[k].j
}

// fillSteps writes the joint outcomes of a policy row pol (by action) and
// the rows (by action, of the lot's state i) into buf, and returns it.
func fillSteps(buf stepPicker, pol []float64, rows [][][]float64, i int) stepPicker {
	buf = buf[:0]
	total := 0.0
	for a, pa := range pol {
		if pa <= 0 {
			continue
		}
		for j, m := range rows[a][i] {
			if v := pa * m; v > 0 {
				total += v
				buf = append(buf, step{p: v, a: int32(a), j: int32(j)})
			}
		}
	}
	// Normalise; the last outcome takes everything left, so that rounding
	// in the running sum can never leave a random number without an
	// outcome.
	run := 0.0
	for k := range buf {
		buf[k].p /= total
		run += buf[k].p
		buf[k].cut = uint64(math.Min(run, 1) * 0x1p53)
	}
	if n := len(buf); n > 0 {
		buf[n-1].cut = math.MaxUint64
	}
	return buf
}

// simShape is the size of each class, fixed across runs, and its joint
// outcome pickers when its rows are the same in every run.
type simShape struct {
	states, actions int
	// steps[t*states+i] draws the action and next state of a lot in state
	// i in year t+1; nil when the class draws its rows in every run.
	steps []stepPicker
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
	sh := simShape{states: ns, actions: na}
	for t, byState := range c.Policy {
		if len(byState) != ns {
			return simShape{}, fmt.Errorf("class %d year %d: policy for %d states, want %d", k, t+1, len(byState), ns)
		}
		for i, p := range byState {
			if err := checkDistribution(p, na); err != nil {
				return simShape{}, fmt.Errorf("class %d year %d state %d: action probabilities %w", k, t+1, i+1, err)
			}
		}
	}
	if c.Draw == nil {
		if err := sh.checkRows(c.Rows, c.Policy); err != nil {
			return simShape{}, fmt.Errorf("class %d: %w", k, err)
		}
		sh.steps = sh.fillAll(nil, c.Policy, c.Rows)
	}
	return sh, nil
}

// fillAll writes the joint outcome pickers of every year and state into
// buf (reusing its storage) and returns it.
func (sh *simShape) fillAll(buf []stepPicker, policy [][][]float64, rows [][][]float64) []stepPicker {
	if buf == nil {
		buf = make([]stepPicker, len(policy)*sh.states)
	}
	for t, byState := range policy {
		for i, p := range byState {
			buf[t*sh.states+i] = fillSteps(buf[t*sh.states+i], p, rows, i)
		}
	}
	return buf
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
				return fmt.Errorf("action %d state %d: year transition %w", a, i+1, err)
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
// Lots of one class and the same quantity are exchangeable: only how many
// of them are in each state matters. Simulate moves them as a cohort of
// counts: each year the n lots in state i split over the (action, next
// state) outcomes by one multinomial draw, made as a chain of binomial
// draws (the k-th outcome takes Binomial(n left, p_k / mass left)), or by n
// single draws when n is small. The distribution of every run's quantities
// is the same as moving the lots one by one; the time no longer grows with
// the number of equal lots, so a class cut into equal lots costs a few
// draws per state and year whatever its size. Lots of a quantity that
// fewer than minCohort lots of the class share move one by one.
//
// Runs are spread over opt.Workers goroutines. Run r draws its random
// numbers from its own streams (runSource(opt.Seed, r, ...), one for each
// class's lots and one for each class's matrix draws), and cohorts and lots
// are visited in a fixed order (by class; cohorts in the order of their
// first lot, then the other lots in the order given), so every run's
// outcome depends only on the seed, the run index and the inputs, never on
// scheduling. each may be called from several goroutines at once, for
// different runs and in any order; the outcome it receives is reused after
// it returns, so it must copy what it keeps (typically into a slot of its
// own per run). When runs fail, Simulate returns the error of the
// lowest-numbered one.
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
	groups := groupLots(len(classes), shapes, lots)
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
				if err := w.run(classes, groups, opt.Seed, run); err != nil {
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

// cohort is the lots of one class that share a quantity: Start[i] of them
// start in state i.
type cohort struct {
	quantity float64
	start    []int
}

// classLots are one class's lots as the runs move them.
type classLots struct {
	cohorts []cohort
	singles []Lot
}

// minCohort is the fewest lots that move as a cohort: fewer lots of one
// size move one by one, which skips the cohort's pass over every state in
// every year (a list of segments has many sizes shared by a few segments).
const minCohort = 32

// groupLots puts the lots of each class that share a quantity (bit for
// bit), when there are at least minCohort of them, into cohorts, in the
// order of their first lot; the other lots stay single, in the order given.
func groupLots(classes int, shapes []simShape, lots []Lot) []classLots {
	type key struct {
		class int
		q     uint64
	}
	n := map[key]int{}
	for _, l := range lots {
		n[key{l.Class, math.Float64bits(l.Quantity)}]++
	}
	out := make([]classLots, classes)
	at := map[key]int{}
	for _, l := range lots {
		kk := key{l.Class, math.Float64bits(l.Quantity)}
		if n[kk] < minCohort {
			out[l.Class].singles = append(out[l.Class].singles, l)
			continue
		}
		c, ok := at[kk]
		if !ok {
			c = len(out[l.Class].cohorts)
			at[kk] = c
			out[l.Class].cohorts = append(out[l.Class].cohorts, cohort{quantity: l.Quantity, start: make([]int, shapes[l.Class].states)})
		}
		out[l.Class].cohorts[c].start[l.State]++
	}
	return out
}

// simWorker holds one goroutine's buffers, reused run after run.
type simWorker struct {
	shapes []simShape
	years  int
	out    RunOutcome
	steps  [][]stepPicker // [k]: the class's pickers of the current run
	drawn  [][]stepPicker // [k]: storage for classes that draw their rows
	// flat views of out.Quantity and out.Treated per class
	qty     [][]float64 // [k][t*states+i]
	treated [][]float64 // [k][(t*states+i)*actions+a]
	// counts of a cohort by state: this year's and next year's
	cnt, nxt []int
}

func newSimWorker(classes []SimClass, shapes []simShape, years int) *simWorker {
	w := &simWorker{shapes: shapes, years: years}
	nk := len(classes)
	w.out = RunOutcome{Quantity: make([][][]float64, nk), Treated: make([][][][]float64, nk), Rows: make([][][][]float64, nk)}
	w.steps = make([][]stepPicker, nk)
	w.drawn = make([][]stepPicker, nk)
	w.qty = make([][]float64, nk)
	w.treated = make([][]float64, nk)
	most := 0
	for k, sh := range shapes {
		ns, na := sh.states, sh.actions
		most = max(most, ns*max(na, ns))
		w.qty[k] = make([]float64, (years+1)*ns)
		w.treated[k] = make([]float64, years*ns*na)
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
	w.cnt, w.nxt = make([]int, most), make([]int, most)
	return w
}

func (w *simWorker) run(classes []SimClass, groups []classLots, seed uint64, run int) error {
	for k := range classes {
		c := &classes[k]
		sh := &w.shapes[k]
		rows := c.Rows
		w.steps[k] = sh.steps
		if c.Draw != nil {
			var err error
			if rows, err = c.Draw(rand.New(runSource(seed, run, matrixStream(k)))); err != nil {
				return fmt.Errorf("class %d: %w", k, err)
			}
			if err := sh.checkRows(rows, c.Policy); err != nil {
				return fmt.Errorf("class %d: drawn %w", k, err)
			}
			w.drawn[k] = sh.fillAll(w.drawn[k], c.Policy, rows)
			w.steps[k] = w.drawn[k]
		}
		w.out.Rows[k] = rows
		clear(w.qty[k])
		clear(w.treated[k])
		src := runSource(seed, run, lotStream(k))
		for g := range groups[k].cohorts {
			w.moveCohort(k, &groups[k].cohorts[g], src)
		}
		w.moveSingles(k, groups[k].singles, src)
	}
	return nil
}

// moveSingles moves lots one by one: one draw per lot and year (none where
// the year has a single outcome).
func (w *simWorker) moveSingles(k int, lots []Lot, src *rand.PCG) {
	sh := &w.shapes[k]
	ns, na := sh.states, sh.actions
	qty, treated, steps := w.qty[k], w.treated[k], w.steps[k]
	for _, l := range lots {
		s, q := l.State, l.Quantity
		qty[s] += q
		for t := range w.years {
			a, j := steps[t*ns+s].draw(src)
			treated[(t*ns+s)*na+int(a)] += q
			s = int(j)
			qty[(t+1)*ns+s] += q
		}
	}
}

// fewLots is the number of lots in one state of a cohort up to which they
// are drawn one by one: below it single draws are cheaper than a chain of
// binomial draws.
const fewLots = 16

// moveCohort moves a cohort by counts: each year, the lots in each state
// split over the outcomes of that state's picker by a multinomial draw.
func (w *simWorker) moveCohort(k int, c *cohort, src *rand.PCG) {
	sh := &w.shapes[k]
	ns, na := sh.states, sh.actions
	qty, treated, steps := w.qty[k], w.treated[k], w.steps[k]
	q := c.quantity
	cnt, nxt := w.cnt[:ns], w.nxt[:ns]
	copy(cnt, c.start)
	for i, n := range cnt {
		qty[i] += float64(n) * q
	}
	for t := range w.years {
		clear(nxt)
		for i, n := range cnt {
			if n == 0 {
				continue
			}
			sp := steps[t*ns+i]
			base := (t*ns + i) * na
			switch {
			case len(sp) == 1:
				treated[base+int(sp[0].a)] += float64(n) * q
				nxt[sp[0].j] += n
			case n <= fewLots:
				for range n {
					a, j := sp.draw(src)
					treated[base+int(a)] += q
					nxt[j]++
				}
			default:
				left, mass := n, 1.0
				for m := range sp {
					st := &sp[m]
					x := left
					if m < len(sp)-1 {
						if pr := st.p / mass; pr < 1 {
							x = binomial(left, max(pr, 0), src)
						}
					}
					mass -= st.p
					if x > 0 {
						treated[base+int(st.a)] += float64(x) * q
						nxt[st.j] += x
						left -= x
					}
					if left == 0 {
						break
					}
				}
			}
		}
		for j, n := range nxt {
			if n > 0 {
				qty[(t+1)*ns+j] += float64(n) * q
			}
		}
		cnt, nxt = nxt, cnt
	}
}

// binomial draws from Binomial(n, p). Where the mean of the rarer outcome
// is small (n·min(p, 1-p) below 30, most cohort draws) it inverts the
// distribution function, walking up from 0 with the ratio of successive
// probabilities, P(k+1)/P(k) = (n-k)/(k+1)·p/(1-p): the BINV algorithm of
// Kachitvichyanukul and Schmeiser (1988), exact, one uniform number and
// about mean+1 steps. Otherwise it uses gonum's exact rejection sampler.
func binomial(n int, p float64, src *rand.PCG) int {
	if p <= 0 || n == 0 {
		return 0
	}
	if p >= 1 {
		return n
	}
	q := min(p, 1-p)
	if float64(n)*q >= 30 {
		return int(distuv.Binomial{N: float64(n), P: p, Src: src}.Rand())
	}
	r := q / (1 - q)
	f := math.Exp(float64(n) * math.Log1p(-q)) // P(0)
	u := uniform(src)
	k := 0
	for u > f && k < n {
		u -= f
		f *= r * float64(n-k) / float64(k+1)
		k++
	}
	if q != p {
		return n - k
	}
	return k
}
