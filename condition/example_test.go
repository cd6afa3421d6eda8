package condition_test

import (
	"errors"
	"fmt"

	"fixpoint/condition"
)

func ExampleModel_Validate() {
	m := &condition.Model{
		PeriodYears: 1,
		States:      []condition.State{{Name: "ok"}, {Name: "broken", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 0.9}, {To: 1, P: 0.05}}, {{To: 1, P: 1}}}},
		},
	}
	err := m.Validate()
	for _, e := range err.(interface{ Unwrap() []error }).Unwrap() {
		var f *condition.Fault
		if errors.As(e, &f) {
			fmt.Printf("%s (action %d, state %d): %s\n", f.Field, f.Action, f.State, f.Problem)
		}
	}
	// Output:
	// sum (action 0, state 0): row sums to 0.95, want 1 (±1e-09)
	// row (action 0, state 1): passive action "leave" has a row for unsafe state "broken"; the passive action is never admissible in an unsafe state
	// row (action -1, state 1): unsafe state "broken" admits only the passive action "leave"; give it a repair or replacement row
}
