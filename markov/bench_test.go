package markov_test

import (
	"math/rand/v2"
	"testing"

	"wearplan/markov"
)

// BenchmarkBootstrapCounting resamples 100,000 generated assets with nine
// yearly pairs each (900,000 pairs, as from 1,000,000 inspection records)
// and refits the counting estimate, 100 times per operation.
func BenchmarkBootstrapCounting(b *testing.B) {
	h := simulate(rand.New(rand.NewPCG(1, 1)), truth, 100_000, 9)
	sample, _, _, err := markov.Prepare(h, 5, markov.Structure{})
	if err != nil {
		b.Fatal(err)
	}
	fit := func(c *markov.Counts) (*markov.Transition, error) { return markov.CountingMLE(c, markov.Structure{}) }
	for b.Loop() {
		if r := markov.BootstrapAssets(sample, 100, 1, fit); len(r.Replicates) != 100 {
			b.Fatal(r.FirstError)
		}
	}
}
