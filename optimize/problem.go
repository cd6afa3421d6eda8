package optimize

import (
	"errors"
	"fmt"
	"math"

	"fixpoint/condition"
	"fixpoint/costs"
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

// MaxChoiceCost is the largest magnitude of a choice's one-period cost: a
// running cost plus an action cost, each within ±costs.MaxCost.
const MaxChoiceCost = 2 * costs.MaxCost

// ProblemError is one fault of a Problem. State and Action are indices, or
// -1 when not applicable; Field says what is at fault: "discount",
// "cost", "row", "action" (an action index), "states" or "choices".
type ProblemError struct {
	Field   string
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
// costs are finite and within ±MaxChoiceCost, that every next-state
// distribution sums to 1 within condition.RowTolerance with finite
// non-negative entries, and, when discounted is true, that the discount
// factor lies in (0, 1 - costs.MinDiscountGap] (closer to 1, errors grow
// like 1/(1-γ) and no tolerance can be proven in float64).
func (p *Problem) Validate(discounted bool) error {
	var errs []error
	add := func(field string, s, a int, format string, args ...any) {
		errs = append(errs, &ProblemError{Field: field, State: s, Action: a, Problem: fmt.Sprintf(format, args...)})
	}
	n := len(p.States)
	if n == 0 {
		add("states", -1, -1, "no states")
	}
	if len(p.Choices) != n {
		add("choices", -1, -1, "%d choice lists for %d states", len(p.Choices), n)
	}
	if discounted {
		if err := checkDiscount(p.Discount); err != nil {
			errs = append(errs, err)
		}
	}
	for s, cs := range p.Choices {
		if len(cs) == 0 {
			add("choices", s, -1, "no admissible action")
		}
		prev := -1
		for _, c := range cs {
			if c.Action <= prev || c.Action >= len(p.Actions) {
				add("action", s, c.Action, "action index out of range or out of order")
			}
			prev = c.Action
			if !(math.Abs(c.Cost) <= MaxChoiceCost) {
				add("cost", s, c.Action, "cost %v is not a finite number within ±%g", c.Cost, MaxChoiceCost)
			}
			sum := 0.0
			for _, e := range c.Next {
				if e.To < 0 || e.To >= n || !(e.P >= 0) || math.IsInf(e.P, 0) {
					add("row", s, c.Action, "bad transition entry %+v", e)
					continue
				}
				sum += e.P
			}
			if math.Abs(sum-1) > condition.RowTolerance {
				add("row", s, c.Action, "transition row sums to %v", sum)
			}
		}
	}
	return errors.Join(errs...)
}

// checkDiscount returns a *ProblemError unless 0 < γ <= 1 -
// costs.MinDiscountGap.
func checkDiscount(g float64) error {
	switch {
	case !(g > 0 && g < 1):
		return &ProblemError{Field: "discount", State: -1, Action: -1, Problem: fmt.Sprintf("discount factor %v is not in (0, 1)", g)}
	case 1-g < costs.MinDiscountGap:
		return &ProblemError{Field: "discount", State: -1, Action: -1,
			Problem: fmt.Sprintf("discount factor %v is within %g of 1: no tolerance can be proven in float64 at such a factor; use the average criterion", g, costs.MinDiscountGap)}
	}
	return nil
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
