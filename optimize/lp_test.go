package optimize

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// hang5 is /work/shared/repro's lp_hang5 case: five states at a running
// cost of 100 and two actions with identical rows and costs, factor 0.99.
// Every policy costs 100/(1-0.99) = 10,000 from every state (closed
// form); gonum's lp.Simplex never returned on it.
func hang5() *Problem {
	rows := [][]float64{
		{0, 0.643375, 0.356625, 0, 0},
		{0, 0.79524, 0.20476, 0, 0},
		{0.654872, 0, 0, 0.345128, 0},
		{0.263499, 0.199694, 0.536807, 0, 0},
		{0.336004, 0, 0, 0, 0.663996},
	}
	arms := make([][]arm, len(rows))
	for s, row := range rows {
		arms[s] = []arm{{0, 100, row}, {1, 100, row}}
	}
	return handProblem([]string{"s0", "s1", "s2", "s3", "s4"}, []string{"a0", "a1"}, 0.99, arms)
}

func TestLinearProgramTiedActions(t *testing.T) {
	r, err := Solve(context.Background(), hang5(), &Settings{Method: LinearProgram})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != Certified {
		t.Errorf("Solve(hang5, lp): %v (%v), gap %g", r.Status, r.Shortfall, r.Gap)
	}
	for s, v := range r.Value {
		if d := v - 10000; d > 1e-6 || d < -1e-6 {
			t.Errorf("Solve(hang5, lp): value[%d] = %.9g, want 10000 (tol 1e-6)", s, v)
		}
		if r.Policy[s] != 0 {
			t.Errorf("Solve(hang5, lp): policy[%d] = %d, want 0 (first of the tied)", s, r.Policy[s])
		}
	}
}

// degenerate returns a random problem in which ties are common: some
// actions duplicate another's row and cost exactly, some copy the row at a
// cost that differs in the last bits, and some states have a single
// action.
func degenerate(rng *rand.Rand, n, m int, gamma float64) *Problem {
	p := randomProblem(rng, n, m, 1+rng.IntN(n), gamma, 1000)
	for s, cs := range p.Choices {
		for k := 1; k < len(cs); k++ {
			switch rng.IntN(4) {
			case 0: // an exact twin of the previous choice
				cs[k].Cost, cs[k].Next = cs[k-1].Cost, cs[k-1].Next
			case 1: // the same row at a cost one rounding step away
				cs[k].Cost, cs[k].Next = cs[k-1].Cost*(1+0x1p-52), cs[k-1].Next
			}
		}
		p.Choices[s] = cs
	}
	return p
}

// The LP method finishes and agrees with policy iteration on 160 random
// models, half of them full of tied actions, at factors up to 0.999.
func TestLinearProgramAgreesOnDegenerateModels(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	gammas := []float64{0.5, 0.9, 0.99, 0.999}
	for trial := range 160 {
		n, m := 2+rng.IntN(25), 1+rng.IntN(5)
		gamma := gammas[trial%len(gammas)]
		var p *Problem
		if trial%2 == 0 {
			p = degenerate(rng, n, m, gamma)
		} else {
			p = randomProblem(rng, n, m, 1+rng.IntN(n), gamma, 1000)
		}
		name := fmt.Sprintf("trial %d (n=%d, m=%d, γ=%g)", trial, n, m, gamma)
		// Values reach 1e3/(1-γ) and the rounding floor about
		// 30·ε·1e3/(1-γ)²: 1e-7/(1-γ) stays above it.
		tol := 1e-7 / (1 - gamma)
		pi, err := Solve(context.Background(), p, &Settings{Method: PolicyIteration, Tol: tol})
		if err != nil {
			t.Fatalf("%s: policy: %v", name, err)
		}
		r, err := Solve(context.Background(), p, &Settings{Method: LinearProgram, Tol: tol})
		if err != nil {
			t.Fatalf("%s: lp: %v", name, err)
		}
		if r.Status != Certified {
			t.Errorf("%s: lp %v (%v) with gap %g after %d pivots", name, r.Status, r.Shortfall, r.Gap, r.Pivots)
		}
		if !slices.Equal(r.Policy, pi.Policy) {
			t.Errorf("%s: lp policy %v, policy iteration %v", name, r.Policy, pi.Policy)
		}
		if d := maxAbsDiff(r.Value, pi.Value); d > tol {
			t.Errorf("%s: lp and policy iteration values differ by %g (tol %g)", name, d, tol)
		}
	}
}

func TestLinearProgramPivotCap(t *testing.T) {
	p := randomProblem(rand.New(rand.NewPCG(33, 34)), 30, 4, 10, 0.9, 1000)
	r, err := Solve(context.Background(), p, &Settings{Method: LinearProgram, MaxIterations: 1})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != NotCertified || r.Shortfall != IterationCap || r.Pivots != 1 {
		t.Errorf("Solve(lp, 1 pivot): %v, %v after %d pivots; want not certified, iteration cap, 1 pivot", r.Status, r.Shortfall, r.Pivots)
	}
	checkBracket(t, r)
}

func TestLinearProgramCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Solve(ctx, hang5(), &Settings{Method: LinearProgram}); !errors.Is(err, context.Canceled) {
		t.Errorf("Solve(cancelled, lp): err = %v, want context.Canceled", err)
	}
}
