package fleet

import (
	"context"
	"fmt"
	"math"
	"slices"

	"fixpoint/optimize"
	"fixpoint/optimize/internal/simplex"
)

// solver holds what the linear programs of one plan share: the prepared
// classes, the calendar and the pool of columns (any column is a plan of
// its class, so every program may use every column found so far).
type solver struct {
	f       *Problem
	classes []*fleetClass
	set     Settings
	periods int
	years   int
	gamma   float64
	// yearOf[k] is the calendar year of period k; periodsOf[y] the
	// periods starting in year y.
	yearOf    []int
	periodsOf [][]int
	cols      []*column
	// scale is a typical yearly spend: absolute tolerances of the
	// excess programs are relative to it.
	scale            float64
	rounds, programs int
}

// column is one class policy over the periods with its flows.
type column struct {
	class  int
	policy [][]int // [k][s]
	cost   float64
	yspend []float64   // work spend per calendar year
	counts [][]float64 // [k][s], k = 0..K (K is after the last period)
}

func newSolver(f *Problem, classes []*fleetClass, set Settings) *solver {
	K, Y := f.Periods(), len(f.Budget)
	per := f.Discount.Period()
	sv := &solver{f: f, classes: classes, set: set, periods: K, years: Y, gamma: f.Discount.Factor(),
		yearOf: make([]int, K), periodsOf: make([][]int, Y)}
	for k := range K {
		y := min(per.Year(k), Y-1)
		sv.yearOf[k] = y
		sv.periodsOf[y] = append(sv.periodsOf[y], k)
	}
	zero := make([]float64, K)
	// spend[i][y]: the yearly spend of the advice (i = 0) and of the
	// least-spend policy (i = 1) over the fleet.
	spend := [2][]float64{make([]float64, Y), make([]float64, Y)}
	for ci, c := range classes {
		// The unconstrained advice, and the least-spend policy, so that
		// the master always has a way to save money.
		for i, col := range []*column{sv.column(ci, sv.price(c, 1, zero, nil)), sv.column(ci, c.leastSpend(K))} {
			sv.cols = append(sv.cols, col)
			for y, x := range col.yspend {
				spend[i][y] += x
			}
		}
	}
	sv.scale = max(1, slices.Max(f.Budget), slices.Max(spend[0]), slices.Max(spend[1]))
	return sv
}

// price solves the class's finite-horizon problem with stage cost
// alpha·γ^k(running + action) + pi[k]·action in period k and terminal
// cost alpha·γ^K·v* by backward induction, and returns the policy per
// period; in periods with least[k] only the actions of least cost in
// each state are open. Ties go to the lowest action index.
func (sv *solver) price(c *fleetClass, alpha float64, pi []float64, least []bool) [][]int {
	K := sv.periods
	n := len(c.p.States)
	w := make([]float64, n)
	gk := alpha * math.Pow(sv.gamma, float64(K))
	for st := range n {
		w[st] = gk * c.advice.Value[st]
	}
	next := make([]float64, n)
	pol := make([][]int, K)
	for k := K - 1; k >= 0; k-- {
		disc := alpha * math.Pow(sv.gamma, float64(k))
		pol[k] = make([]int, n)
		for st, cs := range c.p.Choices {
			best, found := 0.0, false
			for j, ch := range cs {
				if least != nil && least[k] && c.cost[st][j] > c.least[st] {
					continue
				}
				q := disc*(c.Costs.Running[st]+c.cost[st][j]) + pi[k]*c.cost[st][j] + optimize.Expect(ch.Next, w)
				if !found || q < best-1e-12*math.Abs(best) {
					best, pol[k][st], found = q, ch.Action, true
				}
			}
			next[st] = best
		}
		w, next = next, w
	}
	return pol
}

// leastSpend is the policy of least action spend in every state and
// period, ties to the lowest action index.
func (c *fleetClass) leastSpend(K int) [][]int {
	pol := make([][]int, K)
	for k := range pol {
		pol[k] = make([]int, len(c.p.States))
		for st, cs := range c.p.Choices {
			pol[k][st] = cs[slices.Index(c.cost[st], c.least[st])].Action
		}
	}
	return pol
}

// column follows the class's units under pol and returns their flows,
// discounted cost (with the terminal value) and work spend per year.
func (sv *solver) column(ci int, pol [][]int) *column {
	c := sv.classes[ci]
	K := sv.periods
	n := len(c.p.States)
	col := &column{class: ci, policy: pol, yspend: make([]float64, sv.years), counts: make([][]float64, K+1)}
	cur := slices.Clone(c.Counts)
	disc := 1.0
	for k := range K {
		col.counts[k] = cur
		next := make([]float64, n)
		for st, x := range cur {
			if x == 0 {
				continue
			}
			j := c.p.Find(st, pol[k][st])
			col.yspend[sv.yearOf[k]] += x * c.cost[st][j]
			col.cost += disc * x * (c.Costs.Running[st] + c.cost[st][j])
			for _, e := range c.p.Choices[st][j].Next {
				next[e.To] += x * e.P
			}
		}
		cur = next
		disc *= sv.gamma
	}
	col.counts[K] = cur
	for st, x := range cur {
		col.cost += disc * x * c.advice.Value[st]
	}
	return col
}

func (sv *solver) has(col *column) bool {
	for _, c := range sv.cols {
		if c.class == col.class && slices.EqualFunc(c.policy, col.policy, slices.Equal) {
			return true
		}
	}
	return false
}

// rowMode says how a calendar year enters a master program.
type rowMode uint8

const (
	noRow     rowMode = iota // the year is not constrained
	capRow                   // spend_y <= limit_y
	excessRow                // spend_y - e_y <= limit_y, e_y >= 0 costs 1 per unit
	leastOnly                // no row: only actions of least cost (columns restricted)
)

// masterSpec is one linear program over mixtures of columns: minimise
// Σ_j (alpha·cost_j + Σ_y weight_y·spend_jy)·μ_j + Σ_y e_y subject to one
// convex combination per class and the year rows of mode; columns that
// take an action above the least cost on units in a leastOnly year are
// left out.
type masterSpec struct {
	alpha  float64
	weight []float64
	mode   []rowMode
	limit  []float64
}

// objective is the master's cost of a column.
func (m *masterSpec) objective(col *column) float64 {
	v := m.alpha * col.cost
	for y, w := range m.weight {
		v += w * col.yspend[y]
	}
	return v
}

// allowed reports whether col takes only least-cost actions on the units
// it has in the periods of leastOnly years.
func (sv *solver) allowed(m *masterSpec, col *column) bool {
	c := sv.classes[col.class]
	for k, y := range sv.yearOf {
		if m.mode[y] != leastOnly {
			continue
		}
		for st, x := range col.counts[k] {
			if x > 0 && c.cost[st][c.p.Find(st, col.policy[k][st])] > c.least[st] {
				return false
			}
		}
	}
	return true
}

// lpResult is the end of one column-generation run: the weights μ of the
// columns sv.cols[idx[i]], the master's value (achieved), the best
// Lagrangian bound, the year prices and the excesses of the mixture.
type lpResult struct {
	idx            []int
	mu             []float64
	value, lower   float64
	lambda, excess []float64
}

// run solves the program m by column generation until done(value,
// lower), no column prices out, or the round cap. The Lagrangian bound
// of a round is Σ_c min_x [objective_c(x) + Σ_y λ_y spend_cy(x)] -
// Σ_y λ_y limit_y over the class plans x open in m, with λ_y in [0, ∞)
// on cap rows and [0, 1] on excess rows (on which the bound would
// otherwise be -∞).
func (sv *solver) run(ctx context.Context, m *masterSpec, done func(value, lower float64) bool) (*lpResult, error) {
	sv.programs++
	res := &lpResult{lower: math.Inf(-1)}
	pi := make([]float64, sv.periods)
	least := make([]bool, sv.periods)
	for k, y := range sv.yearOf {
		least[k] = m.mode[y] == leastOnly
	}
	var idx []int
	var cols []*column
	seen := 0
	for it := 1; ; it++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		for ; seen < len(sv.cols); seen++ {
			if sv.allowed(m, sv.cols[seen]) {
				idx, cols = append(idx, seen), append(cols, sv.cols[seen])
			}
		}
		mu, value, classDual, lambda, excess, err := solveMaster(ctx, cols, len(sv.classes), m)
		if err != nil {
			return nil, err
		}
		res.idx, res.mu, res.value, res.lambda, res.excess = slices.Clone(idx), mu, value, lambda, excess
		bound := 0.0
		for y, l := range lambda {
			bound -= l * m.limit[y]
		}
		for k, y := range sv.yearOf {
			pi[k] = lambda[y]
			if m.weight != nil {
				pi[k] += m.weight[y]
			}
		}
		added := 0
		for ci, c := range sv.classes {
			col := sv.column(ci, sv.price(c, m.alpha, pi, least))
			priced := m.objective(col)
			for y, sp := range col.yspend {
				priced += lambda[y] * sp
			}
			bound += priced
			if priced-classDual[ci] < -1e-9*max(1, math.Abs(priced)) && !sv.has(col) {
				sv.cols = append(sv.cols, col)
				added++
			}
		}
		res.lower = max(res.lower, bound)
		sv.rounds++
		if added == 0 || done(value, res.lower) || it >= sv.set.MaxIterations {
			return res, nil
		}
	}
}

// excess finds the short years year by year (see Solve): it returns
// short[y], the least excess E_y of each short year, and the largest
// proven gap of the programs that found them.
func (sv *solver) excess(ctx context.Context) (short []bool, excess []float64, gap float64, err error) {
	Y := sv.years
	short, excess = make([]bool, Y), make([]float64, Y)
	// zero: an excess this small is simplex rounding; tol: the proven
	// accuracy asked of these programs.
	zero, tol := 1e-10*sv.scale, 1e-9*sv.scale
	// spec keeps the years before from to the rule found so far; years
	// from..to-1 get mode m; later years are free.
	spec := func(from, to int, m rowMode) *masterSpec {
		s := &masterSpec{mode: make([]rowMode, Y), limit: slices.Clone(sv.f.Budget), weight: make([]float64, Y)}
		for t := range Y {
			switch {
			case len(sv.periodsOf[t]) == 0 || t >= to:
			case t < from && short[t]:
				s.mode[t] = leastOnly
			case t < from:
				s.mode[t] = capRow
			default:
				s.mode[t] = m
			}
		}
		return s
	}
	for y := 0; y < Y; {
		// Screening: the least total excess of years y.. given the
		// rule for the earlier years; the years it leaves within
		// budget are not short.
		scr, err := sv.run(ctx, spec(y, Y, excessRow), func(v, l float64) bool { return v <= zero || v-l <= tol })
		if err != nil {
			return nil, nil, 0, err
		}
		if scr.value <= zero {
			break
		}
		for y < Y && scr.excess[y] <= zero {
			y++
		}
		if y == Y {
			break
		}
		// Year y: the least spend of year y given the earlier years.
		m := spec(y, y+1, noRow)
		m.weight[y] = 1
		step, err := sv.run(ctx, m, func(v, l float64) bool { return v-l <= tol })
		if err != nil {
			return nil, nil, 0, err
		}
		if e := step.value - sv.f.Budget[y]; e > zero {
			short[y], excess[y] = true, e
			gap = max(gap, step.value-step.lower)
		}
		y++
	}
	return short, excess, gap, nil
}

// solveMaster solves the restricted master m over cols. It returns the
// column weights μ, the optimum, the duals of the class rows, the year
// prices λ_y (0 for years without a row) and the excesses e_y.
func solveMaster(ctx context.Context, cols []*column, nClasses int, m *masterSpec) (mu []float64, value float64, classDual, lambda, excess []float64, err error) {
	Y := len(m.mode)
	rowOf := make([]int, Y)
	rows, extra := nClasses, 0
	for y, md := range m.mode {
		rowOf[y] = -1
		if md == capRow || md == excessRow {
			rowOf[y] = rows
			rows++
			extra++
			if md == excessRow {
				extra++
			}
		}
	}
	nv := len(cols) + extra
	a := make([][]float64, rows)
	for i := range a {
		a[i] = make([]float64, nv)
	}
	c := make([]float64, nv)
	b := make([]float64, rows)
	for j, col := range cols {
		c[j] = m.objective(col)
		a[col.class][j] = 1
		for y, sp := range col.yspend {
			if r := rowOf[y]; r >= 0 {
				a[r][j] = sp
			}
		}
	}
	for ci := range nClasses {
		b[ci] = 1
	}
	ev := make([]int, Y)
	v := len(cols)
	for y, r := range rowOf {
		ev[y] = -1
		if r < 0 {
			continue
		}
		b[r] = m.limit[y]
		a[r][v] = 1 // slack
		v++
		if m.mode[y] == excessRow {
			a[r][v], c[v], ev[y] = -1, 1, v
			v++
		}
	}
	x, obj, dual, err := simplex.Dense(ctx, c, a, b)
	if err != nil {
		return nil, 0, nil, nil, nil, fmt.Errorf("fleet: plan master: %w", err)
	}
	lambda, excess = make([]float64, Y), make([]float64, Y)
	for y, r := range rowOf {
		if r < 0 {
			continue
		}
		lambda[y] = max(0, -dual[r])
		if ev[y] >= 0 {
			lambda[y] = min(1, lambda[y])
			excess[y] = x[ev[y]]
		}
	}
	return x[:len(cols)], obj, dual[:nClasses], lambda, excess, nil
}
