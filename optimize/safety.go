package optimize

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"fixpoint/condition"
)

// UnsafeStay returns, for every unsafe state s of m, the expected number of
// periods a unit found in s spends in unsafe states before it first
// reaches a safe one, under policy (the period in s included): the
// solution t of (I - P_UU) t = 1 over the unsafe states U, the expected
// time to absorption of the chain stopped on leaving U (J. G. Kemeny and
// J. L. Snell, Finite Markov Chains, 1960, §3.3). It is +Inf where the
// policy keeps the unit in unsafe states for ever (an out-of-service
// action), and 0 for safe states. A value above 1 means that under the
// advice an unsafe unit is expected to stay unsafe for more than the
// period in which it is found.
func UnsafeStay(m *condition.Model, policy []int) []float64 {
	n := len(m.States)
	out := make([]float64, n)
	var unsafe []int
	pos := make([]int, n)
	for s, st := range m.States {
		pos[s] = -1
		if st.Unsafe {
			pos[s] = len(unsafe)
			unsafe = append(unsafe, s)
		}
	}
	k := len(unsafe)
	if k == 0 {
		return out
	}
	// Unsafe states from which no safe state is reachable stay unsafe for
	// ever; decide that on the graph, not by a singular solve.
	escapes := make([]bool, n)
	for changed := true; changed; {
		changed = false
		for _, s := range unsafe {
			if escapes[s] {
				continue
			}
			for _, e := range m.Actions[policy[s]].Rows[s] {
				if e.P > 0 && (!m.States[e.To].Unsafe || escapes[e.To]) {
					escapes[s], changed = true, true
					break
				}
			}
		}
	}
	a := mat.NewDense(k, k, nil)
	b := mat.NewVecDense(k, nil)
	for i, s := range unsafe {
		a.Set(i, i, 1)
		b.SetVec(i, 1)
		if !escapes[s] {
			continue
		}
		for _, e := range m.Actions[policy[s]].Rows[s] {
			if j := pos[e.To]; j >= 0 && escapes[e.To] {
				a.Set(i, j, a.At(i, j)-e.P)
			}
		}
	}
	var t mat.VecDense
	err := t.SolveVec(a, b)
	for i, s := range unsafe {
		switch {
		case !escapes[s]:
			out[s] = math.Inf(1)
		case err != nil:
			out[s] = math.NaN()
		default:
			out[s] = t.AtVec(i)
		}
	}
	return out
}

// UnsafeStayWorst is UnsafeStay for advice that may take, in state s, any
// of the actions used[s] (a joint plan of several components, or a budget
// plan, where a unit's action depends on more than its own condition):
// the largest expected stay in unsafe states over every policy that picks
// one of used[s] in each unsafe state s, and such a policy (worst[s]; 0
// where used[s] is empty). It is found by policy iteration on the
// maximal expected time to leave the unsafe states, a positive model
// (M. L. Puterman, Markov Decision Processes, 1994, §7.2.5): each step
// takes in every unsafe state an action that raises 1 + Σ_u P(s,u)·t(u)
// above its value t(s), so the stays only grow and the loop ends. With
// one action per state it equals UnsafeStay of that policy.
func UnsafeStayWorst(m *condition.Model, used [][]int) (stay []float64, worst []int) {
	worst = make([]int, len(m.States))
	for s, as := range used {
		if len(as) > 0 {
			worst[s] = as[0]
		}
	}
	q := func(t []float64, s, a int) float64 {
		x := 1.0
		for _, e := range m.Actions[a].Rows[s] {
			if e.P > 0 && m.States[e.To].Unsafe {
				x += e.P * t[e.To]
			}
		}
		return x
	}
	// Every step changes the policy to a strictly longer stay; the cap
	// only guards against rounding.
	for range 1 + len(m.States)*len(m.Actions) {
		stay = UnsafeStay(m, worst)
		changed := false
		for s, as := range used {
			if !m.States[s].Unsafe {
				continue
			}
			best := q(stay, s, worst[s])
			for _, a := range as {
				if v := q(stay, s, a); v > best*(1+1e-9) {
					worst[s], best, changed = a, v, true
				}
			}
		}
		if !changed {
			break
		}
	}
	return stay, worst
}
