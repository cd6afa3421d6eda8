package optimize

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// Puterman 1994 §3.1 model: a12 is optimal in s1 below λ = 10/11 and a11
// above; equating the two values of s1, -10 + λ/(1-λ)·... gives
// 5.5λ² - 10.5λ + 5 = 0, whose root in (0, 1) is 10/11 (by hand).
func TestDiscountPathPuterman(t *testing.T) {
	p := referenceCases()[0].p
	segs, sw, err := DiscountPath(context.Background(), p, 0.5, 0.99, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(sw) != 1 || len(segs) != 2 {
		t.Fatalf("switches %+v, segments %d; want one switch", sw, len(segs))
	}
	if math.Abs(sw[0].Discount-10.0/11) > 1e-12 || sw[0].State != 0 || sw[0].Below != 1 || sw[0].Above != 0 {
		t.Errorf("switch %+v, want s1 from a12 to a11 at 10/11", sw[0])
	}
}

// On random models every reported switch is real (the advice differs just
// below and just above it, by policy iteration and by the LP), and a dense
// grid of independent solves finds no advice the segments do not predict.
func TestDiscountPathAgainstGrid(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	for trial := range 12 {
		n := 2 + rng.IntN(6)
		p := randomProblem(rng, n, 2+rng.IntN(2), 1+rng.IntN(n), 0.5, 100)
		lo, hi := 0.3, 0.99
		segs, sw, err := DiscountPath(context.Background(), p, lo, hi, nil)
		if err != nil {
			t.Fatal(err)
		}
		at := func(g float64, m Method) []int {
			q := *p
			q.Discount = g
			r, err := Solve(context.Background(), &q, &Settings{Method: m, Tol: 1e-9})
			if err != nil {
				t.Fatal(err)
			}
			return r.Policy
		}
		for _, s := range sw {
			for _, m := range []Method{PolicyIteration, LinearProgram} {
				below, above := at(s.Discount-1e-7, m), at(s.Discount+1e-7, m)
				if below[s.State] != s.Below || above[s.State] != s.Above {
					t.Errorf("trial %d, %v: switch %+v, but advice %d below and %d above", trial, m, s, below[s.State], above[s.State])
				}
			}
		}
		for k := range 400 {
			g := lo + (hi-lo)*(float64(k)+0.5)/400
			i := slices.IndexFunc(segs, func(sg Segment) bool { return g >= sg.Lo && g <= sg.Hi })
			if i < 0 {
				t.Fatalf("trial %d: γ=%g in no segment", trial, g)
			}
			if got := at(g, PolicyIteration); !slices.Equal(got, segs[i].Policy) {
				// Allow a grid point within 1e-9 of a breakpoint.
				if math.Min(g-segs[i].Lo, segs[i].Hi-g) > 1e-9 {
					t.Errorf("trial %d: at γ=%g advice %v, segment says %v", trial, g, got, segs[i].Policy)
				}
			}
		}
	}
}

// A switch and a switch back inside the range are both found, although
// the advice is the same at both ends: action B in s0 costs
// 0.42 - 1.3γ + γ² (closed form), negative exactly for γ in (0.6, 0.7).
func TestDiscountPathFindsSwitchBack(t *testing.T) {
	p := handProblem([]string{"s0", "t1", "t2", "z"}, []string{"A", "B", "go"}, 0.5, [][]arm{
		{{0, 0, []float64{0, 0, 0, 1}}, {1, 0.42, []float64{0, 1, 0, 0}}},
		{{2, -1.3, []float64{0, 0, 1, 0}}},
		{{2, 1, []float64{0, 0, 0, 1}}},
		{{2, 0, []float64{0, 0, 0, 1}}},
	})
	segs, sw, err := DiscountPath(context.Background(), p, 0.3, 0.99, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(segs) != 3 || len(sw) != 2 {
		t.Fatalf("segments %+v, switches %+v; want A, B, A", segs, sw)
	}
	for i, want := range []struct {
		g            float64
		below, above int
	}{{0.6, 0, 1}, {0.7, 1, 0}} {
		if math.Abs(sw[i].Discount-want.g) > 1e-10 || sw[i].Below != want.below || sw[i].Above != want.above {
			t.Errorf("switch %d = %+v, want %+v at %g", i, sw[i], want, want.g)
		}
	}
}
