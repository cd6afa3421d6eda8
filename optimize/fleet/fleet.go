package fleet

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/simplex"
)

// Class is one class of a fleet: its model, costs and the number of
// units in each condition in year 1.
type Class struct {
	Name   string
	Model  *condition.Model
	Costs  *costs.Schedule
	Counts []float64
}

// Problem is several classes sharing one discount factor, one period (a
// plan year) and an annual budget for work.
type Problem struct {
	Classes []Class
	// Discount is the discount of the plan: its factor per period and
	// the period length.
	Discount costs.Discount
	// Budget[t] caps the action spend of year t+1; len(Budget) is the
	// horizon T.
	Budget []float64
}

// Settings controls Solve.
type Settings struct {
	// Gap is the relative target (fluid cost - lower bound)/fluid cost;
	// zero means 1e-5.
	Gap float64
	// MaxIterations caps the column-generation rounds; zero means 500.
	MaxIterations int
}

// Plan is a budget-constrained multi-year plan of a fleet.
//
// Conventions: years t = 1..T; the inventory gives the counts of year 1;
// the work of year t costs its action costs (charged to the budget of year
// t) and the units' running costs (not charged to the budget); year-t
// costs are discounted by γ^(t-1); after year T each unit is charged its
// unconstrained optimal value, discounted by γ^T.
type Plan struct {
	// Lower is the best Lagrangian bound found: no plan of the
	// expected-count model costs less. Fluid is the cost of the best
	// expected-count plan found (a mixture of class policies), Gap =
	// (Fluid - Lower)/Fluid.
	Lower, Fluid, Gap float64
	// Unconstrained is the optimal cost without the budget: Σ N·v*.
	Unconstrained float64
	Iterations    int
	// Multipliers are the budget prices λ_t at the end (present value
	// saved per currency unit of extra budget in year t).
	Multipliers []float64
	// Shortfall[t] is mandatory work (in unsafe states) beyond the
	// budget of year t+1.
	Shortfall []float64
	// Flow[c][t][s][a] is the expected number of units of class c in
	// condition s given action a in year t+1 by the fluid plan.
	Flow [][][][]float64
	// Advice holds each class's unconstrained optimum.
	Advice []*optimize.Result
	// Work[c][t][s][a] is the whole-unit work list: units of class c in
	// condition s given action a in year t+1 (year 1 exact, later years
	// applied to the expected fleet). Spend[t] is its action spend, never
	// above the budget unless the whole-unit plan's mandatory work alone
	// (Mandatory[t], work in unsafe states) exceeds it.
	Work      [][][][]int
	Spend     []float64
	Mandatory []float64
	// Shares[c][t][s][a] are the whole-unit plan's shares of action a
	// among the units in s; PlanCost is the expected cost of following
	// them from the inventory, Expected[c][t][s] the expected units and
	// ExpectedSpend[t] the expected action spend (it may differ from Spend
	// by rounding).
	Shares        [][][][]float64
	PlanCost      float64
	Expected      [][][]float64
	ExpectedSpend []float64
	// Deferred[t] counts units whose unconstrained advice is work but that
	// the plan leaves alone in year t+1; UnsafeUnits[t] the expected units
	// in unsafe states.
	Deferred    []int
	UnsafeUnits []float64
	// PassiveActions[c] is the passive action of class c, or -1.
	PassiveActions []int
}

// fleetClass is a class prepared for planning.
type fleetClass struct {
	Class
	p       *optimize.Problem
	advice  *optimize.Result
	running []float64
	// choices[s] lists (action, action cost) of the admissible actions.
	spend [][]float64
}

// column is one class policy over the horizon with its flows.
type column struct {
	class  int
	policy [][]int // [t][s]
	cost   float64
	spend  []float64
	counts [][]float64 // [t][s], t = 0..T (T is after the horizon)
}

// Solve plans the work of a fleet under annual budgets, with proven
// bounds on the expected-count (fluid) model. The fluid model is a linear
// program; its budget rows couple the classes. Column generation
// (Dantzig-Wolfe) solves it: the master chooses a mixture of class
// policies under the budgets (a small dense simplex, which gives the budget
// prices λ), and pricing solves, for every class, the finite-horizon
// problem with stage costs γ^(t-1)(running + action) + λ_t·action by
// backward induction. Each pricing round gives the Lagrangian bound
// L(λ) = Σ_c min cost_c(λ) - Σ_t λ_t B_t <= LP optimum (Geoffrion 1974;
// Lasdon, Optimization Theory for Large Systems, 1970, Ch. 3). It stops
// when the relative gap is at most Gap. Mandatory work (unsafe states
// admit no passive action) beyond a budget is paid as a shortfall at a
// penalty price, so it is funded first and reported.
func Solve(ctx context.Context, f *Problem, s *Settings) (*Plan, error) {
	var set Settings
	if s != nil {
		set = *s
	}
	if set.Gap <= 0 {
		set.Gap = 1e-5
	}
	if set.MaxIterations <= 0 {
		set.MaxIterations = 500
	}
	if len(f.Classes) == 0 || len(f.Budget) == 0 {
		return nil, errors.New("fleet: the fleet needs at least one class and one year")
	}
	if f.Discount.IsZero() {
		return nil, errors.New("fleet: the plan needs a discount")
	}
	for t, b := range f.Budget {
		if !(b >= 0) || math.IsInf(b, 0) {
			return nil, fmt.Errorf("fleet: budget of year %d is %v, want a finite number >= 0", t+1, b)
		}
	}
	classes := make([]*fleetClass, len(f.Classes))
	plan := &Plan{}
	for i, fc := range f.Classes {
		p, err := optimize.Build(fc.Model, fc.Costs, f.Discount.Factor())
		if err != nil {
			return nil, fmt.Errorf("fleet: class %q: %w", fc.Name, err)
		}
		r, err := optimize.Solve(ctx, p, &optimize.Settings{Method: optimize.PolicyIteration})
		if err != nil {
			return nil, fmt.Errorf("fleet: class %q: %w", fc.Name, err)
		}
		c := &fleetClass{Class: fc, p: p, advice: r, running: fc.Costs.Running, spend: make([][]float64, len(p.States))}
		for st, cs := range p.Choices {
			c.spend[st] = make([]float64, len(cs))
			for k, ch := range cs {
				c.spend[st][k] = fc.Costs.Action[ch.Action][st]
			}
		}
		classes[i] = c
		plan.Advice = append(plan.Advice, r)
		plan.PassiveActions = append(plan.PassiveActions, fc.Model.Passive())
		for st, n := range fc.Counts {
			plan.Unconstrained += n * r.Value[st]
		}
	}
	T := len(f.Budget)
	penalty := shortfallPrice(classes)
	var cols []*column
	for ci, c := range classes {
		zero := make([]float64, T)
		cols = append(cols, c.column(ci, c.price(f.Discount.Factor(), zero), f.Discount.Factor(), T))
		// A cheap column: the least-spend policy, so the master always has
		// a way to save money.
		cols = append(cols, c.column(ci, c.leastSpend(T), f.Discount.Factor(), T))
	}
	lower := math.Inf(-1)
	var (
		mu     []float64
		master float64
		lambda []float64
	)
	for it := 1; ; it++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		var duals []float64
		var short float64
		var err error
		mu, master, duals, short, err = solveMaster(cols, len(classes), f.Budget, penalty)
		if err != nil {
			return nil, err
		}
		lambda = make([]float64, T)
		for t := range T {
			lambda[t] = min(penalty, max(0, -duals[len(classes)+t]))
		}
		bound := 0.0
		for t, b := range f.Budget {
			bound -= lambda[t] * b
		}
		added := 0
		for ci, c := range classes {
			pol := c.price(f.Discount.Factor(), lambda)
			col := c.column(ci, pol, f.Discount.Factor(), T)
			priced := col.cost
			for t, sp := range col.spend {
				priced += lambda[t] * sp
			}
			bound += priced
			if priced-duals[ci] < -1e-9*max(1, math.Abs(priced)) && !hasColumn(cols, col) {
				cols = append(cols, col)
				added++
			}
		}
		lower = max(lower, bound)
		plan.Iterations = it
		// The gap is measured on the cost without the shortfall penalty,
		// which both bounds carry.
		if added == 0 || master-lower <= set.Gap*math.Abs(master-penalty*short) || it >= set.MaxIterations {
			break
		}
	}
	plan.Multipliers = lambda
	plan.Shortfall = make([]float64, T)
	spend := make([]float64, T)
	plan.Flow = make([][][][]float64, len(classes))
	for ci, c := range classes {
		plan.Flow[ci] = make([][][]float64, T)
		for t := range T {
			plan.Flow[ci][t] = make([][]float64, len(c.p.States))
			for st := range c.p.States {
				plan.Flow[ci][t][st] = make([]float64, len(c.p.Actions))
			}
		}
	}
	fluid := 0.0
	// Columns priced after the last master solve have no weight yet.
	for k, w := range mu {
		col := cols[k]
		if w <= 0 {
			continue
		}
		fluid += w * col.cost
		for t := range T {
			spend[t] += w * col.spend[t]
			for st, n := range col.counts[t] {
				plan.Flow[col.class][t][st][col.policy[t][st]] += w * n
			}
		}
	}
	for t := range T {
		plan.Shortfall[t] = max(0, spend[t]-f.Budget[t])
		if plan.Shortfall[t] < 1e-9*max(1, f.Budget[t]) {
			plan.Shortfall[t] = 0
		}
	}
	short := 0.0
	for _, x := range plan.Shortfall {
		short += x
	}
	plan.Fluid = fluid
	plan.Lower = min(lower-penalty*short, fluid)
	if fluid != 0 {
		plan.Gap = (fluid - plan.Lower) / math.Abs(fluid)
	}
	plan.round(classes, f)
	return plan, nil
}

// shortfallPrice is the price of a unit of budget shortfall: far above
// what any discretionary work can save per unit of spend, so that the
// master pays it only for mandatory work.
func shortfallPrice(classes []*fleetClass) float64 {
	span, cheapest := 1.0, math.Inf(1)
	for _, c := range classes {
		span = max(span, slices.Max(c.advice.Value)-slices.Min(c.advice.Value))
		for _, row := range c.spend {
			for _, k := range row {
				if k > 0 {
					cheapest = min(cheapest, k)
				}
			}
		}
	}
	if math.IsInf(cheapest, 1) {
		cheapest = 1
	}
	return 1e3 * (1 + span/cheapest)
}

// price solves the class's finite-horizon problem with budget prices
// lambda by backward induction and returns the policy per year. Ties go to
// the lowest action index.
func (c *fleetClass) price(gamma float64, lambda []float64) [][]int {
	T := len(lambda)
	n := len(c.p.States)
	w := make([]float64, n)
	gt := math.Pow(gamma, float64(T))
	for st := range n {
		w[st] = gt * c.advice.Value[st]
	}
	next := make([]float64, n)
	pol := make([][]int, T)
	for t := T - 1; t >= 0; t-- {
		disc := math.Pow(gamma, float64(t))
		pol[t] = make([]int, n)
		for st, cs := range c.p.Choices {
			var best float64
			for k, ch := range cs {
				q := disc*(c.running[st]+c.spend[st][k]) + lambda[t]*c.spend[st][k] + optimize.Expect(ch.Next, w)
				if k == 0 || q < best-1e-12*math.Abs(best) {
					best, pol[t][st] = q, ch.Action
				}
			}
			next[st] = best
		}
		w, next = next, w
	}
	return pol
}

// leastSpend is the policy of least action spend in every state and year.
func (c *fleetClass) leastSpend(T int) [][]int {
	pol := make([][]int, T)
	for t := range pol {
		pol[t] = make([]int, len(c.p.States))
		for st, cs := range c.p.Choices {
			k := 0
			for j := range cs {
				if c.spend[st][j] < c.spend[st][k] {
					k = j
				}
			}
			pol[t][st] = cs[k].Action
		}
	}
	return pol
}

// column follows the class's units under pol and returns their flows,
// discounted cost (with the terminal value) and action spend per year.
func (c *fleetClass) column(ci int, pol [][]int, gamma float64, T int) *column {
	n := len(c.p.States)
	col := &column{class: ci, policy: pol, spend: make([]float64, T), counts: make([][]float64, T+1)}
	cur := slices.Clone(c.Counts)
	disc := 1.0
	for t := range T {
		col.counts[t] = cur
		next := make([]float64, n)
		for st, x := range cur {
			if x == 0 {
				continue
			}
			k := c.p.Find(st, pol[t][st])
			col.spend[t] += x * c.spend[st][k]
			col.cost += disc * x * (c.running[st] + c.spend[st][k])
			for _, e := range c.p.Choices[st][k].Next {
				next[e.To] += x * e.P
			}
		}
		cur = next
		disc *= gamma
	}
	col.counts[T] = cur
	for st, x := range cur {
		col.cost += disc * x * c.advice.Value[st]
	}
	return col
}

func hasColumn(cols []*column, col *column) bool {
	for _, c := range cols {
		if c.class != col.class {
			continue
		}
		same := true
		for t := range c.policy {
			if !slices.Equal(c.policy[t], col.policy[t]) {
				same = false
				break
			}
		}
		if same {
			return true
		}
	}
	return false
}

// solveMaster solves the restricted master: choose weights μ of the
// columns, one convex combination per class, with Σ spend·μ + slack -
// shortfall = budget in every year; shortfall costs penalty per unit. It
// returns μ, the optimum, the duals (classes first, then years) and the
// total shortfall.
func solveMaster(cols []*column, nClasses int, budget []float64, penalty float64) ([]float64, float64, []float64, float64, error) {
	T := len(budget)
	nv := len(cols) + 2*T
	m := nClasses + T
	a := make([][]float64, m)
	for i := range a {
		a[i] = make([]float64, nv)
	}
	c := make([]float64, nv)
	b := make([]float64, m)
	for k, col := range cols {
		c[k] = col.cost
		a[col.class][k] = 1
		for t, sp := range col.spend {
			a[nClasses+t][k] = sp
		}
	}
	for t := range T {
		a[nClasses+t][len(cols)+t] = 1    // slack
		a[nClasses+t][len(cols)+T+t] = -1 // shortfall
		c[len(cols)+T+t] = penalty
		b[nClasses+t] = budget[t]
	}
	for ci := range nClasses {
		b[ci] = 1
	}
	x, obj, y, err := simplex.Dense(context.TODO(), c, a, b)
	if err != nil {
		return nil, 0, nil, 0, fmt.Errorf("fleet: plan master: %w", err)
	}
	short := 0.0
	for _, z := range x[len(cols)+T:] {
		short += z
	}
	return x[:len(cols)], obj, y, short, nil
}
