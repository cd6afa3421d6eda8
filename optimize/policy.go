package optimize

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Evaluate returns the expected discounted cost of following policy (an
// action index per state) from every state: the solution of
// (I - γ P_π) v = c_π, by LU factorisation (gonum mat.LU) and one step of
// iterative refinement, O(n³) time and O(n²) memory. I - γ P_π is strictly diagonally dominant for γ < 1, so
// the system is always solvable and well conditioned.
func Evaluate(p *Problem, policy []int) ([]float64, error) {
	n := len(p.States)
	if len(policy) != n {
		return nil, fmt.Errorf("optimize: policy has %d entries for %d states", len(policy), n)
	}
	b := mat.NewVecDense(n, nil)
	for s := range n {
		k := p.Find(s, policy[s])
		if k < 0 {
			return nil, fmt.Errorf("optimize: policy takes action %d, not admissible in state %d", policy[s], s)
		}
		b.SetVec(s, p.Choices[s][k].Cost)
	}
	v, err := SolveRefined(policyMatrix(p, policy, p.Discount), b)
	if err != nil {
		return nil, fmt.Errorf("optimize: policy evaluation: %w", err)
	}
	for s := range n {
		if math.IsNaN(v[s]) || math.IsInf(v[s], 0) {
			return nil, fmt.Errorf("optimize: policy evaluation gave a non-finite value in state %d", s)
		}
	}
	return v, nil
}

// SolveRefined returns the solution x of a·x = b by LU factorisation
// (gonum mat.LU) and one step of iterative refinement,
// x += a⁻¹(b - a·x), in O(n³) time and O(n²) memory. The error is the LU
// solve's (a singular or near-singular a); x is not checked for finite
// entries.
func SolveRefined(a *mat.Dense, b *mat.VecDense) ([]float64, error) {
	var lu mat.LU
	lu.Factorize(a)
	var x, r, dx mat.VecDense
	if err := lu.SolveVecTo(&x, false, b); err != nil {
		return nil, err
	}
	r.MulVec(a, &x)
	r.SubVec(b, &r)
	if err := lu.SolveVecTo(&dx, false, &r); err == nil {
		x.AddVec(&x, &dx)
	}
	return mat.Col(nil, 0, &x), nil
}

// greedy sets policy[s] to the first choice of least Q-value with respect
// to v and tv[s] to that least value, (T v)(s).
func greedy(p *Problem, v []float64, policy []int, tv []float64) {
	for s, cs := range p.Choices {
		best, arg := math.Inf(1), -1
		for _, c := range cs {
			if q := c.Cost + p.Discount*Expect(c.Next, v); q < best {
				best, arg = q, c.Action
			}
		}
		policy[s], tv[s] = arg, best
	}
}

// policyIteration is Howard's policy iteration (Howard 1960; Puterman
// 1994, §6.4): start from the policy of least immediate cost, evaluate it
// exactly, switch every state to an action whose Q-value is lower than the
// current one's by more than the tie tolerance, and stop when no state
// switches. Each step costs one O(n³) evaluation and O(nnz) for the
// improvement; the number of steps is small in practice and finite always.
// capped says that it stopped at MaxIterations with switches pending.
func policyIteration(ctx context.Context, p *Problem, s *Settings) (policy []int, steps int, capped bool, err error) {
	return policyIterationFrom(ctx, p, s, nil)
}

// policyIterationFrom is policyIteration from the given start policy (nil:
// the least-immediate-cost policy).
func policyIterationFrom(ctx context.Context, p *Problem, s *Settings, start []int) ([]int, int, bool, error) {
	n := len(p.States)
	policy := make([]int, n)
	if start != nil {
		copy(policy, start)
	} else {
		greedy(p, make([]float64, n), policy, make([]float64, n))
	}
	for step := 1; ; step++ {
		if err := ctx.Err(); err != nil {
			return nil, step, false, err
		}
		v, err := Evaluate(p, policy)
		if err != nil {
			return nil, step, false, err
		}
		tie := tieTol(p, s, v, 1-p.Discount)
		changed := 0
		// With d = T v - v <= 0 at v = v_π, the bound of Solve gives
		// v_π - v* <= max(-d) / (1-γ).
		worst := 0.0
		for st, cs := range p.Choices {
			cur := p.Find(st, policy[st])
			qCur := cs[cur].Cost + p.Discount*Expect(cs[cur].Next, v)
			best, arg := qCur, policy[st]
			for _, c := range cs {
				if q := c.Cost + p.Discount*Expect(c.Next, v); q < best {
					best, arg = q, c.Action
				}
			}
			worst = max(worst, qCur-best)
			if best < qCur-tie {
				policy[st] = arg
				changed++
			}
		}
		s.progress(PolicyIteration, step, worst/(1-p.Discount))
		if changed == 0 || step >= s.MaxIterations {
			return policy, step, changed > 0, nil
		}
	}
}
