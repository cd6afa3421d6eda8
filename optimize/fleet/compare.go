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
