package markov

import (
	"errors"
	"fmt"

	"gonum.org/v1/gonum/mat"
)

// Power returns the n-step transition matrix P^n (n >= 0; P^0 = I).
func (t *Transition) Power(n int) (*mat.Dense, error) {
	if n < 0 {
		return nil, fmt.Errorf("matrix power %d: steps must be zero or more", n)
	}
	var out mat.Dense
	out.Pow(t.p, n)
	return &out, nil
}

// Step returns q·P: quantities by state after one year untreated.
// q must have one entry per state; Step panics otherwise, as a matrix
// product of mismatched shapes would.
func (t *Transition) Step(q []float64) []float64 {
	n := t.States()
	if len(q) != n {
		panic(fmt.Sprintf("markov: Step given %d quantities for a %d-state chain", len(q), n))
	}
	out := make([]float64, n)
	raw := t.p.RawMatrix()
	for i, qi := range q {
		if qi == 0 {
			continue
		}
		row := raw.Data[i*raw.Stride : i*raw.Stride+n]
		for j, p := range row {
			out[j] += qi * p
		}
	}
	return out
}

// Roll carries quantities by state forward the given number of years with
// no work done. The result has years+1 rows: row 0 is q itself and row t the
// quantities at the end of year t, equal to q·P^t.
func (t *Transition) Roll(q []float64, years int) ([][]float64, error) {
	if len(q) != t.States() {
		return nil, fmt.Errorf("roll forward: %d quantities for a %d-state chain", len(q), t.States())
	}
	if years < 0 {
		return nil, fmt.Errorf("roll forward: %d years; give zero or more", years)
	}
	out := make([][]float64, years+1)
	out[0] = append([]float64(nil), q...)
	for y := 1; y <= years; y++ {
		out[y] = t.Step(out[y-1])
	}
	return out, nil
}

// Absorption holds, for each state, the expected number of years until an
// asset first reaches an absorbing state (the worst state, for
// YearsToWorst), and the variance of that number. Absorbing states have
// zero for both.
type Absorption struct {
	Mean     []float64
	Variance []float64
}

// ErrNotAbsorbed is returned when some state can stay out of the absorbing
// states forever, so that its expected time to absorption is infinite.
var ErrNotAbsorbed = errors.New("the chain can stay out of the absorbing states forever")

// YearsToWorst computes expected years (and their variance) to first reach
// the worst state from each state: TimeToAbsorption with the worst state
// absorbing. This is the expected remaining life of an asset left
// untreated, if reaching the worst state ends its useful life. It fails
// (errors.Is ErrNotAbsorbed) when some state cannot reach the worst state.
func (t *Transition) YearsToWorst() (Absorption, error) {
	abs, err := t.TimeToAbsorption(t.States() - 1)
	var ne *notAbsorbedError
	if errors.As(err, &ne) {
		return Absorption{}, fmt.Errorf("years to worst state: state %d never reaches the worst state (%w); check for states that keep assets forever", ne.state+1, ErrNotAbsorbed)
	}
	if err != nil {
		return Absorption{}, fmt.Errorf("years to worst state: %w", err)
	}
	return abs, nil
}

// notAbsorbedError names the first state that never reaches the absorbing
// states; it unwraps to ErrNotAbsorbed.
type notAbsorbedError struct{ state int }

func (e *notAbsorbedError) Error() string {
	return fmt.Sprintf("state %d: %v", e.state+1, ErrNotAbsorbed)
}

func (e *notAbsorbedError) Unwrap() error { return ErrNotAbsorbed }

// TimeToAbsorption computes, for each state, the expected number of years
// until the chain first enters one of the given states, and its variance,
// from the fundamental matrix of the absorbing chain (Kemeny and Snell,
// Finite Markov Chains, 1960; Grinstead and Snell, Introduction to
// Probability, ch. 11): with Q the block of P among the other (transient)
// states, N = (I - Q)^-1, the mean is t = N·1 and the variance
// (2N - I)t - t∘t. The rows of the given states are ignored: they are made
// absorbing, since the first passage does not depend on what follows it.
//
// Every transient state must reach the absorbing states through positive
// entries of P; then I - Q is invertible. Otherwise TimeToAbsorption fails
// with an error that errors.Is ErrNotAbsorbed.
func (t *Transition) TimeToAbsorption(absorbing ...int) (Absorption, error) {
	n := t.States()
	isAbs := make([]bool, n)
	for _, a := range absorbing {
		if a < 0 || a >= n {
			return Absorption{}, fmt.Errorf("time to absorption: state %d is outside the %d-state chain", a+1, n)
		}
		isAbs[a] = true
	}
	if len(absorbing) == 0 {
		return Absorption{}, fmt.Errorf("time to absorption: no absorbing state given")
	}
	// Which states reach the absorbing set: grow it backwards along
	// positive entries until nothing changes.
	reaches := append([]bool(nil), isAbs...)
	for changed := true; changed; {
		changed = false
		for i := 0; i < n; i++ {
			if reaches[i] {
				continue
			}
			for j := 0; j < n; j++ {
				if reaches[j] && t.p.At(i, j) > 0 {
					reaches[i], changed = true, true
					break
				}
			}
		}
	}
	var transient []int
	for i := 0; i < n; i++ {
		if !reaches[i] {
			return Absorption{}, &notAbsorbedError{state: i}
		}
		if !isAbs[i] {
			transient = append(transient, i)
		}
	}
	abs := Absorption{Mean: make([]float64, n), Variance: make([]float64, n)}
	m := len(transient)
	if m == 0 {
		return abs, nil
	}
	iq := mat.NewDense(m, m, nil)
	for a, i := range transient {
		for b, j := range transient {
			v := -t.p.At(i, j)
			if a == b {
				v++
			}
			iq.Set(a, b, v)
		}
	}
	var fund mat.Dense
	if err := fund.Inverse(iq); err != nil {
		return Absorption{}, fmt.Errorf("time to absorption: the chain is numerically ill-conditioned (%w)", err)
	}
	ones := mat.NewVecDense(m, nil)
	for a := 0; a < m; a++ {
		ones.SetVec(a, 1)
	}
	var tv mat.VecDense
	tv.MulVec(&fund, ones)
	// (2N - I) t - t∘t
	var twoNI mat.Dense
	twoNI.Scale(2, &fund)
	for a := 0; a < m; a++ {
		twoNI.Set(a, a, twoNI.At(a, a)-1)
	}
	var v mat.VecDense
	v.MulVec(&twoNI, &tv)
	for a, i := range transient {
		mean := tv.AtVec(a)
		if mean < 1-1e-9 {
			// Every transient state needs at least one step.
			return Absorption{}, fmt.Errorf("time to absorption: the chain is numerically ill-conditioned (expected time %g from state %d)", mean, i+1)
		}
		abs.Mean[i] = mean
		abs.Variance[i] = v.AtVec(a) - mean*mean
	}
	return abs, nil
}

// SteadyState returns the distribution π with π·P = π and Σπ = 1. It solves
// (P^T - I)π = 0 with one equation replaced by Σπ = 1, and fails when the
// chain has more than one stationary distribution.
func (t *Transition) SteadyState() ([]float64, error) {
	return SteadyState(t.p)
}

// SteadyState is the steady state of any row-stochastic matrix p, which may
// be the mixture of several treatments under a fixed policy.
func SteadyState(p mat.Matrix) ([]float64, error) {
	n, c := p.Dims()
	if n != c {
		return nil, fmt.Errorf("steady state: matrix is %dx%d, want square", n, c)
	}
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := p.At(j, i)
			if i == j {
				v -= 1
			}
			a.Set(i, j, v)
		}
	}
	b := mat.NewVecDense(n, nil)
	for j := 0; j < n; j++ {
		a.Set(n-1, j, 1)
	}
	b.SetVec(n-1, 1)
	var x mat.VecDense
	if err := x.SolveVec(a, b); err != nil {
		return nil, errors.New("steady state: the chain has no unique steady state (it splits into separate closed sets of states)")
	}
	out := make([]float64, n)
	for i := range out {
		v := x.AtVec(i)
		if v < 0 && v > -1e-12 {
			v = 0
		}
		out[i] = v
	}
	return out, nil
}
