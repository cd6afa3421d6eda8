package answer

import (
	"fmt"
	"strings"

	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/optimize/fleet"
	"fixpoint/reports"
)

// unsafeStay is an unsafe state where the advice takes the unit out of
// service, or may keep it in unsafe states for more than one period:
// stay is the expected stay (the worst over the actions used, upTo when
// there were several).
type unsafeStay struct {
	state, action int
	stay          float64
	outOfService  bool
	upTo          bool
}

// unsafeStays lists, for advice that takes in state s one of the actions
// used[s], the unsafe states where it takes the unit out of service or
// where a unit is expected to stay in unsafe states for more than one
// period (optimize.UnsafeStayWorst).
func unsafeStays(m *condition.Model, used [][]int) []unsafeStay {
	stay, worst := optimize.UnsafeStayWorst(m, used)
	var out []unsafeStay
	for s, t := range stay {
		if !m.States[s].Unsafe || len(used[s]) == 0 {
			continue
		}
		u := unsafeStay{state: s, action: worst[s], stay: t, upTo: len(used[s]) > 1}
		for _, a := range used[s] {
			if m.Actions[a].OutOfService {
				u.action, u.outOfService = a, true
			}
		}
		if u.outOfService || t > 1+1e-9 {
			out = append(out, u)
		}
	}
	return out
}

// warning is the stays-unsafe warning of u: under advice, subject ("a
// unit", "component rope") that becomes the state stays unsafe for so
// long.
func (u unsafeStay) warning(m *condition.Model, advice, subject string) string {
	upTo := ""
	if u.upTo {
		upTo = "up to "
	}
	return fmt.Sprintf("Under %s %s that becomes %s is expected to stay in unsafe states for %s%.2f periods (%.2f years), not one: check that %s really makes it safe.",
		advice, subject, m.States[u.state].Name, upTo, u.stay, u.stay*m.PeriodYears, m.Actions[u.action].Name)
}

// classSafety returns the stays-unsafe warnings of a class's advice, and
// the lines for stderr that say where it takes units out of service (the
// outputs say that themselves).
func classSafety(m *condition.Model, policy []int) (warnings, outOfService []string) {
	for _, u := range unsafeStays(m, single(policy)) {
		if u.outOfService {
			outOfService = append(outOfService, fmt.Sprintf("in unsafe state %s the advice is %s, which takes the unit out of service", m.States[u.state].Name, m.Actions[u.action].Name))
			continue
		}
		warnings = append(warnings, u.warning(m, "the advice", "a unit"))
	}
	return warnings, outOfService
}

// single is the used-actions form of a policy: one action per state.
func single(policy []int) [][]int {
	out := make([][]int, len(policy))
	for s, a := range policy {
		out[s] = []int{a}
	}
	return out
}

// partNotes are the safety lines of one part of a joint or fleet advice
// (a system component, a fleet class) that takes in state s one of the
// actions used[s]: where it takes the unit out of service (said in
// words, in any state), and the stays-unsafe warnings. part names it
// ("component rope", "class pumps"), subject its unit ("component rope",
// "a unit of class pumps").
func partNotes(m *condition.Model, used [][]int, advice, part, subject string) []string {
	var out []string
	for s, as := range used {
		for _, a := range as {
			if m.Actions[a].OutOfService {
				out = append(out, reports.OutOfServiceNote(m.States[s].Name+" ("+part+")", m.Actions[a].Name))
			}
		}
	}
	for _, u := range unsafeStays(m, used) {
		if !u.outOfService {
			out = append(out, u.warning(m, advice, subject))
		}
	}
	return out
}

// ServiceCheckLines says, for check, which actions of m take the unit out
// of service and where they are admissible (where names the class or
// component, "" for a class file itself).
func ServiceCheckLines(m *condition.Model, where string) []string {
	var out []string
	for _, act := range m.Actions {
		if !act.OutOfService {
			continue
		}
		var states []string
		for s, row := range act.Rows {
			if len(row) > 0 {
				states = append(states, m.States[s].Name)
			}
		}
		out = append(out, fmt.Sprintf("note: %saction %s takes the unit out of service (out_of_service: true); it is admissible in %s, and every output says so wherever it is advised",
			where, act.Name, strings.Join(states, ", ")))
	}
	return out
}

// FleetNotes are the safety lines of a fleet plan, class by class (see
// partNotes): every action the plan may take in a condition counts.
func FleetNotes(f *fleet.Problem, p *fleet.Plan) []string {
	var out []string
	for c, fc := range f.Classes {
		out = append(out, partNotes(fc.Model, p.UsedActions(c), "the plan", "class "+fc.Name, "a unit of class "+fc.Name)...)
	}
	return out
}
