package optimize

import (
	"context"
	"fixpoint/optimize/internal/mdptest"
	"fmt"
	"math/rand/v2"
	"testing"
)

// GLPK's glpsol (Debian glpk-utils), an LP solver independent of ours,
// finds the same optimal values as policy iteration.
func TestGLPKAgrees(t *testing.T) {
	bin := mdptest.Glpsol(t)
	rng := rand.New(rand.NewPCG(11, 12))
	problems := []*Problem{forest(0.9), referenceCases()[1].p}
	for range 12 {
		n := 2 + rng.IntN(25)
		problems = append(problems, randomProblem(rng, n, 1+rng.IntN(4), 1+rng.IntN(n), 0.9, 1000))
	}
	for i, p := range problems {
		want, _ := mdptest.SolveLP(t, bin, primalLP(p), len(p.States))
		r, err := Solve(context.Background(), p, &Settings{Method: PolicyIteration})
		if err != nil {
			t.Fatal(err)
		}
		// glpsol prints 15 significant digits; values are below 1e4.
		checkClose(t, fmt.Sprintf("problem %d value", i), r.Value, want, 1e-8)
	}
}

// primalLP is mdptest.PrimalLP of p.
func primalLP(p *Problem) string {
	var cs []mdptest.Choice
	for s, choices := range p.Choices {
		for _, c := range choices {
			cs = append(cs, mdptest.Choice{State: s, Cost: c.Cost, Next: c.Next})
		}
	}
	return mdptest.PrimalLP(len(p.States), p.Discount, cs)
}
