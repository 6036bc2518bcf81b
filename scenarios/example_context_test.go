package scenarios_test

import (
	"context"
	"errors"
	"fmt"

	"wearplan/scenarios"
)

// A caller that gives up (a closed browser tab, Ctrl-C in a program of
// its own) cancels the context: the plan stops between solver calls and
// returns the context's error, wrapped, and no result. The demo scenario
// is invented (Marrowby).
func ExamplePlanContext() {
	sc, err := scenarios.LoadFile("examples/marrowby.yaml")
	if err != nil {
		fmt.Println(err)
		return
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel() // given up before the plan starts
	r, err := scenarios.PlanContext(ctx, sc, scenarios.Options{})
	fmt.Println(r == nil, errors.Is(err, context.Canceled))
	fmt.Println(err)
	// Output:
	// true true
	// stopped before it finished: context canceled
}
