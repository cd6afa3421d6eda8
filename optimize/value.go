package optimize

import (
	"context"
	"math"
)

// valueIteration runs Jacobi value iteration v_{k+1} = T v_k from v_0 = 0
// with MacQueen's bounds (MacQueen 1966; Porteus 1971; Puterman 1994,
// §6.6.3): with d = T v - v,
//
//	T v + γ/(1-γ)·min d  <=  v*  <=  T v + γ/(1-γ)·max d,
//
// and the policy greedy with respect to v loses at most
// γ/(1-γ)·(max d - min d) against the optimum. It stops when that span
// bound is at most Tol/2 (the other half is room for the rounding of the
// final exact evaluation) or after MaxIterations sweeps. One sweep costs
// O(nnz), the number of non-zero transition entries over all choices; ctx
// is checked before each.
//
// It returns the greedy policy of the last iterate and the bounds; capped
// says that it stopped at MaxIterations with the span bound above Tol/2.
func valueIteration(ctx context.Context, p *Problem, s *Settings) (policy []int, lower, upper []float64, sweeps int, capped bool, err error) {
	n := len(p.States)
	g := p.Discount
	v := make([]float64, n)
	tv := make([]float64, n)
	policy = make([]int, n)
	lower, upper = make([]float64, n), make([]float64, n)
	for sweeps = 1; ; sweeps++ {
		if err := ctx.Err(); err != nil {
			return nil, nil, nil, sweeps, false, err
		}
		greedy(p, v, policy, tv)
		lo, hi := math.Inf(1), math.Inf(-1)
		for st := range n {
			d := tv[st] - v[st]
			lo, hi = min(lo, d), max(hi, d)
		}
		gap := g / (1 - g) * (hi - lo)
		if math.IsNaN(gap) || math.IsInf(gap, 0) {
			return nil, nil, nil, sweeps, false, errNonFinite
		}
		s.progress(ValueIteration, sweeps, gap)
		if gap <= s.Tol/2 || sweeps >= s.MaxIterations {
			for st := range n {
				lower[st] = tv[st] + g/(1-g)*lo
				upper[st] = tv[st] + g/(1-g)*hi
			}
			return policy, lower, upper, sweeps, gap > s.Tol/2, nil
		}
		v, tv = tv, v
	}
}
