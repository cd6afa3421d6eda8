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
// can reach a target. Cost: a dense solve in the number of states.
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

	// Hitting probabilities on the states that can reach a target.
	var reach []int
	for s := range n {
		switch {
		case targets[s]:
			out.Probability[s] = 1
		case canReach[s]:
			reach = append(reach, s)
		}
	}
	if len(reach) > 0 {
		r := make([]float64, len(reach))
		for i, s := range reach {
			for _, e := range c.Rows[s] {
				if targets[e.To] {
					r[i] += e.P
				}
			}
		}
		h, err := c.solveTransient(reach, r)
		if err != nil {
			return Passage{}, err
		}
		for i, s := range reach {
			out.Probability[s] = min(1, max(0, h[i]))
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
		t, err := c.solveTransient(finite, ones)
		if err != nil {
			return Passage{}, err
		}
		for i, s := range finite {
			out.Periods[s] = t[i]
		}
	}
	return out, nil
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

// solveTransient solves (I - Q) x = b on the listed states.
func (c Chain) solveTransient(states []int, b []float64) ([]float64, error) {
	var lu mat.LU
	lu.Factorize(c.iMinusQ(states))
	var x mat.VecDense
	if err := lu.SolveVecTo(&x, false, mat.NewVecDense(len(b), b)); err != nil {
		return nil, fmt.Errorf("condition: first-passage system is singular: %w", err)
	}
	return x.RawVector().Data, nil
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

// ClassesError reports a chain whose stationary distribution is not unique
// because it has several closed classes.
type ClassesError struct {
	Classes [][]int
}

func (e *ClassesError) Error() string {
	return fmt.Sprintf("condition: the chain has %d closed classes %v, so its long-run distribution depends on the start", len(e.Classes), e.Classes)
}

// ClosedClasses returns the closed communicating classes of the chain (the
// strongly connected components with no transition out), each in
// increasing state order, sorted by their first state. It requires every
// row to be defined.
func (c Chain) ClosedClasses() ([][]int, error) {
	n := c.Len()
	for s, row := range c.Rows {
		if row == nil {
			return nil, fmt.Errorf("condition: the chain is not defined in state %d", s)
		}
	}
	comp := c.components()
	closed := make(map[int]bool)
	for s := range n {
		closed[comp[s]] = true
	}
	for s, row := range c.Rows {
		for _, e := range row {
			if e.P > 0 && comp[e.To] != comp[s] {
				closed[comp[s]] = false
			}
		}
	}
	byComp := make(map[int][]int)
	var order []int
	for s := range n {
		if closed[comp[s]] {
			if _, ok := byComp[comp[s]]; !ok {
				order = append(order, comp[s])
			}
			byComp[comp[s]] = append(byComp[comp[s]], s)
		}
	}
	classes := make([][]int, len(order))
	for i, k := range order {
		classes[i] = byComp[k]
	}
	return classes, nil
}

// components labels the strongly connected components (Tarjan 1972),
// iteratively to keep deep chains off the goroutine stack.
func (c Chain) components() []int {
	n := c.Len()
	index := make([]int, n)
	low := make([]int, n)
	comp := make([]int, n)
	onStack := make([]bool, n)
	for i := range index {
		index[i] = -1
	}
	var stack []int
	next, label := 0, 0
	type frame struct{ s, edge int }
	for root := range n {
		if index[root] >= 0 {
			continue
		}
		call := []frame{{root, 0}}
		index[root], low[root] = next, next
		next++
		stack = append(stack, root)
		onStack[root] = true
		for len(call) > 0 {
			f := &call[len(call)-1]
			row := c.Rows[f.s]
			if f.edge < len(row) {
				e := row[f.edge]
				f.edge++
				if e.P <= 0 {
					continue
				}
				switch {
				case index[e.To] < 0:
					index[e.To], low[e.To] = next, next
					next++
					stack = append(stack, e.To)
					onStack[e.To] = true
					call = append(call, frame{e.To, 0})
				case onStack[e.To]:
					low[f.s] = min(low[f.s], index[e.To])
				}
				continue
			}
			s := f.s
			call = call[:len(call)-1]
			if len(call) > 0 {
				p := call[len(call)-1].s
				low[p] = min(low[p], low[s])
			}
			if low[s] == index[s] {
				for {
					t := stack[len(stack)-1]
					stack = stack[:len(stack)-1]
					onStack[t] = false
					comp[t] = label
					if t == s {
						break
					}
				}
				label++
			}
		}
	}
	return comp
}

// Stationary returns the unique stationary distribution π = π P of a chain
// with one closed class (zero on transient states), found by solving
// π (I - P) = 0 with Σπ = 1 on the closed class. It returns a
// *ClassesError when there are several closed classes.
func (c Chain) Stationary() ([]float64, error) {
	classes, err := c.ClosedClasses()
	if err != nil {
		return nil, err
	}
	if len(classes) != 1 {
		return nil, &ClassesError{Classes: classes}
	}
	cls := classes[0]
	k := len(cls)
	pos := make(map[int]int, k)
	for i, s := range cls {
		pos[s] = i
	}
	// Rows of the system: (I - P)ᵀ π = 0, with the last equation replaced
	// by Σ π = 1.
	a := mat.NewDense(k, k, nil)
	for i, s := range cls {
		a.Set(i, i, a.At(i, i)+1)
		for _, e := range c.Rows[s] {
			if j, ok := pos[e.To]; ok {
				a.Set(j, i, a.At(j, i)-e.P)
			}
		}
	}
	b := mat.NewVecDense(k, nil)
	for i := range k {
		a.Set(k-1, i, 1)
	}
	b.SetVec(k-1, 1)
	var x mat.VecDense
	if err := x.SolveVec(a, b); err != nil {
		return nil, fmt.Errorf("condition: stationary system: %w", err)
	}
	pi := make([]float64, c.Len())
	for i, s := range cls {
		pi[s] = max(0, x.AtVec(i))
	}
	return pi, nil
}

// MeanFirstPassage returns M[i][j], the expected number of periods to
// reach j from i for i != j, and on the diagonal the mean recurrence time
// 1/π_j (Kemeny & Snell 1960, §4.4). The chain must be irreducible.
func (c Chain) MeanFirstPassage() ([][]float64, error) {
	classes, err := c.ClosedClasses()
	if err != nil {
		return nil, err
	}
	if len(classes) != 1 || len(classes[0]) != c.Len() {
		return nil, errors.New("condition: mean first passage times need an irreducible chain")
	}
	n := c.Len()
	m := make([][]float64, n)
	for i := range m {
		m[i] = make([]float64, n)
	}
	for j := range n {
		targets := make([]bool, n)
		targets[j] = true
		p, err := c.FirstPassage(targets)
		if err != nil {
			return nil, err
		}
		ret := 1.0
		for _, e := range c.Rows[j] {
			ret += e.P * p.Periods[e.To]
		}
		for i := range n {
			m[i][j] = p.Periods[i]
		}
		m[j][j] = ret
	}
	return m, nil
}
