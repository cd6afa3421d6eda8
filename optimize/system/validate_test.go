package system

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/internal/mdptest"
)

// Validate reports each fault of a machine as a *Fault with its component
// and field, wraps the components' own faults so that errors.As finds
// them, and reports every fault at once.
func TestValidateReportsEveryFault(t *testing.T) {
	valid := func() *Machine {
		return randomMachine(rand.New(rand.NewPCG(71, 72)), 3, 3, 2, 100, 200)
	}
	type want struct {
		component int
		field     string
	}
	tests := []struct {
		name   string
		break_ func(m *Machine)
		want   []want
		// inner, when not nil, must be found by errors.As.
		inner any
	}{
		{"valid", func(*Machine) {}, nil, nil},
		{"no components", func(m *Machine) { m.Components = nil }, []want{{-1, "components"}}, nil},
		{"empty name", func(m *Machine) { m.Components[1].Name = "" }, []want{{1, "name"}}, nil},
		{"duplicate name", func(m *Machine) { m.Components[2].Name = m.Components[0].Name }, []want{{2, "name"}}, nil},
		{"nil model", func(m *Machine) { m.Components[1].Model = nil }, []want{{1, "model"}}, nil},
		{"nil costs", func(m *Machine) { m.Components[0].Costs = nil }, []want{{0, "costs"}}, nil},
		{"bad row", func(m *Machine) { m.Components[2].Model.Actions[1].Rows[0][0].P += 0.5 },
			[]want{{2, "model"}}, new(*condition.Fault)},
		{"bad cost", func(m *Machine) { m.Components[0].Costs.Running[1] = math.NaN() },
			[]want{{0, "costs"}}, new(*costs.Fault)},
		{"cost size", func(m *Machine) { m.Components[1].Costs.Action = m.Components[1].Costs.Action[:1] },
			[]want{{1, "costs"}}, new(*costs.Fault)},
		{"no passive", func(m *Machine) {
			// The unsafe state has no passive row; only the flag goes.
			m.Components[1].Model.Actions[0].Passive = false
		}, []want{{1, "passive"}}, nil},
		{"period", func(m *Machine) { m.Components[0].Model.PeriodYears = 1 }, []want{{0, "period"}}, nil},
		{"shutdown", func(m *Machine) { m.Shutdown = math.Inf(1) }, []want{{-1, "shutdown"}}, nil},
		{"down", func(m *Machine) { m.Down = math.NaN() }, []want{{-1, "down"}}, nil},
		{"discount", func(m *Machine) { m.Discount = costs.Discount{} }, []want{{-1, "discount"}}, nil},
		{"too many joint actions", func(m *Machine) {
			big := randomMachine(rand.New(rand.NewPCG(1, 2)), 1, 2, 4, 0, 0).Components[0]
			m.Components = nil
			for i := range 16 { // 4^16 > 2^31 - 1
				c := big
				c.Name = "wide" + string(rune('a'+i))
				m.Components = append(m.Components, c)
			}
		}, []want{{-1, "size"}}, nil},
		{"several at once", func(m *Machine) {
			m.Components[1].Name = ""
			m.Components[2].Costs = nil
			m.Shutdown = math.NaN()
			m.Discount = costs.Discount{}
		}, []want{{1, "name"}, {2, "costs"}, {-1, "shutdown"}, {-1, "discount"}}, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			m := valid()
			tt.break_(m)
			err := m.Validate()
			if len(tt.want) == 0 {
				if err != nil {
					t.Fatalf("Validate(%q) = %v, want nil", tt.name, err)
				}
				return
			}
			if err == nil {
				t.Fatalf("Validate(%q) = nil, want faults %v", tt.name, tt.want)
			}
			var got []want
			for _, e := range err.(interface{ Unwrap() []error }).Unwrap() {
				var f *Fault
				if !errors.As(e, &f) {
					t.Fatalf("Validate(%q): %v is not a *Fault", tt.name, e)
				}
				got = append(got, want{f.Component, f.Field})
			}
			for _, w := range tt.want {
				found := false
				for _, g := range got {
					found = found || g == w
				}
				if !found {
					t.Errorf("Validate(%q): faults %v, want one at component %d, field %q", tt.name, got, w.component, w.field)
				}
			}
			if tt.inner != nil && !errors.As(err, tt.inner) {
				t.Errorf("Validate(%q) = %v, want it to wrap a %T", tt.name, err, tt.inner)
			}
			if msg := err.Error(); len(msg) < 8 || msg[:8] != "system: " {
				t.Errorf("Validate(%q) = %q, want the prefix \"system: \"", tt.name, msg)
			}
		})
	}
}

// Solve and Flatten refuse an invalid machine with the faults of Validate.
func TestSolveRefusesInvalidMachine(t *testing.T) {
	m := randomMachine(rand.New(rand.NewPCG(73, 74)), 2, 3, 2, 100, 200)
	m.Shutdown = math.NaN()
	var f *Fault
	if _, err := Solve(t.Context(), m, nil); !errors.As(err, &f) || f.Field != "shutdown" {
		t.Errorf("Solve(NaN shutdown) error %v, want a *Fault at shutdown", err)
	}
	m.Discount = mdptest.Factor(0.9, 0.5)
	m.Shutdown = 1
	m.Components[0].Model = nil
	if _, err := Solve(t.Context(), m, nil); !errors.As(err, &f) || f.Field != "model" {
		t.Errorf("Solve(nil model) error %v, want a *Fault at model", err)
	}
}

// Solve and EvaluateProduct refuse inputs of the wrong shape instead of
// reading past them.
func TestShapeErrors(t *testing.T) {
	m := randomMachine(rand.New(rand.NewPCG(75, 76)), 2, 3, 2, 100, 200)
	ctx := t.Context()
	tests := []struct {
		name string
		call func() error
	}{
		{"Solve, short start", func() error { _, err := Solve(ctx, m, &Settings{Start: make([]float64, 8)}); return err }},
		{"EvaluateProduct, one policy", func() error { _, err := m.EvaluateProduct(ctx, [][]int{{0, 0, 1}}, nil, 1); return err }},
		{"EvaluateProduct, short policy", func() error { _, err := m.EvaluateProduct(ctx, [][]int{{0, 0, 1}, {0, 1}}, nil, 1); return err }},
		{"EvaluateProduct, passive when unsafe", func() error { _, err := m.EvaluateProduct(ctx, [][]int{{0, 0, 0}, {0, 0, 1}}, nil, 1); return err }},
		{"EvaluateProduct, action out of range", func() error { _, err := m.EvaluateProduct(ctx, [][]int{{0, 0, 7}, {0, 0, 1}}, nil, 1); return err }},
		{"EvaluateProduct, short start", func() error {
			_, err := m.EvaluateProduct(ctx, [][]int{{0, 0, 1}, {0, 0, 1}}, make([]float64, 3), 1)
			return err
		}},
		{"SeparateStart, one result", func() error { _, err := m.SeparateStart(ctx, nil); return err }},
	}
	for _, tt := range tests {
		if err := tt.call(); err == nil || err.Error()[:8] != "system: " {
			t.Errorf("%s: error %v, want a \"system: \" error", tt.name, err)
		}
	}
}
