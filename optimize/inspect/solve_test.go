package inspect

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
)

func testClasses() []*class {
	cls := []*class{reliefValves()}
	rng := rand.New(rand.NewPCG(14, 1))
	for _, n := range []int{2, 3, 5, 8, 12} {
		cls = append(cls, randomClass(rng, n, 2+rng.IntN(6)))
	}
	return cls
}

// With no inspection cost, the single interval 1 and no hidden failures
// the model is today's MDP exactly: optimize.Solve on optimize.Build is
// the reference (the problem statement's reduction).
func TestReduction(t *testing.T) {
	for _, cl := range testClasses() {
		cl.plan = Plan{Intervals: []int{1}, MaxIntervalYears: 1}
		p := cl.build(t)
		ref, err := optimize.Build(cl.m, cl.c, cl.gamma)
		if err != nil {
			t.Fatal(err)
		}
		want, err := optimize.Solve(context.Background(), ref, &optimize.Settings{Method: optimize.PolicyIteration, Tol: 1e-6})
		if err != nil {
			t.Fatal(err)
		}
		for _, method := range methods {
			r, err := Solve(context.Background(), p, &optimize.Settings{Method: method, Tol: 1e-6})
			if err != nil {
				t.Fatalf("Solve(%q, %v): %v", cl.name, method, err)
			}
			if r.Status != optimize.Certified {
				t.Errorf("Solve(%q, %v): status %v, gap %g", cl.name, method, r.Status, r.Gap)
			}
			for s := range p.States {
				if !relClose(r.Value[s], want.Value[s], 1e-9) {
					t.Errorf("Solve(%q, %v): value[%d] = %.12g, want %.12g (rel tol 1e-9)", cl.name, method, s, r.Value[s], want.Value[s])
				}
				if r.Action[s] != want.Policy[s] || r.Interval[s] != 1 {
					t.Errorf("Solve(%q, %v): decision[%d] = (%d, %d), want (%d, 1)", cl.name, method, s, r.Action[s], r.Interval[s], want.Policy[s])
				}
			}
		}
	}
}

// The independent formulation (expanded, an ordinary MDP on (condition,
// periods to the scheduled inspection) built from the model's rows) solved
// by optimize's policy iteration and by GLPK's glpsol gives the values and
// decisions of the semi-Markov solve.
func TestExpandedFormulation(t *testing.T) {
	for _, cl := range testClasses() {
		p := cl.build(t)
		ex, ks := expanded(cl)
		want, err := optimize.Solve(context.Background(), ex, &optimize.Settings{Method: optimize.PolicyIteration, Tol: 1e-9})
		if err != nil {
			t.Fatalf("expanded(%q): %v", cl.name, err)
		}
		n := len(p.States)
		for _, method := range methods {
			r, err := Solve(context.Background(), p, &optimize.Settings{Method: method, Tol: 1e-8})
			if err != nil {
				t.Fatalf("Solve(%q, %v): %v", cl.name, method, err)
			}
			for s := range n {
				if !relClose(r.Value[s], want.Value[s], 1e-9) {
					t.Errorf("Solve(%q, %v): value[%d] = %.12g, want %.12g from the expanded MDP (rel tol 1e-9)", cl.name, method, s, r.Value[s], want.Value[s])
				}
				a, k := want.Policy[s]/len(ks), ks[want.Policy[s]%len(ks)]
				// A decision may differ only between decisions tied to
				// within the tolerance of the solve.
				if (r.Action[s] != a || r.Interval[s] != k) && !(math.Abs(r.Q[s][p.find(s, a, k)]-r.Value[s]) <= 1e-8*max(1, math.Abs(r.Value[s]))) {
					t.Errorf("Solve(%q, %v): decision[%d] = (%d, %d), want (%d, %d) from the expanded MDP", cl.name, method, s, r.Action[s], r.Interval[s], a, k)
				}
			}
		}
	}
}

// GLPK's glpsol solves the LP in v of the expanded MDP and the LP of the
// semi-Markov form (v_s - Σ_j M_d(s,j) v_j <= c(s,d)); both optima are v*.
func TestGLPK(t *testing.T) {
	bin := mdptest.Glpsol(t)
	for _, cl := range testClasses() {
		p := cl.build(t)
		n := len(p.States)
		r, err := Solve(context.Background(), p, &optimize.Settings{Tol: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		ex, _ := expanded(cl)
		var exChoices []mdptest.Choice
		for s, cs := range ex.Choices {
			for _, c := range cs {
				exChoices = append(exChoices, mdptest.Choice{State: s, Cost: c.Cost, Next: c.Next})
			}
		}
		vex, _ := mdptest.SolveLP(t, bin, mdptest.PrimalLP(len(ex.States), ex.Discount, exChoices), len(ex.States))
		var smChoices []mdptest.Choice
		for s, cs := range p.Choices {
			for _, c := range cs {
				smChoices = append(smChoices, mdptest.Choice{State: s, Cost: c.Cost, Next: c.Next, Discount: 1})
			}
		}
		vsm, _ := mdptest.SolveLP(t, bin, mdptest.PrimalLP(n, 1, smChoices), n)
		// glpsol prints 15 significant digits; values are below 1e6.
		for s := range n {
			tol := 1e-9 * max(1, math.Abs(r.Value[s]))
			if math.Abs(vex[s]-r.Value[s]) > tol || math.Abs(vsm[s]-r.Value[s]) > tol {
				t.Errorf("glpsol(%q): value[%d] = %.12g (expanded), %.12g (semi-Markov LP), want %.12g (tol %g)", cl.name, s, vex[s], vsm[s], r.Value[s], tol)
			}
		}
	}
}

// Every method certifies, the bounds contain the exact value of an
// optimal policy, and no runner-up beats the advice by more than the gap.
func TestCertificate(t *testing.T) {
	for _, cl := range testClasses() {
		p := cl.build(t)
		ref, err := Solve(context.Background(), p, &optimize.Settings{Method: optimize.PolicyIteration, Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		for _, method := range methods {
			for _, tol := range []float64{1e-2, 1e-6} {
				r, err := Solve(context.Background(), p, &optimize.Settings{Method: method, Tol: tol})
				if err != nil {
					t.Fatal(err)
				}
				name := fmt.Sprintf("%s/%v/%g", cl.name, method, tol)
				if r.Status != optimize.Certified || r.Gap > tol {
					t.Errorf("Solve(%q): status %v, gap %g, want certified within %g", name, r.Status, r.Gap, tol)
				}
				if !(r.ModulusLow > 0 && r.ModulusLow <= r.Modulus && r.Modulus <= cl.gamma*(1+1e-15)) {
					t.Errorf("Solve(%q): modulus [%g, %g] not within (0, γ = %g]", name, r.ModulusLow, r.Modulus, cl.gamma)
				}
				for s := range p.States {
					v := ref.Value[s]
					if r.Lower[s] > v+1e-9 || r.Upper[s] < v-1e-9 || r.Value[s] < r.Lower[s] {
						t.Errorf("Solve(%q): state %d: bounds [%.12g, %.12g], value %.12g, v* = %.12g", name, s, r.Lower[s], r.Upper[s], r.Value[s], v)
					}
					if r.Value[s]-v > tol {
						t.Errorf("Solve(%q): value[%d] = %.12g exceeds v* = %.12g by more than %g", name, s, r.Value[s], v, tol)
					}
					if r.RunnerUp[s] >= 0 && r.Margin[s] < -r.Gap {
						t.Errorf("Solve(%q): state %d: runner-up better by %g, more than the gap %g", name, s, -r.Margin[s], r.Gap)
					}
					if p.Unsafe[s] && cl.m.Actions[r.Action[s]].Passive {
						t.Errorf("Solve(%q): unsafe state %d advised the passive action", name, s)
					}
				}
			}
		}
	}
}

// The Porteus bounds of the package comment hold at arbitrary v, including
// lo >= 0 (v far below v*) and hi < 0 (v far above), where the factor
// depends on the sign; a bound with the factors swapped fails for some v,
// so the check can tell.
func TestBoundsAtAnyV(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 2))
	swappedFails := false
	for _, cl := range testClasses() {
		p := cl.build(t)
		opt, err := Solve(context.Background(), p, &optimize.Settings{Method: optimize.PolicyIteration, Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		mod := newModulus(p)
		n := len(p.States)
		for trial := range 40 {
			v := make([]float64, n)
			shift := 1e4 * (rng.Float64()*2 - 1) * float64(trial%4)
			for s := range v {
				v[s] = opt.Value[s] + shift + 300*(rng.Float64()*2-1)
			}
			tv := make([]float64, n)
			greedy(p, v, make([]int, n), tv)
			lo, hi := math.Inf(1), math.Inf(-1)
			for s := range n {
				lo, hi = min(lo, tv[s]-v[s]), max(hi, tv[s]-v[s])
			}
			for s := range n {
				l, u := mod.lower(tv[s], lo), mod.upper(tv[s], hi)
				slack := 1e-9 * max(1, math.Abs(opt.Value[s]))
				if l > opt.Value[s]+slack || u < opt.Value[s]-slack {
					t.Errorf("%s trial %d: state %d: bounds [%.10g, %.10g] miss v* = %.10g (lo %g, hi %g)", cl.name, trial, s, l, u, opt.Value[s], lo, hi)
				}
				bad := modulus{lo: mod.hi, hi: mod.lo}
				if bad.lower(tv[s], lo) > opt.Value[s]+slack || bad.upper(tv[s], hi) < opt.Value[s]-slack {
					swappedFails = true
				}
			}
		}
	}
	if !swappedFails {
		t.Error("the bounds with swapped factors never failed: the test cannot tell the factors apart")
	}
}

// Intervals above the limit are excluded and never advised; a plan whose
// every interval exceeds the limit is a fault.
func TestLimit(t *testing.T) {
	cl := reliefValves()
	cl.plan.MaxIntervalYears = 0.75 // 3 quarters
	p := cl.build(t)
	if fmt.Sprint(p.Intervals) != "[1 2 3]" || fmt.Sprint(p.Excluded) != "[4 6 8 12]" {
		t.Errorf("Build: intervals %v, excluded %v, want [1 2 3] and [4 6 8 12]", p.Intervals, p.Excluded)
	}
	free := reliefValves()
	free.plan.MaxIntervalYears = 100
	rFree, err := Solve(context.Background(), free.build(t), nil)
	if err != nil {
		t.Fatal(err)
	}
	longer := false
	for _, k := range rFree.Interval {
		longer = longer || k > 3
	}
	if !longer {
		t.Fatalf("without a limit the advice %v uses no interval above 3 quarters: the test cannot fail", rFree.Interval)
	}
	r, err := Solve(context.Background(), p, nil)
	if err != nil {
		t.Fatal(err)
	}
	for s, k := range r.Interval {
		if p.Years(k) > cl.plan.MaxIntervalYears {
			t.Errorf("Solve: state %d advised %d periods = %g years, above the limit %g", s, k, p.Years(k), cl.plan.MaxIntervalYears)
		}
	}
	cl.plan.MaxIntervalYears = 0.2
	_, err = Build(context.Background(), cl.m, cl.c, cl.gamma, &cl.plan)
	var f *Fault
	if !errors.As(err, &f) || f.Field != "max_interval_years" {
		t.Errorf("Build with a limit below every interval: %v, want a max_interval_years fault", err)
	}
}

// A 12-month limit on a monthly model admits 12 periods of 1/12 year
// whatever the rounding of 1/12.
func TestLimitRounding(t *testing.T) {
	cl := reliefValves()
	cl.m.PeriodYears = 1.0 / 12
	cl.plan.MaxIntervalYears = 1
	p := cl.build(t)
	if got := p.Intervals[len(p.Intervals)-1]; got != 12 {
		t.Errorf("Build: longest admissible interval %d periods, want 12", got)
	}
}

func TestCancel(t *testing.T) {
	cl := reliefValves()
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Build(ctx, cl.m, cl.c, cl.gamma, &cl.plan); !errors.Is(err, context.Canceled) {
		t.Errorf("Build(cancelled): %v, want context.Canceled", err)
	}
	p := cl.build(t)
	for _, method := range []optimize.Method{optimize.ValueIteration, optimize.PolicyIteration} {
		if _, err := Solve(ctx, p, &optimize.Settings{Method: method}); !errors.Is(err, context.Canceled) {
			t.Errorf("Solve(cancelled, %v): %v, want context.Canceled", method, err)
		}
	}
	if _, err := p.Calendar(ctx, make([]int, len(p.States)), make([]float64, len(p.States)), 5); !errors.Is(err, context.Canceled) {
		t.Errorf("Calendar(cancelled): %v, want context.Canceled", err)
	}
}

// Value iteration that hits its cap reports NotCertified with valid
// bounds, not an error.
func TestIterationCap(t *testing.T) {
	cl := reliefValves()
	p := cl.build(t)
	opt, err := Solve(context.Background(), p, &optimize.Settings{Tol: 1e-10})
	if err != nil {
		t.Fatal(err)
	}
	r, err := Solve(context.Background(), p, &optimize.Settings{Method: optimize.ValueIteration, MaxIterations: 3, Tol: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != optimize.NotCertified || r.Iterations != 3 {
		t.Errorf("Solve(cap 3): status %v after %d sweeps, want not certified after 3", r.Status, r.Iterations)
	}
	for s := range p.States {
		if r.Lower[s] > opt.Value[s]+1e-9 || r.Upper[s] < opt.Value[s]-1e-9 {
			t.Errorf("Solve(cap 3): state %d: bounds [%g, %g] miss v* = %g", s, r.Lower[s], r.Upper[s], opt.Value[s])
		}
	}
}

// Exactly tied decisions go to the lowest (action, interval): in a state
// whose cheap action always leads to a self-announcing failure at once,
// every interval of that action has the same cost and kernel.
func TestTieRule(t *testing.T) {
	cl := reliefValves()
	cl.m.Actions[1].Rows[3] = dense([]float64{0, 0, 0, 0, 1})[0] // a service of "stuck" that always ends "passing"
	cl.m.Actions[1].OutOfService = true                          // which only an out-of-service action may do
	cl.c.Action[1][3] = 10
	cl.c.Action[2][3] = 1e6 // replacement out of the question
	p := cl.build(t)
	for _, method := range methods {
		r, err := Solve(context.Background(), p, &optimize.Settings{Method: method})
		if err != nil {
			t.Fatal(err)
		}
		var tie *Tie
		for i := range r.Ties {
			if r.Ties[i].State == 3 {
				tie = &r.Ties[i]
			}
		}
		if r.Action[3] != 1 || r.Interval[3] != 1 || tie == nil || len(tie.Choices) != len(p.Intervals) || tie.Choices[0] != r.Policy[3] {
			t.Errorf("Solve(%v): stuck advised (%d, %d), tie %+v, want (1, 1) first of %d tied decisions", method, r.Action[3], r.Interval[3], tie, len(p.Intervals))
		}
		for _, tie := range r.Ties {
			if tie.Choices[0] != r.Policy[tie.State] {
				t.Errorf("Solve(%v): tie %+v, advice %d is not the first", method, tie, r.Policy[tie.State])
			}
		}
	}
}

// The solver works on hand-written problems: closed forms by hand.
func TestHandMade(t *testing.T) {
	e := func(to int, p float64) condition.Entry { return condition.Entry{To: to, P: p} }
	for _, tc := range []struct {
		name   string
		p      *Problem
		value  []float64
		policy []int
	}{
		{
			// One state: v = min_d c_d/(1 - β_d) = min(10/0.1, 14/0.15, 30/0.2).
			name: "one state",
			p: &Problem{States: []string{"s"}, Actions: []string{"a"}, Choices: [][]Choice{{
				{Action: 0, Interval: 1, Cost: 10, Next: []condition.Entry{e(0, 0.9)}},
				{Action: 0, Interval: 2, Cost: 14, Next: []condition.Entry{e(0, 0.85)}},
				{Action: 0, Interval: 3, Cost: 30, Next: []condition.Entry{e(0, 0.8)}},
			}}},
			value: []float64{14 / 0.15}, policy: []int{1},
		},
		{
			// v1 = 5 + 0.9 v0, v0 = 1 + 0.5 v0 + 0.4 v1 give v0 = 3/0.14.
			name: "two states",
			p: &Problem{States: []string{"s0", "s1"}, Actions: []string{"a", "b"}, Choices: [][]Choice{
				{{Action: 0, Interval: 1, Cost: 1, Next: []condition.Entry{e(0, 0.5), e(1, 0.4)}},
					{Action: 1, Interval: 1, Cost: 50, Next: []condition.Entry{e(0, 0.5)}}},
				{{Action: 1, Interval: 1, Cost: 5, Next: []condition.Entry{e(0, 0.9)}}},
			}},
			value: []float64{3 / 0.14, 5 + 0.9*3/0.14}, policy: []int{0, 0},
		},
	} {
		for _, method := range methods {
			r, err := Solve(context.Background(), tc.p, &optimize.Settings{Method: method, Tol: 1e-9})
			if err != nil {
				t.Fatalf("Solve(%q, %v): %v", tc.name, method, err)
			}
			checkClose(t, fmt.Sprintf("Solve(%q, %v): value", tc.name, method), r.Value, tc.value, 1e-9)
			for s, i := range tc.policy {
				if r.Policy[s] != i {
					t.Errorf("Solve(%q, %v): policy[%d] = %d, want %d", tc.name, method, s, r.Policy[s], i)
				}
			}
		}
	}
	bad := &Problem{States: []string{"s"}, Actions: []string{"a"}, Choices: [][]Choice{{
		{Action: 0, Interval: 2, Cost: 1, Next: []condition.Entry{e(0, 1)}},
		{Action: 0, Interval: 1, Cost: math.NaN(), Next: []condition.Entry{e(0, 0.5)}},
	}}}
	if got := faults(bad.Validate()); len(got) != 3 {
		t.Errorf("Validate: faults %v, want a kernel sum, an order and a cost fault", got)
	}
}
