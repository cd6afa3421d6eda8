package optimize

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

var methods = []Method{ValueIteration, PolicyIteration, LinearProgram}

// Published worked examples, rewards written as negative costs.
func referenceCases() []struct {
	name   string
	source string
	p      *Problem
	policy []int
	value  []float64
	tol    float64
} {
	return []struct {
		name   string
		source string
		p      *Problem
		policy []int
		value  []float64
		tol    float64
	}{
		{
			// M. L. Puterman, Markov Decision Processes, Wiley 1994, §3.1
			// two-state example (Fig. 3.1.1) with λ = 0.95, Examples 6.3.1
			// and 6.4.1: v* = (-8.571, -20) in rewards, so (8.571, 20) in
			// costs, a11 optimal in s1 (from memory).
			name: "puterman-3.1-0.95",
			p: handProblem([]string{"s1", "s2"}, []string{"a11", "a12", "a21"}, 0.95, [][]arm{
				{{0, -5, []float64{0.5, 0.5}}, {1, -10, []float64{0, 1}}},
				{{2, 1, []float64{0, 1}}},
			}),
			policy: []int{0, 2},
			value:  []float64{8.571, 20},
			tol:    0.0005,
		},
		{
			// pymdptoolbox (S. Cordwell, port of the INRA MDPtoolbox),
			// example.small(), γ = 0.9; optimal policy (a1, a0) printed in
			// the ValueIteration doctest of mdp.py. Exact values 1825/43 and
			// 1550/43 by solving the policy's 2x2 system by hand.
			name: "mdptoolbox-small-0.9",
			p: handProblem([]string{"0", "1"}, []string{"a0", "a1"}, 0.9, [][]arm{
				{{0, -5, []float64{0.5, 0.5}}, {1, -10, []float64{0, 1}}},
				{{0, 1, []float64{0.8, 0.2}}, {1, -2, []float64{0.1, 0.9}}},
			}),
			policy: []int{1, 0},
			value:  []float64{-1825.0 / 43, -1550.0 / 43},
			tol:    1e-9,
		},
		{
			// pymdptoolbox example.forest(S=3, r1=4, r2=2, p=0.1), γ = 0.9:
			// PolicyIteration doctest in mdp.py prints the policy (wait,
			// wait, wait) and V = (26.244, 29.484, 33.484).
			name:   "mdptoolbox-forest-0.9",
			p:      forest(0.9),
			policy: []int{0, 0, 0},
			value:  []float64{-26.244, -29.484, -33.484},
			tol:    1e-9,
		},
		{
			// Same forest model at γ = 0.96: exact values 74.6496, 78.1056,
			// 82.1056, which the MacQueen bounds at the 4th value-iteration
			// iterate printed in the pymdptoolbox ValueIteration doctest
			// (V = 5.93215488, 9.38815488, 13.38815488) also give, with a
			// span of 0.
			name:   "mdptoolbox-forest-0.96",
			p:      forest(0.96),
			policy: []int{0, 0, 0},
			value:  []float64{-74.6496, -78.1056, -82.1056},
			tol:    1e-9,
		},
	}
}

// forest is pymdptoolbox's example.forest(S=3, r1=4, r2=2, p=0.1) with
// rewards as negative costs: action 0 waits, action 1 cuts.
func forest(gamma float64) *Problem {
	return handProblem([]string{"0", "1", "2"}, []string{"wait", "cut"}, gamma, [][]arm{
		{{0, 0, []float64{0.1, 0.9, 0}}, {1, 0, []float64{1, 0, 0}}},
		{{0, 0, []float64{0.1, 0, 0.9}}, {1, -1, []float64{1, 0, 0}}},
		{{0, -4, []float64{0.1, 0, 0.9}}, {1, -2, []float64{1, 0, 0}}},
	})
}

func TestSolveReferenceCases(t *testing.T) {
	for _, tc := range referenceCases() {
		for _, m := range methods {
			t.Run(tc.name+"/"+m.String(), func(t *testing.T) {
				r, err := Solve(context.Background(), tc.p, &Settings{Method: m, Tol: 1e-10})
				if err != nil {
					t.Fatal(err)
				}
				if r.Status != Certified {
					t.Errorf("status %v, gap %g", r.Status, r.Gap)
				}
				for s, a := range tc.policy {
					if r.Policy[s] != a {
						t.Errorf("policy[%d] = %d, want %d", s, r.Policy[s], a)
					}
				}
				checkClose(t, "value", r.Value, tc.value, tc.tol)
				checkBracket(t, r)
			})
		}
	}
}

// checkBracket checks lower <= value, lower <= upper, and that the gap is
// what the bounds say.
func checkBracket(t *testing.T, r *Result) {
	t.Helper()
	gap := 0.0
	for s := range r.Value {
		if !(r.Lower[s] <= r.Upper[s]) || !(r.Lower[s] <= r.Value[s]) {
			t.Errorf("state %d: lower %g, upper %g, value %g out of order", s, r.Lower[s], r.Upper[s], r.Value[s])
		}
		gap = max(gap, r.Value[s]-r.Lower[s])
	}
	if math.Abs(gap-r.Gap) > 1e-12*(1+gap) {
		t.Errorf("gap %g, bounds say %g", r.Gap, gap)
	}
}

// The published value-iteration iterates of pymdptoolbox (v0 = 0, Jacobi
// updates) are reproduced by our Bellman operator.
func TestBellmanIteratesMatchPublished(t *testing.T) {
	tests := []struct {
		name   string
		p      *Problem
		sweeps int
		want   []float64 // in rewards
		tol    float64
	}{
		// pymdptoolbox mdp.py ValueIteration doctest on example.small(),
		// γ = 0.9, epsilon 0.01: 26 iterations, V printed.
		{"small", handProblem([]string{"0", "1"}, []string{"a0", "a1"}, 0.9, [][]arm{
			{{0, -5, []float64{0.5, 0.5}}, {1, -10, []float64{0, 1}}},
			{{0, 1, []float64{0.8, 0.2}}, {1, -2, []float64{0.1, 0.9}}},
		}), 26, []float64{40.048625392716815, 33.65371175967546}, 1e-9},
		// pymdptoolbox mdp.py ValueIteration doctest on example.forest(),
		// γ = 0.96: 4 iterations, V printed.
		{"forest", forest(0.96), 4, []float64{5.93215488, 9.38815488, 13.38815488}, 1e-8},
		// Puterman 1994, Example 6.3.1 iterates on the §3.1 model (λ =
		// 0.95): v1 = (10, -1), v2 = (9.275, -1.95), v3 = (8.479375,
		// -2.8525); recomputed by hand from the recursion, not from the book.
		{"puterman", referenceCases()[0].p, 3, []float64{8.479375, -2.8525}, 1e-12},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			v := make([]float64, len(tc.want))
			for range tc.sweeps {
				v = bellman(tc.p, v)
			}
			for s := range v {
				if got := -v[s]; math.Abs(got-tc.want[s]) > tc.tol {
					t.Errorf("V_%d[%d] = %.12g, want %.12g (tol %g)", tc.sweeps, s, got, tc.want[s], tc.tol)
				}
			}
		})
	}
}

// Value iteration, policy iteration and the LP agree on random models, and
// every certificate brackets the values of the others.
func TestMethodsAgreeOnRandomModels(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := range 40 {
		n := 2 + rng.IntN(30)
		gamma := []float64{0.5, 0.9, 0.95, 0.99}[trial%4]
		p := randomProblem(rng, n, 1+rng.IntN(4), 1+rng.IntN(n), gamma, 1000)
		var results []*Result
		for _, m := range methods {
			// 1e-7 is about the floor of a certificate in float64 here:
			// values reach 1e5 and the bound divides rounding by 1-γ.
			r, err := Solve(context.Background(), p, &Settings{Method: m, Tol: 1e-7})
			if err != nil {
				t.Fatalf("trial %d, %v: %v", trial, m, err)
			}
			if r.Status != Certified {
				t.Errorf("trial %d, %v: %v with gap %g", trial, m, r.Status, r.Gap)
			}
			checkBracket(t, r)
			results = append(results, r)
		}
		for i, r := range results[1:] {
			if !slices.Equal(r.Policy, results[0].Policy) {
				t.Errorf("trial %d: %v policy %v, %v policy %v", trial, methods[i+1], r.Policy, methods[0], results[0].Policy)
			}
			if d := maxAbsDiff(r.Value, results[0].Value); d > 1e-8 {
				t.Errorf("trial %d: %v and %v values differ by %g", trial, methods[i+1], methods[0], d)
			}
			for s := range r.Value {
				if results[0].Value[s] < r.Lower[s]-1e-8 {
					t.Errorf("trial %d: %v lower bound %g above %v value %g", trial, methods[i+1], r.Lower[s], methods[0], results[0].Value[s])
				}
			}
		}
	}
}

// The Bellman operator is a γ-contraction in the max norm (Puterman 1994,
// Prop. 6.2.4): ||Tu - Tv|| <= γ ||u - v||.
func TestBellmanContraction(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := range 200 {
		n := 1 + rng.IntN(20)
		gamma := rng.Float64()
		p := randomProblem(rng, n, 1+rng.IntN(4), 1+rng.IntN(n), gamma, 100)
		u, v := make([]float64, n), make([]float64, n)
		for i := range u {
			u[i], v[i] = 1000*rng.NormFloat64(), 1000*rng.NormFloat64()
		}
		if lhs, rhs := maxAbsDiff(bellman(p, u), bellman(p, v)), gamma*maxAbsDiff(u, v); lhs > rhs*(1+1e-12)+1e-9 {
			t.Errorf("trial %d: ||Tu-Tv|| = %g > γ||u-v|| = %g", trial, lhs, rhs)
		}
	}
}

// After k sweeps from v0 the error of value iteration obeys the a-priori
// bound ||v_k - v*|| <= γ^k/(1-γ)·||v1 - v0|| (Puterman 1994, Thm 6.3.3).
func TestValueIterationAPrioriBound(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for trial := range 30 {
		n := 2 + rng.IntN(15)
		gamma := 0.5 + 0.49*rng.Float64()
		p := randomProblem(rng, n, 1+rng.IntN(3), 1+rng.IntN(n), gamma, 100)
		r, err := Solve(context.Background(), p, &Settings{Method: PolicyIteration})
		if err != nil {
			t.Fatal(err)
		}
		v := make([]float64, n)
		v1 := bellman(p, v)
		step := maxAbsDiff(v1, v)
		for k := 1; k <= 60; k++ {
			v = bellman(p, v)
			bound := math.Pow(gamma, float64(k)) / (1 - gamma) * step
			if e := maxAbsDiff(v, r.Value); e > bound*(1+1e-9)+1e-9 {
				t.Fatalf("trial %d, k=%d: error %g above a-priori bound %g", trial, k, e, bound)
			}
		}
	}
}

// Margins are exact: lowering the runner-up's cost by just more than the
// margin makes it the advice; by just less leaves the advice unchanged.
func TestMarginFlipsAdvice(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for trial := range 20 {
		n := 2 + rng.IntN(8)
		p := randomProblem(rng, n, 3, 1+rng.IntN(n), 0.9, 100)
		r, err := Solve(context.Background(), p, nil)
		if err != nil {
			t.Fatal(err)
		}
		for s := range n {
			if r.RunnerUp[s] < 0 || r.Margin[s] < 1e-3 {
				continue
			}
			k := p.Find(s, r.RunnerUp[s])
			orig := p.Choices[s][k].Cost
			for _, tc := range []struct {
				delta float64
				flip  bool
			}{{r.Margin[s] - 1e-4, false}, {r.Margin[s] + 1e-4, true}} {
				p.Choices[s][k].Cost = orig - tc.delta
				r2, err := Solve(context.Background(), p, nil)
				if err != nil {
					t.Fatal(err)
				}
				if flipped := r2.Policy[s] == r.RunnerUp[s]; flipped != tc.flip {
					t.Errorf("trial %d, state %d: cost lowered by %g (margin %g): advice %d, flip %v, want %v",
						trial, s, tc.delta, r.Margin[s], r2.Policy[s], flipped, tc.flip)
				}
			}
			p.Choices[s][k].Cost = orig
		}
	}
}

// Exact ties are resolved in favour of the lowest action index by every
// method, and reported.
func TestTiesResolvedByFirstAction(t *testing.T) {
	// Two actions with identical cost and rows in state 0: a tie by
	// construction.
	p := handProblem([]string{"x", "y"}, []string{"a", "b", "c"}, 0.9, [][]arm{
		{{1, 5, []float64{0.5, 0.5}}, {2, 5, []float64{0.5, 0.5}}},
		{{0, 1, []float64{0.2, 0.8}}, {2, 5 + 1e-13, []float64{0.2, 0.8}}},
	})
	for _, m := range methods {
		r, err := Solve(context.Background(), p, &Settings{Method: m})
		if err != nil {
			t.Fatal(err)
		}
		if r.Policy[0] != 1 {
			t.Errorf("%v: policy[0] = %d, want 1 (first of the tied)", m, r.Policy[0])
		}
		if len(r.Ties) != 1 || r.Ties[0].State != 0 || len(r.Ties[0].Actions) != 2 {
			t.Errorf("%v: ties = %+v, want one tie in state 0", m, r.Ties)
		}
	}
}

func TestIterationCapIsAStatus(t *testing.T) {
	p := randomProblem(rand.New(rand.NewPCG(9, 9)), 20, 3, 5, 0.999, 1000)
	r, err := Solve(context.Background(), p, &Settings{Method: ValueIteration, MaxIterations: 3, Tol: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != NotCertified || r.Iterations != 3 {
		t.Errorf("status %v after %d sweeps, want not certified after 3", r.Status, r.Iterations)
	}
	checkBracket(t, r)
}

func TestSolveCancelled(t *testing.T) {
	p := randomProblem(rand.New(rand.NewPCG(9, 10)), 50, 3, 5, 0.99999, 1000)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	for _, m := range []Method{ValueIteration, PolicyIteration} {
		if _, err := Solve(ctx, p, &Settings{Method: m, Tol: 1e-12}); err != context.Canceled {
			t.Errorf("%v: err = %v, want context.Canceled", m, err)
		}
	}
}

func TestValidateReportsEveryFault(t *testing.T) {
	p := handProblem([]string{"x", "y"}, []string{"a"}, 1.5, [][]arm{
		{{0, math.NaN(), []float64{0.5, 0.4}}},
		{},
	})
	err := p.Validate(true)
	if err == nil {
		t.Fatal("no error")
	}
	// discount, NaN cost, row sum, empty state.
	if got := len(err.(interface{ Unwrap() []error }).Unwrap()); got != 4 {
		t.Errorf("%d faults, want 4: %v", got, err)
	}
}
