package answer

import (
	"context"
	"errors"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/optimize/inspect"
	"fixpoint/reports"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// InspectionNotFor are the solve flags that do not apply to a class with
// an inspection block: it is solved under the discounted criterion, and
// its long-run figures replace the life figures (--target). --method,
// --tol, --max-iterations, --rate, --factor and the output flags apply.
var InspectionNotFor = []string{"criterion", "target"}

// InspectionProblem builds the inspection problem of a prepared class.
func InspectionProblem(ctx context.Context, r *Class, in *modelfile.Inspection) (*inspect.Problem, error) {
	p, err := inspect.Build(ctx, r.Model, r.Costs, r.Discount.Factor(), &in.Plan)
	if err != nil && !errors.Is(err, context.Canceled) {
		return nil, &modelfile.Fault{File: r.Path, Line: in.Line, Path: "inspection", Msg: strings.TrimPrefix(err.Error(), "inspect: ")}
	}
	return p, err
}

// InspectionRun prepares a class with an inspection block (discount
// override, discounted criterion) and builds and solves its problem.
func (e *Env) InspectionRun(c *modelfile.Class, o settings.Override, s optimize.Settings) (*Class, *inspect.Problem, *inspect.Result, error) {
	r, err := Prepare(c, o, "discounted")
	if err != nil {
		return nil, nil, nil, err
	}
	p, err := InspectionProblem(e.Ctx, r, c.Inspection)
	if err != nil {
		return nil, nil, nil, err
	}
	res, err := inspect.Solve(e.Ctx, p, &s)
	if err != nil {
		return nil, nil, nil, SolveFault(c.Path, err)
	}
	return r, p, res, nil
}

// LongRun returns the long-run figures of a policy, or nil when they are
// not defined (several closed classes).
func LongRun(p *inspect.Problem, policy []int) (*inspect.LongRun, error) {
	l, err := p.LongRun(policy)
	var ce *condition.ClassesError
	if errors.As(err, &ce) {
		return nil, nil
	}
	return l, err
}

// FleetInspections follows the inspection advice of every class of a
// fleet that has an inspection block from the inventory over the plan's
// years (default solver settings; the fleet shares the classes' discount).
func (e *Env) FleetInspections(ff *modelfile.Fleet, years int) ([]reports.ClassInspections, error) {
	var out []reports.ClassInspections
	for i, c := range ff.Classes {
		if c.Inspection == nil {
			continue
		}
		_, p, res, err := e.InspectionRun(c, settings.Override{}, optimize.Settings{})
		if err != nil {
			return nil, err
		}
		if res.Status != optimize.Certified {
			e.Warn(fmt.Sprintf("the inspection advice of class %s is not certified: proven gap %.3g above the tolerance %.3g", ff.Names[i], res.Gap, res.Tol))
		}
		cal, err := p.Calendar(e.Ctx, res.Policy, ff.Counts[i], years)
		if err != nil {
			return nil, err
		}
		out = append(out, reports.ClassInspections{Class: ff.Names[i], Problem: p, Result: res, Calendar: cal})
	}
	return out, nil
}

// names lists the states marked, or "none".
func names(states []string, mark func(s int) bool) string {
	var out []string
	for s := range states {
		if mark(s) {
			out = append(out, states[s])
		}
	}
	if len(out) == 0 {
		return "none"
	}
	return strings.Join(out, ", ")
}

// intList says 1, 2, 4.
func intList(ks []int) string {
	parts := make([]string, len(ks))
	for i, k := range ks {
		parts[i] = strconv.Itoa(k)
	}
	return strings.Join(parts, ", ")
}

// InspectionCheck returns the exit-3 error of an inspection answer that is
// not certified, and nil otherwise.
func InspectionCheck(res *inspect.Result) error {
	return Certificate{Status: res.Status, Gap: res.Gap, Tol: res.Tol, Rounding: res.Rounding, Method: res.Method, Iterations: res.Iterations}.Err()
}

// InspectionAdvice solves a class with an inspection block (discounted
// criterion) and wraps the answer with the cost of each fixed interval and
// the long-run figures.
func (e *Env) InspectionAdvice(c *modelfile.Class, o settings.Override, s optimize.Settings) (*reports.InspectionAdvice, error) {
	r, p, res, err := e.InspectionRun(c, o, s)
	if err != nil {
		return nil, err
	}
	fixed, err := inspect.FixedIntervals(e.Ctx, p, res, &s)
	if err != nil {
		return nil, err
	}
	view := &reports.InspectionAdvice{Header: e.Header(r.Class), Plan: &c.Inspection.Plan, Problem: p, Result: res, Fixed: fixed,
		FixedLongRun: make([]*inspect.LongRun, len(fixed))}
	if view.LongRun, err = LongRun(p, res.Policy); err != nil {
		return nil, err
	}
	for i, f := range fixed {
		if view.FixedLongRun[i], err = LongRun(p.Restrict(f.Interval), f.Result.Policy); err != nil {
			return nil, err
		}
		if f.Result.Status != optimize.Certified {
			e.Warn(fmt.Sprintf("the cost of inspecting every %s is not certified: proven gap %.3g above the tolerance %.3g",
				reports.Duration(p.Years(f.Interval)), f.Result.Gap, f.Result.Tol))
		}
	}
	for s, act := range res.Action {
		if r.Model.Actions[act].OutOfService && r.Model.States[s].Unsafe {
			e.Warn(fmt.Sprintf("in unsafe state %s the advice is %s, which takes the unit out of service", r.Model.States[s].Name, r.Model.Actions[act].Name))
		}
	}
	return view, nil
}

// InspectionCalendar solves a class with an inspection block and follows
// the population start over years whole years (0: 10), every unit
// inspected at time 0.
func (e *Env) InspectionCalendar(c *modelfile.Class, start []float64, years float64, o settings.Override, s optimize.Settings) (*reports.InspectionCalendar, error) {
	n, err := calendarYears(years, 10)
	if err != nil {
		return nil, err
	}
	r, p, res, err := e.InspectionRun(c, o, s)
	if err != nil {
		return nil, err
	}
	cal, err := p.Calendar(e.Ctx, res.Policy, start, n)
	if err != nil {
		return nil, err
	}
	return &reports.InspectionCalendar{Header: e.Header(r.Class), Problem: p, Result: res, Calendar: cal, Start: start}, nil
}

// calendarYears is the horizon of an inspection calendar: years (0:
// def), which must be whole.
func calendarYears(years, def float64) (int, error) {
	if years == 0 {
		years = def
	}
	if years != math.Trunc(years) {
		return 0, settings.Errorf("setting years: %g is not a whole number of years; the inspection calendar counts calendar years", years)
	}
	return int(years), nil
}

// InspectionCheckLine says, for check, that a class's inspection block is
// valid: its intervals, those within the limit, and the failure kinds.
func (e *Env) InspectionCheckLine(path string, c *modelfile.Class) (string, error) {
	r, err := Prepare(c, settings.Override{}, "discounted")
	if err != nil {
		return "", err
	}
	p, err := InspectionProblem(e.Ctx, r, c.Inspection)
	if err != nil {
		return "", err
	}
	say := func(ks []int) string {
		parts := make([]string, len(ks))
		for i, k := range ks {
			parts[i] = reports.Duration(p.Years(k))
		}
		return strings.Join(parts, ", ")
	}
	line := fmt.Sprintf("%s: inspection: ok: intervals of %s periods (%s); within the limit of %s: %s",
		path, intList(c.Inspection.Plan.Intervals),
		say(c.Inspection.Plan.Intervals), reports.Years(p.MaxIntervalYears), say(p.Intervals))
	if len(p.Excluded) > 0 {
		line += "; above it, never advised: " + say(p.Excluded)
	}
	hidden := names(p.States, func(s int) bool { return p.Hidden[s] })
	announced := names(p.States, func(s int) bool { return p.Unsafe[s] && !p.Hidden[s] })
	return fmt.Sprintf("%s; hidden failures: %s; self-announcing: %s", line, hidden, announced), nil
}
