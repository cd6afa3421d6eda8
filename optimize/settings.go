package optimize

import (
	"fmt"
	"strings"
)

// Method names a solution method.
type Method int

const (
	// Auto picks policy iteration for problems of up to AutoPolicyStates
	// states and value iteration above.
	Auto Method = iota
	// ValueIteration is Jacobi value iteration with MacQueen's bounds.
	ValueIteration
	// PolicyIteration is Howard's policy iteration with exact evaluation.
	PolicyIteration
	// LinearProgram solves the occupation-measure linear program with
	// a dense simplex method that cannot cycle.
	LinearProgram
)

// AutoPolicyStates is the largest problem, in states, for which Auto uses
// policy iteration (each step costs a dense O(n³) solve).
const AutoPolicyStates = 1500

var methodNames = [...]string{Auto: "auto", ValueIteration: "value", PolicyIteration: "policy", LinearProgram: "lp"}

func (m Method) String() string {
	if m >= 0 && int(m) < len(methodNames) {
		return methodNames[m]
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// ParseMethod returns the method named s: auto, value, policy or lp.
func ParseMethod(s string) (Method, error) {
	for m, name := range methodNames {
		if s == name {
			return Method(m), nil
		}
	}
	return Auto, fmt.Errorf("optimize: unknown method %q, want one of %s", s, strings.Join(methodNames[:], ", "))
}

// Default settings.
const (
	// DefaultTol is the default absolute tolerance, in currency units.
	DefaultTol = 1e-3
	// DefaultValueSweeps is the default sweep cap of value iteration.
	DefaultValueSweeps = 100000
	// DefaultPolicySteps is the default step cap of policy iteration.
	DefaultPolicySteps = 1000
	// DefaultTieTol is the default relative tie tolerance: two actions tie
	// when their Q-values differ by at most DefaultTieTol·max(1, max|v|),
	// within the cap and floor described at Settings.TieTol.
	DefaultTieTol = 1e-9
)

// Settings controls a solve. A nil *Settings means the defaults.
type Settings struct {
	// Method selects the solver; the zero value is Auto.
	Method Method
	// Tol is the target on the proven gap, in currency units: the advised
	// policy's expected cost exceeds the optimum by at most Tol in every
	// state. Zero means DefaultTol.
	Tol float64
	// MaxIterations caps the sweeps of value iteration, the improvement
	// steps of policy iteration or the pivots of the simplex method. Zero
	// means DefaultValueSweeps, DefaultPolicySteps or 50·(states +
	// choices) pivots.
	MaxIterations int
	// TieTol is the absolute tie tolerance in currency units: actions whose
	// Q-values are within TieTol of the best are tied, and the tie is
	// resolved in favour of the lowest action index. Zero means
	// DefaultTieTol·max(1, max|v|), capped at (1-γ)·Tol/2 (Tol/4 for the
	// average criterion) so that the tie rule never costs more than half
	// the tolerance, and floored at the rounding of one Q-value. An
	// explicit TieTol is used as given; if its loss breaks the
	// certificate, the result's Shortfall is TieLoss.
	TieTol float64
	// Progress, if not nil, is called after every sweep or step.
	Progress func(Progress)
}

// Progress is a report from a running solver.
type Progress struct {
	Method    Method
	Iteration int
	// Gap is the current proven gap in currency units, or +Inf when the
	// method has no bound yet.
	Gap float64
}

// WithDefaults returns a copy of s (nil: the zero Settings) with the
// documented defaults filled in for a problem of n states: Auto resolved
// to a method, zero Tol and MaxIterations replaced by their defaults.
// Solvers of other decision models (optimize/inspect) share the defaults
// through it.
func (s *Settings) WithDefaults(n int) Settings { return s.withDefaults(n) }

func (s *Settings) withDefaults(n int) Settings {
	var out Settings
	if s != nil {
		out = *s
	}
	if out.Method == Auto {
		out.Method = PolicyIteration
		if n > AutoPolicyStates {
			out.Method = ValueIteration
		}
	}
	if out.Tol <= 0 {
		out.Tol = DefaultTol
	}
	if out.MaxIterations <= 0 {
		out.MaxIterations = DefaultPolicySteps
		if out.Method == ValueIteration {
			out.MaxIterations = DefaultValueSweeps
		}
	}
	return out
}

func (s *Settings) progress(m Method, it int, gap float64) {
	if s.Progress != nil {
		s.Progress(Progress{Method: m, Iteration: it, Gap: gap})
	}
}
