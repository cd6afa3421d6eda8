package inspect

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
)

// faults returns the *Fault values joined in err.
func faults(err error) []*Fault {
	var out []*Fault
	var walk func(error)
	walk = func(e error) {
		if j, ok := e.(interface{ Unwrap() []error }); ok {
			for _, x := range j.Unwrap() {
				walk(x)
			}
			return
		}
		var f *Fault
		if errors.As(e, &f) {
			out = append(out, f)
		}
	}
	walk(err)
	return out
}

// Every plan fault is reported at once with its field, list position and
// state.
func TestBuildFaults(t *testing.T) {
	type loc struct {
		field        string
		index, state int
	}
	for _, tc := range []struct {
		name  string
		edit  func(*class)
		gamma float64
		want  []loc
	}{
		{"negative cost", func(c *class) { c.plan.Cost = -1 }, 0, []loc{{"cost", -1, -1}}},
		{"NaN downtime", func(c *class) { c.plan.Downtime = math.NaN() }, 0, []loc{{"downtime", -1, -1}}},
		{"no limit", func(c *class) { c.plan.MaxIntervalYears = 0 }, 0, []loc{{"max_interval_years", -1, -1}}},
		{"infinite limit", func(c *class) { c.plan.MaxIntervalYears = math.Inf(1) }, 0, []loc{{"max_interval_years", -1, -1}}},
		{"no intervals", func(c *class) { c.plan.Intervals = nil }, 0, []loc{{"intervals", -1, -1}}},
		{"zero and unsorted intervals", func(c *class) { c.plan.Intervals = []int{0, 3, 2, 2, MaxPeriods + 1} }, 0,
			[]loc{{"intervals", 0, -1}, {"intervals", 2, -1}, {"intervals", 3, -1}, {"intervals", 4, -1}}},
		{"hidden out of range", func(c *class) { c.plan.Hidden = []int{9} }, 0, []loc{{"hidden", 0, -1}, {"risk_cost", -1, 3}}},
		{"hidden safe state, listed twice", func(c *class) { c.plan.Hidden = []int{1, 3, 3} }, 0, []loc{{"hidden", 0, 1}, {"hidden", 2, 3}}},
		{"risk cost size", func(c *class) { c.plan.RiskCost = []float64{1} }, 0, []loc{{"risk_cost", -1, -1}}},
		{"risk cost outside hidden, negative", func(c *class) { c.plan.RiskCost = []float64{0, 5, 0, -1, 3} }, 0,
			[]loc{{"risk_cost", -1, 1}, {"risk_cost", -1, 3}, {"risk_cost", -1, 4}}},
		{"no passive row in a safe state", func(c *class) { c.m.Actions[0].Rows[2] = nil }, 0, []loc{{"passive", -1, 2}}},
		{"discount", nil, 1, []loc{{"discount", -1, -1}}},
		{"limit below every interval", func(c *class) { c.plan.MaxIntervalYears = 0.1 }, 0, []loc{{"max_interval_years", -1, -1}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cl := reliefValves()
			if tc.edit != nil {
				tc.edit(cl)
			}
			gamma := cl.gamma
			if tc.gamma != 0 {
				gamma = tc.gamma
			}
			_, err := Build(context.Background(), cl.m, cl.c, gamma, &cl.plan)
			got := faults(err)
			if len(got) != len(tc.want) {
				t.Fatalf("Build(%q): %d faults (%v), want %d", tc.name, len(got), err, len(tc.want))
			}
			for i, f := range got {
				if w := tc.want[i]; f.Field != w.field || f.Index != w.index || f.State != w.state {
					t.Errorf("Build(%q): fault %d at (%s, %d, %d), want (%s, %d, %d): %v", tc.name, i, f.Field, f.Index, f.State, w.field, w.index, w.state, f)
				}
				if !strings.HasPrefix(f.Error(), "inspect: "+f.Field) {
					t.Errorf("Build(%q): message %q lacks the prefix and field", tc.name, f.Error())
				}
			}
		})
	}
}

// Faults of the model and the schedule come back with their own types.
func TestBuildModelFaults(t *testing.T) {
	cl := reliefValves()
	cl.m.Actions[0].Rows[0][0].P = 0.5
	cl.c.Running = cl.c.Running[:2]
	_, err := Build(context.Background(), cl.m, cl.c, cl.gamma, &cl.plan)
	var cf *condition.Fault
	var sf *costs.Fault
	if !errors.As(err, &cf) || !errors.As(err, &sf) {
		t.Errorf("Build: %v, want a condition fault and a costs fault", err)
	}
}

// A model without a passive action is refused whatever the intervals
// (a valid model has exactly one): the unseen chain between inspections
// is the passive chain.
func TestNoPassiveAction(t *testing.T) {
	for _, ks := range [][]int{{1}, {1, 2}} {
		cl := reliefValves()
		cl.m.Actions[0].Passive = false
		cl.plan.Intervals = ks
		_, err := Build(context.Background(), cl.m, cl.c, cl.gamma, &cl.plan)
		var cf *condition.Fault
		if !errors.As(err, &cf) || !strings.Contains(err.Error(), "no action is passive") {
			t.Errorf("Build(intervals %v, no passive action): %v, want the condition fault", ks, err)
		}
	}
}

// Kernels of a built problem: Σ M = E[γ^τ] lies in [γ^k, γ], exits sum to
// 1, 1 <= E[τ] <= k, and a hidden failure is not left by itself.
func TestKernelProperties(t *testing.T) {
	for _, cl := range testClasses() {
		p := cl.build(t)
		for s, cs := range p.Choices {
			for _, c := range cs {
				sum, exit := kernelSum(c.Next), kernelSum(c.Exit)
				gk := math.Pow(cl.gamma, float64(c.Interval))
				if sum < gk*(1-1e-12) || sum > cl.gamma*(1+1e-12) || math.Abs(exit-1) > 1e-12 {
					t.Errorf("%s: state %d, (%d, %d): Σ M = %g (want in [%g, %g]), Σ exit = %g", cl.name, s, c.Action, c.Interval, sum, gk, cl.gamma, exit)
				}
				if c.MeanPeriods < 1-1e-12 || c.MeanPeriods > float64(c.Interval)*(1+1e-12) || c.Unscheduled < 0 || c.Unscheduled > 1+1e-12 {
					t.Errorf("%s: state %d, (%d, %d): E τ = %g, P(τ<k) = %g", cl.name, s, c.Action, c.Interval, c.MeanPeriods, c.Unscheduled)
				}
				if cl.m.Actions[c.Action].Passive && p.Unsafe[s] {
					t.Errorf("%s: unsafe state %d has a passive decision", cl.name, s)
				}
			}
		}
	}
}
