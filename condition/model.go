package condition

import (
	"errors"
	"fmt"
	"math"
	"strings"
)

// RowTolerance is how far the sum of a transition row may be from 1:
// a row is accepted when |sum - 1| <= RowTolerance.
const RowTolerance = 1e-9

// MaxPeriodYears is the longest model period accepted, in years (the
// same limit as costs.MaxPeriodYears; the leaf packages do not import each
// other).
const MaxPeriodYears = 100

// Entry is one non-zero probability of a transition row: the chance P that
// the unit is in state To at the start of the next period.
type Entry struct {
	To int
	P  float64
}

// State is one condition on an ordered scale.
type State struct {
	Name string
	// Unsafe marks a state in which the unit must not be left as it is:
	// the passive action is never admissible there.
	Unsafe bool
}

// Action is an intervention with its transition rows.
type Action struct {
	Name string
	// Passive marks the "leave it as it is" action. A valid model has
	// exactly one.
	Passive bool
	// OutOfService marks an action that takes the unit out of service
	// (decommissioning, locking out): its row may keep an unsafe unit in
	// unsafe states, because the unit is no longer used.
	OutOfService bool
	// Rows[s] is the distribution of the next state when the action is taken
	// in state s; a nil row means the action is not admissible in s.
	Rows [][]Entry
}

// Admissible reports whether the action may be taken in state s.
func (a *Action) Admissible(s int) bool { return s < len(a.Rows) && a.Rows[s] != nil }

// Model is the condition side of one class of equipment: an ordered scale of
// states, best first, and the actions with their one-period transition rows.
type Model struct {
	States  []State
	Actions []Action
	// PeriodYears is the length of one model period in years.
	PeriodYears float64
}

// StateIndex returns the index of the named state, or -1.
func (m *Model) StateIndex(name string) int {
	for i, s := range m.States {
		if s.Name == name {
			return i
		}
	}
	return -1
}

// ActionIndex returns the index of the named action, or -1.
func (m *Model) ActionIndex(name string) int {
	for i, a := range m.Actions {
		if a.Name == name {
			return i
		}
	}
	return -1
}

// Passive returns the index of the passive action, or -1 when there is none.
func (m *Model) Passive() int {
	for i, a := range m.Actions {
		if a.Passive {
			return i
		}
	}
	return -1
}

// StateNames returns the state names in scale order.
func (m *Model) StateNames() []string {
	names := make([]string, len(m.States))
	for i, s := range m.States {
		names[i] = s.Name
	}
	return names
}

// ActionNames returns the action names in model order.
func (m *Model) ActionNames() []string {
	names := make([]string, len(m.Actions))
	for i, a := range m.Actions {
		names[i] = a.Name
	}
	return names
}

// Fault is one problem found in a model. State, Action and Target are
// indices into the model, or -1 when the fault is not about one of them.
type Fault struct {
	// Field names what is wrong: "period_years", "states", "actions",
	// "name", "passive", "row", "sum" (of a row) or "entry".
	Field  string
	State  int
	Action int
	// Target is the to-state of a faulty row entry.
	Target int
	// Problem says what is wrong, without the location.
	Problem string
}

func (f *Fault) Error() string {
	var b strings.Builder
	b.WriteString("condition: ")
	if f.Action >= 0 {
		fmt.Fprintf(&b, "action %d", f.Action)
		if f.State >= 0 {
			fmt.Fprintf(&b, ", state %d", f.State)
		}
		if f.Target >= 0 {
			fmt.Fprintf(&b, ", to state %d", f.Target)
		}
		b.WriteString(": ")
	} else if f.State >= 0 {
		fmt.Fprintf(&b, "state %d: ", f.State)
	}
	b.WriteString(f.Problem)
	return b.String()
}

// Validate reports every fault of the model, joined by errors.Join; each is
// a *Fault. A valid model has at least one state, unique non-empty names, a
// period in (0, MaxPeriodYears] years, exactly one passive action, rows that are
// probability distributions over the scale (finite, non-negative, each
// target once, summing to 1 within RowTolerance), no passive row in an
// unsafe state, no row of an action that is not out of service that keeps
// an unsafe unit within unsafe states with probability 1 (such an action
// would leave the unit unsafe for ever), and at least one admissible
// action in every state.
func (m *Model) Validate() error {
	var errs []error
	add := func(f Fault) { errs = append(errs, &f) }
	n := len(m.States)
	if n == 0 {
		add(Fault{Field: "states", State: -1, Action: -1, Target: -1, Problem: "the condition scale is empty"})
	}
	if !(m.PeriodYears > 0 && m.PeriodYears <= MaxPeriodYears) {
		add(Fault{Field: "period_years", State: -1, Action: -1, Target: -1,
			Problem: fmt.Sprintf("period is %g years, want a number of years in (0, %d]", m.PeriodYears, MaxPeriodYears)})
	}
	seen := make(map[string]int)
	for i, s := range m.States {
		if s.Name == "" {
			add(Fault{Field: "name", State: i, Action: -1, Target: -1, Problem: "state name is empty"})
			continue
		}
		if j, ok := seen[s.Name]; ok {
			add(Fault{Field: "name", State: i, Action: -1, Target: -1,
				Problem: fmt.Sprintf("duplicate state name %q (also state %d)", s.Name, j)})
			continue
		}
		seen[s.Name] = i
	}
	if len(m.Actions) == 0 {
		add(Fault{Field: "actions", State: -1, Action: -1, Target: -1, Problem: "there are no actions"})
	}
	seenA := make(map[string]int)
	passive := -1
	for a := range m.Actions {
		act := &m.Actions[a]
		switch j, dup := seenA[act.Name]; {
		case act.Name == "":
			add(Fault{Field: "name", State: -1, Action: a, Target: -1, Problem: "action name is empty"})
		case dup:
			add(Fault{Field: "name", State: -1, Action: a, Target: -1,
				Problem: fmt.Sprintf("duplicate action name %q (also action %d)", act.Name, j)})
		default:
			seenA[act.Name] = a
		}
		if act.Passive {
			if passive >= 0 {
				add(Fault{Field: "passive", State: -1, Action: a, Target: -1,
					Problem: fmt.Sprintf("more than one passive action (%q and %q)", m.Actions[passive].Name, act.Name)})
			} else {
				passive = a
			}
		}
		if len(act.Rows) != n {
			add(Fault{Field: "row", State: -1, Action: a, Target: -1,
				Problem: fmt.Sprintf("has %d rows, want one per state (%d)", len(act.Rows), n)})
			continue
		}
		for s, row := range act.Rows {
			if row == nil {
				continue
			}
			rowErrs := m.checkRow(a, s, row)
			errs = append(errs, rowErrs...)
			switch {
			case act.Passive && m.States[s].Unsafe:
				add(Fault{Field: "row", State: s, Action: a, Target: -1,
					Problem: fmt.Sprintf("passive action %q has a row for unsafe state %q; the passive action is never admissible in an unsafe state", act.Name, m.States[s].Name)})
			case m.States[s].Unsafe && !act.OutOfService && len(rowErrs) == 0 && m.staysUnsafe(row):
				add(Fault{Field: "row", State: s, Action: a, Target: -1,
					Problem: fmt.Sprintf("action %q keeps a unit in unsafe state %q within unsafe states with probability 1; give it a row that makes the unit safe, or mark the action out_of_service: true if it takes the unit out of service", act.Name, m.States[s].Name)})
			}
		}
	}
	if passive < 0 && len(m.Actions) > 0 {
		add(Fault{Field: "actions", State: -1, Action: -1, Target: -1,
			Problem: "no action is passive; mark the leave-as-is action passive: true (exactly one action must be)"})
	}
	for s := range m.States {
		var admissible []int
		for a := range m.Actions {
			if m.Actions[a].Admissible(s) {
				admissible = append(admissible, a)
			}
		}
		switch {
		case len(admissible) == 0:
			add(Fault{Field: "row", State: s, Action: -1, Target: -1,
				Problem: fmt.Sprintf("no action is admissible in state %q", m.States[s].Name)})
		case m.States[s].Unsafe && len(admissible) == 1 && m.Actions[admissible[0]].Passive:
			add(Fault{Field: "row", State: s, Action: -1, Target: -1,
				Problem: fmt.Sprintf("unsafe state %q admits only the passive action %q; give it a repair or replacement row", m.States[s].Name, m.Actions[admissible[0]].Name)})
		}
	}
	return errors.Join(errs...)
}

// staysUnsafe reports whether a row puts all its probability on unsafe
// states.
func (m *Model) staysUnsafe(row []Entry) bool {
	for _, e := range row {
		if e.P > 0 && !m.States[e.To].Unsafe {
			return false
		}
	}
	return true
}

func (m *Model) checkRow(a, s int, row []Entry) []error {
	var errs []error
	n := len(m.States)
	seen := make(map[int]bool, len(row))
	sum := 0.0
	finite := true
	for _, e := range row {
		f := Fault{Field: "entry", State: s, Action: a, Target: e.To}
		switch {
		case e.To < 0 || e.To >= n:
			f.Target = -1
			f.Problem = fmt.Sprintf("target state %d is outside the scale of %d states", e.To, n)
		case math.IsNaN(e.P) || math.IsInf(e.P, 0):
			f.Problem = fmt.Sprintf("probability is %v, want a finite number", e.P)
			finite = false
		case e.P < 0:
			f.Problem = fmt.Sprintf("probability %g is negative", e.P)
		case seen[e.To]:
			f.Problem = "target state appears twice in the row"
		default:
			seen[e.To] = true
			sum += e.P
			continue
		}
		errs = append(errs, &f)
	}
	if finite && math.Abs(sum-1) > RowTolerance {
		errs = append(errs, &Fault{Field: "sum", State: s, Action: a, Target: -1,
			Problem: fmt.Sprintf("row sums to %s, want 1 (±%g)", FormatSum(sum), RowTolerance)})
	}
	return errs
}

// FormatSum formats a row sum with enough digits to show how far it is from 1.
func FormatSum(sum float64) string {
	for prec := 3; prec < 17; prec++ {
		s := fmt.Sprintf("%.*f", prec, sum)
		if s != fmt.Sprintf("%.*f", prec, 1.0) {
			return strings.TrimRight(strings.TrimRight(s, "0"), ".")
		}
	}
	return fmt.Sprintf("%.17g", sum)
}

// Dense returns the transition matrix of a row per state as a dense
// row-major slice of slices. rows[s] nil gives a zero row.
func Dense(rows [][]Entry, n int) [][]float64 {
	d := make([][]float64, n)
	for s := range d {
		d[s] = make([]float64, n)
		if s < len(rows) {
			for _, e := range rows[s] {
				d[s][e.To] += e.P
			}
		}
	}
	return d
}

// Rescaled records a row that Renormalize divided by its sum.
type Rescaled struct {
	Action, State int
	Sum           float64
}

// Renormalize divides by its sum every row whose sum misses 1 by more
// than RowTolerance but by at most perEntry times its number of entries
// plus RowTolerance (0.0005 is what rounding each entry to 3 decimals can
// do), provided its entries are finite and non-negative. Rows further off
// are left for Validate to report. It returns the rows it changed.
//
// The rule is symmetric: a sum of 1 + δ and one of 1 - δ are treated
// alike. The allowance of RowTolerance on top of perEntry·k absorbs the
// binary representation of decimal entries (0.5 + 0.499 is
// 0.99899999999999999911 in float64, 1 - 0.001 - 9e-19, and 0.5 + 0.501 is
// 1.00099999999999988987), which would otherwise rescale one and reject the
// other.
func (m *Model) Renormalize(perEntry float64) []Rescaled {
	var out []Rescaled
	for a := range m.Actions {
		for s, row := range m.Actions[a].Rows {
			if row == nil {
				continue
			}
			sum, ok := 0.0, true
			for _, e := range row {
				ok = ok && e.P >= 0 && !math.IsInf(e.P, 0)
				sum += e.P
			}
			dev := math.Abs(sum - 1)
			if !ok || dev <= RowTolerance || !withinRounding(dev, perEntry, len(row)) {
				continue
			}
			for i := range row {
				row[i].P /= sum
			}
			out = append(out, Rescaled{Action: a, State: s, Sum: sum})
		}
	}
	return out
}

// RoundedLooking reports whether a row sum misses 1 by no more than
// rounding each of k entries to 3 decimals could, by the symmetric rule of
// Renormalize with perEntry 0.0005.
func RoundedLooking(sum float64, k int) bool {
	return withinRounding(math.Abs(sum-1), 0.0005, k)
}

// withinRounding reports whether a deviation dev of a row sum from 1 is
// at most perEntry·k, with RowTolerance of slack for the representation
// of decimal entries.
func withinRounding(dev, perEntry float64, k int) bool {
	return dev <= perEntry*float64(k)+RowTolerance
}
