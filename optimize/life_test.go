package optimize

import (
	"context"
	"errors"
	"math"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/internal/mdptest"
)

// twoState is /work/shared/repro's fp case with the failure probability
// per period given: good (running 10) is left alone and fails with
// probability pFail, failed (running 1000, unsafe) is replaced for 500.
func twoState(pFail float64) (*condition.Model, *costs.Schedule) {
	m := &condition.Model{
		PeriodYears: 1,
		States:      []condition.State{{Name: "good"}, {Name: "failed", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 1}, {To: 1, P: pFail}}, nil}},
			{Name: "replace", Rows: [][]condition.Entry{nil, {{To: 0, P: 1}}}},
		},
	}
	c := &costs.Schedule{Currency: "EUR", Running: []float64{10, 1000}, Action: [][]float64{{0, 0}, {0, 500}}}
	return m, c
}

// The life figures of the fp case are computed (a life of 1e17 periods,
// closed form 1/1e-17), and a figure float64 cannot hold is dropped with
// its reason while the advice and the other figures stand.
func TestLifeFiguresTinyProbabilities(t *testing.T) {
	tests := []struct {
		name      string
		pFail     float64
		wantLife  float64 // NaN: the figure cannot be computed
		wantError bool
	}{
		{"fp-1e-17", 1e-17, (1 + 1e-17) / 1e-17, false},
		{"subnormal-1e-320", 1e-320, math.NaN(), true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m, c := twoState(tc.pFail)
			d := mdptest.Rate(0.04, 1)
			p, err := Build(m, c, d.Factor())
			if err != nil {
				t.Fatal(err)
			}
			r, err := Solve(context.Background(), p, nil)
			if err != nil {
				t.Fatal(err)
			}
			l, err := LifeFigures(m, c, r, d, WorstTarget(2), 20)
			if err != nil {
				t.Fatalf("LifeFigures(%s): %v", tc.name, err)
			}
			got := l.Policy.Periods[0]
			switch {
			case math.IsNaN(tc.wantLife):
				if !math.IsNaN(got) {
					t.Errorf("LifeFigures(%s): periods[0] = %g, want NaN", tc.name, got)
				}
			case math.Abs(got-tc.wantLife) > 1e-12*tc.wantLife:
				t.Errorf("LifeFigures(%s): periods[0] = %g, want %g (rel tol 1e-12)", tc.name, got, tc.wantLife)
			}
			var ne *condition.NumericError
			if hasErr := errors.As(l.PolicyErr, &ne); hasErr != tc.wantError {
				t.Errorf("LifeFigures(%s): PolicyErr = %v, want a *condition.NumericError: %v", tc.name, l.PolicyErr, tc.wantError)
			}
			if l.Stationary == nil || math.Abs(l.Stationary[0]-1) > 1e-12 {
				t.Errorf("LifeFigures(%s): stationary %v (%v), want about [1 0]", tc.name, l.Stationary, l.StationaryErr)
			}
		})
	}
}
