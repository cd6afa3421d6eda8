package reports

import (
	"fixpoint/optimize/system"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
)

// SystemAdvice is the certified joint policy of a machine of components,
// with the separate policies it is compared with.
type SystemAdvice struct {
	Header
	System *system.Machine
	Result *system.Result
	// Separate is the joint-system value of the components' separate
	// policies (each planned alone with the shutdown charged to it).
	Separate *system.ProductEvaluation
	Alone    []system.AloneRule
	Groups   []system.GroupRule
	// Notes say where the joint advice takes a component out of service,
	// and warn where it may keep an unsafe component unsafe for more than
	// one period; every output prints them.
	Notes []string
}

// aloneSentence is the threshold sentence of one component's alone rule.
func (s *SystemAdvice) aloneSentence(r system.AloneRule) string {
	m := s.System.Components[r.Component].Model
	return thresholds(m.StateNames(), m.ActionNames(), r.Actions)
}

// GroupSentences says each grouping rule in words: "When the machine is
// stopped for wire_rope (worn), also overhaul hoist_motor if it is fair or
// worse."
func (s *SystemAdvice) GroupSentences() []string {
	var out []string
	for _, g := range s.Groups {
		trig := s.System.Components[g.Trigger]
		comp := s.System.Components[g.Component]
		states := comp.Model.StateNames()
		acts := map[string][]string{}
		var order []string
		for _, x := range g.Extra {
			a := comp.Model.Actions[g.Actions[x]].Name
			if _, ok := acts[a]; !ok {
				order = append(order, a)
			}
			acts[a] = append(acts[a], states[x])
		}
		var parts []string
		for _, a := range order {
			xs := acts[a]
			first := slices.Index(states, xs[0])
			upper := len(xs) == len(states)-first && isRun(states, xs)
			if upper && first < len(states)-1 {
				parts = append(parts, fmt.Sprintf("%s %s if it is %s or worse", a, comp.Name, xs[0]))
			} else {
				parts = append(parts, fmt.Sprintf("%s %s if it is %s", a, comp.Name, joinOr(xs)))
			}
		}
		out = append(out, fmt.Sprintf("When the machine is stopped for %s (%s, the others as new), also %s.",
			trig.Name, trig.Model.States[g.TriggerState].Name, strings.Join(parts, "; ")))
	}
	return out
}

// isRun reports whether xs are consecutive states of the scale.
func isRun(states, xs []string) bool {
	first := slices.Index(states, xs[0])
	for i, x := range xs {
		if first+i >= len(states) || states[first+i] != x {
			return false
		}
	}
	return true
}

// saving returns the present value saved by joint planning from the state
// where every component is as new, and its equivalent per year.
func (s *SystemAdvice) saving() (pv, perYear float64) {
	if s.Separate == nil {
		return math.NaN(), math.NaN()
	}
	pv = s.Separate.Value[0] - s.Result.Value[0]
	return pv, s.Discount.EquivalentAnnual(pv)
}

// WriteTable writes the compact joint advice: the rule for each component
// alone, the grouping rules, what joint planning saves, the certificate and
// the caution. The full joint table is in the CSV and JSON outputs.
func (s *SystemAdvice) WriteTable(w io.Writer) error {
	sys, r := s.System, s.Result
	n, acts := sys.Size()
	fmt.Fprintf(w, "%s: joint advice for %d components sharing a shutdown (%s joint states, %s joint actions)\n",
		s.Model, len(sys.Components), Money(n, 0), Money(acts, 0))
	rows := make([][]string, len(s.Alone))
	for i, a := range s.Alone {
		rows[i] = []string{sys.Components[a.Component].Name, s.aloneSentence(a)}
	}
	if err := table(w, []string{"component", "worked on alone (the others as new)"}, nil, rows); err != nil {
		return err
	}
	lines := []string{}
	if g := s.GroupSentences(); len(g) > 0 {
		lines = append(lines, "Grouping (work brought forward because the machine is stopped anyway):")
		lines = append(lines, g...)
	} else {
		lines = append(lines, "No grouping: the shared shutdown does not bring any work forward in the cases summarised.")
	}
	best := sys.StateName(0)
	lines = append(lines, fmt.Sprintf("Expected cost of a machine starting as new (%s): %s %s present value, proven within [%s, %s].",
		best, s.money(r.Value[0]), s.Currency, s.money(r.Lower[0]), s.money(r.Upper[0])))
	if pv, py := s.saving(); !math.IsNaN(pv) {
		line := fmt.Sprintf("Planning the components separately (each with the shutdown charged alone) costs %s %s: joint planning saves %s %s present value",
			s.money(s.Separate.Value[0]), s.Currency, s.money(pv), s.Currency)
		if !math.IsNaN(py) {
			line += fmt.Sprintf(", %s %s per year", s.money(py), s.Currency)
		}
		lines = append(lines, line+".")
	}
	disc := fmt.Sprintf("Discount factor %s per period of %s (rate %s per year)", Fixed(s.Discount.Factor(), 6), s.Period, Percent(s.Discount.RatePerYear(), 2))
	lines = append(lines, disc+"; shutdown cost "+s.money(sys.Shutdown)+" "+s.Currency+" per period with work; down cost "+
		s.money(sys.Down)+" "+s.Currency+" per period with a component unsafe.")
	lines = append(lines, fmt.Sprintf("Solver: structured value iteration (Kronecker mode products), %s; proven gap %s %s (tolerance %s), Bellman residual at the estimate %s: %s.",
		nouns(r.Sweeps, "sweep", "sweeps"), sci(r.Gap), s.Currency, sci(r.Tol), sci(r.Residual), r.Status),
		"The full joint table (every joint state, its advice, bounds and runner-up): --format csv or json.")
	for _, n := range s.Notes {
		lines = append(lines, "Note: "+n)
	}
	lines = append(lines, "", "CAUTION: "+Caution)
	return writeLines(w, lines)
}

type systemState struct {
	State    string             `json:"state"`
	Action   string             `json:"action"`
	Value    float64            `json:"value"`
	Lower    float64            `json:"lower"`
	Upper    float64            `json:"upper"`
	RunnerUp *string            `json:"runner_up"`
	Margin   *float64           `json:"margin"`
	Q        map[string]float64 `json:"q"`
}

// WriteJSON writes the full joint table with the keys of the class advice;
// "q" holds the advice and the runner-up (a joint state may have hundreds
// of joint actions).
func (s *SystemAdvice) WriteJSON(w io.Writer) error {
	sys, r := s.System, s.Result
	type out struct {
		Model          string        `json:"model"`
		Kind           string        `json:"kind"`
		Currency       string        `json:"currency"`
		PeriodYears    float64       `json:"period_years"`
		DiscountRate   *float64      `json:"discount_rate"`
		DiscountFactor float64       `json:"discount_factor"`
		Method         string        `json:"method"`
		Iterations     int           `json:"iterations"`
		Components     []string      `json:"components"`
		States         []systemState `json:"states"`
		Certificate    struct {
			MaxGap          float64 `json:"max_gap"`
			BellmanResidual float64 `json:"bellman_residual"`
			Status          string  `json:"status"`
			Tolerance       float64 `json:"tolerance"`
		} `json:"certificate"`
		SeparateValue *float64 `json:"separate_value"`
		SavingPV      *float64 `json:"joint_saving_present_value"`
		SavingPerYear *float64 `json:"joint_saving_per_year"`
		Thresholds    string   `json:"thresholds"`
		Notes         []string `json:"notes,omitempty"`
		Caution       string   `json:"caution"`
	}
	o := out{Model: s.Model, Kind: "system", Currency: s.Currency, PeriodYears: s.periodYears(), DiscountFactor: sys.Discount.Factor(),
		Method: "value", Iterations: r.Sweeps, Thresholds: s.rulesText(), Notes: s.Notes, Caution: Caution, States: make([]systemState, 0, len(r.Policy))}
	o.DiscountRate = s.jsonRate()
	for _, c := range sys.Components {
		o.Components = append(o.Components, c.Name)
	}
	o.Certificate.MaxGap, o.Certificate.BellmanResidual, o.Certificate.Status, o.Certificate.Tolerance = r.Gap, r.Residual, r.Status.String(), r.Tol
	if pv, py := s.saving(); !math.IsNaN(pv) {
		o.SeparateValue, o.SavingPV, o.SavingPerYear = num(s.Separate.Value[0]), num(pv), num(py)
	}
	for st := range r.Policy {
		e := systemState{State: sys.StateName(st), Action: sys.ActionName(int(r.Policy[st])),
			Value: r.Value[st], Lower: r.Lower[st], Upper: r.Upper[st], Q: map[string]float64{}}
		e.Q[e.Action] = r.Value[st]
		if r.RunnerUp[st] >= 0 {
			name := sys.ActionName(int(r.RunnerUp[st]))
			m := r.Margin[st]
			e.RunnerUp, e.Margin = &name, &m
			e.Q[name] = r.Value[st] + m
		}
		o.States = append(o.States, e)
	}
	return writeJSON(w, o)
}

func (s *SystemAdvice) rulesText() string {
	var parts []string
	for _, a := range s.Alone {
		parts = append(parts, s.System.Components[a.Component].Name+" alone: "+s.aloneSentence(a))
	}
	return strings.Join(append(parts, s.GroupSentences()...), " ")
}

// WriteCSV writes a caution comment line, then one row per joint state:
// state, one column per component condition, action, one column per
// component action, value, lower, upper, runner_up, margin.
func (s *SystemAdvice) WriteCSV(w io.Writer) error {
	sys, r := s.System, s.Result
	if err := s.writeCSVPreamble(w, "expected discounted cost (present value)"); err != nil {
		return err
	}
	if err := writeCSVNotes(w, s.Notes); err != nil {
		return err
	}
	cw := newCSV(w)
	header := []string{"state"}
	for _, c := range sys.Components {
		header = append(header, c.Name)
	}
	header = append(header, "action")
	for _, c := range sys.Components {
		header = append(header, "do_"+c.Name)
	}
	cw.Write(append(header, "value", "lower", "upper", "runner_up", "margin"))
	for st := range r.Policy {
		row, runner := s.jointNames(st)
		margin := ""
		if runner != "" {
			margin = Fixed(r.Margin[st], 6)
		}
		cw.Write(append(row, Fixed(r.Value[st], 6), Fixed(r.Lower[st], 6), Fixed(r.Upper[st], 6), runner, margin))
	}
	cw.Flush()
	return cw.Error()
}

// jointNames names the row of joint state st in the full joint table: the
// joint state, each component's condition, the joint action and each
// component's action; and the runner-up ("" when there is none).
func (s *SystemAdvice) jointNames(st int) (row []string, runner string) {
	sys, r := s.System, s.Result
	row = []string{sys.StateName(st)}
	for i, x := range sys.Coords(st) {
		row = append(row, sys.Components[i].Model.States[x].Name)
	}
	row = append(row, sys.ActionName(int(r.Policy[st])))
	for i, a := range sys.ActionCoords(int(r.Policy[st])) {
		row = append(row, sys.Components[i].Model.Actions[a].Name)
	}
	if r.RunnerUp[st] >= 0 {
		runner = sys.ActionName(int(r.RunnerUp[st]))
	}
	return row, runner
}
