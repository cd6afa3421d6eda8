package inspect

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"

	"fixpoint/optimize"
)

var errNonFinite = errors.New("inspect: iteration produced a non-finite value")

// Evaluate returns the expected discounted cost of policy (a position in
// Choices[s] per state) from an epoch in every state: the solution of
// (I - M_π) v = c_π by optimize.SolveRefined (LU and one step of
// iterative refinement), O(n³). Every row of M_π sums to at most β < 1, so
// I - M_π is strictly diagonally dominant and the system well posed.
func (p *Problem) Evaluate(policy []int) ([]float64, error) {
	if err := p.checkPolicy(policy); err != nil {
		return nil, err
	}
	n := len(p.States)
	a := mat.NewDense(n, n, nil)
	b := mat.NewVecDense(n, nil)
	for s := range n {
		c := &p.Choices[s][policy[s]]
		b.SetVec(s, c.Cost)
		a.Set(s, s, 1)
		for _, e := range c.Next {
			a.Set(s, e.To, a.At(s, e.To)-e.P)
		}
	}
	v, err := optimize.SolveRefined(a, b)
	if err != nil {
		return nil, fmt.Errorf("inspect: policy evaluation: %w", err)
	}
	for s := range n {
		if math.IsNaN(v[s]) || math.IsInf(v[s], 0) {
			return nil, fmt.Errorf("inspect: policy evaluation gave a non-finite value in state %d", s)
		}
	}
	return v, nil
}

// greedy sets policy[s] to the first decision of least Q-value with
// respect to v and tv[s] to that value, (T v)(s). O(nnz of all kernels).
func greedy(p *Problem, v []float64, policy []int, tv []float64) {
	for s, cs := range p.Choices {
		best, arg := math.Inf(1), -1
		for i := range cs {
			if q := qValue(&cs[i], v); q < best {
				best, arg = q, i
			}
		}
		policy[s], tv[s] = arg, best
	}
}

// valueIteration runs v_{n+1} = T v_n from v_0 = 0 with the Porteus
// bounds of the package comment and stops when their span
// hi·f(hi<0 ? β_lo : β) - lo·f(lo<0 ? β : β_lo) is at most Tol/2 or after
// MaxIterations sweeps. One sweep costs O(nnz), the kernel entries of all
// decisions. It returns the greedy policy of the last iterate and the
// bounds.
func valueIteration(ctx context.Context, p *Problem, s *optimize.Settings) (policy []int, lower, upper []float64, sweeps int, err error) {
	n := len(p.States)
	mod := newModulus(p)
	v, tv := make([]float64, n), make([]float64, n)
	policy = make([]int, n)
	lower, upper = make([]float64, n), make([]float64, n)
	for sweeps = 1; ; sweeps++ {
		if sweeps%64 == 1 {
			if err := ctx.Err(); err != nil {
				return nil, nil, nil, sweeps, err
			}
		}
		greedy(p, v, policy, tv)
		lo, hi := math.Inf(1), math.Inf(-1)
		for st := range n {
			d := tv[st] - v[st]
			lo, hi = min(lo, d), max(hi, d)
		}
		gap := mod.span(lo, hi)
		if math.IsNaN(gap) || math.IsInf(gap, 0) {
			return nil, nil, nil, sweeps, errNonFinite
		}
		progress(s, optimize.ValueIteration, sweeps, gap)
		if gap <= s.Tol/2 || sweeps >= s.MaxIterations {
			for st := range n {
				lower[st] = mod.lower(tv[st], lo)
				upper[st] = mod.upper(tv[st], hi)
			}
			return policy, lower, upper, sweeps, nil
		}
		v, tv = tv, v
	}
}

// policyIteration is Howard's policy iteration carried over to the
// semi-Markov operator (Puterman 1994, §11.3; Tijms 2003, §7.2): start
// from the least immediate cost, evaluate exactly, switch every state to a
// decision whose Q-value is lower than the current one's by more than the
// tie tolerance, stop when none switches. Each step costs one O(n³)
// evaluation and O(nnz) for the improvement.
func policyIteration(ctx context.Context, p *Problem, s *optimize.Settings) ([]int, int, error) {
	n := len(p.States)
	beta := newModulus(p).hi
	policy := make([]int, n)
	greedy(p, make([]float64, n), policy, make([]float64, n))
	for step := 1; ; step++ {
		if err := ctx.Err(); err != nil {
			return nil, step, err
		}
		v, err := p.Evaluate(policy)
		if err != nil {
			return nil, step, err
		}
		tie := tieTol(s, v, beta)
		changed := 0
		// At v = v_π, d = T v - v <= 0 and v_π - v* <= max(-d)/(1-β).
		worst := 0.0
		for st, cs := range p.Choices {
			qCur := qValue(&cs[policy[st]], v)
			best, arg := qCur, policy[st]
			for i := range cs {
				if q := qValue(&cs[i], v); q < best {
					best, arg = q, i
				}
			}
			worst = max(worst, qCur-best)
			if best < qCur-tie {
				policy[st] = arg
				changed++
			}
		}
		progress(s, optimize.PolicyIteration, step, worst/(1-beta))
		if changed == 0 || step >= s.MaxIterations {
			return policy, step, nil
		}
	}
}

// lpForm returns the occupation-measure linear program of p in standard
// form (the semi-Markov form of Puterman 1994, §11.3, of the LP of §6.9;
// from memory):
//
//	minimise   Σ_{s,d} c(s,d) x(s,d)
//	subject to Σ_d x(j,d) - Σ_{s,d} M_d(s,j) x(s,d) = 1/n   for every j,
//	           x >= 0,
//
// one column per choice in state order and then choice order, except that
// a choice with the cost and kernel of an earlier choice of its state is
// left out (gonum's simplex can cycle on identical columns; different
// intervals often give identical decisions, for instance when the action
// leads to a self-announcing failure at once). cols[j] is the position in
// Choices[s] of column j. The optimum is the mean of v* over the states,
// and a basic optimal x has one positive entry per state, at an optimal
// decision.
func lpForm(p *Problem) (c []float64, a *mat.Dense, b []float64, cols []int) {
	n := len(p.States)
	type col struct{ s, i int }
	var keep []col
	for s, cs := range p.Choices {
		for i := range cs {
			if !slices.ContainsFunc(cs[:i], func(d Choice) bool { return sameDecision(&d, &cs[i]) }) {
				keep = append(keep, col{s, i})
			}
		}
	}
	c = make([]float64, len(keep))
	cols = make([]int, len(keep))
	a = mat.NewDense(n, len(keep), nil)
	b = make([]float64, n)
	for j := range b {
		b[j] = 1 / float64(n)
	}
	for j, k := range keep {
		ch := &p.Choices[k.s][k.i]
		c[j], cols[j] = ch.Cost, k.i
		a.Set(k.s, j, 1)
		for _, e := range ch.Next {
			a.Set(e.To, j, a.At(e.To, j)-e.P)
		}
	}
	return c, a, b, cols
}

// sameDecision reports whether two choices have the same cost and kernel.
func sameDecision(x, y *Choice) bool {
	return x.Cost == y.Cost && slices.Equal(x.Next, y.Next)
}

// linearProgram solves lpForm(p) with gonum's simplex method from the basis
// of the least-immediate-cost policy (its columns form the non-singular
// (I - M_π)ᵀ, whose inverse is non-negative, so x >= 0) and reads the
// policy off the largest entry of each state.
func linearProgram(p *Problem) ([]int, error) {
	c, a, b, cols := lpForm(p)
	n := len(p.States)
	start := make([]int, n)
	greedy(p, make([]float64, n), start, make([]float64, n))
	basis := make([]int, n)
	best := make([]float64, n)
	s := -1
	for j, i := range cols {
		if i == 0 {
			s++
		}
		if i == start[s] {
			basis[s] = j
		}
	}
	_, x, err := lp.Simplex(c, a, b, 1e-12, basis)
	if err != nil {
		return nil, fmt.Errorf("inspect: simplex: %w", err)
	}
	policy := make([]int, n)
	s = -1
	for j, i := range cols {
		if i == 0 {
			s++
			best[s] = -1
		}
		if x[j] > best[s] {
			best[s], policy[s] = x[j], i
		}
	}
	return policy, nil
}
