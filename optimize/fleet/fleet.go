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
)

// Class is one class of a fleet: its model, costs and the number of
// units in each condition at the start of the plan (whole numbers).
type Class struct {
	Name   string
	Model  *condition.Model
	Costs  *costs.Schedule
	Counts []float64
}

// Problem is several classes sharing one discount and one period, with a
// budget for work per calendar year.
//
// Calendar convention (costs.Period): period k starts k·Period().Years()
// years after the start of the plan; its work is done and paid at its
// start and is charged to the calendar year in which it starts. With
// periods shorter than a year several periods share one year's budget;
// with periods longer than a year some years start no period, carry no
// work and leave their budget unused.
type Problem struct {
	Classes []Class
	// Discount is the discount of the plan: its factor per period and
	// the period length, which every class's model shares.
	Discount costs.Discount
	// Budget[y] caps the work spend of calendar year y+1 (the action
	// costs of every period starting in it; running costs are not
	// charged to it). len(Budget) is the horizon in years: the plan runs
	// over Periods() periods.
	Budget []float64
}

// Periods returns the number of periods the plan runs over: the periods
// that start within the len(Budget) years, Discount.Period().Count(years).
// The last of them may end after the horizon (a period of 5 years in a
// plan of 6 years starts at year 0 and year 5).
func (f *Problem) Periods() int { return f.Discount.Period().Count(float64(len(f.Budget))) }

// Settings controls Solve.
type Settings struct {
	// Gap is the relative target (Fluid - Lower)/|Fluid| of the final
	// problem; zero means 1e-5.
	Gap float64
	// MaxIterations caps the column-generation rounds of each linear
	// program solved; zero means 500.
	MaxIterations int
}

// Kind says which problem a plan solves.
type Kind int

const (
	// WithinBudget: the least expected present cost with every calendar
	// year's expected work spend within its budget.
	WithinBudget Kind = iota
	// MandatoryFirst: in some years the budget cannot cover the
	// mandatory work; in those years only mandatory work is done, at
	// least cost, and every other year stays within its budget.
	MandatoryFirst
)

// String returns "within_budget" or "mandatory_first".
func (k Kind) String() string {
	if k == MandatoryFirst {
		return "mandatory_first"
	}
	return "within_budget"
}

// Statement is the problem a plan solves, as data, so that every output
// can say it in words next to the bounds. It is the linear program
//
//	minimise   expected present cost of the fleet (expected-count model)
//	subject to expected work spend of year y <= Budget[y]   (y not Short)
//	           in the periods of a Short year, every unit gets an action
//	           of least cost for its condition (the cheapest mandatory
//	           work in unsafe conditions; units in safe conditions left
//	           alone where leaving them costs nothing)
//
// Year y is Short when even the plan that minimises year y's spend,
// keeping the earlier years to these rules, exceeds Budget[y]; Excess[y]
// is by how much (the least excess given the earlier years), found year
// by year before the plan. In the other years Excess[y] is 0.
type Statement struct {
	Kind   Kind
	Short  []bool
	Excess []float64
	// ExcessGap is the largest proven gap (currency units) of the
	// programs that found the excesses.
	ExcessGap float64
}

// WorkList is a whole-unit list of work for one period: Units[c][s][a]
// units of class c in condition s get action a (the passive action
// included, so that each condition's units are all listed).
type WorkList struct {
	Period int
	Units  [][][]int
	// Spend is the list's work spend, Mandatory the part in conditions
	// where the passive action is not admissible (unsafe ones), Limit
	// what the period may spend: the spend never exceeds
	// max(Limit, Mandatory).
	Spend, Mandatory, Limit float64
	// Deferred counts units whose unconstrained advice is work but that
	// the list leaves alone.
	Deferred int
}

// Plan is a multi-year plan of a fleet under yearly budgets.
//
// Conventions: periods k = 0..K-1 (K = Problem.Periods()); the inventory
// gives the counts at the start of period 0; period k's costs are
// discounted by γ^k (γ the factor per period) and its work is charged to
// calendar year PeriodYear[k]; after period K-1 each unit is charged its
// unconstrained optimal value, discounted by γ^K, so that a plan cannot
// gain by running the fleet down at the end.
//
// Beyond the first period the fleet's condition is not known: the plan
// for later periods is a policy (Shares) with its expected counts, not a
// work list. The whole-unit practice of following it is valued by
// Simulate with FollowPractice.
type Plan struct {
	// Statement is the problem solved; Lower <= its optimum <= Fluid
	// are proven bounds on it (Fluid is the cost of the plan found),
	// Gap = (Fluid - Lower)/|Fluid|.
	Statement         Statement
	Lower, Fluid, Gap float64
	// Unconstrained is the optimum without budgets, Σ N·v*: the cost of
	// the budget (and of its rule for mandatory work) is Fluid -
	// Unconstrained, at least Lower - Unconstrained.
	Unconstrained float64
	// Iterations counts the column-generation rounds of all the linear
	// programs solved; Programs counts those programs.
	Iterations, Programs int
	// Period is the period length; PeriodYear[k] is the calendar year
	// (0 = the first) in which period k starts.
	Period     costs.Period
	PeriodYear []int

	// Per calendar year y, len(Budget) entries.
	//
	// Multipliers[y] is the budget price λ_y: present value saved per
	// currency unit of extra budget in year y (0 in a short year and in
	// a year that starts no period, which have no budget row). Spend[y] is the plan's expected work spend in year y
	// (the sum over its periods), Mandatory[y] the part of it in
	// conditions where the passive action is not admissible.
	Multipliers, Spend, Mandatory []float64

	// Per period k.
	//
	// Flow[c][k][s][a] is the expected number of units of class c in
	// condition s given action a in period k; Expected[c][k][s] the
	// expected units at the start of period k (k = 0..K; Expected[c][K]
	// is the fleet after the last period); Shares[c][k][s][a] the share of
	// the units in s given a (the plan's policy: applied to Expected it
	// gives Flow). PeriodSpend[k] is the expected work spend of period
	// k, Deferred[k] the expected units the unconstrained advice would
	// work on that the plan leaves alone, UnsafeUnits[k] the expected
	// units in unsafe conditions.
	Flow                  [][][][]float64
	Expected              [][][]float64
	Shares                [][][][]float64
	PeriodSpend           []float64
	Deferred, UnsafeUnits []float64
	// First is the whole-unit work list of period 0 for the inventory:
	// all mandatory work, other work cut to max(0, year-1 budget less
	// the mandatory work and the plan's spend in year 1's later periods).
	First *WorkList
	// Advice holds each class's unconstrained optimum, PassiveActions[c]
	// the passive action of class c or -1.
	Advice         []*optimize.Result
	PassiveActions []int

	classes    []*fleetClass
	yearBudget []float64
	reserve    []float64
	gamma      float64
	periodsOf  [][]int
	inventory  [][]int
}

// fleetClass is a class prepared for planning.
type fleetClass struct {
	Class
	p       *optimize.Problem
	advice  *optimize.Result
	passive int
	// cost[s][j] is the action cost of choice j in state s, least[s] the
	// least of them; mandatory[s] is true where the passive action is
	// not admissible.
	cost      [][]float64
	least     []float64
	mandatory []bool
	units     []int
}

// prepare validates the fleet and solves each class without budget.
func prepare(ctx context.Context, f *Problem) ([]*fleetClass, error) {
	if len(f.Classes) == 0 || len(f.Budget) == 0 {
		return nil, errors.New("fleet: the fleet needs at least one class and one year")
	}
	if f.Discount.IsZero() {
		return nil, errors.New("fleet: the plan needs a discount")
	}
	var errs []error
	for y, b := range f.Budget {
		if !(b >= 0) || math.IsInf(b, 0) {
			errs = append(errs, fmt.Errorf("fleet: budget of year %d is %v, want a finite number >= 0", y+1, b))
		}
	}
	period := f.Discount.Period().Years()
	classes := make([]*fleetClass, len(f.Classes))
	for i, fc := range f.Classes {
		if fc.Model == nil || fc.Costs == nil {
			errs = append(errs, fmt.Errorf("fleet: class %q has no model or costs", fc.Name))
			continue
		}
		if py := fc.Model.PeriodYears; py > 0 && math.Abs(py-period) > 1e-9*period {
			errs = append(errs, fmt.Errorf("fleet: class %q has periods of %g years, the plan's discount periods of %g years; a fleet shares one period", fc.Name, py, period))
		}
		if len(fc.Counts) != len(fc.Model.States) {
			errs = append(errs, fmt.Errorf("fleet: class %q has %d counts, want one per condition (%d)", fc.Name, len(fc.Counts), len(fc.Model.States)))
			continue
		}
		units := make([]int, len(fc.Counts))
		for s, x := range fc.Counts {
			if !(x >= 0) || math.IsInf(x, 0) || math.Abs(x-math.Round(x)) > 1e-9 {
				errs = append(errs, fmt.Errorf("fleet: class %q: %v units in condition %q, want a whole number >= 0", fc.Name, x, fc.Model.States[s].Name))
			}
			units[s] = int(math.Round(x))
		}
		p, err := optimize.Build(fc.Model, fc.Costs, f.Discount.Factor())
		if err != nil {
			errs = append(errs, fmt.Errorf("fleet: class %q: %w", fc.Name, err))
			continue
		}
		r, err := optimize.Solve(ctx, p, &optimize.Settings{Method: optimize.PolicyIteration})
		if err != nil {
			if ctx.Err() != nil {
				return nil, ctx.Err()
			}
			errs = append(errs, fmt.Errorf("fleet: class %q: %w", fc.Name, err))
			continue
		}
		c := &fleetClass{Class: fc, p: p, advice: r, passive: fc.Model.Passive(), units: units,
			cost: make([][]float64, len(p.States)), least: make([]float64, len(p.States)), mandatory: make([]bool, len(p.States))}
		for st, cs := range p.Choices {
			c.cost[st] = make([]float64, len(cs))
			for k, ch := range cs {
				c.cost[st][k] = fc.Costs.Action[ch.Action][st]
			}
			c.least[st] = slices.Min(c.cost[st])
			c.mandatory[st] = c.passive < 0 || p.Find(st, c.passive) < 0
		}
		classes[i] = c
	}
	if err := errors.Join(errs...); err != nil {
		return nil, err
	}
	return classes, nil
}

// Solve plans the work of a fleet under yearly budgets, with proven
// bounds on the expected-count (fluid) model.
//
// The fluid model is a linear program in the expected numbers of units in
// each condition given each action in each period; the yearly budget rows
// couple the classes. Column generation (Dantzig-Wolfe) solves it: the
// master chooses a mixture of class policies under the year rows (a
// small dense simplex, which gives the budget prices λ_y >= 0), and
// pricing solves, for every class, the finite-horizon problem with stage
// costs γ^k(running + action) + λ_{y(k)}·action by backward induction
// (y(k) the calendar year of period k). Each pricing round gives the
// Lagrangian bound L(λ) = Σ_c min cost_c(λ) - Σ_y λ_y·Limit_y <= LP
// optimum (Geoffrion 1974; Lasdon, Optimization Theory for Large
// Systems, 1970, Ch. 3). It stops when the relative gap is at most Gap.
// One round costs one backward induction per class, O(K·Σ choices).
//
// Mandatory work (conditions where the passive action is not admissible)
// can exceed a budget whatever the plan does. The rule "mandatory work
// first, then the rest within the budget" (other work allowed only up to
// max(0, budget - mandatory spend)) is not convex: with a budget of 10,
// (mandatory 0, other 10) and (20, 0) obey it and their midpoint (10, 5)
// does not, so no linear program states it and no Lagrangian bound holds
// for it. A penalty price on spend above the budget is no better: the
// master then buys discretionary work above the budget, and its bound
// bounds no problem stated in words. Fixing each short year's excess as
// a tight limit (a lexicographic second phase) states it exactly but
// leaves the later programs without interior points: their budget prices
// grow without bound and column generation stalls.
//
// Solve therefore decides first, year by year, which years are short,
// and then solves one linear program whose words are exact (Statement):
// year y is short when even the plan that minimises year y's spend,
// keeping the earlier years to the rule found so far, exceeds the
// budget (a linear program: minimise spend_y); a screening program,
// minimising the total excess of the remaining years, skips the years in
// which no excess is needed. In a short year every unit gets an action
// of least cost for its condition (an open set of actions, not a row);
// every other year keeps its row spend_y <= B_y. The plan found thus
// obeys "mandatory work first, the rest within the budget" exactly: in a
// short year it does mandatory work at least cost and nothing else, and
// the other years stay within budget. The minimiser of each year's
// program obeys the rule up to that year, so the final program is
// feasible. Cost: at most 2Y+1 programs, usually 2.
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
	classes, err := prepare(ctx, f)
	if err != nil {
		return nil, err
	}
	sv := newSolver(f, classes, set)
	short, excess, excessGap, err := sv.excess(ctx)
	if err != nil {
		return nil, err
	}
	st := Statement{Kind: WithinBudget, Short: short, Excess: excess, ExcessGap: excessGap}
	final := &masterSpec{alpha: 1, mode: make([]rowMode, sv.years), limit: slices.Clone(f.Budget)}
	for y := range final.mode {
		switch {
		case short[y]:
			final.mode[y] = leastOnly
			st.Kind = MandatoryFirst
		case len(sv.periodsOf[y]) > 0:
			final.mode[y] = capRow
		}
	}
	res, err := sv.run(ctx, final, func(value, lower float64) bool { return value-lower <= set.Gap*math.Abs(value) })
	if err != nil {
		return nil, err
	}
	plan := sv.assemble(res)
	plan.Statement = st
	plan.Iterations, plan.Programs = sv.rounds, sv.programs
	for i, c := range classes {
		for st, n := range c.Counts {
			plan.Unconstrained += n * c.advice.Value[st]
		}
		plan.Advice = append(plan.Advice, c.advice)
		plan.PassiveActions = append(plan.PassiveActions, c.passive)
		plan.inventory = append(plan.inventory, classes[i].units)
	}
	plan.Fluid = res.value
	plan.Lower = min(res.lower, res.value)
	if res.value != 0 {
		plan.Gap = (plan.Fluid - plan.Lower) / math.Abs(plan.Fluid)
	}
	plan.First = plan.workList(0, plan.inventory, plan.periodLimit(0, 0))
	return plan, nil
}

// assemble turns the final master's mixture into the plan's flows,
// expected counts, shares and yearly figures.
func (sv *solver) assemble(res *lpResult) *Plan {
	K, Y := sv.periods, sv.years
	plan := &Plan{Period: sv.f.Discount.Period(), PeriodYear: sv.yearOf, Multipliers: res.lambda,
		Spend: make([]float64, Y), Mandatory: make([]float64, Y), PeriodSpend: make([]float64, K),
		Deferred: make([]float64, K), UnsafeUnits: make([]float64, K), classes: sv.classes,
		yearBudget: sv.f.Budget, gamma: sv.gamma, periodsOf: sv.periodsOf}
	nc := len(sv.classes)
	plan.Flow = make([][][][]float64, nc)
	plan.Expected = make([][][]float64, nc)
	plan.Shares = make([][][][]float64, nc)
	// weight[c][k][s][a] is the mixture weight of the class's columns
	// choosing a in s at k: the shares where the plan has no units.
	weight := make([][][][]float64, nc)
	for ci, c := range sv.classes {
		n, m := len(c.p.States), len(c.Model.Actions)
		plan.Flow[ci] = grid3(K, n, m)
		weight[ci] = grid3(K, n, m)
		plan.Expected[ci] = make([][]float64, K+1)
		for k := range plan.Expected[ci] {
			plan.Expected[ci][k] = make([]float64, n)
		}
	}
	for i, w := range res.mu {
		if w <= 0 {
			continue
		}
		col := sv.cols[res.idx[i]]
		for k := range K {
			for st, x := range col.counts[k] {
				a := col.policy[k][st]
				plan.Flow[col.class][k][st][a] += w * x
				weight[col.class][k][st][a] += w
			}
		}
		for st, x := range col.counts[K] {
			plan.Expected[col.class][K][st] += w * x
		}
	}
	for ci, c := range sv.classes {
		plan.Shares[ci] = grid3(K, len(c.p.States), len(c.Model.Actions))
		for k := range K {
			y := sv.yearOf[k]
			for st, row := range plan.Flow[ci][k] {
				n := sum(row)
				plan.Expected[ci][k][st] = n
				src := row
				if n <= 1e-12 {
					src, n = weight[ci][k][st], sum(weight[ci][k][st])
				}
				for a, x := range src {
					plan.Shares[ci][k][st][a] = x / n
				}
				if c.Model.States[st].Unsafe {
					plan.UnsafeUnits[k] += plan.Expected[ci][k][st]
				}
				if c.passive >= 0 && !c.mandatory[st] && c.advice.Policy[st] != c.passive {
					plan.Deferred[k] += row[c.passive]
				}
				for a, x := range row {
					sp := x * c.Costs.Action[a][st]
					plan.PeriodSpend[k] += sp
					plan.Spend[y] += sp
					if c.mandatory[st] {
						plan.Mandatory[y] += sp
					}
				}
			}
		}
	}
	// reserve[k]: the plan's expected spend in the later periods of the
	// same year, kept back when a period's whole-unit list is cut.
	plan.reserve = make([]float64, K)
	for k := K - 1; k >= 0; k-- {
		if k+1 < K && sv.yearOf[k+1] == sv.yearOf[k] {
			plan.reserve[k] = plan.reserve[k+1] + plan.PeriodSpend[k+1]
		}
	}
	return plan
}

// periodLimit is what period k may spend on work when spent has already
// been spent in its year: the year's budget less spent and less the
// plan's expected spend in the year's later periods (at least 0).
func (plan *Plan) periodLimit(k int, spent float64) float64 {
	return max(0, plan.yearBudget[plan.PeriodYear[k]]-spent-plan.reserve[k])
}

func grid3(k, n, m int) [][][]float64 {
	g := make([][][]float64, k)
	for t := range g {
		g[t] = make([][]float64, n)
		for s := range g[t] {
			g[t][s] = make([]float64, m)
		}
	}
	return g
}

func sum(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s
}
