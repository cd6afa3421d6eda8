package fleet

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sync"

	"gonum.org/v1/gonum/stat"

	"fixpoint/condition"
)

// Quantiles summarises a simulated quantity: its mean, the standard error
// of the mean, and the 10th, 50th and 90th percentiles.
type Quantiles struct {
	Mean, SE      float64
	P10, P50, P90 float64
}

// Rule says what a simulated fleet follows.
type Rule int

const (
	// FollowPlan: each period every unit draws its action from the plan's
	// shares for its condition (one multinomial draw per condition), so
	// the simulation's mean is the plan's expected-count forecast.
	FollowPlan Rule = iota
	// FollowPractice: the whole-unit practice. Each period the units
	// found in each condition get the plan's shares rounded to whole
	// units; all mandatory work is done and other work is cut to what is
	// left of the calendar year's budget (less the plan's spend in the
	// year's later periods), as for the first period's work list, which
	// is this rule's first period.
	FollowPractice
	// FollowAdvice: every unit gets its class's unconstrained advice,
	// with no budget.
	FollowAdvice
)

// String returns "plan", "practice" or "advice".
func (r Rule) String() string {
	switch r {
	case FollowPractice:
		return "practice"
	case FollowAdvice:
		return "advice"
	}
	return "plan"
}

// Simulation is a Monte-Carlo of a fleet under a rule.
type Simulation struct {
	Rule Rule
	Runs int
	// Per calendar year y: Spend[y] is the work spend of the periods
	// starting in year y, Total[y] spend plus running costs, OverBudget[y]
	// the share of runs whose spend exceeds the year's budget.
	Spend, Total []Quantiles
	OverBudget   []float64
	// Cost is the present value of a run's costs: work and running costs
	// of period k discounted by γ^k, then each unit's unconstrained
	// optimal value discounted by γ^K (the plan's convention).
	Cost Quantiles
	// Units[c][k][s] are the units of class c in condition s at the start
	// of period k.
	Units [][][]Quantiles
	// The expected-count forecast of the plan's shares (FollowPlan and
	// FollowPractice: the plan itself) or of the advice, for comparison:
	// ExpectedSpend[y], ExpectedUnits[c][k][s], ExpectedCost.
	ExpectedSpend []float64
	ExpectedUnits [][][]float64
	ExpectedCost  float64
}

// runResult is one simulated future.
type runResult struct {
	spend, total []float64
	cost         float64
	units        [][][]int // [c][k][s]
}

// Simulate draws runs futures of the fleet under rule. Groups of units
// move by one multinomial draw of their transition row (conditional
// binomials, not unit by unit). Run r uses its own random stream (seed,
// r), so results do not depend on the number of workers; progress, if
// not nil, is called with the runs done. Cancellation is checked before
// every run.
func Simulate(ctx context.Context, f *Problem, plan *Plan, rule Rule, runs int, seed uint64, workers int, progress func(int)) (*Simulation, error) {
	if plan == nil || plan.classes == nil || len(plan.classes) != len(f.Classes) || len(plan.PeriodYear) != f.Periods() {
		return nil, errors.New("fleet: the plan was not made by Solve for this fleet")
	}
	if runs < 1 {
		return nil, fmt.Errorf("fleet: %d runs, want at least 1", runs)
	}
	if rule < FollowPlan || rule > FollowAdvice {
		return nil, fmt.Errorf("fleet: unknown rule %d", rule)
	}
	out := make([]runResult, runs)
	rows := plan.simRows(rule)
	workers = max(1, workers)
	next := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for r := range next {
				rng := rand.New(rand.NewPCG(seed, uint64(r)+1))
				out[r] = plan.simulateRun(rng, rule, rows)
				if progress != nil {
					mu.Lock()
					done++
					progress(done)
					mu.Unlock()
				}
			}
		}()
	}
	var err error
	for r := range runs {
		if err = ctx.Err(); err != nil {
			break
		}
		next <- r
	}
	close(next)
	wg.Wait()
	if err != nil {
		return nil, err
	}
	Y, K := len(plan.Spend), len(plan.PeriodYear)
	sim := &Simulation{Rule: rule, Runs: runs, Spend: make([]Quantiles, Y), Total: make([]Quantiles, Y),
		OverBudget: make([]float64, Y), Units: make([][][]Quantiles, len(plan.classes))}
	col := make([]float64, runs)
	for y := range Y {
		over := 0
		for r := range runs {
			col[r] = out[r].spend[y]
			if col[r] > plan.yearBudget[y]*(1+1e-12)+1e-9 {
				over++
			}
		}
		sim.Spend[y] = summarise(col)
		sim.OverBudget[y] = float64(over) / float64(runs)
		for r := range runs {
			col[r] = out[r].total[y]
		}
		sim.Total[y] = summarise(col)
	}
	for r := range runs {
		col[r] = out[r].cost
	}
	sim.Cost = summarise(col)
	for ci, c := range plan.classes {
		sim.Units[ci] = make([][]Quantiles, K)
		for k := range K {
			sim.Units[ci][k] = make([]Quantiles, len(c.p.States))
			for s := range c.p.States {
				for r := range runs {
					col[r] = float64(out[r].units[ci][k][s])
				}
				sim.Units[ci][k][s] = summarise(col)
			}
		}
	}
	plan.forecast(sim, rule == FollowAdvice)
	return sim, nil
}

// shares is the plan's shares of class ci in state s at period k, or
// the advice as shares.
func (plan *Plan) shares(ci, k, s int, advice bool) []float64 {
	if !advice {
		return plan.Shares[ci][k][s]
	}
	sh := make([]float64, len(plan.classes[ci].Model.Actions))
	sh[plan.classes[ci].advice.Policy[s]] = 1
	return sh
}

// simRows holds what every run reads: split[c][k][s], the rule's action
// shares as a row for Multinomial (nil for the practice), and
// move[c][s][a], the transition row of action a in s.
type simRows struct {
	split [][][][]condition.Entry
	move  [][][][]condition.Entry
}

func (plan *Plan) simRows(rule Rule) *simRows {
	r := &simRows{split: make([][][][]condition.Entry, len(plan.classes)), move: make([][][][]condition.Entry, len(plan.classes))}
	for ci, c := range plan.classes {
		r.move[ci] = make([][][]condition.Entry, len(c.p.States))
		for s, cs := range c.p.Choices {
			r.move[ci][s] = make([][]condition.Entry, len(c.Model.Actions))
			for _, ch := range cs {
				r.move[ci][s][ch.Action] = ch.Next
			}
		}
		if rule == FollowPractice {
			continue
		}
		r.split[ci] = make([][][]condition.Entry, len(plan.PeriodYear))
		for k := range plan.PeriodYear {
			r.split[ci][k] = make([][]condition.Entry, len(c.p.States))
			for s := range c.p.States {
				r.split[ci][k][s] = shareRow(plan.shares(ci, k, s, rule == FollowAdvice))
			}
		}
	}
	return r
}

// simulateRun draws one future.
func (plan *Plan) simulateRun(rng *rand.Rand, rule Rule, rows *simRows) runResult {
	Y, K := len(plan.Spend), len(plan.PeriodYear)
	res := runResult{spend: make([]float64, Y), total: make([]float64, Y), units: make([][][]int, len(plan.classes))}
	cur := make([][]int, len(plan.classes))
	split := make([][]int, len(plan.classes))
	for ci, c := range plan.classes {
		res.units[ci] = make([][]int, K)
		cur[ci] = slices.Clone(c.units)
		split[ci] = make([]int, len(c.Model.Actions))
	}
	disc := 1.0
	for k := range K {
		y := plan.PeriodYear[k]
		var work [][][]int
		if rule == FollowPractice {
			work = plan.workList(k, cur, plan.periodLimit(k, res.spend[y])).Units
		}
		for ci, c := range plan.classes {
			res.units[ci][k] = cur[ci]
			next := make([]int, len(cur[ci]))
			for s, m := range cur[ci] {
				if m == 0 {
					continue
				}
				row := split[ci]
				if work != nil {
					row = work[ci][s]
				} else {
					clear(row)
					condition.Multinomial(rng, m, rows.split[ci][k][s], row)
				}
				for a, n := range row {
					if n == 0 {
						continue
					}
					cost := c.Costs.Action[a][s]
					res.spend[y] += float64(n) * cost
					res.total[y] += float64(n) * (cost + c.Costs.Running[s])
					res.cost += disc * float64(n) * (cost + c.Costs.Running[s])
					condition.Multinomial(rng, n, rows.move[ci][s][a], next)
				}
			}
			cur[ci] = next
		}
		disc *= plan.gamma
	}
	for ci, c := range plan.classes {
		for s, n := range cur[ci] {
			res.cost += disc * float64(n) * c.advice.Value[s]
		}
	}
	return res
}

// shareRow writes action shares as a row for Multinomial.
func shareRow(sh []float64) []condition.Entry {
	row := make([]condition.Entry, 0, len(sh))
	for a, x := range sh {
		if x > 0 {
			row = append(row, condition.Entry{To: a, P: x})
		}
	}
	return row
}

// forecast fills the expected-count forecast of the plan's shares or of
// the advice.
func (plan *Plan) forecast(sim *Simulation, advice bool) {
	Y, K := len(plan.Spend), len(plan.PeriodYear)
	sim.ExpectedSpend = make([]float64, Y)
	sim.ExpectedUnits = make([][][]float64, len(plan.classes))
	sim.ExpectedCost = 0
	for ci, c := range plan.classes {
		cur := slices.Clone(c.Counts)
		sim.ExpectedUnits[ci] = make([][]float64, K)
		disc := 1.0
		for k := range K {
			sim.ExpectedUnits[ci][k] = cur
			next := make([]float64, len(cur))
			for s, x := range cur {
				for a, sh := range plan.shares(ci, k, s, advice) {
					if sh == 0 || x == 0 {
						continue
					}
					sim.ExpectedSpend[plan.PeriodYear[k]] += x * sh * c.Costs.Action[a][s]
					sim.ExpectedCost += disc * x * sh * (c.Costs.Action[a][s] + c.Costs.Running[s])
					for _, e := range c.p.Choices[s][c.p.Find(s, a)].Next {
						next[e.To] += x * sh * e.P
					}
				}
			}
			cur = next
			disc *= plan.gamma
		}
		for s, x := range cur {
			sim.ExpectedCost += disc * x * c.advice.Value[s]
		}
	}
}

func summarise(xs []float64) Quantiles {
	s := slices.Clone(xs)
	slices.Sort(s)
	q := Quantiles{P10: pct(s, 0.1), P50: pct(s, 0.5), P90: pct(s, 0.9)}
	mean, v := stat.MeanVariance(s, nil)
	q.Mean = mean
	if len(s) > 1 {
		q.SE = math.Sqrt(v / float64(len(s)))
	} else {
		q.Mean = s[0]
	}
	return q
}

// pct is the linear-interpolation percentile of sorted xs.
func pct(xs []float64, p float64) float64 {
	pos := p * float64(len(xs)-1)
	i := int(math.Floor(pos))
	if i+1 >= len(xs) {
		return xs[len(xs)-1]
	}
	return xs[i] + (pos-float64(i))*(xs[i+1]-xs[i])
}
