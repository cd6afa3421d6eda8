package optimize

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"fixpoint/optimize/internal/simplex"
)

var errNonFinite = errors.New("optimize: iteration produced a non-finite value")

// LP returns the occupation-measure linear program of p in
// standard form (Puterman 1994, §6.9, the dual of the LP in v):
//
//	minimise   Σ_{s,a} c(s,a) x(s,a)
//	subject to Σ_a x(j,a) - γ Σ_{s,a} P(j|s,a) x(s,a) = 1/n   for every j
//	           x >= 0,
//
// with one column per choice, in state order and then choice order. Its
// optimum equals the mean of v* over the states; a basic optimal x has one
// positive entry per state, at an optimal action.
func (p *Problem) LP() (c []float64, a *mat.Dense, b []float64) {
	n := len(p.States)
	cols := 0
	for _, cs := range p.Choices {
		cols += len(cs)
	}
	c = make([]float64, 0, cols)
	a = mat.NewDense(n, cols, nil)
	b = make([]float64, n)
	for j := range b {
		b[j] = 1 / float64(n)
	}
	col := 0
	for s, cs := range p.Choices {
		for _, ch := range cs {
			c = append(c, ch.Cost)
			a.Set(s, col, 1)
			for _, e := range ch.Next {
				a.Set(e.To, col, a.At(e.To, col)-p.Discount*e.P)
			}
			col++
		}
	}
	return c, a, b
}

// linearProgram solves p.LP() with the dense simplex method of
// optimize/internal/simplex (Dantzig's rule, Bland's rule after a run of
// degenerate pivots, so that it cannot cycle), starting from the basis of
// the least-immediate-cost policy: its columns form the non-singular
// (I - γ P_π)ᵀ and give a feasible x >= 0. Every basic feasible solution
// of this LP is a deterministic policy with x(s, π(s)) >= 1/n > 0
// (Puterman 1994, Thm 6.9.4), so pivots are never degenerate in exact
// arithmetic; tied actions (equal columns) show as zero reduced costs,
// which the simplex's cost tolerance keeps from trading places. The policy
// is read off the largest entry of each state. MaxIterations caps the
// pivots (zero: simplex.DefaultMaxPivots); at the cap the last basis is
// returned with capped set. One pivot costs O(n·(N + n)) for N choices.
func linearProgram(ctx context.Context, p *Problem, s *Settings) (policy []int, pivots int, capped bool, err error) {
	c, a, b := p.LP()
	n := len(p.States)
	start := make([]int, n)
	greedy(p, make([]float64, n), start, make([]float64, n))
	basis := make([]int, n)
	first := 0
	for st, cs := range p.Choices {
		basis[st] = first + p.Find(st, start[st])
		first += len(cs)
	}
	rows := make([][]float64, n)
	for i := range rows {
		rows[i] = a.RawRowView(i)
	}
	set := &simplex.Settings{Basis: basis}
	if s.MaxIterations > 0 {
		set.MaxPivots = s.MaxIterations
	}
	r, err := simplex.Solve(ctx, c, rows, b, set)
	if err != nil {
		if ctx.Err() != nil {
			return nil, 0, false, ctx.Err()
		}
		return nil, 0, false, fmt.Errorf("optimize: linear program: %w", err)
	}
	policy = make([]int, n)
	col := 0
	for st, cs := range p.Choices {
		best := -1.0
		for _, ch := range cs {
			if r.X[col] > best {
				best, policy[st] = r.X[col], ch.Action
			}
			col++
		}
	}
	s.progress(LinearProgram, r.Pivots, math.Inf(1))
	return policy, r.Pivots, r.Status == simplex.PivotLimit, nil
}
