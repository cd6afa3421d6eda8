package inspect

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"fixpoint/condition"
)

// MaxPeriods is the longest interval, in periods, that a plan may allow.
// Building a problem costs time in proportion to the longest admissible
// interval, so a plan that asks for more is a fault, not a long wait.
const MaxPeriods = 10000

// LimitTolerance is the relative rounding allowed when an interval is
// compared with the limit: k is admissible when
// k·PeriodYears <= MaxIntervalYears·(1 + LimitTolerance), so that 6 periods
// of 1/12 year meet a limit of 0.5 years whatever the rounding of 1/12.
const LimitTolerance = 1e-9

// admissible reports whether an interval of k periods of periodYears is
// within the limit of maxYears, up to LimitTolerance.
func admissible(k int, periodYears, maxYears float64) bool {
	return float64(k)*periodYears <= maxYears*(1+LimitTolerance)
}

// Plan is the inspection side of one class of equipment. States are
// indices into the condition model's scale.
type Plan struct {
	// Cost is the cost of one inspection, in the currency of the cost
	// schedule, charged at every decision epoch: a scheduled inspection
	// and the call-out after a self-announcing failure alike. >= 0.
	Cost float64
	// Downtime is the cost of the downtime one inspection causes, charged
	// with Cost at every epoch. >= 0; zero when there is none.
	Downtime float64
	// Intervals lists the allowed intervals between inspections, in model
	// periods, strictly increasing, each in 1..MaxPeriods.
	Intervals []int
	// Hidden lists the unsafe states whose failure is found only by an
	// inspection. Every unsafe state not listed is self-announcing: the
	// failure is seen in the period it happens.
	Hidden []int
	// RiskCost[s] is the cost of each period that a unit spends unseen in
	// the hidden unsafe state s (the risk of a hidden failure left in
	// service), >= 0 and zero outside Hidden. nil means zero everywhere;
	// otherwise one entry per state.
	RiskCost []float64
	// MaxIntervalYears is the longest interval the statutory or written
	// scheme of examination allows, in years, finite and > 0. Allowed
	// intervals longer than that are not admissible and never advised
	// (Problem.Excluded lists them).
	MaxIntervalYears float64
}

// Fault is one problem found in a plan, in the discount factor or in a
// hand-made Problem. Index is the position in the list named by Field
// (Intervals, Hidden, or the choices of State), State a state index; each
// is -1 when the fault is not about one.
type Fault struct {
	// Field names what is wrong: "cost", "downtime", "intervals",
	// "hidden", "risk_cost", "max_interval_years", "passive", "discount",
	// "states" or "choices".
	Field   string
	Index   int
	State   int
	Problem string
}

func (f *Fault) Error() string {
	var b strings.Builder
	b.WriteString("inspect: ")
	b.WriteString(f.Field)
	if f.Index >= 0 {
		fmt.Fprintf(&b, "[%d]", f.Index)
	}
	if f.State >= 0 {
		fmt.Fprintf(&b, ", state %d", f.State)
	}
	b.WriteString(": ")
	b.WriteString(f.Problem)
	return b.String()
}

// kind is how a state behaves between inspections.
type kind uint8

const (
	safe      kind = iota // moves by the passive row
	hidden                // unsafe, stays until seen
	announced             // unsafe, ends the interval when entered
)

// Validate reports every fault of the plan against the condition model m,
// which must be valid (condition.Model.Validate), joined; each is a *Fault
// with its field, list position and state, as Build reports them. Among
// them is the fault that no allowed interval is within the limit (Field
// "max_interval_years"). It lets a reader of configs check a plan without
// building the problem.
func (pl *Plan) Validate(m *condition.Model) error {
	errs, _ := pl.check(m)
	return errors.Join(errs...)
}

// check returns every fault of the plan against model m (already valid),
// and the kind of every state.
func (pl *Plan) check(m *condition.Model) ([]error, []kind) {
	var errs []error
	add := func(field string, index, state int, format string, args ...any) {
		errs = append(errs, &Fault{Field: field, Index: index, State: state, Problem: fmt.Sprintf(format, args...)})
	}
	n := len(m.States)
	if !(pl.Cost >= 0) || math.IsInf(pl.Cost, 0) {
		add("cost", -1, -1, "inspection cost %v is not a finite number >= 0", pl.Cost)
	}
	if !(pl.Downtime >= 0) || math.IsInf(pl.Downtime, 0) {
		add("downtime", -1, -1, "downtime cost %v is not a finite number >= 0", pl.Downtime)
	}
	if !(pl.MaxIntervalYears > 0) || math.IsInf(pl.MaxIntervalYears, 0) {
		add("max_interval_years", -1, -1, "limit %v years is not a finite number > 0", pl.MaxIntervalYears)
	}
	if len(pl.Intervals) == 0 {
		add("intervals", -1, -1, "no interval is allowed")
	}
	sound := len(pl.Intervals) > 0
	for i, k := range pl.Intervals {
		switch {
		case k < 1 || k > MaxPeriods:
			add("intervals", i, -1, "an interval of %s is outside 1..%d periods", periods(k), MaxPeriods)
			sound = false
		case i > 0 && k <= pl.Intervals[i-1]:
			add("intervals", i, -1, "an interval of %s does not exceed the one before (%d); list intervals in increasing order, each once", periods(k), pl.Intervals[i-1])
			sound = false
		}
	}
	if k := slices.Min(append([]int{MaxPeriods}, pl.Intervals...)); sound && pl.MaxIntervalYears > 0 && !admissible(k, m.PeriodYears, pl.MaxIntervalYears) {
		add("max_interval_years", -1, -1, "the shortest allowed interval, %d periods (%g years), exceeds the limit of %g years; no interval is admissible",
			k, float64(k)*m.PeriodYears, pl.MaxIntervalYears)
	}
	kinds := make([]kind, n)
	for s, st := range m.States {
		if st.Unsafe {
			kinds[s] = announced
		}
	}
	for i, s := range pl.Hidden {
		switch {
		case s < 0 || s >= n:
			add("hidden", i, -1, "state %d is outside the scale of %d states", s, n)
		case !m.States[s].Unsafe:
			add("hidden", i, s, "state %q is not unsafe; only an unsafe state can be a hidden failure", m.States[s].Name)
		case kinds[s] == hidden:
			add("hidden", i, s, "state %q is listed twice", m.States[s].Name)
		default:
			kinds[s] = hidden
		}
	}
	if pl.RiskCost != nil && len(pl.RiskCost) != n {
		add("risk_cost", -1, -1, "%d risk costs, want one per state (%d) or none", len(pl.RiskCost), n)
	} else {
		for s, c := range pl.RiskCost {
			switch {
			case !(c >= 0) || math.IsInf(c, 0):
				add("risk_cost", -1, s, "risk cost %v is not a finite number >= 0", c)
			case c != 0 && kinds[s] != hidden:
				add("risk_cost", -1, s, "state %q has a risk cost but is not a hidden failure state", m.States[s].Name)
			}
		}
	}
	// Between inspections a safe state moves by the passive row, which a
	// longer interval than one period needs in every safe state.
	if len(pl.Intervals) > 0 && slices.Max(pl.Intervals) > 1 {
		pa := m.Passive()
		for s := range n {
			if kinds[s] == safe && (pa < 0 || !m.Actions[pa].Admissible(s)) {
				add("passive", -1, s, "state %q has no passive row; between inspections a unit is left as it is, so intervals above one period need a passive row in every state that is not unsafe", m.States[s].Name)
			}
		}
	}
	return errs, kinds
}

// periods says k periods: "1 period", "3 periods".
func periods(k int) string {
	if k == 1 {
		return "1 period"
	}
	return strconv.Itoa(k) + " periods"
}
