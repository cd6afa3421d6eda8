package optimize

import (
	"context"
	"errors"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
)

// What the solvers cannot handle is refused up front as a typed fault with
// its location, not met later as a non-finite value or a singular solve.
func TestValidateLimits(t *testing.T) {
	tests := []struct {
		name      string
		cost      float64
		gamma     float64
		wantField string
		wantState int
	}{
		{"ordinary", 10, 0.9, "", -1},
		{"cost 1e308", 1e308, 0.9, "cost", 1},
		{"cost beyond the limit", 2.5e12, 0.9, "cost", 1},
		{"factor 1 - 1e-16", 10, 0.9999999999999999, "discount", -1},
		{"factor 1 - 1e-10", 10, 1 - 1e-10, "discount", -1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := handProblem([]string{"x", "y"}, []string{"a"}, tc.gamma, [][]arm{
				{{0, 1, []float64{0.5, 0.5}}},
				{{0, tc.cost, []float64{0.5, 0.5}}},
			})
			_, err := Solve(context.Background(), p, nil)
			var pe *ProblemError
			switch {
			case tc.wantField == "" && err != nil:
				t.Errorf("Solve(%s) = %v, want nil", tc.name, err)
			case tc.wantField == "":
			case !errors.As(err, &pe):
				t.Errorf("Solve(%s) = %v, want a *ProblemError", tc.name, err)
			case pe.Field != tc.wantField || pe.State != tc.wantState:
				t.Errorf("Solve(%s): fault %+v, want field %q in state %d", tc.name, pe, tc.wantField, tc.wantState)
			}
		})
	}
}

// Build refuses a factor the solvers cannot certify, and the period limits
// of the two leaf packages agree.
func TestBuildLimits(t *testing.T) {
	m, c := classModel()
	_, err := Build(m, c, 0.9999999999999999)
	var pe *ProblemError
	if !errors.As(err, &pe) || pe.Field != "discount" {
		t.Errorf("Build(γ = 1 - 1e-16) = %v, want a discount *ProblemError", err)
	}
	c.Running[2] = 1e308
	_, err = Build(m, c, 0.9)
	var f *costs.Fault
	if !errors.As(err, &f) || f.Field != "running" || f.State != 2 {
		t.Errorf("Build(running 1e308) = %v, want a running-cost *costs.Fault in state 2", err)
	}
	if condition.MaxPeriodYears != costs.MaxPeriodYears {
		t.Errorf("condition.MaxPeriodYears = %d, costs.MaxPeriodYears = %d: the limits must agree", condition.MaxPeriodYears, costs.MaxPeriodYears)
	}
}
