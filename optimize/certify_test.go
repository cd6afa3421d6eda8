package optimize

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"
)

// nearTie is /work/shared/repro's neartie case: two absorbing states with
// a running cost of 1e9 per period, a passive action x and an action y
// that is cheaper by 0.5 per period, factor 0.9. Closed form: y gives
// (1e9 - 0.5)/(1 - 0.9) = 9,999,999,995, x 10,000,000,000.
func nearTie() *Problem {
	return handProblem([]string{"a", "b"}, []string{"x", "y"}, 0.9, [][]arm{
		{{0, 1e9, []float64{1, 0}}, {1, 1e9 - 0.5, []float64{1, 0}}},
		{{0, 1e9, []float64{0, 1}}, {1, 1e9 - 0.5, []float64{0, 1}}},
	})
}

// The tie rule may not keep an action that is dearer by more than the
// tolerance allows: at a scale of 1e10 the relative default of 1e-9 would
// call 0.5 a tie, but the cap (1-γ)·Tol/2 does not.
func TestTieToleranceNeverCostsTheCertificate(t *testing.T) {
	const want = 9999999995.0
	for _, m := range methods {
		t.Run(m.String(), func(t *testing.T) {
			r, err := Solve(context.Background(), nearTie(), &Settings{Method: m})
			if err != nil {
				t.Fatal(err)
			}
			if r.Status != Certified {
				t.Errorf("Solve(neartie, %v): %v (%v), gap %g", m, r.Status, r.Shortfall, r.Gap)
			}
			for s := range r.Policy {
				if r.Policy[s] != 1 {
					t.Errorf("Solve(neartie, %v): policy[%d] = %d, want 1 (y, cheaper by 0.5)", m, s, r.Policy[s])
				}
				if math.Abs(r.Value[s]-want) > 1e-3 {
					t.Errorf("Solve(neartie, %v): value[%d] = %.6f, want %.6f (tol 1e-3)", m, s, r.Value[s], want)
				}
				if !(r.Margin[s] >= -r.Gap) {
					t.Errorf("Solve(neartie, %v): margin[%d] = %g, below minus the gap %g", m, s, r.Margin[s], r.Gap)
				}
			}
			if len(r.Ties) != 0 {
				t.Errorf("Solve(neartie, %v): ties %+v, want none", m, r.Ties)
			}
		})
	}
}

// Random models: whatever the scale, the advice is never worse than its
// runner-up by more than the stated gap, and a certified result's margins
// are above -Tol.
func TestMarginsWithinGap(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	for trial := range 60 {
		n := 2 + rng.IntN(10)
		scale := math.Pow(10, float64(rng.IntN(10)))
		p := degenerate(rng, n, 1+rng.IntN(4), 0.9)
		for s := range p.Choices {
			for k := range p.Choices[s] {
				p.Choices[s][k].Cost += scale
			}
		}
		r, err := Solve(context.Background(), p, &Settings{Method: PolicyIteration, Tol: 1e-2})
		if err != nil {
			t.Fatal(err)
		}
		for s, mg := range r.Margin {
			if mg < -r.Gap || (r.Status == Certified && mg < -r.Tol) {
				t.Errorf("trial %d (scale %g): margin[%d] = %g with gap %g, %v", trial, scale, s, mg, r.Gap, r.Status)
			}
		}
	}
}

// Each way of missing the tolerance is named.
func TestShortfallKinds(t *testing.T) {
	tests := []struct {
		name string
		p    *Problem
		set  Settings
		want Shortfall
	}{
		{"certified", nearTie(), Settings{}, NoShortfall},
		{"value-cap", randomProblem(rand.New(rand.NewPCG(9, 9)), 20, 3, 5, 0.99, 1000),
			Settings{Method: ValueIteration, MaxIterations: 3, Tol: 1e-6}, IterationCap},
		{"policy-cap", randomProblem(rand.New(rand.NewPCG(9, 9)), 40, 4, 8, 0.99, 1000),
			Settings{Method: PolicyIteration, MaxIterations: 1, Tol: 1e-6}, IterationCap},
		// Values of 1e10 at γ = 0.9: ε·1e10/(1-γ) ≈ 2e-5 of rounding, far
		// above a tolerance of 1e-9, whichever method and however many
		// iterations.
		{"rounding-policy", nearTie(), Settings{Method: PolicyIteration, Tol: 1e-9}, RoundingFloor},
		{"rounding-value", nearTie(), Settings{Method: ValueIteration, Tol: 1e-9}, RoundingFloor},
		{"rounding-lp", nearTie(), Settings{Method: LinearProgram, Tol: 1e-9}, RoundingFloor},
		// An explicit tie tolerance of 1 keeps x (the first action),
		// 0.5/(1-0.9) = 5 dearer in value than y.
		{"tie", nearTie(), Settings{Method: PolicyIteration, TieTol: 1}, TieLoss},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r, err := Solve(context.Background(), tc.p, &tc.set)
			if err != nil {
				t.Fatal(err)
			}
			if r.Shortfall != tc.want || (r.Status == Certified) != (tc.want == NoShortfall) {
				t.Errorf("Solve(%s): %v, shortfall %v (gap %g, rounding %g), want %v", tc.name, r.Status, r.Shortfall, r.Gap, r.Rounding, tc.want)
			}
			checkBracket(t, r)
		})
	}
}
