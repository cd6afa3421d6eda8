package costs

import (
	"errors"
	"math"
	"testing"
)

// Every cost beyond ±MaxCost or not finite is a *Fault that names the
// figure, so the loader can point at the field.
func TestScheduleValidateLimits(t *testing.T) {
	tests := []struct {
		name      string
		running   float64
		action    float64
		wantField string
		wantState int
		wantAct   int
	}{
		{"at the limit", MaxCost, -MaxCost, "", -1, -1},
		{"running 1e308", 1e308, 0, "running", 1, -1},
		{"running -Inf", math.Inf(-1), 0, "running", 1, -1},
		{"action 1e13", 0, 1e13, "action", 1, 0},
		{"action NaN", 0, math.NaN(), "action", 1, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := &Schedule{Running: []float64{0, tc.running}, Action: [][]float64{{0, tc.action}}}
			err := c.Validate(2, 1)
			var f *Fault
			switch {
			case tc.wantField == "" && err != nil:
				t.Errorf("Validate(%s) = %v, want nil", tc.name, err)
			case tc.wantField == "":
			case !errors.As(err, &f):
				t.Errorf("Validate(%s) = %v, want a *Fault", tc.name, err)
			case f.Field != tc.wantField || f.State != tc.wantState || f.Action != tc.wantAct:
				t.Errorf("Validate(%s): fault %+v, want field %q, state %d, action %d", tc.name, f, tc.wantField, tc.wantState, tc.wantAct)
			}
		})
	}
}
