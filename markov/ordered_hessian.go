package markov

import (
	"math"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/mat"
)

// deriv2 returns the density's derivative f'(z): for the logistic
// f(1 - 2F), for the standard normal -z f.
func (l Link) deriv2(z, cdf, pdf float64) float64 {
	if l == Probit {
		return -z * pdf
	}
	return pdf * (1 - 2*cdf)
}

// yearly says every pair is one year apart: then the log-likelihood's
// Hessian has a closed form (hessian) and Newton's method applies.
func (d *orderedPairs) yearly() bool {
	for _, y := range d.years {
		if y != 1 {
			return false
		}
	}
	return true
}

// hessian returns the log-likelihood's Hessian with respect to (β
// standardised, raw thresholds r) at theta, for pairs one year apart. A
// pair from state i dropping k states has P = F(a) - F(b), a = μ_k - η,
// b = μ_k-1 - η, with F(a) = 1 for the largest drop and F(b) = 0 for none;
// with A = f(a), B = f(b) and A', B' their derivatives,
//
//	∂²ℓ/∂μ_k² = A'/P - A²/P²,   ∂²ℓ/∂μ_k-1² = -B'/P - B²/P²,
//	∂²ℓ/∂μ_k∂μ_k-1 = AB/P²,      ∂²ℓ/∂η² = (A' - B')/P - (A - B)²/P²,
//	∂²ℓ/∂μ_k∂η = -A'/P + A(A - B)/P²,  ∂²ℓ/∂μ_k-1∂η = B'/P + B(B - A)/P²,
//
// with η = x·β; then the thresholds' chain rule to r (μ_m = r_0 +
// Σ_{l=1..m} exp(r_l)) adds exp(r_l) Σ_{m>=l} ∂ℓ/∂μ_m on the diagonal.
func (ev *orderedEval) hessian(theta []float64) *mat.SymDense {
	d := ev.d
	p := d.p
	beta, r := theta[:p], theta[p:]
	mu := ev.thresholds(r)
	k := len(theta)
	n := len(d.from)
	chunks := (n + orderedChunk - 1) / orderedChunk
	hs := make([][]float64, chunks)
	gs := make([][]float64, chunks)
	next := make(chan int, chunks)
	for c := 0; c < chunks; c++ {
		next <- c
	}
	close(next)
	off := newOrderedWork(ev.m, p).off
	link := ev.m.Link
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), max(chunks, 1)) {
		wg.Go(func() {
			for c := range next {
				h := make([]float64, k*k)
				g := make([]float64, k)
				for q := c * orderedChunk; q < min((c+1)*orderedChunk, n); q++ {
					i, kk := int(d.from[q]), int(d.to[q]-d.from[q])
					dd := ev.m.Drops[i]
					if dd == 0 || kk > dd {
						continue
					}
					x := d.x[q*p : (q+1)*p]
					w := 1.0
					if d.w != nil {
						w = d.w[q]
					}
					eta := 0.0
					for c := 0; c < p; c++ {
						eta += beta[c] * x[c]
					}
					fa, A, Ap, fb, B, Bp := 1.0, 0.0, 0.0, 0.0, 0.0, 0.0
					hi, lo := -1, -1
					if kk < dd {
						z := mu[i][kk] - eta
						fa, A = link.both(z)
						Ap = link.deriv2(z, fa, A)
						hi = off[i] + kk
					}
					if kk > 0 {
						z := mu[i][kk-1] - eta
						fb, B = link.both(z)
						Bp = link.deriv2(z, fb, B)
						lo = off[i] + kk - 1
					}
					P := fa - fb
					if P <= 0 {
						continue
					}
					P2 := P * P
					hEta := ((Ap-Bp)/P - (A-B)*(A-B)/P2) * w
					add := func(a, b int, v float64) {
						h[a*k+b] += v
						if a != b {
							h[b*k+a] += v
						}
					}
					for a := 0; a < p; a++ {
						for b := a; b < p; b++ {
							add(a, b, hEta*x[a]*x[b])
						}
					}
					if hi >= 0 {
						g[hi] += w * A / P
						add(hi, hi, w*(Ap/P-A*A/P2))
						v := w * (-Ap/P + A*(A-B)/P2)
						for a := 0; a < p; a++ {
							add(hi, a, v*x[a])
						}
					}
					if lo >= 0 {
						g[lo] -= w * B / P
						add(lo, lo, w*(-Bp/P-B*B/P2))
						v := w * (Bp/P + B*(B-A)/P2)
						for a := 0; a < p; a++ {
							add(lo, a, v*x[a])
						}
					}
					if hi >= 0 && lo >= 0 {
						add(hi, lo, w*A*B/P2)
					}
				}
				hs[c], gs[c] = h, g
			}
		})
	}
	wg.Wait()
	hmu := make([]float64, k*k)
	gmu := make([]float64, k)
	for c := range hs {
		for i, v := range hs[c] {
			hmu[i] += v
		}
		for i, v := range gs[c] {
			gmu[i] += v
		}
	}
	// From μ to the raw thresholds r: J[a][b] = ∂(β, μ)_a/∂(β, r)_b.
	jac := mat.NewDense(k, k, nil)
	for a := 0; a < p; a++ {
		jac.Set(a, a, 1)
	}
	at := p
	for _, dd := range ev.m.Drops {
		for m := 0; m < dd; m++ {
			for l := 0; l <= m; l++ {
				v := 1.0
				if l > 0 {
					v = math.Exp(theta[at+l])
				}
				jac.Set(at+m, at+l, v)
			}
		}
		at += dd
	}
	var tmp, hr mat.Dense
	tmp.Mul(mat.NewDense(k, k, hmu), jac)
	hr.Mul(jac.T(), &tmp)
	at = p
	for _, dd := range ev.m.Drops {
		for l := 1; l < dd; l++ {
			s := 0.0
			for m := l; m < dd; m++ {
				s += gmu[at+m]
			}
			hr.Set(at+l, at+l, hr.At(at+l, at+l)+math.Exp(theta[at+l])*s)
		}
		at += dd
	}
	out := mat.NewSymDense(k, nil)
	for a := 0; a < k; a++ {
		for b := a; b < k; b++ {
			out.SetSym(a, b, (hr.At(a, b)+hr.At(b, a))/2)
		}
	}
	return out
}
