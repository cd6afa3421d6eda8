package fleet

import (
	"cmp"
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

// workList is the whole-unit work of period k for counts[c][s] units: in
// every condition the plan's shares of period k are rounded to whole
// units by largest remainder (so every unit in a condition where the
// passive action is not admissible gets work); then, while the spend is
// above max(limit, mandatory spend), discretionary work is cut, one unit
// moved to the passive action at a time, where the unconstrained
// Q-values lose least per unit of spend saved (ties: lowest class, state,
// action). Mandatory work is thus funded first and the rest only within
// what is left of limit.
func (plan *Plan) workList(k int, counts [][]int, limit float64) *WorkList {
	wl := &WorkList{Period: k, Units: make([][][]int, len(plan.classes)), Limit: limit}
	type cut struct {
		c, s, a      int
		ratio, saved float64
	}
	var cuts []cut
	for ci, c := range plan.classes {
		wl.Units[ci] = make([][]int, len(counts[ci]))
		for st, u := range counts[ci] {
			row := largestRemainder(plan.Shares[ci][k][st], u)
			wl.Units[ci][st] = row
			for a, n := range row {
				if n == 0 {
					continue
				}
				sp := float64(n) * c.Costs.Action[a][st]
				wl.Spend += sp
				if c.mandatory[st] {
					wl.Mandatory += sp
					continue
				}
				saved := c.Costs.Action[a][st] - c.Costs.Action[c.passive][st]
				if a != c.passive && saved > 0 {
					q := c.advice.Q[st]
					loss := q[c.p.Find(st, c.passive)] - q[c.p.Find(st, a)]
					cuts = append(cuts, cut{ci, st, a, loss / saved, saved})
				}
			}
		}
	}
	// Cutting units of one (class, state, action) in turn until enough is
	// saved is the one-at-a-time rule: the ratio of a candidate does not
	// change as its units are cut.
	slices.SortStableFunc(cuts, func(x, y cut) int { return cmp.Compare(x.ratio, y.ratio) })
	target := max(limit, wl.Mandatory)
	for _, ct := range cuts {
		over := wl.Spend - target
		if over <= 1e-12*target+1e-9 {
			break
		}
		row := wl.Units[ct.c][ct.s]
		n := min(row[ct.a], int(math.Ceil(over/ct.saved-1e-9)))
		pa := plan.classes[ct.c].passive
		row[ct.a] -= n
		row[pa] += n
		wl.Spend -= float64(n) * ct.saved
	}
	for ci, c := range plan.classes {
		if c.passive < 0 {
			continue
		}
		for st, row := range wl.Units[ci] {
			if !c.mandatory[st] && c.advice.Policy[st] != c.passive {
				wl.Deferred += row[c.passive]
			}
		}
	}
	return wl
}
