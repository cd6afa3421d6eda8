package fleet

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
)

// smallFleet is a few random classes with invented counts, periods of one
// year and the same budget every year.
func smallFleet(rng *rand.Rand, classes, years int, budget float64) *Problem {
	f := &Problem{Discount: mdptest.Factor(0.95, 1)}
	for i := range classes {
		model, sched := mdptest.RandomClass(rng, 3+rng.IntN(2), 2+rng.IntN(2))
		model.PeriodYears = 1
		counts := make([]float64, len(model.States))
		for s := range counts {
			counts[s] = float64(rng.IntN(30))
		}
		f.Classes = append(f.Classes, Class{Name: fmt.Sprintf("class%d", i), Model: model, Costs: sched, Counts: counts})
	}
	for range years {
		f.Budget = append(f.Budget, budget)
	}
	return f
}

// explicitLP is the expected-count model written out as one LP in
// standard form: variables x[c,k,s,a] per admissible pair, then one slack
// per year row. It is the independent reference for the decomposed
// solver: cost is the objective of the plan, spend[y] the coefficients of
// year y's work spend.
type explicitLP struct {
	cost  []float64
	spend [][]float64
	a     [][]float64
	b     []float64
	names []string
}

// buildLP writes the flow rows of f and, for every year y with a period
// and limits[y] >= 0, the row spend_y + slack_y = limits[y] (a negative
// limit leaves the year out); in the periods of a year with short[y] only
// the actions of least cost in each state have variables.
func buildLP(t *testing.T, f *Problem, limits []float64, short []bool) *explicitLP {
	t.Helper()
	K, Y := f.Periods(), len(f.Budget)
	per, gamma := f.Discount.Period(), f.Discount.Factor()
	type key struct{ c, k, s, a int }
	idx := map[key]int{}
	var order []key
	var probs []*optimize.Problem
	out := &explicitLP{}
	for ci, fc := range f.Classes {
		p, err := optimize.Build(fc.Model, fc.Costs, gamma)
		if err != nil {
			t.Fatal(err)
		}
		r, err := optimize.Solve(context.Background(), p, &optimize.Settings{Method: optimize.PolicyIteration})
		if err != nil {
			t.Fatal(err)
		}
		probs = append(probs, p)
		for k := range K {
			for s, cs := range p.Choices {
				least := math.Inf(1)
				for _, ch := range cs {
					least = min(least, fc.Costs.Action[ch.Action][s])
				}
				for _, ch := range cs {
					if short != nil && short[per.Year(k)] && fc.Costs.Action[ch.Action][s] > least {
						continue
					}
					idx[key{ci, k, s, ch.Action}] = len(out.cost)
					order = append(order, key{ci, k, s, ch.Action})
					c := math.Pow(gamma, float64(k)) * (fc.Costs.Running[s] + fc.Costs.Action[ch.Action][s])
					if k == K-1 {
						c += math.Pow(gamma, float64(K)) * optimize.Expect(ch.Next, r.Value)
					}
					out.cost = append(out.cost, c)
					out.names = append(out.names, fmt.Sprintf("x_%d_%d_%d_%d", ci, k, s, ch.Action))
				}
			}
		}
	}
	nx := len(out.cost)
	hasPeriod := make([]bool, Y)
	for k := range K {
		hasPeriod[per.Year(k)] = true
	}
	var rowYears []int
	for y := range Y {
		if hasPeriod[y] && limits[y] >= 0 {
			rowYears = append(rowYears, y)
			out.cost = append(out.cost, 0)
			out.names = append(out.names, fmt.Sprintf("u_%d", y))
		}
	}
	n := len(out.cost)
	out.spend = make([][]float64, Y)
	for y := range out.spend {
		out.spend[y] = make([]float64, n)
	}
	for j, k := range order {
		out.spend[per.Year(k.k)][j] = f.Classes[k.c].Costs.Action[k.a][k.s]
	}
	row := func() []float64 { return make([]float64, n) }
	for ci, fc := range f.Classes {
		p := probs[ci]
		for s := range p.States {
			r := row()
			for _, ch := range p.Choices[s] {
				if j, ok := idx[key{ci, 0, s, ch.Action}]; ok {
					r[j] = 1
				}
			}
			out.a, out.b = append(out.a, r), append(out.b, fc.Counts[s])
		}
		for k := 1; k < K; k++ {
			for j := range p.States {
				r := row()
				for _, ch := range p.Choices[j] {
					if v, ok := idx[key{ci, k, j, ch.Action}]; ok {
						r[v] = 1
					}
				}
				for s, cs := range p.Choices {
					for _, ch := range cs {
						v, ok := idx[key{ci, k - 1, s, ch.Action}]
						for _, e := range ch.Next {
							if ok && e.To == j {
								r[v] -= e.P
							}
						}
					}
				}
				out.a, out.b = append(out.a, r), append(out.b, 0)
			}
		}
	}
	for i, y := range rowYears {
		r := row()
		copy(r, out.spend[y][:nx])
		r[nx+i] = 1
		out.a, out.b = append(out.a, r), append(out.b, limits[y])
	}
	return out
}

// planLP is the explicit LP of the problem the plan states: rows
// spend_y <= B_y in the years that are not short, least-cost actions only
// in the short ones.
func planLP(t *testing.T, f *Problem, plan *Plan) *explicitLP {
	t.Helper()
	limits := append([]float64(nil), f.Budget...)
	for y, sh := range plan.Statement.Short {
		if sh {
			limits[y] = -1
		}
	}
	return buildLP(t, f, limits, plan.Statement.Short)
}

// checkStatement checks that the plan obeys the problem it states: in a
// short year its expected spend is its least spend (recomputed from the
// expected counts), in the others it is within the budget.
func checkStatement(t *testing.T, name string, f *Problem, plan *Plan) {
	t.Helper()
	for y, spend := range plan.Spend {
		if !plan.Statement.Short[y] {
			if b := f.Budget[y]; spend > b+1e-6*max(1, b) {
				t.Errorf("%s, year %d: expected spend %g above the budget %g", name, y+1, spend, b)
			}
			continue
		}
		least := 0.0
		for ci, c := range plan.classes {
			for k, yk := range plan.PeriodYear {
				if yk == y {
					for s, n := range plan.Expected[ci][k] {
						least += n * c.least[s]
					}
				}
			}
		}
		if math.Abs(spend-least) > 1e-6*max(1, least) {
			t.Errorf("%s, year %d (short): expected spend %g, least spend %g", name, y+1, spend, least)
		}
		if spend <= f.Budget[y] {
			t.Errorf("%s, year %d: short, but spends %g within the budget %g", name, y+1, spend, f.Budget[y])
		}
	}
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

func solve(t *testing.T, f *Problem, s *Settings) *Plan {
	t.Helper()
	plan, err := Solve(context.Background(), f, s)
	if err != nil {
		t.Fatal(err)
	}
	return plan
}

// The bounds bracket the exact optimum of the stated problem (gonum's
// simplex on the explicit LP with the plan's limits Budget + Excess), the
// gap closes, and the plan's yearly spend is within the limits. Budgets
// range from below the mandatory work to binding above it.
func TestPlanBracketsExactLP(t *testing.T) {
	rng := rand.New(rand.NewPCG(81, 82))
	for trial := range 8 {
		budget := []float64{0, 300, 1500, 4000}[trial%4] * (1 + 0.3*rng.Float64())
		f := smallFleet(rng, 2, 3, budget)
		plan := solve(t, f, &Settings{Gap: 1e-9})
		e := planLP(t, f, plan)
		exact := gonumLP(t, e.cost, e.a, e.b)
		tol := 1e-6 * math.Abs(exact)
		if !(plan.Lower <= exact+tol && exact <= plan.Fluid+tol) {
			t.Errorf("trial %d (%s): lower %.10g, exact %.10g, fluid %.10g", trial, plan.Statement.Kind, plan.Lower, exact, plan.Fluid)
		}
		if plan.Gap > 1e-6 {
			t.Errorf("trial %d: gap %g did not close", trial, plan.Gap)
		}
		checkStatement(t, fmt.Sprintf("trial %d", trial), f, plan)
	}
}

// Short years and their excesses are found as stated: for every year y,
// an independent LP (gonum) minimises year y's spend subject to the rule
// for the years before it (least-cost actions in short years, the budget
// in the others); y is short when that minimum exceeds B_y, by E_y.
func TestExcessIsLeastYearByYear(t *testing.T) {
	rng := rand.New(rand.NewPCG(91, 92))
	for trial := range 5 {
		f := smallFleet(rng, 2, 4, []float64{0, 800, 1600, 2500, 3500}[trial])
		plan := solve(t, f, &Settings{Gap: 1e-9})
		Y := len(f.Budget)
		short, excess := make([]bool, Y), make([]float64, Y)
		kind := WithinBudget
		for y := range Y {
			limits := make([]float64, Y)
			for t := range limits {
				limits[t] = -1
				if t < y && !short[t] {
					limits[t] = f.Budget[t]
				}
			}
			e := buildLP(t, f, limits, short)
			least := gonumLP(t, e.spend[y], e.a, e.b)
			tol := 1e-6 * max(1, least)
			if least > f.Budget[y]+tol {
				short[y], excess[y], kind = true, least-f.Budget[y], MandatoryFirst
			}
			if plan.Statement.Short[y] != short[y] || math.Abs(plan.Statement.Excess[y]-excess[y]) > tol {
				t.Errorf("trial %d, year %d: short %v, excess %.8g; want %v, %.8g (tol %g)", trial, y+1,
					plan.Statement.Short[y], plan.Statement.Excess[y], short[y], excess[y], tol)
			}
		}
		if plan.Statement.Kind != kind {
			t.Errorf("trial %d: kind %s, want %s", trial, plan.Statement.Kind, kind)
		}
		checkStatement(t, fmt.Sprintf("trial %d", trial), f, plan)
	}
}

// doMinimum returns the expected present cost and yearly spend of the
// plan that does the least spend in every state (the cheapest admissible
// action; in the test classes: leave every safe unit, repair the unsafe
// ones as cheaply as possible), by a direct forward recursion.
func doMinimum(t *testing.T, f *Problem) (cost float64, spend []float64) {
	t.Helper()
	gamma := f.Discount.Factor()
	K := f.Periods()
	spend = make([]float64, len(f.Budget))
	for _, fc := range f.Classes {
		p, err := optimize.Build(fc.Model, fc.Costs, gamma)
		if err != nil {
			t.Fatal(err)
		}
		r, err := optimize.Solve(context.Background(), p, nil)
		if err != nil {
			t.Fatal(err)
		}
		cur := append([]float64(nil), fc.Counts...)
		disc := 1.0
		for k := range K {
			next := make([]float64, len(cur))
			for s, x := range cur {
				best := p.Choices[s][0]
				for _, ch := range p.Choices[s] {
					if fc.Costs.Action[ch.Action][s] < fc.Costs.Action[best.Action][s] {
						best = ch
					}
				}
				spend[f.Discount.Period().Year(k)] += x * fc.Costs.Action[best.Action][s]
				cost += disc * x * (fc.Costs.Running[s] + fc.Costs.Action[best.Action][s])
				for _, e := range best.Next {
					next[e.To] += x * e.P
				}
			}
			cur = next
			disc *= gamma
		}
		for s, x := range cur {
			cost += disc * x * r.Value[s]
		}
	}
	return cost, spend
}

// With a zero budget the only plan allowed is the do-minimum: the best
// plan found costs what the do-minimum costs, the lower bound is below it
// within the gap, the excess of each year is the do-minimum's spend, and
// the first period's work list repairs every unsafe unit and nothing else.
func TestZeroBudgetIsDoMinimum(t *testing.T) {
	rng := rand.New(rand.NewPCG(85, 86))
	for trial := range 4 {
		f := smallFleet(rng, 2, 5, 0)
		plan := solve(t, f, &Settings{Gap: 1e-7})
		want, spend := doMinimum(t, f)
		tol := 1e-7 * want
		if math.Abs(plan.Fluid-want) > tol {
			t.Errorf("trial %d: best plan %.10g, do-minimum %.10g (tol %g)", trial, plan.Fluid, want, tol)
		}
		if plan.Lower > want+tol || plan.Fluid-plan.Lower > 1e-7*math.Abs(plan.Fluid)+1e-9 {
			t.Errorf("trial %d: lower %.10g, best %.10g, do-minimum %.10g", trial, plan.Lower, plan.Fluid, want)
		}
		if plan.Statement.Kind != MandatoryFirst {
			t.Errorf("trial %d: kind %s, want mandatory_first", trial, plan.Statement.Kind)
		}
		for y, s := range spend {
			if got := plan.Statement.Excess[y]; math.Abs(got-s) > 1e-7*max(1, s) {
				t.Errorf("trial %d, year %d: excess %g, do-minimum spend %g", trial, y+1, got, s)
			}
		}
		for ci, fc := range f.Classes {
			pa := fc.Model.Passive()
			for s, row := range plan.First.Units[ci] {
				for a, u := range row {
					unsafe := fc.Model.States[s].Unsafe
					if u > 0 && !unsafe && a != pa {
						t.Errorf("trial %d: class %d: %d units of safe state %d get work %d", trial, ci, u, s, a)
					}
					if u > 0 && unsafe && a == pa {
						t.Errorf("trial %d: class %d: %d unsafe units left alone", trial, ci, u)
					}
				}
			}
		}
	}
}

// GLPK's glpsol solves the same explicit LP of the stated problem and
// agrees with the plan's bracket.
func TestPlanAgreesWithGLPK(t *testing.T) {
	bin := mdptest.Glpsol(t)
	rng := rand.New(rand.NewPCG(83, 84))
	for _, budget := range []float64{600, 2500} {
		f := smallFleet(rng, 3, 4, budget)
		plan := solve(t, f, &Settings{Gap: 1e-9})
		e := planLP(t, f, plan)
		var sb strings.Builder
		sb.WriteString("Minimize\n obj:")
		for j, v := range e.cost {
			fmt.Fprintf(&sb, " %+.17g %s", v, e.names[j])
		}
		sb.WriteString("\nSubject To\n")
		for i, r := range e.a {
			fmt.Fprintf(&sb, " r%d:", i)
			for j, v := range r {
				if v != 0 {
					fmt.Fprintf(&sb, " %+.17g %s", v, e.names[j])
				}
			}
			fmt.Fprintf(&sb, " = %.17g\n", e.b[i])
		}
		sb.WriteString("End\n")
		_, obj := mdptest.SolveLP(t, bin, sb.String(), 0)
		if tol := 1e-6 * math.Abs(obj); !(plan.Lower <= obj+tol && obj <= plan.Fluid+tol) {
			t.Errorf("budget %g (%s): lower %.10g, glpsol %.10g, fluid %.10g", budget, plan.Statement.Kind, plan.Lower, obj, plan.Fluid)
		}
	}
}

// ctmcClass is one class seen at periods of h years: the passive action
// follows the generator Q (rates per year) for h years, P(h) = exp(Qh);
// repair and replacement act at the start of the period and the unit then
// deteriorates for the rest of it. Running costs are rates per year times
// h; action costs do not depend on h. Invented figures.
func ctmcClass(t *testing.T, h float64) (*condition.Model, *costs.Schedule) {
	t.Helper()
	q := mat.NewDense(4, 4, []float64{
		-0.35, 0.30, 0.03, 0.02,
		0, -0.45, 0.40, 0.05,
		0, 0, -0.50, 0.50,
		0, 0, 0, 0,
	})
	q.Scale(h, q)
	var p mat.Dense
	p.Exp(q)
	row := func(i int) []condition.Entry {
		var r []condition.Entry
		for j := range 4 {
			if v := p.At(i, j); v > 1e-15 {
				r = append(r, condition.Entry{To: j, P: v})
			}
		}
		sum := 0.0
		for _, e := range r {
			sum += e.P
		}
		for k := range r {
			r[k].P /= sum
		}
		return r
	}
	m := &condition.Model{PeriodYears: h, States: []condition.State{{Name: "good"}, {Name: "fair"}, {Name: "poor"}, {Name: "failed", Unsafe: true}}}
	m.Actions = []condition.Action{
		{Name: "leave", Passive: true, Rows: [][]condition.Entry{row(0), row(1), row(2), nil}},
		{Name: "repair", Rows: [][]condition.Entry{nil, row(0), row(0), nil}},
		{Name: "replace", Rows: [][]condition.Entry{row(0), row(0), row(0), row(0)}},
	}
	run := []float64{100, 300, 800, 3000}
	sched := &costs.Schedule{Currency: "EUR", Running: make([]float64, 4), Action: [][]float64{
		{0, 0, 0, 0}, {0, 500, 900, 0}, {4000, 4000, 4000, 4000}}}
	for s := range run {
		sched.Running[s] = run[s] * h
	}
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
	return m, sched
}

// Periods are not years: with periods of 0.25, 0.5, 1, 2 and 5 years the
// plan runs over Period.Count(years) periods, charges each period's work
// to the calendar year it starts in, keeps every year's spend within its
// limit, leaves years that start no period without work, discounts by the
// factor per period, and its totals agree with its flows and with the
// explicit LP (gonum).
func TestPeriodLengths(t *testing.T) {
	const years = 6
	for _, h := range []float64{0.25, 0.5, 1, 2, 5} {
		t.Run(fmt.Sprint(h), func(t *testing.T) {
			m, sched := ctmcClass(t, h)
			f := &Problem{Discount: mdptest.Rate(0.05, h), Classes: []Class{{Name: "pumps", Model: m, Costs: sched, Counts: []float64{20, 10, 6, 2}}}}
			for range years {
				f.Budget = append(f.Budget, 9000)
			}
			plan := solve(t, f, &Settings{Gap: 1e-9})
			per := f.Discount.Period()
			if K := per.Count(years); len(plan.PeriodYear) != K || len(plan.PeriodSpend) != K {
				t.Fatalf("%d periods, want %d", len(plan.PeriodYear), K)
			}
			gamma := math.Pow(1.05, -h)
			c := plan.classes[0]
			yearSpend := make([]float64, years)
			cost, disc := 0.0, 1.0
			for k, y := range plan.PeriodYear {
				if y != per.Year(k) {
					t.Errorf("period %d in year %d, want %d", k, y, per.Year(k))
				}
				for s, row := range plan.Flow[0][k] {
					for a, x := range row {
						yearSpend[y] += x * sched.Action[a][s]
						cost += disc * x * (sched.Running[s] + sched.Action[a][s])
					}
				}
				disc *= gamma
			}
			for s, x := range plan.Expected[0][len(plan.PeriodYear)] {
				cost += disc * x * c.advice.Value[s]
			}
			if math.Abs(cost-plan.Fluid) > 1e-9*cost {
				t.Errorf("fluid %.10g, recomputed from the flows with factor %g per period %.10g", plan.Fluid, gamma, cost)
			}
			total := 0.0
			for y := range years {
				total += plan.Spend[y]
				if math.Abs(yearSpend[y]-plan.Spend[y]) > 1e-6 {
					t.Errorf("year %d: spend %g, flows give %g", y+1, plan.Spend[y], yearSpend[y])
				}
				if len(plan.periodsOf[y]) == 0 && (plan.Spend[y] != 0 || plan.Multipliers[y] != 0) {
					t.Errorf("year %d starts no period but spends %g at price %g", y+1, plan.Spend[y], plan.Multipliers[y])
				}
			}
			if sp := sum(plan.PeriodSpend); math.Abs(sp-total) > 1e-6 {
				t.Errorf("periods spend %g, years %g", sp, total)
			}
			checkStatement(t, "", f, plan)
			e := planLP(t, f, plan)
			exact := gonumLP(t, e.cost, e.a, e.b)
			if tol := 1e-6 * exact; !(plan.Lower <= exact+tol && exact <= plan.Fluid+tol) {
				t.Errorf("lower %.10g, exact %.10g, fluid %.10g", plan.Lower, exact, plan.Fluid)
			}
			// The first period's list stays within what the year leaves
			// it after the plan's later periods of that year.
			if wl := plan.First; wl.Spend > max(wl.Limit, wl.Mandatory)+1e-9 {
				t.Errorf("work list spends %g, limit %g, mandatory %g", wl.Spend, wl.Limit, wl.Mandatory)
			}
		})
	}
}

// With a budget that never binds (one sound unit, an ample budget) the
// plan is the unconstrained optimum: the budget costs nothing, the work
// list follows the advice, and the simulated whole-unit practice costs
// the unconstrained optimum within three standard errors.
func TestAmpleBudgetCostsNothing(t *testing.T) {
	m, sched := ctmcClass(t, 1)
	f := &Problem{Discount: mdptest.Rate(0.04, 1), Classes: []Class{{Name: "pump", Model: m, Costs: sched, Counts: []float64{1, 0, 0, 0}}}}
	for range 10 {
		f.Budget = append(f.Budget, 1e9)
	}
	plan := solve(t, f, nil)
	if d := plan.Fluid - plan.Unconstrained; math.Abs(d) > 1e-6*plan.Unconstrained {
		t.Errorf("cost of the budget %g, want 0 (fluid %g, unconstrained %g)", d, plan.Fluid, plan.Unconstrained)
	}
	if plan.Statement.Kind != WithinBudget {
		t.Errorf("kind %s", plan.Statement.Kind)
	}
	for _, rule := range []Rule{FollowPractice, FollowAdvice} {
		sim, err := Simulate(context.Background(), f, plan, rule, 4000, 11, 2, nil)
		if err != nil {
			t.Fatal(err)
		}
		if q := sim.Cost; math.Abs(q.Mean-plan.Unconstrained) > 3*q.SE {
			t.Errorf("%s: simulated cost %g, unconstrained %g (3 SE = %g)", rule, q.Mean, plan.Unconstrained, 3*q.SE)
		}
	}
}

// Every figure covers the mandatory work: the first period's work list
// works on every unsafe unit of the inventory, and in every later period
// the plan's shares put every expected unsafe unit to work, so that the
// expected mandatory spend is the expected unsafe units times their work.
func TestMandatoryWorkCovered(t *testing.T) {
	rng := rand.New(rand.NewPCG(95, 96))
	for _, budget := range []float64{0, 700, 2000} {
		f := smallFleet(rng, 2, 4, budget)
		plan := solve(t, f, nil)
		mandatory := make([]float64, len(f.Budget))
		for ci, fc := range f.Classes {
			pa := fc.Model.Passive()
			for s, row := range plan.First.Units[ci] {
				if fc.Model.States[s].Unsafe && row[pa] != 0 {
					t.Errorf("budget %g: class %d state %d: %d unsafe units not in the work list", budget, ci, s, row[pa])
				}
			}
			for k, y := range plan.PeriodYear {
				for s, sh := range plan.Shares[ci][k] {
					if !fc.Model.States[s].Unsafe {
						continue
					}
					if sh[pa] != 0 || math.Abs(sum(sh)-1) > 1e-9 {
						t.Errorf("budget %g: class %d period %d state %d: shares %v leave unsafe units alone", budget, ci, k+1, s, sh)
					}
					for a, x := range sh {
						mandatory[y] += plan.Expected[ci][k][s] * x * fc.Costs.Action[a][s]
					}
				}
			}
		}
		for y, m := range mandatory {
			if math.Abs(m-plan.Mandatory[y]) > 1e-6*max(1, m) {
				t.Errorf("budget %g, year %d: mandatory spend %g, expected unsafe units give %g", budget, y+1, plan.Mandatory[y], m)
			}
		}
	}
}

// The expected fleet and the work list keep every class's number of
// units in every period.
func TestPlanConservesUnits(t *testing.T) {
	rng := rand.New(rand.NewPCG(87, 88))
	f := smallFleet(rng, 3, 6, 2500)
	plan := solve(t, f, nil)
	for ci, fc := range f.Classes {
		total := sum(fc.Counts)
		for k := range plan.Expected[ci] {
			if got := sum(plan.Expected[ci][k]); math.Abs(got-total) > 1e-9*max(1, total) {
				t.Errorf("class %d period %d: %g expected units, want %g", ci, k+1, got, total)
			}
		}
		units := 0
		for _, row := range plan.First.Units[ci] {
			for _, u := range row {
				units += u
			}
		}
		if float64(units) != total {
			t.Errorf("class %d: %d units in the work list, want %g", ci, units, total)
		}
	}
}

// The Monte-Carlo mean agrees with the expected-count forecast within
// three standard errors (spend per year, units per period, present cost),
// the plan's own forecast is the plan (spend and cost), units are
// conserved in every run, the practice's first period is the work list,
// and the same seed gives the same answer whatever the number of workers.
func TestSimulationAgreesWithForecast(t *testing.T) {
	rng := rand.New(rand.NewPCG(89, 90))
	f := smallFleet(rng, 2, 6, 2200)
	f.Discount = mdptest.Factor(math.Pow(0.95, 0.5), 0.5)
	for _, c := range f.Classes {
		c.Model.PeriodYears = 0.5
	}
	plan := solve(t, f, nil)
	for _, rule := range []Rule{FollowPlan, FollowAdvice} {
		sim, err := Simulate(context.Background(), f, plan, rule, 2000, 7, 2, nil)
		if err != nil {
			t.Fatal(err)
		}
		if q := sim.Cost; math.Abs(q.Mean-sim.ExpectedCost) > 3*q.SE+1e-9 {
			t.Errorf("%s: mean cost %g, expected %g (3 SE = %g)", rule, q.Mean, sim.ExpectedCost, 3*q.SE)
		}
		for y := range f.Budget {
			if q := sim.Spend[y]; math.Abs(q.Mean-sim.ExpectedSpend[y]) > 3*q.SE+1e-9 {
				t.Errorf("%s year %d: mean spend %g, expected %g (3 SE = %g)", rule, y+1, q.Mean, sim.ExpectedSpend[y], 3*q.SE)
			}
			if rule == FollowPlan && math.Abs(sim.ExpectedSpend[y]-plan.Spend[y]) > 1e-6*max(1, plan.Spend[y]) {
				t.Errorf("year %d: forecast of the shares spends %g, the plan %g", y+1, sim.ExpectedSpend[y], plan.Spend[y])
			}
		}
		if rule == FollowPlan && math.Abs(sim.ExpectedCost-plan.Fluid) > 1e-9*plan.Fluid {
			t.Errorf("forecast of the shares costs %.10g, the plan %.10g", sim.ExpectedCost, plan.Fluid)
		}
		for k := range plan.PeriodYear {
			for ci := range f.Classes {
				units := 0.0
				for s, q := range sim.Units[ci][k] {
					units += q.Mean
					// Units act independently, so a count is a sum of
					// independent indicators: its variance is at most its
					// mean, which bounds the standard error when no run
					// saw a rare condition.
					want := sim.ExpectedUnits[ci][k][s]
					if tol := 3 * max(q.SE, math.Sqrt(want/float64(sim.Runs))); math.Abs(q.Mean-want) > tol+1e-9 {
						t.Errorf("%s period %d class %d state %d: mean %g, expected %g (tol %g)", rule, k+1, ci, s, q.Mean, want, tol)
					}
				}
				if total := sum(f.Classes[ci].Counts); math.Abs(units-total) > 1e-9 {
					t.Errorf("period %d class %d: %g units, want %g", k+1, ci, units, total)
				}
			}
		}
	}
	for _, rule := range []Rule{FollowPlan, FollowPractice} {
		a, _ := Simulate(context.Background(), f, plan, rule, 300, 3, 1, nil)
		b, _ := Simulate(context.Background(), f, plan, rule, 300, 3, 4, nil)
		for y := range a.Spend {
			if a.Spend[y] != b.Spend[y] {
				t.Fatalf("%s year %d: 1 worker %+v, 4 workers %+v", rule, y+1, a.Spend[y], b.Spend[y])
			}
		}
	}
}

// The whole-unit list funds mandatory work first and cuts only what the
// limit needs: on random counts and limits, every unsafe unit gets work,
// the spend is at most max(limit, mandatory spend), and it is above that
// target less one unit's saving when anything was cut. With periods of a
// year the practice's first year is the work list in every run.
func TestWorkListFitsLimit(t *testing.T) {
	rng := rand.New(rand.NewPCG(93, 94))
	f := smallFleet(rng, 3, 3, 1500)
	plan := solve(t, f, nil)
	for trial := range 200 {
		counts := make([][]int, len(f.Classes))
		for ci, fc := range f.Classes {
			counts[ci] = make([]int, len(fc.Counts))
			for s := range counts[ci] {
				counts[ci][s] = rng.IntN(25)
			}
		}
		k := rng.IntN(len(plan.PeriodYear))
		limit := 3000 * rng.Float64()
		full := plan.workList(k, counts, math.Inf(1))
		wl := plan.workList(k, counts, limit)
		target := max(limit, wl.Mandatory)
		if wl.Spend > target+1e-9 {
			t.Errorf("trial %d: spend %g above max(limit %g, mandatory %g)", trial, wl.Spend, limit, wl.Mandatory)
		}
		maxSaved := 0.0
		for ci, fc := range f.Classes {
			pa := fc.Model.Passive()
			for s, row := range wl.Units[ci] {
				n := 0
				for a, u := range row {
					n += u
					if u > 0 && a != pa {
						maxSaved = max(maxSaved, fc.Costs.Action[a][s]-fc.Costs.Action[pa][s])
					}
				}
				if n != counts[ci][s] || (fc.Model.States[s].Unsafe && row[pa] != 0) {
					t.Errorf("trial %d: class %d state %d: %v for %d units", trial, ci, s, row, counts[ci][s])
				}
			}
		}
		if full.Spend > target+1e-9 && wl.Spend < target-maxSaved-600 {
			t.Errorf("trial %d: cut to %g, target %g: more than one unit too many", trial, wl.Spend, target)
		}
	}
	sim, err := Simulate(context.Background(), f, plan, FollowPractice, 50, 5, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	if q := sim.Spend[0]; math.Abs(q.P10-plan.First.Spend) > 1e-9 || math.Abs(q.P90-plan.First.Spend) > 1e-9 {
		t.Errorf("practice year 1 spend %+v, work list %g", q, plan.First.Spend)
	}
}

// Solve and Simulate stop on a cancelled context.
func TestCancellation(t *testing.T) {
	rng := rand.New(rand.NewPCG(97, 98))
	f := smallFleet(rng, 2, 4, 1000)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Solve(ctx, f, nil); !errors.Is(err, context.Canceled) {
		t.Errorf("Solve: err = %v, want context.Canceled", err)
	}
	plan := solve(t, f, nil)
	ctx, cancel = context.WithCancel(context.Background())
	defer cancel()
	_, err := Simulate(ctx, f, plan, FollowPractice, 10000, 1, 2, func(done int) {
		if done == 5 {
			cancel()
		}
	})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("Simulate: err = %v, want context.Canceled", err)
	}
}

// A class whose model has another period than the discount is refused, as
// are fractional counts.
func TestSolveRefusesMixedPeriods(t *testing.T) {
	rng := rand.New(rand.NewPCG(99, 100))
	f := smallFleet(rng, 2, 3, 1000)
	f.Classes[1].Model.PeriodYears = 0.5
	if _, err := Solve(context.Background(), f, nil); err == nil || !strings.Contains(err.Error(), "a fleet shares one period") {
		t.Errorf("mixed periods: err = %v", err)
	}
	f.Classes[1].Model.PeriodYears = 1
	f.Classes[0].Counts[0] = 2.5
	if _, err := Solve(context.Background(), f, nil); err == nil || !strings.Contains(err.Error(), "want a whole number") {
		t.Errorf("fractional count: err = %v", err)
	}
}
