package condition

import (
	"errors"
	"fmt"
	"math"
)

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
// with one closed class (zero on transient states). It returns a
// *ClassesError when there are several closed classes.
//
// π is computed on the closed class by the GTH algorithm (W. K.
// Grassmann, M. I. Taksar & D. P. Heyman, Regenerative analysis and
// steady state distributions for Markov chains, Oper. Res. 33, 1985):
// Gaussian elimination in which every pivot is the sum of the remaining
// off-diagonal probabilities of its row, so there is no subtraction and
// every π(s) has full relative accuracy, even for nearly decomposable
// chains (O'Cinneide 1993). Rows are divided by their sums. Cost: O(k³)
// for a class of k states.
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
	p := make([][]float64, k)
	for i, s := range cls {
		p[i] = make([]float64, k)
		sum := rowSum(c.Rows[s])
		for _, e := range c.Rows[s] {
			if j, ok := pos[e.To]; ok && j != i {
				p[i][j] += e.P / sum
			}
		}
	}
	// Censor the chain on {0..n-1} for n = k-1 down to 1.
	for n := k - 1; n >= 1; n-- {
		out := 0.0
		for j := range n {
			out += p[n][j]
		}
		if !(out > 0) {
			return nil, &NumericError{State: cls[n], Problem: "stationary distribution: the probability of moving on underflows float64"}
		}
		for i := range n {
			if p[i][n] == 0 {
				continue
			}
			f := p[i][n] / out
			p[i][n] = f
			for j := range n {
				if j != i {
					p[i][j] += f * p[n][j]
				}
			}
		}
	}
	x := make([]float64, k)
	x[0] = 1
	total := 1.0
	for j := 1; j < k; j++ {
		for i := range j {
			x[j] += x[i] * p[i][j]
		}
		total += x[j]
	}
	if math.IsInf(total, 0) || math.IsNaN(total) {
		return nil, &NumericError{State: -1, Problem: "stationary distribution: the unnormalised weights overflow float64"}
	}
	pi := make([]float64, c.Len())
	for i, s := range cls {
		pi[s] = x[i] / total
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
