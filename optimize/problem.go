package optimize

import (
	"errors"
	"fmt"
	"math"

	"fixpoint/condition"
)

// Choice is one admissible action of a state: its expected one-period cost
// and the distribution of the next state.
type Choice struct {
	Action int
	Cost   float64
	Next   []condition.Entry
}

// Problem is a finite discounted-cost Markov decision process.
//
// Choices[s] lists the admissible actions of state s in increasing action
// index; the value of a policy pi is the unique solution of
// v = c_pi + Discount * P_pi v.
type Problem struct {
	States  []string
	Actions []string
	Choices [][]Choice
	// Discount is the discount factor per period, in (0, 1). The average
	// cost criterion ignores it.
	Discount float64
}

// ProblemError is one fault of a Problem. State and Action are indices, or
// -1 when not applicable.
type ProblemError struct {
	State   int
	Action  int
	Problem string
}

func (e *ProblemError) Error() string {
	switch {
	case e.State >= 0 && e.Action >= 0:
		return fmt.Sprintf("optimize: state %d, action %d: %s", e.State, e.Action, e.Problem)
	case e.State >= 0:
		return fmt.Sprintf("optimize: state %d: %s", e.State, e.Problem)
	}
	return "optimize: " + e.Problem
}

// Validate reports every fault of the problem, joined by errors.Join; each
// is a *ProblemError. It checks names against sizes, that every state has
// at least one choice with a valid, strictly increasing action index, that
// costs are finite, that every next-state distribution sums to 1 within
// condition.RowTolerance with finite non-negative entries, and, when
// discounted is true, that the discount factor lies in (0, 1).
func (p *Problem) Validate(discounted bool) error {
	var errs []error
	add := func(s, a int, format string, args ...any) {
		errs = append(errs, &ProblemError{State: s, Action: a, Problem: fmt.Sprintf(format, args...)})
	}
	n := len(p.States)
	if n == 0 {
		add(-1, -1, "no states")
	}
	if len(p.Choices) != n {
		add(-1, -1, "%d choice lists for %d states", len(p.Choices), n)
	}
	if discounted && !(p.Discount > 0 && p.Discount < 1) {
		add(-1, -1, "discount factor %v is not in (0, 1)", p.Discount)
	}
	for s, cs := range p.Choices {
		if len(cs) == 0 {
			add(s, -1, "no admissible action")
		}
		prev := -1
		for _, c := range cs {
			if c.Action <= prev || c.Action >= len(p.Actions) {
				add(s, c.Action, "action index out of range or out of order")
			}
			prev = c.Action
			if math.IsNaN(c.Cost) || math.IsInf(c.Cost, 0) {
				add(s, c.Action, "cost is %v", c.Cost)
			}
			sum := 0.0
			for _, e := range c.Next {
				if e.To < 0 || e.To >= n || !(e.P >= 0) || math.IsInf(e.P, 0) {
					add(s, c.Action, "bad transition entry %+v", e)
					continue
				}
				sum += e.P
			}
			if math.Abs(sum-1) > condition.RowTolerance {
				add(s, c.Action, "transition row sums to %v", sum)
			}
		}
	}
	return errors.Join(errs...)
}

// Find returns the position of action a among the choices of state s, or -1.
func (p *Problem) Find(s, a int) int {
	for k, c := range p.Choices[s] {
		if c.Action == a {
			return k
		}
	}
	return -1
}

// expect returns sum_j P(j) v[j] for one next-state distribution.
func Expect(next []condition.Entry, v []float64) float64 {
	sum := 0.0
	for _, e := range next {
		sum += e.P * v[e.To]
	}
	return sum
}
