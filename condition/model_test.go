package condition

import (
	"errors"
	"strings"
	"testing"
)

func validModel() *Model {
	return &Model{
		PeriodYears: 1,
		States:      []State{{Name: "good"}, {Name: "worn"}, {Name: "failed", Unsafe: true}},
		Actions: []Action{
			{Name: "leave", Passive: true, Rows: [][]Entry{{{0, 0.8}, {1, 0.2}}, {{1, 0.7}, {2, 0.3}}, nil}},
			{Name: "replace", Rows: [][]Entry{{{0, 1}}, {{0, 1}}, {{0, 1}}}},
		},
	}
}

func TestValidateAcceptsValidModel(t *testing.T) {
	if err := validModel().Validate(); err != nil {
		t.Fatal(err)
	}
}

func TestValidateFaults(t *testing.T) {
	tests := []struct {
		name   string
		mutate func(m *Model)
		want   Fault // Problem is a substring
	}{
		{"empty scale", func(m *Model) { m.States = nil; m.Actions = nil },
			Fault{Field: "states", State: -1, Action: -1, Target: -1, Problem: "scale is empty"}},
		{"period", func(m *Model) { m.PeriodYears = 0 },
			Fault{Field: "period_years", State: -1, Action: -1, Target: -1, Problem: "want a number of years in (0, 100]"}},
		{"period 1e300", func(m *Model) { m.PeriodYears = 1e300 },
			Fault{Field: "period_years", State: -1, Action: -1, Target: -1, Problem: "period is 1e+300 years"}},
		{"duplicate state", func(m *Model) { m.States[1].Name = "good" },
			Fault{Field: "name", State: 1, Action: -1, Target: -1, Problem: `duplicate state name "good"`}},
		{"duplicate action", func(m *Model) { m.Actions[1].Name = "leave" },
			Fault{Field: "name", State: -1, Action: 1, Target: -1, Problem: `duplicate action name "leave"`}},
		{"two passive", func(m *Model) { m.Actions[1].Passive = true },
			Fault{Field: "passive", State: -1, Action: 1, Target: -1, Problem: "more than one passive action"}},
		{"row count", func(m *Model) { m.Actions[1].Rows = m.Actions[1].Rows[:2] },
			Fault{Field: "row", State: -1, Action: 1, Target: -1, Problem: "has 2 rows, want one per state (3)"}},
		{"sum", func(m *Model) { m.Actions[0].Rows[0][1].P = 0.1999999 },
			Fault{Field: "sum", State: 0, Action: 0, Target: -1, Problem: "row sums to 0.9999999, want 1"}},
		{"negative", func(m *Model) { m.Actions[0].Rows[0] = []Entry{{0, 1.5}, {1, -0.5}} },
			Fault{Field: "entry", State: 0, Action: 0, Target: 1, Problem: "probability -0.5 is negative"}},
		{"target out of range", func(m *Model) { m.Actions[0].Rows[0][1].To = 7 },
			Fault{Field: "entry", State: 0, Action: 0, Target: -1, Problem: "target state 7 is outside the scale"}},
		{"repeated target", func(m *Model) { m.Actions[0].Rows[0] = []Entry{{0, 0.5}, {0, 0.5}} },
			Fault{Field: "entry", State: 0, Action: 0, Target: 0, Problem: "target state appears twice"}},
		{"no admissible action", func(m *Model) { m.Actions[0].Rows[1] = nil; m.Actions[1].Rows[1] = nil },
			Fault{Field: "row", State: 1, Action: -1, Target: -1, Problem: `no action is admissible in state "worn"`}},
		{"passive in unsafe", func(m *Model) { m.Actions[0].Rows[2] = []Entry{{2, 1}} },
			Fault{Field: "row", State: 2, Action: 0, Target: -1, Problem: "passive action \"leave\" has a row for unsafe state"}},
		// The safety rule must not hang on the passive flag: without one,
		// a cheap "leave" would keep failed units failed.
		{"no passive action", func(m *Model) { m.Actions[0].Passive = false },
			Fault{Field: "actions", State: -1, Action: -1, Target: -1, Problem: "no action is passive"}},
		{"action keeps unsafe unit unsafe", func(m *Model) {
			m.Actions = append(m.Actions, Action{Name: "patch", Rows: [][]Entry{nil, nil, {{2, 1}}}})
		}, Fault{Field: "row", State: 2, Action: 2, Target: -1, Problem: `action "patch" keeps a unit in unsafe state "failed" within unsafe states with probability 1`}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := validModel()
			tc.mutate(m)
			err := m.Validate()
			if err == nil {
				t.Fatal("no fault")
			}
			for _, e := range err.(interface{ Unwrap() []error }).Unwrap() {
				var f *Fault
				if errors.As(e, &f) && f.Field == tc.want.Field && f.State == tc.want.State &&
					f.Action == tc.want.Action && f.Target == tc.want.Target && strings.Contains(f.Problem, tc.want.Problem) {
					return
				}
			}
			t.Errorf("Validate() = %v, want a fault like %+v", err, tc.want)
		})
	}
}

// An action declared as taking the unit out of service may keep it in an
// unsafe state; a row that makes the unit safe with some probability is
// never refused.
func TestValidateOutOfService(t *testing.T) {
	m := validModel()
	m.Actions = append(m.Actions, Action{Name: "retire", OutOfService: true, Rows: [][]Entry{nil, nil, {{2, 1}}}},
		Action{Name: "try", Rows: [][]Entry{nil, nil, {{2, 0.5}, {1, 0.5}}}})
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
}

func TestFormatSum(t *testing.T) {
	for _, tc := range []struct {
		sum  float64
		want string
	}{{0.97, "0.97"}, {1.00000001, "1.00000001"}, {0.9999999999, "0.9999999999"}, {1.1, "1.1"}} {
		if got := FormatSum(tc.sum); got != tc.want {
			t.Errorf("FormatSum(%v) = %q, want %q", tc.sum, got, tc.want)
		}
	}
}

// Renormalize treats a sum of 1 + δ and 1 - δ alike: 0.5 + 0.501 and
// 0.5 + 0.499 are both rescaled (each entry rounded to 3 decimals can miss
// by 0.0005), 0.5 + 0.502 and 0.5 + 0.498 both left for Validate.
func TestRenormalizeSymmetric(t *testing.T) {
	tests := []struct {
		name    string
		second  float64
		rescale bool
	}{
		{"1.001", 0.501, true},
		{"0.999", 0.499, true},
		{"1.002", 0.502, false},
		{"0.998", 0.498, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := validModel()
			m.Actions[0].Rows[0] = []Entry{{0, 0.5}, {1, tc.second}}
			got := m.Renormalize(0.0005)
			if (len(got) == 1) != tc.rescale {
				t.Fatalf("Renormalize(%s): rescaled %v, want rescaled: %v", tc.name, got, tc.rescale)
			}
			if RoundedLooking(0.5+tc.second, 2) != tc.rescale {
				t.Errorf("RoundedLooking(%s) = %v, want %v", tc.name, !tc.rescale, tc.rescale)
			}
			if tc.rescale {
				if err := m.Validate(); err != nil {
					t.Errorf("Renormalize(%s): the rescaled model is invalid: %v", tc.name, err)
				}
			}
		})
	}
}
