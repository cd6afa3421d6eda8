package fleet

import (
	"math"
	"slices"
	"sort"
)

// largestRemainder rounds non-negative shares to whole numbers summing to
// total (Hamilton's method): floors first, then one more to the largest
// remainders, ties to the lowest index.
func largestRemainder(x []float64, total int) []int {
	out := make([]int, len(x))
	sum := 0.0
	for _, v := range x {
		sum += max(v, 0)
	}
	if total <= 0 || sum <= 0 {
		return out
	}
	type rem struct {
		i int
		r float64
	}
	rems := make([]rem, len(x))
	given := 0
	for i, v := range x {
		exact := max(v, 0) / sum * float64(total)
		out[i] = int(math.Floor(exact))
		given += out[i]
		rems[i] = rem{i, exact - float64(out[i])}
	}
	sort.SliceStable(rems, func(a, b int) bool { return rems[a].r > rems[b].r })
	for k := 0; given < total; k++ {
		out[rems[k%len(rems)].i]++
		given++
	}
	return out
}

// round turns the fluid plan into whole units and evaluates it.
//
// The work list: each year, each class's expected units per condition in
// the fluid plan are rounded to whole units preserving the class total
// (year 1 is the inventory), and the fluid plan's work in each condition
// is rounded within them by largest remainder. If that lifts the year's
// spend above its budget (or above the mandatory work, when that alone
// exceeds it), discretionary work is cut one unit at a time where the
// unconstrained Q-values lose least per unit of spend saved.
//
// Its evaluation: the listed numbers of units get the listed work, applied
// to the expected fleet that this plan itself produces; the rest of a
// condition is left alone (where the passive action is admissible) or
// shares the listed work (where it is not). That gives PlanCost, the
// expected units, the expected spend and the shares used by the
// simulation.
func (plan *Plan) round(classes []*fleetClass, f *Problem) {
	T := len(f.Budget)
	nc := len(classes)
	plan.Work = make([][][][]int, nc)
	plan.Spend = make([]float64, T)
	plan.Mandatory = make([]float64, T)
	for ci, c := range classes {
		plan.Work[ci] = make([][][]int, T)
		total := 0
		for _, x := range c.Counts {
			total += int(math.Round(x))
		}
		for t := range T {
			flow := plan.Flow[ci][t]
			counts := make([]float64, len(flow))
			for st, row := range flow {
				counts[st] = sum(row)
			}
			units := largestRemainder(counts, total)
			if t == 0 {
				for st, x := range c.Counts {
					units[st] = int(math.Round(x))
				}
			}
			plan.Work[ci][t] = make([][]int, len(flow))
			for st, row := range flow {
				shares := slices.Clone(row)
				if sum(shares) <= 0 {
					shares[c.advice.Policy[st]] = 1 // no fluid units here: the advice
				}
				plan.Work[ci][t][st] = largestRemainder(shares, units[st])
				for a, u := range plan.Work[ci][t][st] {
					cost := float64(u) * c.Costs.Action[a][st]
					plan.Spend[t] += cost
					if c.p.Find(st, plan.PassiveActions[ci]) < 0 {
						plan.Mandatory[t] += cost
					}
				}
			}
		}
	}
	for t := range T {
		plan.fitBudget(classes, t, max(f.Budget[t], plan.Mandatory[t]))
	}
	plan.evaluate(classes, f)
}

// evaluate applies the work list's numbers to the expected fleet it
// produces (see round).
func (plan *Plan) evaluate(classes []*fleetClass, f *Problem) {
	T := len(f.Budget)
	nc := len(classes)
	plan.Shares = make([][][][]float64, nc)
	plan.Expected = make([][][]float64, nc)
	plan.ExpectedSpend = make([]float64, T)
	plan.Deferred = make([]int, T)
	plan.UnsafeUnits = make([]float64, T)
	plan.PlanCost = 0
	for ci, c := range classes {
		pa := plan.PassiveActions[ci]
		plan.Shares[ci] = make([][][]float64, T)
		plan.Expected[ci] = make([][]float64, T+1)
		cur := slices.Clone(c.Counts)
		disc := 1.0
		for t := range T {
			plan.Expected[ci][t] = cur
			plan.Shares[ci][t] = make([][]float64, len(cur))
			next := make([]float64, len(cur))
			for st, row := range plan.Work[ci][t] {
				x := make([]float64, len(row))
				passive := pa >= 0 && c.p.Find(st, pa) >= 0
				work := 0.0
				for a, u := range row {
					if !passive || a != pa {
						work += float64(u)
					}
				}
				switch {
				case cur[st] <= 0:
				case work == 0 && passive:
					x[pa] = cur[st]
				case work == 0:
					x[c.advice.Policy[st]] = cur[st]
				case passive && work <= cur[st]:
					for a, u := range row {
						if a != pa {
							x[a] = float64(u)
						}
					}
					x[pa] = cur[st] - work
				default: // scale the listed work to the units there
					for a, u := range row {
						if !passive || a != pa {
							x[a] = float64(u) * cur[st] / work
						}
					}
				}
				shares := make([]float64, len(row))
				for a := range x {
					if cur[st] > 0 {
						shares[a] = x[a] / cur[st]
					}
				}
				if cur[st] <= 0 {
					shares[c.advice.Policy[st]] = 1
				}
				plan.Shares[ci][t][st] = shares
				if pa >= 0 && c.advice.Policy[st] != pa {
					plan.Deferred[t] += row[pa]
				}
				if c.Model.States[st].Unsafe {
					plan.UnsafeUnits[t] += cur[st]
				}
				for a, v := range x {
					if v == 0 {
						continue
					}
					plan.PlanCost += disc * v * (c.running[st] + c.Costs.Action[a][st])
					plan.ExpectedSpend[t] += v * c.Costs.Action[a][st]
					for _, e := range c.p.Choices[st][c.p.Find(st, a)].Next {
						next[e.To] += v * e.P
					}
				}
			}
			cur = next
			disc *= f.Discount.Factor()
		}
		plan.Expected[ci][T] = cur
		for st, v := range cur {
			plan.PlanCost += disc * v * c.advice.Value[st]
		}
	}
}

func sum(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s
}

// fitBudget cuts discretionary work in year t until its spend is within
// limit: the cut moves a unit from its action to the passive one where the
// unconstrained Q-value lost per unit of spend saved is least.
func (plan *Plan) fitBudget(classes []*fleetClass, t int, limit float64) {
	for plan.Spend[t] > limit*(1+1e-12)+1e-9 {
		bestC, bestS, bestA := -1, -1, -1
		bestRatio := math.Inf(1)
		for ci, c := range classes {
			pa := plan.PassiveActions[ci]
			if pa < 0 {
				continue
			}
			for st, row := range plan.Work[ci][t] {
				kp := c.p.Find(st, pa)
				if kp < 0 {
					continue // passive not admissible: mandatory work
				}
				for a, u := range row {
					saved := c.Costs.Action[a][st] - c.Costs.Action[pa][st]
					if u == 0 || a == pa || saved <= 0 {
						continue
					}
					loss := c.advice.Q[st][kp] - c.advice.Q[st][c.p.Find(st, a)]
					if ratio := loss / saved; ratio < bestRatio {
						bestC, bestS, bestA, bestRatio = ci, st, a, ratio
					}
				}
			}
		}
		if bestC < 0 {
			return
		}
		pa := plan.PassiveActions[bestC]
		plan.Work[bestC][t][bestS][bestA]--
		plan.Work[bestC][t][bestS][pa]++
		c := classes[bestC]
		plan.Spend[t] -= c.Costs.Action[bestA][bestS] - c.Costs.Action[pa][bestS]
	}
}
