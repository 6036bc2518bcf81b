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
// asset first reaches the worst state, and the variance of that number.
// The worst state itself has zero for both.
type Absorption struct {
	Mean     []float64
	Variance []float64
}

// YearsToWorst computes expected years (and their variance) to first reach
// the worst state from each state, from the fundamental matrix
// N = (I - Q)^-1 of the chain with the worst state made absorbing (Kemeny and
// Snell, 1960): mean t = N·1, variance (2N - I)t - t∘t.
// It fails when some state cannot reach the worst state.
func (t *Transition) YearsToWorst() (Absorption, error) {
	n := t.States()
	m := n - 1
	iq := mat.NewDense(m, m, nil)
	for i := 0; i < m; i++ {
		for j := 0; j < m; j++ {
			v := -t.p.At(i, j)
			if i == j {
				v += 1
			}
			iq.Set(i, j, v)
		}
	}
	var fund mat.Dense
	if err := fund.Inverse(iq); err != nil {
		return Absorption{}, errors.New("years to worst state: some state never reaches the worst state (I - Q is singular); check for states that keep assets forever")
	}
	ones := mat.NewVecDense(m, nil)
	for i := 0; i < m; i++ {
		ones.SetVec(i, 1)
	}
	var tv mat.VecDense
	tv.MulVec(&fund, ones)
	// (2N - I) t - t∘t
	var twoNI mat.Dense
	twoNI.Scale(2, &fund)
	for i := 0; i < m; i++ {
		twoNI.Set(i, i, twoNI.At(i, i)-1)
	}
	var v mat.VecDense
	v.MulVec(&twoNI, &tv)
	abs := Absorption{Mean: make([]float64, n), Variance: make([]float64, n)}
	for i := 0; i < m; i++ {
		mean := tv.AtVec(i)
		if mean < 0 {
			return Absorption{}, errors.New("years to worst state: the chain is numerically ill-conditioned (negative expected time)")
		}
		abs.Mean[i] = mean
		abs.Variance[i] = v.AtVec(i) - mean*mean
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
