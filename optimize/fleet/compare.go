package fleet

import "math"

// ChangedYears reports, for every calendar year of two plans of the same
// fleet (at different discount rates, say), whether the plan's policy
// differs in that year: some share of units in some condition given some
// action differs by more than tol in one of the year's periods.
func ChangedYears(a, b *Plan, tol float64) []bool {
	years := len(a.Spend)
	out := make([]bool, years)
	for k, y := range a.PeriodYear {
		if k >= len(b.PeriodYear) || y >= years {
			continue
		}
		for c := range a.Shares {
			for s := range a.Shares[c][k] {
				for act, x := range a.Shares[c][k][s] {
					if math.Abs(x-b.Shares[c][k][s][act]) > tol {
						out[y] = true
					}
				}
			}
		}
	}
	return out
}

// YearDeferred returns, per calendar year, the expected units that the
// unconstrained advice would work on but the plan leaves alone in the
// year's first period (0 in a year that starts no period).
func (p *Plan) YearDeferred() []float64 {
	out := make([]float64, len(p.Spend))
	seen := make([]bool, len(p.Spend))
	for k, y := range p.PeriodYear {
		if y < len(out) && !seen[y] {
			out[y], seen[y] = p.Deferred[k], true
		}
	}
	return out
}

// UsedActions lists, for each condition of class c, the actions
// (ascending) that the plan may take there: those with a share in some
// period, those on the first period's work list and the class's
// unconstrained advice (which values the units after the last period).
func (p *Plan) UsedActions(c int) [][]int {
	n := len(p.Expected[c][0])
	used := make([][]bool, n)
	mark := func(s, a int) {
		for len(used[s]) <= a {
			used[s] = append(used[s], false)
		}
		used[s][a] = true
	}
	for _, period := range p.Shares[c] {
		for s, sh := range period {
			for a, x := range sh {
				if x > 0 {
					mark(s, a)
				}
			}
		}
	}
	if p.First != nil {
		for s, units := range p.First.Units[c] {
			for a, u := range units {
				if u > 0 {
					mark(s, a)
				}
			}
		}
	}
	for s, a := range p.Advice[c].Policy {
		mark(s, a)
	}
	out := make([][]int, n)
	for s, u := range used {
		for a, ok := range u {
			if ok {
				out[s] = append(out[s], a)
			}
		}
	}
	return out
}
