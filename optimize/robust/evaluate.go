package robust

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"fixpoint/condition"
	"fixpoint/optimize"
)

// Evaluation is the worst case of one fixed policy over the sets.
type Evaluation struct {
	Policy []int
	// WorstCase[s] is a proven upper bound on the worst-case expected
	// discounted cost of Policy from s; Attained[s] <= worst case is its
	// exact cost under Adversary, a matrix inside the sets; Gap is
	// max_s WorstCase[s] - Attained[s].
	WorstCase, Attained []float64
	Adversary           [][]condition.Entry
	Gap                 float64
	// Evaluations counts the linear solves, O(n³) each.
	Evaluations int
}

// Evaluate returns the worst case of policy (an action per state) over
// sets: the value of the adversary's MDP, in which nature picks each row
// from its set to maximise the discounted cost, solved by policy iteration
// for nature until its bounds are within tol (currency units; <= 0 means
// optimize.DefaultTol/8). WorstCase includes a rounding allowance.
func Evaluate(ctx context.Context, p *optimize.Problem, sets *Sets, policy []int, tol float64) (*Evaluation, error) {
	m, err := newModel(p, sets)
	if err != nil {
		return nil, err
	}
	if len(policy) != len(p.States) {
		return nil, fmt.Errorf("robust: policy has %d entries for %d states", len(policy), len(p.States))
	}
	if tol <= 0 {
		tol = optimize.DefaultTol / 8
	}
	m.eps = tol * (1 - m.gamma) / (4 * m.gamma)
	ev, err := m.evaluate(ctx, policy, tol, maxAdversarySteps)
	if err != nil {
		return nil, err
	}
	return &Evaluation{Policy: slices.Clone(policy), WorstCase: ev.upper, Attained: ev.value, Adversary: ev.rows, Gap: ev.gap, Evaluations: m.evaluations}, nil
}

// evaluation is the worst case of one policy: value is the exact cost
// under rows (a matrix inside the sets), upper a proven upper bound on the
// worst case (with the rounding allowance), gap = max(upper - value).
type evaluation struct {
	value, upper []float64
	rows         [][]condition.Entry
	gap          float64
	// done: gap <= the tolerance, or no row of nature improves.
	done bool
}

// maxAdversarySteps caps the adversary's policy iteration; for L1 it ends
// after a few steps, for KL it converges superlinearly.
const maxAdversarySteps = 100

// evaluate solves the adversary's MDP for policy: nature maximises the
// discounted cost over the sets with the policy fixed. Policy iteration
// for nature from the rows in adv: solve the chain of the current rows
// exactly (optimize.Evaluate), which gives w <= v_π (a matrix in the
// sets); bound v_π <= T_π w + γ/(1-γ)·max(T_π w - w) with the upper inner
// values; stop when that is within tol of w or no row improves; otherwise
// switch the rows that improve and repeat, for at most maxSteps solves.
func (m *model) evaluate(ctx context.Context, policy []int, tol float64, maxSteps int) (*evaluation, error) {
	n := len(policy)
	g := m.gamma
	chosen := make([]int, n)
	for s := range n {
		chosen[s] = -1
		for c := m.first[s]; c < m.first[s+1]; c++ {
			if m.action[c] == policy[s] {
				chosen[s] = c
			}
		}
		if chosen[s] < 0 {
			return nil, fmt.Errorf("robust: policy takes action %d, not admissible in state %d", policy[s], s)
		}
	}
	next := make([]float64, len(m.to))
	th := make([]float64, n)
	for step := 1; ; step++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		chain := &optimize.Problem{States: m.p.States, Actions: []string{"nature"}, Discount: g, Choices: make([][]optimize.Choice, n)}
		rows := make([][]condition.Entry, n)
		for s, c := range chosen {
			for i, j := range m.to[m.off[c]:m.off[c+1]] {
				if x := m.adv[m.off[c]+i]; x > 0 {
					rows[s] = append(rows[s], condition.Entry{To: j, P: x})
				}
			}
			chain.Choices[s] = []optimize.Choice{{Action: 0, Cost: m.cost[c], Next: rows[s]}}
		}
		w, err := optimize.Evaluate(chain, make([]int, n))
		m.evaluations++
		if err != nil {
			return nil, err
		}
		scale := 1.0
		for _, x := range w {
			scale = max(scale, math.Abs(x))
		}
		hiD, improve := math.Inf(-1), 0.0
		for s, c := range chosen {
			lo, hi := m.inner(c, w, next[m.off[c]:m.off[c+1]])
			th[s] = m.cost[c] + g*hi
			hiD = max(hiD, th[s]-w[s])
			improve = max(improve, m.cost[c]+g*lo-w[s])
		}
		ev := &evaluation{value: w, upper: make([]float64, n), rows: rows}
		round := m.roundingError(w) / (1 - g)
		for s := range n {
			ev.upper[s] = max(w[s], th[s]+g/(1-g)*hiD) + round
			ev.gap = max(ev.gap, ev.upper[s]-w[s])
		}
		if math.IsNaN(ev.gap) || math.IsInf(ev.gap, 0) {
			return nil, errors.New("robust: policy evaluation gave non-finite values")
		}
		// A row switches when it raises its state's cost by more than
		// minGain; when none does, T_π w - w <= minGain below the rows'
		// lower values, so w is within about minGain/(1-γ) of v_π.
		minGain := max(tol*(1-g)/4, 1e-13*scale)
		if ev.gap <= tol || improve <= minGain {
			ev.done = true
			return ev, nil
		}
		for s, c := range chosen {
			if m.cost[c]+g*dot(m.to[m.off[c]:m.off[c+1]], next[m.off[c]:m.off[c+1]], w) > w[s]+minGain {
				copy(m.adv[m.off[c]:m.off[c+1]], next[m.off[c]:m.off[c+1]])
			}
		}
		if step >= maxSteps {
			return ev, nil
		}
	}
}
