package markov

import (
	"context"
	"errors"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"
)

// Sample holds the pairs of inspections kept for estimation, grouped by
// asset, so that the bootstrap can resample whole assets: the pairs of one
// asset are not independent of each other, but assets are.
type Sample struct {
	states int
	pairs  []Pair
	starts []int // unit u holds pairs[starts[u]:starts[u+1]]
}

// NewSample returns an empty sample for an n-state scale.
func NewSample(states int) *Sample { return &Sample{states: states, starts: []int{0}} }

// AddUnit adds one asset's pairs; an asset without pairs is not added.
func (s *Sample) AddUnit(pairs ...Pair) {
	if len(pairs) == 0 {
		return
	}
	s.pairs = append(s.pairs, pairs...)
	s.starts = append(s.starts, len(s.pairs))
}

// States is the number of condition states.
func (s *Sample) States() int { return s.states }

// Units is the number of assets with at least one pair.
func (s *Sample) Units() int { return len(s.starts) - 1 }

// Pairs returns every pair; the slice must not be modified.
func (s *Sample) Pairs() []Pair { return s.pairs }

// Filter returns the sample with only the pairs keep accepts; assets left
// without pairs drop out.
func (s *Sample) Filter(keep func(Pair) bool) *Sample {
	out := &Sample{states: s.states, pairs: make([]Pair, 0, len(s.pairs)), starts: make([]int, 1, len(s.starts))}
	for u := 0; u < s.Units(); u++ {
		var unit []Pair
		for _, p := range s.pairs[s.starts[u]:s.starts[u+1]] {
			if keep(p) {
				unit = append(unit, p)
			}
		}
		out.AddUnit(unit...)
	}
	return out
}

// layout returns the sorted intervals of the sample and each pair's cell
// in a Counts laid out with them.
func (s *Sample) layout() ([]int, []int32) {
	var gaps []int
	for _, p := range s.pairs {
		if k, found := slices.BinarySearch(gaps, p.Years); !found {
			gaps = slices.Insert(gaps, k, p.Years)
		}
	}
	n := s.states
	cells := make([]int32, len(s.pairs))
	for i, p := range s.pairs {
		k, _ := slices.BinarySearch(gaps, p.Years)
		cells[i] = int32(k*n*n + p.From*n + p.To)
	}
	return gaps, cells
}

// Counts returns the transition counts of the whole sample.
func (s *Sample) Counts() *Counts {
	gaps, cells := s.layout()
	c := &Counts{states: s.states, gaps: gaps, data: make([]float64, len(gaps)*s.states*s.states)}
	for _, cell := range cells {
		c.data[cell]++
	}
	return c
}

// Bootstrap is the outcome of resampling assets.
type Bootstrap struct {
	// Replicates holds the matrix fitted to each resample that could be
	// fitted, in replicate order.
	Replicates []*Transition
	// Failed counts resamples that could not be fitted (typically a rare
	// state drawn with no pairs), and FirstError says why the first failed.
	Failed     int
	FirstError error
}

// BootstrapAssets draws reps resamples of the sample's assets with
// replacement (Efron and Tibshirani, An Introduction to the Bootstrap,
// 1993: resample the independent units, here assets) and fits each with
// fit. Replicate r draws from its own generator seeded with (seed, r), so
// the result does not depend on how many processors share the work: the
// same sample and seed give the same replicates. fit must be safe for
// concurrent use. A fit error that wraps context.Canceled or
// context.DeadlineExceeded stops the bootstrap: no further resample is
// drawn, and those not drawn count neither as replicates nor as failed.
func BootstrapAssets(s *Sample, reps int, seed uint64, fit func(*Counts) (*Transition, error)) Bootstrap {
	units := s.Units()
	if reps <= 0 || units == 0 {
		return Bootstrap{}
	}
	gaps, cells := s.layout()
	n := s.states
	results := make([]*Transition, reps)
	errs := make([]error, reps)
	var next atomic.Int64
	var stop atomic.Bool
	workers := min(runtime.GOMAXPROCS(0), reps)
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			c := &Counts{states: n, gaps: gaps, data: make([]float64, len(gaps)*n*n)}
			drawn := make([]int32, units)
			for {
				r := int(next.Add(1) - 1)
				if r >= reps || stop.Load() {
					return
				}
				rng := rand.New(rand.NewPCG(seed, uint64(r)))
				// Count how often each asset is drawn, then add each drawn
				// asset's pairs that many times in one pass in asset order:
				// the same counts as adding draw by draw, with memory read
				// in order.
				clear(drawn)
				for range units {
					drawn[rng.IntN(units)]++
				}
				clear(c.data)
				for u, k := range drawn {
					if k == 0 {
						continue
					}
					w := float64(k)
					for _, cell := range cells[s.starts[u]:s.starts[u+1]] {
						c.data[cell] += w
					}
				}
				// Intervals that this resample happened not to draw must not
				// look like data: fit functions only read cells, and an
				// empty block contributes nothing to either estimator.
				results[r], errs[r] = fit(c)
				if errors.Is(errs[r], context.Canceled) || errors.Is(errs[r], context.DeadlineExceeded) {
					stop.Store(true)
				}
			}
		})
	}
	wg.Wait()
	var out Bootstrap
	for r := range reps {
		if results[r] == nil && errs[r] == nil {
			continue // not drawn: the bootstrap was stopped
		}
		if errs[r] != nil {
			out.Failed++
			if out.FirstError == nil {
				out.FirstError = errs[r]
			}
			continue
		}
		out.Replicates = append(out.Replicates, results[r])
	}
	return out
}
