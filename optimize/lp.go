package optimize

import (
	"errors"
	"fmt"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"
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

// linearProgram solves p.LP() with gonum's simplex method,
// starting from the basis of the least-immediate-cost policy (its columns
// form the non-singular (I - γ P_π)ᵀ and give a feasible x >= 0), and reads
// the policy off the positive entries.
func linearProgram(p *Problem) ([]int, error) {
	c, a, b := p.LP()
	n := len(p.States)
	start := make([]int, n)
	greedy(p, make([]float64, n), start, make([]float64, n))
	basis := make([]int, n)
	first := 0
	for s, cs := range p.Choices {
		basis[s] = first + p.Find(s, start[s])
		first += len(cs)
	}
	_, x, err := lp.Simplex(c, a, b, 1e-12, basis)
	if err != nil {
		return nil, fmt.Errorf("optimize: simplex: %w", err)
	}
	policy := make([]int, n)
	col := 0
	for s, cs := range p.Choices {
		best := -1.0
		for _, ch := range cs {
			if x[col] > best {
				best, policy[s] = x[col], ch.Action
			}
			col++
		}
	}
	return policy, nil
}
