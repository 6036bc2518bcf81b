package optimize

import "math/rand/v2"

// randomSpec bounds a randomly generated planning problem (see GenSpec).
type randomSpec struct {
	classes, states, treatments, years int
	targets                            bool
	budgetShare                        float64 // yearly cap as a share of "treat the worst half once"
}

func (s randomSpec) gen() GenSpec {
	return GenSpec{Classes: s.classes, States: s.states, Treatments: s.treatments, Years: s.years, Targets: s.targets, BudgetShare: s.budgetShare}
}

// randomProblem draws a valid problem with Generate.
func randomProblem(rng *rand.Rand, s randomSpec) *Problem { return Generate(rng, s.gen()) }
