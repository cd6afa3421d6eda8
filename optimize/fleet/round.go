package fleet

import (
	"cmp"
	"math"
	"slices"
)

// largestRemainder rounds non-negative shares to whole numbers summing to
// total (Hamilton's method) into out: floors first, then one more to the
// largest remainders, ties to the lowest index. It allocates nothing: the
// extra units (fewer than len(x)) are placed by repeated selection.
func largestRemainder(x []float64, total int, out []int) {
	clear(out)
	sum := 0.0
	for _, v := range x {
		sum += max(v, 0)
	}
	if total <= 0 || sum <= 0 {
		return
	}
	given := 0
	for i, v := range x {
		out[i] = int(math.Floor(max(v, 0) / sum * float64(total)))
		given += out[i]
	}
	// bumped marks (as a bit set, len(x) <= 64 in practice; longer rows
	// fall back to a slice) the indices already given one more.
	var small uint64
	var big []bool
	if len(x) > 64 {
		big = make([]bool, len(x))
	}
	isBumped := func(i int) bool {
		if big != nil {
			return big[i]
		}
		return small&(1<<uint(i)) != 0
	}
	for given < total {
		best, bestR := -1, math.Inf(-1)
		for i, v := range x {
			if isBumped(i) {
				continue
			}
			exact := max(v, 0) / sum * float64(total)
			if r := exact - math.Floor(exact); r > bestR {
				best, bestR = i, r
			}
		}
		if best < 0 { // every index bumped once: start again
			small, big = 0, nil
			if len(x) > 64 {
				big = make([]bool, len(x))
			}
			continue
		}
		if big != nil {
			big[best] = true
		} else {
			small |= 1 << uint(best)
		}
		out[best]++
		given++
	}
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
	size := 0
	for ci, c := range plan.classes {
		size += len(counts[ci]) * len(c.Model.Actions)
	}
	flat := make([]int, size)
	type cut struct {
		c, s, a      int
		ratio, saved float64
	}
	var cuts []cut
	for ci, c := range plan.classes {
		wl.Units[ci] = make([][]int, len(counts[ci]))
		m := len(c.Model.Actions)
		for st, u := range counts[ci] {
			row := flat[:m:m]
			flat = flat[m:]
			largestRemainder(plan.Shares[ci][k][st], u, row)
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
