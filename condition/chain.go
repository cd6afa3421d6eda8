package condition

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// Chain is a Markov chain on the states of a scale: Rows[s] is the
// distribution of the next state from s. A nil row means the chain is not
// defined in s (for example, the passive action is not admissible there):
// a unit that enters s leaves the chain.
type Chain struct {
	Rows [][]Entry
}

// PassiveChain is the chain of a unit that is always left as it is: the
// passive action's rows, nil where it is not admissible or where there is
// no passive action.
func (m *Model) PassiveChain() Chain {
	rows := make([][]Entry, len(m.States))
	if a := m.Passive(); a >= 0 {
		for s := range rows {
			if m.Actions[a].Admissible(s) && !m.States[s].Unsafe {
				rows[s] = m.Actions[a].Rows[s]
			}
		}
	}
	return Chain{Rows: rows}
}

// PolicyChain is the chain of a unit that follows policy, an action index
// per state.
func (m *Model) PolicyChain(policy []int) Chain {
	rows := make([][]Entry, len(m.States))
	for s, a := range policy {
		rows[s] = m.Actions[a].Rows[s]
	}
	return Chain{Rows: rows}
}

// Len returns the number of states.
func (c Chain) Len() int { return len(c.Rows) }

// Passage holds first-passage figures of a chain to a set of target states.
type Passage struct {
	// Periods[s] is the expected number of periods until the chain is first
	// in a target state, starting from s: 0 in a target; +Inf when, with
	// positive probability, the target is never reached; NaN when, with
	// positive probability, the unit leaves the chain (meets a nil row)
	// before the target, so the figure is not defined.
	Periods []float64
	// Probability[s] is the probability of ever reaching a target from s
	// without leaving the chain.
	Probability []float64
}

// FirstPassage computes expected first-passage times and hitting
// probabilities to the targets by the absorbing-chain method: the targets
// are made absorbing, and with Q the transitions among the remaining
// states of finite passage time, t = N·1 with the fundamental matrix
// N = (I - Q)⁻¹ (Kemeny & Snell 1960, Thm 3.3.5; Grinstead & Snell 1997,
// §11.2). Hitting probabilities solve (I - Q_R) h = r on the states that
// can reach a target.
//
// Which states reach a target, never reach it, or may leave the chain is
// decided on the graph of positive entries, not by arithmetic, so a
// probability of 1e-17 counts as a path. The systems are solved by
// SolveTransient (state reduction without subtraction), which keeps full
// relative accuracy however small the exit probabilities. Cost: O(m³) for
// m non-target states.
//
// A figure that float64 cannot hold (a passage time beyond its range) is
// NaN in the result, and the error, a *NumericError, names the first such
// state; the other figures are still filled in.
func (c Chain) FirstPassage(targets []bool) (Passage, error) {
	n := c.Len()
	if len(targets) != n {
		return Passage{}, fmt.Errorf("condition: %d target flags for %d states", len(targets), n)
	}
	out := Passage{Periods: make([]float64, n), Probability: make([]float64, n)}
	// Classify non-target states.
	canReach := c.backward(func(s int) bool { return targets[s] }, func(int) bool { return true })
	exits := func(s int) bool { return !targets[s] && c.Rows[s] == nil }
	undefined := c.backward(exits, func(s int) bool { return !targets[s] })
	never := c.backward(func(s int) bool { return !targets[s] && !canReach[s] }, func(s int) bool { return !targets[s] })

	var errs []error
	// Hitting probabilities on the states that can reach a target; a nil
	// row on the way is an exit.
	var reach []int
	for s := range n {
		switch {
		case targets[s]:
			out.Probability[s] = 1
		case canReach[s] && c.Rows[s] != nil:
			reach = append(reach, s)
		}
	}
	if len(reach) > 0 {
		r := make([]float64, len(reach))
		for i, s := range reach {
			sum := rowSum(c.Rows[s])
			for _, e := range c.Rows[s] {
				if targets[e.To] {
					r[i] += e.P / sum
				}
			}
		}
		h, err := c.SolveTransient(reach, r)
		if err != nil {
			errs = append(errs, fmt.Errorf("condition: hitting probabilities: %w", err))
		}
		for i, s := range reach {
			out.Probability[s] = math.NaN()
			if h != nil {
				out.Probability[s] = min(1, max(0, h[i]))
			}
		}
	}

	// Expected times on the states that reach a target almost surely.
	var finite []int
	for s := range n {
		switch {
		case targets[s]:
		case undefined[s]:
			out.Periods[s] = math.NaN()
		case never[s]:
			out.Periods[s] = math.Inf(1)
		default:
			finite = append(finite, s)
		}
	}
	if len(finite) > 0 {
		ones := make([]float64, len(finite))
		for i := range ones {
			ones[i] = 1
		}
		t, err := c.SolveTransient(finite, ones)
		for i, s := range finite {
			out.Periods[s] = math.NaN()
			if t != nil && !math.IsInf(t[i], 0) {
				out.Periods[s] = t[i]
			} else if t != nil && err == nil {
				err = &NumericError{State: s, Problem: "the expected first-passage time is beyond the range of float64"}
			}
		}
		if err != nil {
			errs = append(errs, fmt.Errorf("condition: first-passage times: %w", err))
		}
	}
	return out, errors.Join(errs...)
}

// backward returns the states from which a state in from can be reached
// along positive-probability transitions, moving only through states where
// through holds (from states count as reached).
func (c Chain) backward(from, through func(int) bool) []bool {
	n := c.Len()
	pred := make([][]int, n)
	for s, row := range c.Rows {
		for _, e := range row {
			if e.P > 0 {
				pred[e.To] = append(pred[e.To], s)
			}
		}
	}
	seen := make([]bool, n)
	var stack []int
	for s := range n {
		if from(s) {
			seen[s] = true
			stack = append(stack, s)
		}
	}
	for len(stack) > 0 {
		j := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		for _, s := range pred[j] {
			if !seen[s] && through(s) {
				seen[s] = true
				stack = append(stack, s)
			}
		}
	}
	return seen
}

// Fundamental returns N = (I - Q)⁻¹ where Q holds the transition
// probabilities among the listed transient states, in the order given.
// N[i][j] is the expected number of periods spent in transient[j] before
// absorption, starting from transient[i]. It fails when I - Q is singular
// (some of the states never leave the set).
func (c Chain) Fundamental(transient []int) (*mat.Dense, error) {
	a := c.iMinusQ(transient)
	var n mat.Dense
	if err := n.Inverse(a); err != nil {
		return nil, fmt.Errorf("condition: I - Q is singular: some transient states never leave the set: %w", err)
	}
	return &n, nil
}

// Absorption returns B = N R, where R holds the transition probabilities
// from the transient states to the absorbing ones: B[i][k] is the
// probability that the chain started in transient[i] is absorbed in
// absorbing[k].
func (c Chain) Absorption(transient, absorbing []int) (*mat.Dense, error) {
	n, err := c.Fundamental(transient)
	if err != nil {
		return nil, err
	}
	r := mat.NewDense(len(transient), len(absorbing), nil)
	for i, s := range transient {
		for _, e := range c.Rows[s] {
			if k := slices.Index(absorbing, e.To); k >= 0 {
				r.Set(i, k, r.At(i, k)+e.P)
			}
		}
	}
	var b mat.Dense
	b.Mul(n, r)
	return &b, nil
}

func (c Chain) iMinusQ(states []int) *mat.Dense {
	pos := make(map[int]int, len(states))
	for i, s := range states {
		pos[s] = i
	}
	a := mat.NewDense(len(states), len(states), nil)
	for i, s := range states {
		a.Set(i, i, 1)
		for _, e := range c.Rows[s] {
			if j, ok := pos[e.To]; ok {
				a.Set(i, j, a.At(i, j)-e.P)
			}
		}
	}
	return a
}

// NumericError reports a chain figure that float64 arithmetic cannot
// deliver: State is the state concerned, or -1.
type NumericError struct {
	State   int
	Problem string
}

func (e *NumericError) Error() string {
	if e.State >= 0 {
		return fmt.Sprintf("state %d: %s", e.State, e.Problem)
	}
	return e.Problem
}

// SolveTransient solves (I - Q) x = b, where Q holds the transitions among
// the listed states (rows divided by their sums, so that a row summing to
// 1 ± RowTolerance is taken as a distribution), by state reduction in the
// manner of Grassmann, Taksar & Heyman (Oper. Res. 33, 1985) and Heyman &
// Reeves (ORSA J. Comput. 1, 1989): the states are eliminated one by one,
// and the pivot of each, 1 - Q(k,k) of the censored chain, is computed as
// the sum of its exit and off-diagonal probabilities instead of by a
// subtraction from 1. No subtraction occurs at all when b >= 0, so every
// x(s) then has full relative accuracy (O'Cinneide, Numer. Math. 65,
// 1993), however close to 1 a staying probability is: a state that leaves
// with probability 1e-17 has an expected stay of 1e17 periods, not a
// singular system.
//
// Every listed state must have a row, and every state must be able to leave
// the set along positive entries; otherwise the error says which cannot.
// A pivot that underflows to zero is a *NumericError. Cost: O(m³) time and
// O(m²) memory for m states, less for banded chains (zeros are skipped).
func (c Chain) SolveTransient(states []int, b []float64) ([]float64, error) {
	m := len(states)
	if len(b) != m {
		return nil, fmt.Errorf("condition: %d right-hand sides for %d states", len(b), m)
	}
	pos := make(map[int]int, m)
	for i, s := range states {
		if s < 0 || s >= c.Len() || c.Rows[s] == nil {
			return nil, fmt.Errorf("condition: state %d has no row", s)
		}
		pos[s] = i
	}
	in := func(s int) bool { _, ok := pos[s]; return ok }
	leaves := c.backward(func(s int) bool { return !in(s) }, in)
	for _, s := range states {
		if !leaves[s] {
			return nil, &NumericError{State: s, Problem: "never leaves the set of states solved for: I - Q is singular"}
		}
	}
	a := make([][]float64, m) // off-diagonal Q, self-loops dropped
	exit := make([]float64, m)
	for i, s := range states {
		a[i] = make([]float64, m)
		sum := rowSum(c.Rows[s])
		for _, e := range c.Rows[s] {
			switch j, ok := pos[e.To]; {
			case !ok:
				exit[i] += e.P / sum
			case j != i:
				a[i][j] += e.P / sum
			}
		}
	}
	x := slices.Clone(b)
	pivot := make([]float64, m)
	for k := range m {
		d := exit[k]
		for j := k + 1; j < m; j++ {
			d += a[k][j]
		}
		if !(d > 0) {
			return nil, &NumericError{State: states[k], Problem: "the probability of leaving underflows float64"}
		}
		pivot[k] = d
		for i := k + 1; i < m; i++ {
			f := a[i][k]
			if f == 0 {
				continue
			}
			f /= d
			ri, rk := a[i], a[k]
			for j := k + 1; j < m; j++ {
				if j != i {
					ri[j] += f * rk[j]
				}
			}
			exit[i] += f * exit[k]
			x[i] += f * x[k]
		}
	}
	for k := m - 1; k >= 0; k-- {
		sum := x[k]
		for j := k + 1; j < m; j++ {
			sum += a[k][j] * x[j]
		}
		x[k] = sum / pivot[k]
	}
	return x, nil
}

// rowSum returns the sum of a row's probabilities (1 for an empty row, so
// that it divides harmlessly).
func rowSum(row []Entry) float64 {
	sum := 0.0
	for _, e := range row {
		sum += e.P
	}
	if !(sum > 0) {
		return 1
	}
	return sum
}

// Survival returns S[s][k], the probability that a chain started in s has
// not reached a target by period k (k = 0..periods), nor left the chain:
// S[·][k] = Q^k·1 with Q the transitions among non-target states. S[s][0]
// is 0 for a target state and 1 otherwise.
func (c Chain) Survival(targets []bool, periods int) [][]float64 {
	n := c.Len()
	s := make([][]float64, n)
	cur, next := c.alive(targets), make([]float64, n)
	for i := range n {
		s[i] = make([]float64, periods+1)
		s[i][0] = cur[i]
	}
	for k := 1; k <= periods; k++ {
		c.survivalStep(targets, cur, next)
		cur, next = next, cur
		for i := range n {
			s[i][k] = cur[i]
		}
	}
	return s
}

// alive is the survival vector at period 0: 1 outside the targets.
func (c Chain) alive(targets []bool) []float64 {
	v := make([]float64, c.Len())
	for i := range v {
		if !targets[i] {
			v[i] = 1
		}
	}
	return v
}

// survivalStep sets next = Q cur, with Q the transitions among non-target
// states.
func (c Chain) survivalStep(targets []bool, cur, next []float64) {
	for i := range next {
		next[i] = 0
		if targets[i] {
			continue
		}
		for _, e := range c.Rows[i] {
			next[i] += e.P * cur[e.To]
		}
	}
}

// SurvivalHorizon returns the first period k <= limit at which the
// survival probability S[s][k] of Survival is at most level for every
// start s, or limit when it stays above.
func (c Chain) SurvivalHorizon(targets []bool, level float64, limit int) int {
	cur, next := c.alive(targets), make([]float64, c.Len())
	for k := 0; k < limit; k++ {
		if slices.Max(cur) <= level {
			return k
		}
		c.survivalStep(targets, cur, next)
		cur, next = next, cur
	}
	return limit
}
