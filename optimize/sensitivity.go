package optimize

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Pair names one (state, action) cost of a problem.
type Pair struct{ State, Action int }

// CostRange is how far a group of costs can move together, by the same
// amount t, before the advice changes anywhere. Lower <= 0 <= Upper
// (±Inf when unlimited). Beyond Upper, the advice in UpperState becomes
// UpperAction; beyond Lower, LowerState takes LowerAction (-1 when
// unlimited).
type CostRange struct {
	Lower, Upper            float64
	LowerState, LowerAction int
	UpperState, UpperAction int
}

// CostRanges returns, for each group of pairs, the range of a common
// change t of their costs over which r's policy stays optimal. With the
// policy fixed, values move linearly, v(t) = v + t·w with
// w = (I - γP_π)⁻¹ e_π, so each reduced cost δ(s,b) = Q(s,b) - v(s) moves
// linearly too, with slope e(s,b) + γ P_b w - w(s); the range is the
// ratio test of linear-programming ranging (Puterman 1994, §6.9; any LP
// sensitivity text). Exact up to rounding; one LU, then per group one
// O(n²) solve and an O(nnz) scan, with ctx checked before each group.
func CostRanges(ctx context.Context, p *Problem, r *Result, groups [][]Pair) ([]CostRange, error) {
	n := len(p.States)
	var lu mat.LU
	lu.Factorize(policyMatrix(p, r.Policy, p.Discount))
	out := make([]CostRange, len(groups))
	for gi, group := range groups {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		in := make(map[Pair]bool, len(group))
		for _, pr := range group {
			if p.Find(pr.State, pr.Action) < 0 {
				return nil, fmt.Errorf("optimize: cost group %d: action %d is not admissible in state %d", gi, pr.Action, pr.State)
			}
			in[pr] = true
		}
		e := mat.NewVecDense(n, nil)
		for s := range n {
			if in[Pair{s, r.Policy[s]}] {
				e.SetVec(s, 1)
			}
		}
		var wv mat.VecDense
		if err := lu.SolveVecTo(&wv, false, e); err != nil {
			return nil, fmt.Errorf("optimize: cost ranging: %w", err)
		}
		w := wv.RawVector().Data
		cr := CostRange{Lower: math.Inf(-1), Upper: math.Inf(1), LowerState: -1, LowerAction: -1, UpperState: -1, UpperAction: -1}
		for s, cs := range p.Choices {
			k0 := p.Find(s, r.Policy[s])
			for k, c := range cs {
				if k == k0 {
					continue
				}
				slope := p.Discount*Expect(c.Next, w) - w[s]
				if in[Pair{s, c.Action}] {
					slope++
				}
				delta := max(0, r.Q[s][k]-r.Q[s][k0])
				switch {
				case slope < 0 && delta/-slope < cr.Upper:
					cr.Upper, cr.UpperState, cr.UpperAction = delta/-slope, s, c.Action
				case slope > 0 && -delta/slope > cr.Lower:
					cr.Lower, cr.LowerState, cr.LowerAction = -delta/slope, s, c.Action
				}
			}
		}
		out[gi] = cr
	}
	return out, nil
}

// policyMatrix returns I - gP_π.
func policyMatrix(p *Problem, policy []int, g float64) *mat.Dense {
	n := len(p.States)
	a := mat.NewDense(n, n, nil)
	for s := range n {
		a.Set(s, s, 1)
		for _, e := range p.Choices[s][p.Find(s, policy[s])].Next {
			a.Set(s, e.To, a.At(s, e.To)-g*e.P)
		}
	}
	return a
}
