package optimize

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"fixpoint/condition"
)

// taxicab is the taxicab problem of R. A. Howard, Dynamic Programming and
// Markov Processes, MIT Press 1960, Ch. 5 (towns A, B, C; alternatives
// cruise, go to the nearest stand, wait for a radio call, the last not in
// B), with the expected immediate rewards q of the book (from memory)
// written as negative costs.
func taxicab() *Problem {
	return handProblem([]string{"A", "B", "C"}, []string{"cruise", "stand", "radio"}, 0, [][]arm{
		{{0, -8, []float64{0.5, 0.25, 0.25}}, {1, -2.75, []float64{0.0625, 0.75, 0.1875}}, {2, -4.25, []float64{0.25, 0.125, 0.625}}},
		{{0, -16, []float64{0.5, 0, 0.5}}, {1, -15, []float64{0.0625, 0.875, 0.0625}}},
		{{0, -7, []float64{0.25, 0.25, 0.5}}, {1, -4, []float64{0.125, 0.75, 0.125}}, {2, -4.5, []float64{0.75, 0.0625, 0.1875}}},
	})
}

// Howard's policy-iteration path on the taxicab problem: gains 9.2,
// 13.15, 13.34 with relative values normalised to 0 in C (Howard 1960,
// Ch. 5, from memory; to the printed two decimals).
func TestAveragePolicyIterationHowardTaxicab(t *testing.T) {
	want := []struct {
		policy []int
		gain   float64
		values []float64
	}{
		{[]int{0, 0, 0}, 9.2, []float64{1.33, 7.47, 0}},
		{[]int{0, 1, 1}, 13.15, []float64{-3.88, 12.85, 0}},
		{[]int{1, 1, 1}, 13.34, []float64{-1.18, 12.66, 0}},
	}
	var path []averageStep
	s := (*Settings)(nil).withDefaults(3)
	if _, _, _, err := averagePolicyIteration(context.Background(), taxicab(), &s, 2, &path); err != nil {
		t.Fatal(err)
	}
	if len(path) != len(want) {
		t.Fatalf("%d steps, want %d", len(path), len(want))
	}
	for i, w := range want {
		got := path[i]
		for s := range w.policy {
			if got.Policy[s] != w.policy[s] {
				t.Errorf("step %d: policy %v, want %v", i+1, got.Policy, w.policy)
				break
			}
		}
		if math.Abs(-got.Gain-w.gain) > 0.005 {
			t.Errorf("step %d: gain %.4f, want %.2f", i+1, -got.Gain, w.gain)
		}
		for s, v := range w.values {
			if math.Abs(-got.Bias[s]-v) > 0.005 {
				t.Errorf("step %d: value[%d] %.4f, want %.2f", i+1, s, -got.Bias[s], v)
			}
		}
	}
}

func TestSolveAverageReferenceCases(t *testing.T) {
	tests := []struct {
		name   string
		p      *Problem
		policy []int
		gain   float64 // in costs
		tol    float64
	}{
		// Howard 1960, Ch. 5: gain 13.34 (from memory, two decimals).
		{"howard-taxicab", taxicab(), []int{1, 1, 1}, -13.34, 0.005},
		// pymdptoolbox example.small(): RelativeValueIteration doctest
		// prints the policy (a1, a0); exact gain 35/9 by solving the
		// 2-state chain's stationary equations by hand.
		{"mdptoolbox-small", referenceCases()[1].p, []int{1, 0}, -35.0 / 9, 1e-9},
		// pymdptoolbox example.forest(): RelativeValueIteration doctest
		// prints average reward 3.24 with (wait, wait, wait); exact: the
		// oldest state's stationary share 0.81 times reward 4.
		{"mdptoolbox-forest", forest(0.9), []int{0, 0, 0}, -3.24, 1e-9},
		// Puterman 1994 §3.1 model: every policy has gain -1 in rewards
		// (s2 absorbing); a11 has the better bias (-12 against -11 in s1,
		// by hand), which is also the discounted optimum for λ > 10/11.
		{"puterman-3.1", referenceCases()[0].p, []int{0, 2}, 1, 1e-9},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r, err := SolveAverage(context.Background(), tc.p, &Settings{Tol: 1e-9})
			if err != nil {
				t.Fatal(err)
			}
			if r.Status != Certified {
				t.Errorf("status %v, gain in [%g, %g]", r.Status, r.GainLower, r.GainUpper)
			}
			for s, a := range tc.policy {
				if r.Policy[s] != a {
					t.Errorf("policy %v, want %v", r.Policy, tc.policy)
					break
				}
			}
			if math.Abs(r.Gain-tc.gain) > tc.tol {
				t.Errorf("gain %.10g, want %.10g (tol %g)", r.Gain, tc.gain, tc.tol)
			}
			if !(r.GainLower <= r.Gain && r.Gain <= r.GainUpper) {
				t.Errorf("gain %g outside its bounds [%g, %g]", r.Gain, r.GainLower, r.GainUpper)
			}
		})
	}
}

// Blackwell: as γ -> 1 the discounted optimum becomes average-optimal and
// (1-γ)·v -> g, with |(1-γ)v - g| = O(1-γ) (Puterman 1994, Thm 8.2.3 and
// §10.1), on random unichain models (full-support rows).
func TestBlackwellLimit(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for trial := range 15 {
		n := 2 + rng.IntN(10)
		p := randomProblem(rng, n, 1+rng.IntN(4), n, 0.5, 100)
		avg, err := SolveAverage(context.Background(), p, &Settings{Tol: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		for _, gamma := range []float64{0.999, 0.99999} {
			q := *p
			q.Discount = gamma
			r, err := Solve(context.Background(), &q, &Settings{Method: PolicyIteration, Tol: 1e-3})
			if err != nil {
				t.Fatal(err)
			}
			spread := 0.0
			for s := range r.Value {
				spread = max(spread, math.Abs((1-gamma)*r.Value[s]-avg.Gain))
			}
			// The bias spans at most a few hundred here: the O(1-γ) term.
			if spread > 1e3*(1-gamma) {
				t.Errorf("trial %d, γ=%g: max |(1-γ)v - g| = %g", trial, gamma, spread)
			}
			if gamma == 0.99999 {
				for s := range r.Policy {
					if r.Policy[s] != avg.Policy[s] {
						t.Errorf("trial %d: discounted policy %v near γ=1, average policy %v", trial, r.Policy, avg.Policy)
						break
					}
				}
			}
		}
	}
}

// Two absorbing states that no action connects: the optimal gain is 1
// from x, 5 from z and 3 from y (either action: 0.5·1 + 0.5·5, or staying
// in y at 3; closed form), and SolveAverage says that it depends on the
// start.
func TestSolveAverageMultichain(t *testing.T) {
	p := handProblem([]string{"x", "y", "z"}, []string{"a", "b"}, 0, [][]arm{
		{{0, 1, []float64{1, 0, 0}}},
		{{0, 2, []float64{0.5, 0, 0.5}}, {1, 3, []float64{0, 1, 0}}},
		{{0, 5, []float64{0, 0, 1}}},
	})
	_, err := SolveAverage(context.Background(), p, nil)
	var me *MultichainError
	if !errors.As(err, &me) || len(me.Classes) < 2 {
		t.Fatalf("err = %v, want a MultichainError", err)
	}
	checkClose(t, "SolveAverage(multichain): gains", me.Gains, []float64{1, 3, 5}, 1e-12)
}

// /work/shared/repro's multi case: three conditions that each hold a unit
// for ever at no cost, and a move between them for 10. The optimal gain is
// 0 from every start (closed form), so the criterion is well defined
// although the best policy has three closed classes.
func TestSolveAverageMultichainSameGain(t *testing.T) {
	p := handProblem([]string{"a", "b", "c"}, []string{"stay", "move"}, 0, [][]arm{
		{{0, 0, []float64{1, 0, 0}}, {1, 10, []float64{0, 1, 0}}},
		{{0, 0, []float64{0, 1, 0}}, {1, 10, []float64{1, 0, 0}}},
		{{0, 0, []float64{0, 0, 1}}, {1, 10, []float64{0.5, 0.5, 0}}},
	})
	r, err := SolveAverage(context.Background(), p, &Settings{Tol: 1e-9})
	if err != nil {
		t.Fatalf("SolveAverage(multi): %v", err)
	}
	if r.Status != Certified || math.Abs(r.Gain) > 1e-12 || r.GainLower > 0 || r.GainUpper < 0 {
		t.Errorf("SolveAverage(multi): %v, gain %g in [%g, %g], want certified 0", r.Status, r.Gain, r.GainLower, r.GainUpper)
	}
	for s, a := range r.Policy {
		if a != 0 {
			t.Errorf("SolveAverage(multi): policy %v, want stay everywhere", r.Policy)
			break
		}
		if math.Abs(r.Bias[s]) > 1e-12 || math.Abs(r.Margin[s]-10) > 1e-12 {
			t.Errorf("SolveAverage(multi): bias[%d] = %g, margin %g, want 0 and 10", s, r.Bias[s], r.Margin[s])
		}
	}
	if len(r.Classes) != 3 {
		t.Errorf("SolveAverage(multi): classes %v, want three", r.Classes)
	}
}

// Random models with several free absorbing conditions and non-negative
// costs elsewhere: the optimal gain is 0 from every start, the best
// policies are multichain, and the bias is the least expected total cost
// until absorption. Checked against the discounted solution near γ = 1 by
// the Laurent expansion v_γ = g/(1-γ) + (1+ρ)h + O(ρ), ρ = 1/γ - 1
// (Puterman 1994, Thm 8.2.3): v_γ(s) - v_γ(0) -> h(s) - h(0).
func TestSolveAverageMultichainBiasMatchesLaurent(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 24))
	const gamma = 1 - 1e-7
	for trial := range 20 {
		n := 6 + rng.IntN(10)
		p := randomProblem(rng, n, 2+rng.IntN(3), 1+rng.IntN(n), gamma, 100)
		free := 2 + rng.IntN(2) // the last states hold a unit at no cost
		for s := range p.Choices {
			for k := range p.Choices[s] {
				p.Choices[s][k].Cost = math.Abs(p.Choices[s][k].Cost)
			}
			if s >= n-free {
				p.Choices[s] = []Choice{{Action: 0, Cost: 0, Next: []condition.Entry{{To: s, P: 1}}}}
			}
		}
		// Every other state may jump to a free state at a price.
		for s := range n - free {
			cs := p.Choices[s]
			if cs[len(cs)-1].Action == len(p.Actions)-1 {
				cs = cs[:len(cs)-1]
			}
			p.Choices[s] = append(cs, Choice{Action: len(p.Actions) - 1, Cost: 50 + 100*rng.Float64(),
				Next: []condition.Entry{{To: n - 1 - rng.IntN(free), P: 1}}})
		}
		r, err := SolveAverage(context.Background(), p, &Settings{Tol: 1e-9})
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		if len(r.Classes) < 2 {
			t.Errorf("trial %d: classes %v, want several", trial, r.Classes)
		}
		if r.Status != Certified || math.Abs(r.Gain) > 1e-9 {
			t.Errorf("trial %d: %v with gain %g in [%g, %g], want certified 0", trial, r.Status, r.Gain, r.GainLower, r.GainUpper)
		}
		d, err := Solve(context.Background(), p, &Settings{Method: PolicyIteration, Tol: 1e-3})
		if err != nil {
			t.Fatal(err)
		}
		rho := 1/gamma - 1
		for s := range n {
			// Values below 1e5: the O(ρ) term and the rounding of v_γ stay
			// below 1e-3.
			want := (d.Value[s] - d.Value[0]) / (1 + rho)
			if math.Abs(r.Bias[s]-want) > 1e-3 {
				t.Errorf("trial %d: bias[%d] = %.9g, discounted near 1 says %.9g (tol 1e-3)", trial, s, r.Bias[s], want)
			}
		}
	}
}

// A model where the least-immediate-cost policy is multichain but the
// optimum is unichain: multichain policy iteration leaves it.
func TestSolveAverageLeavesMultichainStart(t *testing.T) {
	p := handProblem([]string{"x", "y"}, []string{"stay", "move"}, 0, [][]arm{
		{{0, 1, []float64{1, 0}}, {1, 2, []float64{0, 1}}},
		{{0, 0.5, []float64{0, 1}}, {1, 1, []float64{1, 0}}},
	})
	r, err := SolveAverage(context.Background(), p, &Settings{Tol: 1e-9})
	if err == nil {
		// Staying in y costs 0.5 a period: the best, reached from x by moving.
		if math.Abs(r.Gain-0.5) > 1e-9 || r.Policy[0] != 1 || r.Policy[1] != 0 {
			t.Errorf("gain %g policy %v, want 0.5 and (move, stay)", r.Gain, r.Policy)
		}
		return
	}
	t.Fatal(err)
}
