package fleet

import (
	"context"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"
)

// smallFleet is two or three random classes with invented counts.
func smallFleet(rng *rand.Rand, classes, years int, budget float64) *Problem {
	f := &Problem{Discount: mdptest.Factor(0.95, 1)}
	for i := range classes {
		model, sched := mdptest.RandomClass(rng, 3+rng.IntN(2), 2+rng.IntN(2))
		name := fmt.Sprintf("class%d", i)
		counts := make([]float64, len(model.States))
		for s := range counts {
			counts[s] = float64(rng.IntN(30))
		}
		f.Classes = append(f.Classes, Class{Name: name, Model: model, Costs: sched, Counts: counts})
	}
	for range years {
		f.Budget = append(f.Budget, budget)
	}
	return f
}

// fluidLP writes the expected-count model as one explicit LP in standard
// form (variables x[c,t,s,a] per admissible pair, then per year a budget
// slack and a shortfall priced at penalty): the independent reference for
// the decomposed solver.
func fluidLP(t *testing.T, f *Problem, penalty float64) (c []float64, a [][]float64, b []float64, names []string) {
	t.Helper()
	T := len(f.Budget)
	type key struct{ c, t, s, a int }
	idx := map[key]int{}
	var probs []*optimize.Problem
	var vals [][]float64
	for ci, fc := range f.Classes {
		p, err := optimize.Build(fc.Model, fc.Costs, f.Discount.Factor())
		if err != nil {
			t.Fatal(err)
		}
		r, err := optimize.Solve(context.Background(), p, &optimize.Settings{Method: optimize.PolicyIteration})
		if err != nil {
			t.Fatal(err)
		}
		probs, vals = append(probs, p), append(vals, r.Value)
		for tt := range T {
			for s, cs := range p.Choices {
				for _, ch := range cs {
					idx[key{ci, tt, s, ch.Action}] = len(c)
					cost := math.Pow(f.Discount.Factor(), float64(tt)) * (fc.Costs.Running[s] + fc.Costs.Action[ch.Action][s])
					if tt == T-1 {
						cost += math.Pow(f.Discount.Factor(), float64(T)) * optimize.Expect(ch.Next, r.Value)
					}
					c = append(c, cost)
					names = append(names, fmt.Sprintf("x_%d_%d_%d_%d", ci, tt, s, ch.Action))
				}
			}
		}
	}
	nx := len(c)
	for tt := range T {
		c = append(c, 0)
		names = append(names, fmt.Sprintf("u_%d", tt))
	}
	for tt := range T {
		c = append(c, penalty)
		names = append(names, fmt.Sprintf("z_%d", tt))
	}
	row := func() []float64 { return make([]float64, len(c)) }
	for ci, fc := range f.Classes {
		p := probs[ci]
		for s := range p.States {
			r := row()
			for _, ch := range p.Choices[s] {
				r[idx[key{ci, 0, s, ch.Action}]] = 1
			}
			a, b = append(a, r), append(b, fc.Counts[s])
		}
		for tt := 1; tt < T; tt++ {
			for j := range p.States {
				r := row()
				for _, ch := range p.Choices[j] {
					r[idx[key{ci, tt, j, ch.Action}]] = 1
				}
				for s, cs := range p.Choices {
					for _, ch := range cs {
						for _, e := range ch.Next {
							if e.To == j {
								r[idx[key{ci, tt - 1, s, ch.Action}]] -= e.P
							}
						}
					}
				}
				a, b = append(a, r), append(b, 0)
			}
		}
	}
	for tt := range T {
		r := row()
		for k, v := range idx {
			if k.t == tt {
				r[v] = f.Classes[k.c].Costs.Action[k.a][k.s]
			}
		}
		r[nx+tt], r[nx+T+tt] = 1, -1
		a, b = append(a, r), append(b, f.Budget[tt])
	}
	_ = vals
	return c, a, b, names
}

func gonumLP(t *testing.T, c []float64, a [][]float64, b []float64) float64 {
	t.Helper()
	m := mat.NewDense(len(a), len(c), nil)
	for i, r := range a {
		m.SetRow(i, r)
	}
	opt, _, err := lp.Simplex(c, m, b, 1e-10, nil)
	if err != nil {
		t.Fatalf("gonum simplex: %v", err)
	}
	return opt
}

// On small fleets the bounds bracket the exact LP optimum of the
// expected-count model (gonum's simplex on the explicit LP), and the gap
// closes.
func TestPlanBracketsExactLP(t *testing.T) {
	rng := rand.New(rand.NewPCG(81, 82))
	for trial := range 6 {
		f := smallFleet(rng, 2, 3, 400+300*rng.Float64())
		plan, err := Solve(context.Background(), f, &Settings{Gap: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		penalty := shortfallPrice(prepared(t, f))
		c, a, b, _ := fluidLP(t, f, penalty)
		exact := gonumLP(t, c, a, b)
		short := 0.0
		for _, s := range plan.Shortfall {
			short += s
		}
		exact -= penalty * short
		if !(plan.Lower <= exact+1e-6*math.Abs(exact) && exact <= plan.Fluid+1e-6*math.Abs(exact)) {
			t.Errorf("trial %d: lower %.8g, exact %.8g, fluid %.8g", trial, plan.Lower, exact, plan.Fluid)
		}
		if plan.Gap > 1e-6 {
			t.Errorf("trial %d: gap %g did not close", trial, plan.Gap)
		}
		// Whole units move the cost a little either way (rounding can
		// also spend slightly more than the budget in expectation).
		if math.Abs(plan.PlanCost-plan.Fluid) > 0.05*math.Abs(plan.Fluid) {
			t.Errorf("trial %d: whole-unit plan %g far from the fluid plan %g", trial, plan.PlanCost, plan.Fluid)
		}
		for tt, s := range plan.Spend {
			if s > max(f.Budget[tt], plan.Mandatory[tt])+1e-6 {
				t.Errorf("trial %d, year %d: spend %g above budget %g (mandatory %g)", trial, tt+1, s, f.Budget[tt], plan.Mandatory[tt])
			}
		}
	}
}

func prepared(t *testing.T, f *Problem) []*fleetClass {
	t.Helper()
	var out []*fleetClass
	for _, fc := range f.Classes {
		p, _ := optimize.Build(fc.Model, fc.Costs, f.Discount.Factor())
		r, err := optimize.Solve(context.Background(), p, &optimize.Settings{Method: optimize.PolicyIteration})
		if err != nil {
			t.Fatal(err)
		}
		c := &fleetClass{Class: fc, p: p, advice: r, running: fc.Costs.Running, spend: make([][]float64, len(p.States))}
		for st, cs := range p.Choices {
			for _, ch := range cs {
				c.spend[st] = append(c.spend[st], fc.Costs.Action[ch.Action][st])
			}
		}
		out = append(out, c)
	}
	return out
}

// GLPK's glpsol solves the same explicit LP and agrees with the plan's
// bracket.
func TestPlanAgreesWithGLPK(t *testing.T) {
	bin := mdptest.Glpsol(t)
	rng := rand.New(rand.NewPCG(83, 84))
	f := smallFleet(rng, 3, 4, 600)
	plan, err := Solve(context.Background(), f, &Settings{Gap: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	penalty := shortfallPrice(prepared(t, f))
	c, a, b, names := fluidLP(t, f, penalty)
	var sb strings.Builder
	sb.WriteString("Minimize\n obj:")
	for j, v := range c {
		fmt.Fprintf(&sb, " %+.17g %s", v, names[j])
	}
	sb.WriteString("\nSubject To\n")
	for i, r := range a {
		fmt.Fprintf(&sb, " r%d:", i)
		for j, v := range r {
			if v != 0 {
				fmt.Fprintf(&sb, " %+.17g %s", v, names[j])
			}
		}
		fmt.Fprintf(&sb, " = %.17g\n", b[i])
	}
	sb.WriteString("End\n")
	_, obj := mdptest.SolveLP(t, bin, sb.String(), 0)
	short := 0.0
	for _, s := range plan.Shortfall {
		short += s
	}
	obj -= penalty * short
	if !(plan.Lower <= obj+1e-6*math.Abs(obj) && obj <= plan.Fluid+1e-6*math.Abs(obj)) {
		t.Errorf("lower %.10g, glpsol %.10g, fluid %.10g", plan.Lower, obj, plan.Fluid)
	}
}

// With a budget above the unconstrained spend the plan is the
// unconstrained advice; with a zero budget only mandatory work is done.
func TestPlanBudgetExtremes(t *testing.T) {
	rng := rand.New(rand.NewPCG(85, 86))
	f := smallFleet(rng, 2, 5, 1e9)
	plan, err := Solve(context.Background(), f, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(plan.Fluid-plan.Unconstrained) > 1e-6*math.Abs(plan.Unconstrained) {
		t.Errorf("ample budget: fluid %g, unconstrained %g", plan.Fluid, plan.Unconstrained)
	}
	for ci := range f.Classes {
		for tt := range f.Budget {
			for s, row := range plan.Work[ci][tt] {
				for a, u := range row {
					if u > 0 && a != plan.Advice[ci].Policy[s] {
						t.Errorf("ample budget: class %d year %d state %d: %d units get %d, advice %d", ci, tt+1, s, u, a, plan.Advice[ci].Policy[s])
					}
				}
			}
		}
	}
	for tt := range f.Budget {
		f.Budget[tt] = 0
	}
	plan, err = Solve(context.Background(), f, nil)
	if err != nil {
		t.Fatal(err)
	}
	for ci, fc := range f.Classes {
		pa := fc.Model.Passive()
		for tt := range f.Budget {
			for s, row := range plan.Work[ci][tt] {
				for a, u := range row {
					if u > 0 && a != pa && !fc.Model.States[s].Unsafe {
						t.Errorf("zero budget: class %d year %d: %d units of safe state %d get work %d", ci, tt+1, u, s, a)
					}
				}
			}
		}
	}
	for tt, s := range plan.Spend {
		if math.Abs(s-plan.Mandatory[tt]) > 1e-6 {
			t.Errorf("zero budget, year %d: spend %g but mandatory work %g", tt+1, s, plan.Mandatory[tt])
		}
	}
}

// The expected fleet keeps every class's number of units in every year.
func TestPlanConservesUnits(t *testing.T) {
	rng := rand.New(rand.NewPCG(87, 88))
	f := smallFleet(rng, 3, 6, 500)
	plan, err := Solve(context.Background(), f, nil)
	if err != nil {
		t.Fatal(err)
	}
	for ci, fc := range f.Classes {
		total := 0.0
		for _, x := range fc.Counts {
			total += x
		}
		for tt := range f.Budget {
			sum, units := 0.0, 0
			for s, x := range plan.Expected[ci][tt] {
				sum += x
				for _, u := range plan.Work[ci][tt][s] {
					units += u
				}
			}
			if math.Abs(sum-total) > 1e-9*total || units != int(total) {
				t.Errorf("class %d year %d: %g expected units, %d in the work list, want %g", ci, tt+1, sum, units, total)
			}
		}
	}
}

// The Monte-Carlo mean agrees with the expected-count forecast within
// three standard errors, units are conserved in every run, and the same
// seed gives the same answer whatever the number of workers.
func TestSimulationAgreesWithForecast(t *testing.T) {
	rng := rand.New(rand.NewPCG(89, 90))
	f := smallFleet(rng, 2, 6, 700)
	plan, err := Solve(context.Background(), f, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, advice := range []bool{false, true} {
		sim, err := Simulate(context.Background(), f, plan, advice, 2000, 7, 2, nil)
		if err != nil {
			t.Fatal(err)
		}
		for tt := range f.Budget {
			if q := sim.Spend[tt]; math.Abs(q.Mean-sim.ExpectedSpend[tt]) > 3*q.SE+1e-9 {
				t.Errorf("advice=%v year %d: mean spend %g, expected %g (3 SE = %g)", advice, tt+1, q.Mean, sim.ExpectedSpend[tt], 3*q.SE)
			}
			for ci := range f.Classes {
				sum := 0.0
				for s, q := range sim.Units[ci][tt] {
					sum += q.Mean
					if want := sim.ExpectedUnits[ci][tt][s]; math.Abs(q.Mean-want) > 3*q.SE+1e-9 {
						t.Errorf("advice=%v year %d class %d state %d: mean %g, expected %g (3 SE = %g)", advice, tt+1, ci, s, q.Mean, want, 3*q.SE)
					}
				}
				total := 0.0
				for _, x := range f.Classes[ci].Counts {
					total += x
				}
				if math.Abs(sum-total) > 1e-9 {
					t.Errorf("year %d class %d: %g units, want %g", tt+1, ci, sum, total)
				}
			}
		}
	}
	a, _ := Simulate(context.Background(), f, plan, false, 300, 3, 1, nil)
	b, _ := Simulate(context.Background(), f, plan, false, 300, 3, 4, nil)
	for tt := range a.Spend {
		if a.Spend[tt] != b.Spend[tt] {
			t.Fatalf("year %d: 1 worker %+v, 4 workers %+v", tt+1, a.Spend[tt], b.Spend[tt])
		}
	}
}
