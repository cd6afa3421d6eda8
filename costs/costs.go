package costs

import (
	"errors"
	"fmt"
	"math"
)

// Schedule holds the money side of one class of equipment, in constant
// prices of one currency.
type Schedule struct {
	Currency string
	// Running[s] is the cost of one period spent in state s (inspection,
	// energy, lost output); it may be negative for net income.
	Running []float64
	// Action[a][s] is the cost of taking action a in state s, paid at the
	// start of the period. Entries for pairs where the action is not
	// admissible are ignored.
	Action [][]float64
}

// MaxCost is the largest magnitude of one cost figure, in currency units.
// With |c| <= 1e12 and 1-γ >= MinDiscountGap, values stay below 1e21 and
// every sum the solvers form stays far inside float64's range; a figure
// above it is taken for a slip (a misplaced exponent, a cost in the wrong
// unit). Common practice, no source: no single maintenance figure of one
// unit comes near a trillion in any currency.
const MaxCost = 1e12

// Fault is one problem found in a schedule. State and Action are indices,
// or -1 when not applicable; Field says which figure: "running" (a running
// cost), "action" (an action cost) or "size" (a list of the wrong length).
type Fault struct {
	Field   string
	State   int
	Action  int
	Problem string
}

func (f *Fault) Error() string {
	switch {
	case f.Action >= 0 && f.State >= 0:
		return fmt.Sprintf("costs: action %d, state %d: %s", f.Action, f.State, f.Problem)
	case f.Action >= 0:
		return fmt.Sprintf("costs: action %d: %s", f.Action, f.Problem)
	case f.State >= 0:
		return fmt.Sprintf("costs: state %d: %s", f.State, f.Problem)
	}
	return "costs: " + f.Problem
}

// Validate reports every cost that is not a finite number within
// ±MaxCost and every size mismatch against a scale of states states and
// actions actions, joined by errors.Join; each is a *Fault.
func (c *Schedule) Validate(states, actions int) error {
	var errs []error
	if len(c.Running) != states {
		errs = append(errs, &Fault{Field: "size", State: -1, Action: -1,
			Problem: fmt.Sprintf("%d running costs, want one per state (%d)", len(c.Running), states)})
	}
	for s, v := range c.Running {
		if msg := checkCost(v); msg != "" {
			errs = append(errs, &Fault{Field: "running", State: s, Action: -1, Problem: "running cost " + msg})
		}
	}
	if len(c.Action) != actions {
		errs = append(errs, &Fault{Field: "size", State: -1, Action: -1,
			Problem: fmt.Sprintf("%d action cost lists, want one per action (%d)", len(c.Action), actions)})
	}
	for a, row := range c.Action {
		if len(row) != states {
			errs = append(errs, &Fault{Field: "size", State: -1, Action: a,
				Problem: fmt.Sprintf("%d costs, want one per state (%d)", len(row), states)})
		}
		for s, v := range row {
			if msg := checkCost(v); msg != "" {
				errs = append(errs, &Fault{Field: "action", State: s, Action: a, Problem: "cost " + msg})
			}
		}
	}
	return errors.Join(errs...)
}

// checkCost says what is wrong with one cost figure, or "".
func checkCost(v float64) string {
	switch {
	case !finite(v):
		return fmt.Sprintf("is %v, want a finite number", v)
	case math.Abs(v) > MaxCost:
		return fmt.Sprintf("%g is beyond ±%g", v, MaxCost)
	}
	return ""
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
