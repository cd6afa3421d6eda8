package answer

import "fixpoint/optimize"

// ClassAdvice is the advice of a class under its criterion: the policy,
// the discount factor its present values use (1 under the average
// criterion: totals are then undiscounted) and the solve behind it.
type ClassAdvice struct {
	Policy  []int
	Factor  float64
	Result  *optimize.Result
	Average *optimize.AverageResult
}

// ClassPolicy solves a class under its criterion.
func (e *Env) ClassPolicy(r *Class, s optimize.Settings) (ClassAdvice, error) {
	if r.Average {
		res, err := optimize.SolveAverage(e.Ctx, r.Problem, &s)
		if err != nil {
			return ClassAdvice{}, SolveFault(r.Path, err)
		}
		e.SafetyWarnings(r, res.Policy)
		return ClassAdvice{Policy: res.Policy, Factor: 1, Average: res}, nil
	}
	res, err := optimize.Solve(e.Ctx, r.Problem, &s)
	if err != nil {
		return ClassAdvice{}, SolveFault(r.Path, err)
	}
	e.SafetyWarnings(r, res.Policy)
	return ClassAdvice{Policy: res.Policy, Factor: r.Discount.Factor(), Result: res}, nil
}
