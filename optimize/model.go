package optimize

import (
	"errors"

	"fixpoint/condition"
	"fixpoint/costs"
)

// Build turns a condition model and its cost schedule into a Problem with
// discount factor gamma per period. The cost of choosing action a in state
// s is Running[s] + Action[a][s]; the choice exists exactly when the action
// is admissible in s. Both inputs and gamma (0 for the average criterion,
// else in (0, 1 - costs.MinDiscountGap]) are validated first and every
// fault is returned: *condition.Fault, *costs.Fault and *ProblemError
// values joined.
func Build(m *condition.Model, c *costs.Schedule, gamma float64) (*Problem, error) {
	var discountErr error
	if gamma != 0 {
		discountErr = checkDiscount(gamma)
	}
	if err := errors.Join(m.Validate(), c.Validate(len(m.States), len(m.Actions)), discountErr); err != nil {
		return nil, err
	}
	p := &Problem{
		States:   m.StateNames(),
		Actions:  m.ActionNames(),
		Choices:  make([][]Choice, len(m.States)),
		Discount: gamma,
	}
	for s := range m.States {
		for a := range m.Actions {
			if !m.Actions[a].Admissible(s) {
				continue
			}
			p.Choices[s] = append(p.Choices[s], Choice{
				Action: a,
				Cost:   c.Running[s] + c.Action[a][s],
				Next:   m.Actions[a].Rows[s],
			})
		}
	}
	return p, nil
}
