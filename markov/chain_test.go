package markov_test

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"wearplan/markov"
)

// randomUpper returns a random n-state upper-triangular stochastic matrix
// with every entry on and above the diagonal positive (worst row absorbing).
func randomUpper(r *rand.Rand, n int) [][]float64 {
	rows := make([][]float64, n)
	for i := range rows {
		rows[i] = make([]float64, n)
		sum := 0.0
		for j := i; j < n; j++ {
			// Weight the diagonal so chains stay in a state for a while, as
			// real deterioration does; 0.05 keeps entries well away from 0.
			w := 0.05 + r.Float64()
			if j == i {
				w += 3 * r.Float64()
			}
			rows[i][j] = w
			sum += w
		}
		for j := i; j < n; j++ {
			rows[i][j] /= sum
		}
	}
	return rows
}

// closeRel reports whether got is within rel of want, relative to |want|;
// exact zeros must stay exact zeros.
func closeRel(got, want, rel float64) bool {
	if want == 0 {
		return got == 0
	}
	return math.Abs(got-want) <= rel*math.Abs(want)
}

// Products and sums of non-negative numbers have no cancellation, so each
// entry of P^t or q·P^t computed in any order is within about
// (steps·states)·eps of the exact value, relative to that value (standard
// floating-point error bound for sums of non-negative terms, Higham, Accuracy
// and Stability of Numerical Algorithms, ch. 3, from memory). With at most
// 40 steps and 7 states that is ~3e-14, so 1e-12 relative is a safe bound
// that still catches any wrong product.
const productRel = 1e-12

func TestPowerAndRollMatchExplicitProducts(t *testing.T) {
	r := rand.New(rand.NewPCG(2027, 15)) // fixed seed: reproducible
	for trial := range 6 {
		n := 3 + trial%5 // 3..7 states
		rows := randomUpper(r, n)
		p, err := markov.NewTransition(rows, markov.Options{})
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		P := mat.NewDense(n, n, nil)
		for i := range rows {
			P.SetRow(i, rows[i])
		}
		q := make([]float64, n)
		for i := range q {
			q[i] = 10 + 100*r.Float64() // lane-km by state, invented
		}
		const years = 40
		roll, err := p.Roll(q, years)
		if err != nil {
			t.Fatal(err)
		}
		if len(roll) != years+1 {
			t.Fatalf("Roll returned %d rows, want %d", len(roll), years+1)
		}
		// Independent reference: explicit P^k by repeated gonum Mul, then q·P^k.
		pk := mat.NewDense(n, n, nil)
		for i := range n {
			pk.Set(i, i, 1)
		}
		qrow := mat.NewDense(1, n, q)
		for k := 0; k <= years; k++ {
			if k > 0 {
				var next mat.Dense
				next.Mul(pk, P)
				pk = &next
			}
			pow, err := p.Power(k)
			if err != nil {
				t.Fatal(err)
			}
			for i := range n {
				for j := range n {
					if !closeRel(pow.At(i, j), pk.At(i, j), productRel) {
						t.Fatalf("trial %d: Power(%d)[%d][%d] = %.17g, explicit product %.17g", trial, k, i, j, pow.At(i, j), pk.At(i, j))
					}
				}
			}
			var want mat.Dense
			want.Mul(qrow, pk)
			for j := range n {
				if !closeRel(roll[k][j], want.At(0, j), productRel) {
					t.Fatalf("trial %d: Roll year %d state %d = %.17g, q·P^%d gives %.17g", trial, k, j, roll[k][j], k, want.At(0, j))
				}
			}
		}
	}
}

func TestPowerZeroOneAndNegative(t *testing.T) {
	p, err := markov.NewTransition(upper(), markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	id, err := p.Power(0)
	if err != nil {
		t.Fatal(err)
	}
	if !mat.Equal(id, eye(4)) {
		t.Errorf("Power(0) = %v, want I", mat.Formatted(id))
	}
	one, err := p.Power(1)
	if err != nil {
		t.Fatal(err)
	}
	if !mat.Equal(one, p.Matrix()) {
		t.Errorf("Power(1) = %v, want P", mat.Formatted(one))
	}
	one.Set(0, 0, 0) // must not reach into p
	if p.At(0, 0) != 0.80 {
		t.Errorf("Power(1) shares storage with the transition")
	}
	// Two steps worked by hand from upper(): P^2[0][1] = 0.80·0.15 + 0.15·0.70 = 0.225,
	// P^2[0][3] = 0.15·0.05 + 0.05·0.10 = 0.0125.
	two, _ := p.Power(2)
	if math.Abs(two.At(0, 1)-0.225) > 1e-15 || math.Abs(two.At(0, 3)-0.0125) > 1e-15 {
		t.Errorf("P^2 row 0 = %v, want [0.64 0.225 ... 0.0125]", mat.Row(nil, 0, two))
	}
	if m, err := p.Power(-1); err == nil || m != nil {
		t.Errorf("Power(-1) accepted")
	}
}

func eye(n int) *mat.Dense {
	m := mat.NewDense(n, n, nil)
	for i := range n {
		m.Set(i, i, 1)
	}
	return m
}

func TestStepAndRoll(t *testing.T) {
	p, err := markov.NewTransition(upper(), markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	q := []float64{100, 50, 20, 5}
	// By hand: [100·0.80, 100·0.15 + 50·0.70, 100·0.05 + 50·0.25 + 20·0.90,
	// 50·0.05 + 20·0.10 + 5] = [80, 50, 35.5, 9.5].
	want := []float64{80, 50, 35.5, 9.5}
	got := p.Step(q)
	for j := range want {
		if math.Abs(got[j]-want[j]) > 1e-12 {
			t.Errorf("Step = %v, want %v", got, want)
			break
		}
	}
	if q[0] != 100 {
		t.Errorf("Step changed its input")
	}

	roll, err := p.Roll(q, 0)
	if err != nil || len(roll) != 1 || roll[0][3] != 5 {
		t.Fatalf("Roll(q, 0) = %v, %v; want [q]", roll, err)
	}
	roll[0][0] = -1
	if q[0] != 100 {
		t.Errorf("Roll row 0 shares storage with q")
	}

	// Quantity is conserved: every row of P sums to 1 (to 1e-9 by validation,
	// much tighter here), so each year's total stays 175 lane-km.
	roll, _ = p.Roll(q, 25)
	for y, row := range roll {
		total := 0.0
		for _, v := range row {
			total += v
		}
		if math.Abs(total-175) > 1e-9 {
			t.Errorf("year %d: total %g, want 175", y, total)
		}
	}

	if _, err := p.Roll([]float64{1, 2, 3}, 5); err == nil {
		t.Errorf("Roll accepted 3 quantities for a 4-state chain")
	}
	if _, err := p.Roll(q, -1); err == nil {
		t.Errorf("Roll accepted -1 years")
	}
}

func TestStepPanicsOnWrongLength(t *testing.T) {
	p, err := markov.NewTransition(upper(), markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range [][]float64{{1, 2, 3}, {1, 2, 3, 4, 5}} {
		func() {
			defer func() {
				r := recover()
				if r == nil {
					t.Errorf("Step(%v) did not panic", q)
				} else if !strings.Contains(r.(string), "4-state") {
					t.Errorf("panic %q does not name the chain size", r)
				}
			}()
			p.Step(q)
		}()
	}
}

// Expected years to the worst state from a chain built from years in state:
// the time from state i is the sum of independent geometric sojourns in
// states i..n-2, so its mean is sum_{j>=i} d_j and its variance
// sum_{j>=i} d_j(d_j - 1) (a geometric sojourn with stay probability
// p = 1 - 1/d has variance p/(1-p)^2 = d^2 - d). Source: Kemeny and Snell,
// Finite Markov Chains, 1960, fundamental matrix (from memory); also basic
// probability (means and variances of independent sums).
func TestYearsToWorstFromYearsInState(t *testing.T) {
	cases := [][]float64{
		{6, 5, 5, 6},     // the design note's five-state example
		{1, 1, 1},        // deterministic: one state per year
		{3.5, 12, 1, 25}, // invented
	}
	r := rand.New(rand.NewPCG(7, 7))
	for range 3 {
		d := make([]float64, 2+r.IntN(8))
		for i := range d {
			d[i] = 1 + 30*r.Float64()
		}
		cases = append(cases, d)
	}
	for _, years := range cases {
		p, err := markov.FromYearsInState(years)
		if err != nil {
			t.Fatal(err)
		}
		abs, err := p.YearsToWorst()
		if err != nil {
			t.Fatalf("%v: %v", years, err)
		}
		n := len(years) + 1
		if len(abs.Mean) != n || len(abs.Variance) != n {
			t.Fatalf("%v: %d means, %d variances; want %d", years, len(abs.Mean), len(abs.Variance), n)
		}
		for i := range n {
			mean, variance := 0.0, 0.0
			for _, d := range years[min(i, len(years)):] {
				mean += d
				variance += d * (d - 1)
			}
			// I - Q is bidiagonal with diagonal 1/d_j; its inverse is exact up to
			// a few roundings per entry (cond ~ max d / min d <= 31 here), and the
			// variance subtracts t^2 from (2N-I)t, losing up to t^2/var digits;
			// 1e-10 relative (1e-10 absolute near 0) covers both.
			if math.Abs(abs.Mean[i]-mean) > 1e-10*math.Max(mean, 1) {
				t.Errorf("%v: mean from state %d = %.15g, want %g", years, i, abs.Mean[i], mean)
			}
			if math.Abs(abs.Variance[i]-variance) > 1e-10*math.Max(mean*mean, 1) {
				t.Errorf("%v: variance from state %d = %.15g, want %g", years, i, abs.Variance[i], variance)
			}
		}
		if abs.Mean[n-1] != 0 || abs.Variance[n-1] != 0 {
			t.Errorf("%v: worst state has mean %g, variance %g; want 0, 0", years, abs.Mean[n-1], abs.Variance[n-1])
		}
	}
}

// A 3-state chain with a skip transition, worked by hand (invented numbers):
//
//	P = | 0.5 0.3 0.2 |   Q = | 0.5 0.3 |   I - Q = | 0.5 -0.3 |
//	    | 0   0.6 0.4 |       | 0   0.6 |           | 0    0.4 |
//	    | 0   0   1   |
//
// det(I - Q) = 0.5·0.4 = 0.2, so
//
//	N = (I - Q)^-1 = (1/0.2)·| 0.4 0.3 | = | 2 1.5 |
//	                         | 0   0.5 |   | 0 2.5 |
//
// t = N·1 = (2 + 1.5, 2.5) = (3.5, 2.5).
// Check by first step: t1 = 1/0.4 = 2.5; t0 = 1 + 0.5·t0 + 0.3·t1 gives
// 0.5·t0 = 1.75, t0 = 3.5.
//
// Variance (Kemeny and Snell, 1960, (2N - I)t - t∘t; formula from memory):
//
//	2N - I = | 3 3 |   (2N - I)t = (3·3.5 + 3·2.5, 4·2.5) = (18, 10)
//	         | 0 4 |   t∘t       = (12.25, 6.25)
//
// variance = (5.75, 3.75). Check: from state 1 the time is geometric with
// stay probability 0.6: 0.6/0.4^2 = 3.75. From state 0 by first step:
// E[T0^2] = 1 + 2·(0.5·3.5 + 0.3·2.5) + 0.5·E[T0^2] + 0.3·(3.75 + 6.25),
// so 0.5·E[T0^2] = 9, E[T0^2] = 18 and the variance is 18 - 12.25 = 5.75.
func TestYearsToWorstByHand(t *testing.T) {
	p, err := markov.NewTransition([][]float64{
		{0.5, 0.3, 0.2},
		{0, 0.6, 0.4},
		{0, 0, 1},
	}, markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	abs, err := p.YearsToWorst()
	if err != nil {
		t.Fatal(err)
	}
	wantMean := []float64{3.5, 2.5, 0}
	wantVar := []float64{5.75, 3.75, 0}
	// 0.3, 0.6, 0.4 are not exact in binary; a 2x2 inverse carries that
	// ~1e-16 relative error through a few operations: 1e-12 is ample.
	for i := range wantMean {
		if math.Abs(abs.Mean[i]-wantMean[i]) > 1e-12 {
			t.Errorf("mean from state %d = %.15g, want %g", i, abs.Mean[i], wantMean[i])
		}
		if math.Abs(abs.Variance[i]-wantVar[i]) > 1e-12 {
			t.Errorf("variance from state %d = %.15g, want %g", i, abs.Variance[i], wantVar[i])
		}
	}
}

// A single geometric sojourn: stay with probability p, else drop to the worst
// state. The number of years until the drop is geometric on {1, 2, ...} with
// success probability 1-p: mean 1/(1-p), variance p/(1-p)^2 (variance of a
// geometric number of trials, textbook fact).
func TestYearsToWorstGeometric(t *testing.T) {
	for _, stay := range []float64{0, 0.25, 0.5, 0.8, 0.95, 0.99} {
		p, err := markov.NewTransition([][]float64{{stay, 1 - stay}, {0, 1}}, markov.Options{})
		if err != nil {
			t.Fatal(err)
		}
		abs, err := p.YearsToWorst()
		if err != nil {
			t.Fatal(err)
		}
		mean := 1 / (1 - stay)
		variance := stay / ((1 - stay) * (1 - stay))
		// 1/(1-p) is one division; the variance subtracts mean^2 (up to 1e4 at
		// p = 0.99) from a number of the same size: 1e-10 relative to mean^2.
		if math.Abs(abs.Mean[0]-mean) > 1e-12*mean {
			t.Errorf("stay %g: mean %.15g, want %g", stay, abs.Mean[0], mean)
		}
		if math.Abs(abs.Variance[0]-variance) > 1e-10*mean*mean {
			t.Errorf("stay %g: variance %.15g, want %g", stay, abs.Variance[0], variance)
		}
	}
}

// The first passage to the worst state does not depend on what happens after
// it: with improvement allowed, the worst row is ignored. By hand: from state
// 0 the time is geometric with stay 0.75, mean 4, variance 0.75/0.0625 = 12.
func TestYearsToWorstIgnoresWorstRow(t *testing.T) {
	p, err := markov.NewTransition([][]float64{{0.75, 0.25}, {0.5, 0.5}}, markov.Options{AllowImprovement: true})
	if err != nil {
		t.Fatal(err)
	}
	abs, err := p.YearsToWorst()
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(abs.Mean[0]-4) > 1e-12 || math.Abs(abs.Variance[0]-12) > 1e-11 {
		t.Errorf("got mean %g, variance %g; want 4, 12", abs.Mean[0], abs.Variance[0])
	}
}

// The drunkard's walk of Grinstead and Snell, Introduction to Probability,
// ch. 11 (section 11.2, absorbing chains; from memory): states 0-4, 0 and 4 absorbing, from 1, 2 and 3 a step left or
// right with probability 1/2 each. The expected times to absorption from
// 1, 2 and 3 are 3, 4 and 3. The variances follow from (2N - I)t - t∘t with
// N = | 3/2 1 1/2 ; 1 2 1 ; 1/2 1 3/2 | (the book's N for this chain):
// (2N - I)t = (2·3 + 2·4 + 1·3, 2·3 + 3·4 + 2·3, 1·3 + 2·4 + 2·3) =
// (17, 24, 17), less t∘t = (9, 16, 9) gives (8, 8, 8). Check by first step
// from state 2: E[T2^2] = 1 + 2·E[T1] + E[T1^2] with E[T1^2] = 8 + 9 = 17
// gives 1 + 6 + 17 = 24 = 8 + 16.
func TestTimeToAbsorptionDrunkardsWalk(t *testing.T) {
	p, err := markov.NewTransition([][]float64{
		{1, 0, 0, 0, 0},
		{0.5, 0, 0.5, 0, 0},
		{0, 0.5, 0, 0.5, 0},
		{0, 0, 0.5, 0, 0.5},
		{0, 0, 0, 0, 1},
	}, markov.Options{AllowImprovement: true})
	if err != nil {
		t.Fatal(err)
	}
	abs, err := p.TimeToAbsorption(0, 4)
	if err != nil {
		t.Fatal(err)
	}
	wantMean := []float64{0, 3, 4, 3, 0}
	wantVar := []float64{0, 8, 8, 8, 0}
	// A 3x3 inverse of halves and ones: exact up to a few roundings.
	for i := range wantMean {
		if math.Abs(abs.Mean[i]-wantMean[i]) > 1e-12 || math.Abs(abs.Variance[i]-wantVar[i]) > 1e-11 {
			t.Errorf("state %d: mean %.15g, variance %.15g; want %g, %g", i, abs.Mean[i], abs.Variance[i], wantMean[i], wantVar[i])
		}
	}
	// With state 4 alone absorbing, state 0 never leaves: no finite time.
	if _, err := p.TimeToAbsorption(4); !errors.Is(err, markov.ErrNotAbsorbed) {
		t.Errorf("state 0 kept forever: error %v, want ErrNotAbsorbed", err)
	}
	if _, err := p.TimeToAbsorption(5); err == nil {
		t.Error("state 6 of a 5-state chain accepted")
	}
	if _, err := p.TimeToAbsorption(); err == nil {
		t.Error("no absorbing state accepted")
	}
}

func TestYearsToWorstUnreachable(t *testing.T) {
	tests := []struct {
		name string
		rows [][]float64
		opt  markov.Options
	}{
		{"middle state never leaves", [][]float64{{0.8, 0.2, 0}, {0, 1, 0}, {0, 0, 1}}, markov.Options{}},
		{"best state never leaves", [][]float64{{1, 0, 0, 0}, {0, 0.5, 0.5, 0}, {0, 0, 0.5, 0.5}, {0, 0, 0, 1}}, markov.Options{}},
		{"closed pair above the worst", [][]float64{{0.5, 0.5, 0}, {0.5, 0.5, 0}, {0, 0, 1}}, markov.Options{AllowImprovement: true}},
		{"identity", [][]float64{{1, 0}, {0, 1}}, markov.Options{}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p, err := markov.NewTransition(tc.rows, tc.opt)
			if err != nil {
				t.Fatal(err)
			}
			abs, err := p.YearsToWorst()
			if err == nil {
				t.Fatalf("YearsToWorst = %+v, want an error", abs)
			}
			if !strings.Contains(err.Error(), "never reaches the worst state") || !errors.Is(err, markov.ErrNotAbsorbed) {
				t.Errorf("error %q does not say what is wrong", err)
			}
			if abs.Mean != nil || abs.Variance != nil {
				t.Errorf("partial result %+v alongside the error", abs)
			}
		})
	}
}

// ergodic is an invented 4-state chain where recorded condition can rise
// (AllowImprovement): every state reaches every other, aperiodic.
var ergodic = [][]float64{
	{0.70, 0.20, 0.10, 0.00},
	{0.10, 0.60, 0.25, 0.05},
	{0.05, 0.10, 0.60, 0.25},
	{0.30, 0.00, 0.10, 0.60},
}

// leftPerron returns the left eigenvector of m for the eigenvalue closest to
// 1, normalised to sum 1, computed with gonum's general eigen-decomposition
// (LAPACK Dgeev): an independent route from SteadyState's linear solve.
func leftPerron(t *testing.T, m *mat.Dense) []float64 {
	t.Helper()
	var eig mat.Eigen
	if !eig.Factorize(m, mat.EigenLeft) {
		t.Fatal("eigen-decomposition failed")
	}
	vals := eig.Values(nil)
	best := 0
	for k, v := range vals {
		if cmplx.Abs(v-1) < cmplx.Abs(vals[best]-1) {
			best = k
		}
	}
	if cmplx.Abs(vals[best]-1) > 1e-12 {
		t.Fatalf("no eigenvalue 1 in %v", vals)
	}
	var vl mat.CDense
	eig.LeftVectorsTo(&vl)
	n, _ := m.Dims()
	out := make([]float64, n)
	sum := 0.0
	for i := range n {
		v := vl.At(i, best)
		if math.Abs(imag(v)) > 1e-14 {
			t.Fatalf("eigenvector for eigenvalue 1 is complex: %v", v)
		}
		out[i] = real(v)
		sum += out[i]
	}
	for i := range out {
		out[i] /= sum
	}
	return out
}

func checkStationary(t *testing.T, name string, m *mat.Dense, pi []float64) {
	t.Helper()
	n, _ := m.Dims()
	sum := 0.0
	for _, v := range pi {
		sum += v
		if v < 0 {
			t.Errorf("%s: negative steady-state share %g", name, v)
		}
	}
	// One linear solve of a well-conditioned n <= 8 system: residuals are a
	// few eps; 1e-12 leaves room and still detects any wrong answer.
	if math.Abs(sum-1) > 1e-12 {
		t.Errorf("%s: steady state sums to %.15g", name, sum)
	}
	for j := range n {
		pj := 0.0
		for i := range n {
			pj += pi[i] * m.At(i, j)
		}
		if math.Abs(pj-pi[j]) > 1e-12 {
			t.Errorf("%s: (πP)[%d] = %.15g, π[%d] = %.15g", name, j, pj, j, pi[j])
		}
	}
}

func TestSteadyStateErgodic(t *testing.T) {
	mats := map[string][][]float64{"invented 4-state": ergodic}
	r := rand.New(rand.NewPCG(11, 13))
	for k := range 4 {
		// Every entry positive: irreducible and aperiodic, so the steady state
		// is unique (Perron-Frobenius, textbook fact).
		n := 3 + 2*k
		rows := make([][]float64, n)
		for i := range rows {
			rows[i] = make([]float64, n)
			s := 0.0
			for j := range rows[i] {
				rows[i][j] = 0.01 + r.Float64()
				s += rows[i][j]
			}
			for j := range rows[i] {
				rows[i][j] /= s
			}
		}
		mats["random positive "+string(rune('a'+k))] = rows
	}
	for name, rows := range mats {
		p, err := markov.NewTransition(rows, markov.Options{AllowImprovement: true})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		pi, err := p.SteadyState()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		m := p.Matrix()
		checkStationary(t, name, m, pi)
		// Dgeev's eigenvector has backward error ~n·eps; the eigenvalue 1 is
		// separated from the rest by a gap of well over 0.1 in these matrices,
		// so the vector is accurate to ~1e-14. 1e-11 absolute is safe.
		ref := leftPerron(t, m)
		for i := range pi {
			if math.Abs(pi[i]-ref[i]) > 1e-11 {
				t.Errorf("%s: π[%d] = %.15g, eigenvector gives %.15g", name, i, pi[i], ref[i])
			}
		}
		// The package-level function on a plain gonum matrix agrees.
		pi2, err := markov.SteadyState(m)
		if err != nil {
			t.Fatal(err)
		}
		for i := range pi {
			if pi2[i] != pi[i] {
				t.Errorf("%s: SteadyState(matrix) and method differ at %d", name, i)
			}
		}
	}
}

// An irreducible but periodic chain still has a unique steady state: the
// two-state flip has π = (1/2, 1/2) (by hand: π0 = π1 from πP = π).
func TestSteadyStatePeriodic(t *testing.T) {
	pi, err := markov.SteadyState(mat.NewDense(2, 2, []float64{0, 1, 1, 0}))
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(pi[0]-0.5) > 1e-15 || math.Abs(pi[1]-0.5) > 1e-15 {
		t.Errorf("π = %v, want [0.5 0.5]", pi)
	}
}

func TestSteadyStateDoNothingEndsWorst(t *testing.T) {
	// Left untreated, everything ends in the worst (only absorbing) state.
	for _, years := range [][]float64{{6, 5, 5, 6}, {1, 40}, {2}} {
		p, err := markov.FromYearsInState(years)
		if err != nil {
			t.Fatal(err)
		}
		pi, err := p.SteadyState()
		if err != nil {
			t.Fatalf("%v: %v", years, err)
		}
		last := len(pi) - 1
		for i, v := range pi {
			want := 0.0
			if i == last {
				want = 1
			}
			// Triangular solve with entries 1/d: exact to a few eps.
			if math.Abs(v-want) > 1e-12 {
				t.Errorf("%v: π = %v, want everything in the worst state", years, pi)
				break
			}
		}
	}
	p, err := markov.NewTransition(upper(), markov.Options{})
	if err != nil {
		t.Fatal(err)
	}
	pi, err := p.SteadyState()
	if err != nil || math.Abs(pi[3]-1) > 1e-12 {
		t.Errorf("upper(): π = %v, %v; want [0 0 0 1]", pi, err)
	}
}

func TestSteadyStateNotUnique(t *testing.T) {
	tests := []struct {
		name string
		rows []float64
	}{
		// Best and worst both absorbing: any mix of them is stationary.
		{"two absorbing states", []float64{1, 0, 0, 0, 0.5, 0.5, 0, 0, 1}},
		// A transient state feeding two absorbing states.
		{"transient feeding two absorbing", []float64{0.7, 0.2, 0.1, 0, 1, 0, 0, 0, 1}},
		// Two closed classes of two states each.
		{"two closed classes", []float64{
			0.6, 0.4, 0, 0,
			0.3, 0.7, 0, 0,
			0, 0, 0.2, 0.8,
			0, 0, 0.5, 0.5,
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			n := int(math.Sqrt(float64(len(tc.rows))))
			pi, err := markov.SteadyState(mat.NewDense(n, n, tc.rows))
			if err == nil {
				t.Fatalf("SteadyState = %v, want an error", pi)
			}
			if !strings.Contains(err.Error(), "no unique steady state") {
				t.Errorf("error %q does not say what is wrong", err)
			}
		})
	}
}

func TestSteadyStateNotSquare(t *testing.T) {
	if _, err := markov.SteadyState(mat.NewDense(2, 3, nil)); err == nil {
		t.Errorf("SteadyState accepted a 2x3 matrix")
	}
}
