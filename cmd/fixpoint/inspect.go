package main

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/optimize/inspect"
	"fixpoint/reports"
)

// The commands' paths for a class config with an inspection block
// (modelfile.Inspection): solve answers the joint question (action and
// next inspection), forecast counts inspections per calendar year, plan
// reports each class's inspection calendar beside the budget plan, check
// says the block is valid.

// inspectionNotFor are the solve flags that do not apply to a class with
// an inspection block: it is solved under the discounted criterion, and
// its long-run figures replace the life figures (--target). --method,
// --tol, --max-iterations, --rate, --factor and the output flags apply.
var inspectionNotFor = []string{"criterion", "target"}

// inspectionProblem builds the inspection problem of a prepared class.
func inspectionProblem(ctx context.Context, r *classRun, in *modelfile.Inspection) (*inspect.Problem, error) {
	p, err := inspect.Build(ctx, r.Model, r.Costs, r.Discount.Factor(), &in.Plan)
	if err != nil && !errors.Is(err, context.Canceled) {
		return nil, &modelfile.Fault{File: r.Path, Line: in.Line, Path: "inspection", Msg: strings.TrimPrefix(err.Error(), "inspect: ")}
	}
	return p, err
}

// inspectionRun prepares a class with an inspection block (discount
// override, discounted criterion) and builds and solves its problem.
func inspectionRun(ctx context.Context, c *modelfile.Class, o settings.Override, s optimize.Settings) (*classRun, *inspect.Problem, *inspect.Result, error) {
	r, err := prepare(c, o, "discounted")
	if err != nil {
		return nil, nil, nil, err
	}
	p, err := inspectionProblem(ctx, r, c.Inspection)
	if err != nil {
		return nil, nil, nil, err
	}
	res, err := inspect.Solve(ctx, p, &s)
	if err != nil {
		return nil, nil, nil, err
	}
	return r, p, res, nil
}

// longRun returns the long-run figures of a policy, or nil when they are
// not defined (several closed classes).
func longRun(p *inspect.Problem, policy []int) (*inspect.LongRun, error) {
	l, err := p.LongRun(policy)
	var ce *condition.ClassesError
	if errors.As(err, &ce) {
		return nil, nil
	}
	return l, err
}

// solveInspection answers solve for a class with an inspection block.
func (a *app) solveInspection(cmd *cobra.Command, c *modelfile.Class, st settings.Solve) error {
	if err := a.src.NotFor("a class with an inspection block",
		" (it is solved under the discounted criterion, and its long-run inspection figures replace the life figures)", inspectionNotFor...); err != nil {
		return err
	}
	ctx := cmd.Context()
	r, p, res, err := inspectionRun(ctx, c, st.Override, st.Solver)
	if err != nil {
		return err
	}
	fixed, err := inspect.FixedIntervals(ctx, p, res, &st.Solver)
	if err != nil {
		return err
	}
	view := &reports.InspectionAdvice{Header: header(r.Class), Plan: &c.Inspection.Plan, Problem: p, Result: res, Fixed: fixed,
		FixedLongRun: make([]*inspect.LongRun, len(fixed))}
	if view.LongRun, err = longRun(p, res.Policy); err != nil {
		return err
	}
	for i, f := range fixed {
		if view.FixedLongRun[i], err = longRun(p.Restrict(f.Interval), f.Result.Policy); err != nil {
			return err
		}
		if f.Result.Status != optimize.Certified {
			a.warn(fmt.Sprintf("the cost of inspecting every %s is not certified: proven gap %.3g above the tolerance %.3g",
				reports.Duration(p.Years(f.Interval)), f.Result.Gap, f.Result.Tol))
		}
	}
	for s, act := range res.Action {
		if r.Model.Actions[act].OutOfService && r.Model.States[s].Unsafe {
			a.warn(fmt.Sprintf("in unsafe state %s the advice is %s, which takes the unit out of service", r.Model.States[s].Name, r.Model.Actions[act].Name))
		}
	}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return certificate{status: res.Status, gap: res.Gap, tol: res.Tol, rounding: res.Rounding, method: res.Method, iterations: res.Iterations}.err()
}

// forecastInspection answers forecast for a class with an inspection
// block: inspections and spend per calendar year, every unit inspected at
// time 0.
func (a *app) forecastInspection(cmd *cobra.Command, c *modelfile.Class, start []float64, st settings.Forecast) error {
	years := st.Years
	if years == 0 {
		years = 10
	}
	if years != math.Trunc(years) {
		return usagef("setting years: %g is not a whole number of years; the inspection calendar counts calendar years", years)
	}
	ctx := cmd.Context()
	r, p, res, err := inspectionRun(ctx, c, st.Override, st.Solver)
	if err != nil {
		return err
	}
	cal, err := p.Calendar(ctx, res.Policy, start, int(years))
	if err != nil {
		return err
	}
	view := &reports.InspectionCalendar{Header: header(r.Class), Problem: p, Result: res, Calendar: cal, Start: start}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return certificate{status: res.Status, gap: res.Gap, tol: res.Tol, rounding: res.Rounding, method: res.Method, iterations: res.Iterations}.err()
}

// fleetInspections follows the inspection advice of every class of a
// fleet that has an inspection block from the inventory over the plan's
// years (default solver settings; the fleet shares the classes' discount).
func (a *app) fleetInspections(ctx context.Context, ff *modelfile.Fleet, years int) ([]reports.ClassInspections, error) {
	var out []reports.ClassInspections
	for i, c := range ff.Classes {
		if c.Inspection == nil {
			continue
		}
		_, p, res, err := inspectionRun(ctx, c, settings.Override{}, optimize.Settings{})
		if err != nil {
			return nil, err
		}
		if res.Status != optimize.Certified {
			a.warn(fmt.Sprintf("the inspection advice of class %s is not certified: proven gap %.3g above the tolerance %.3g", ff.Names[i], res.Gap, res.Tol))
		}
		cal, err := p.Calendar(ctx, res.Policy, ff.Counts[i], years)
		if err != nil {
			return nil, err
		}
		out = append(out, reports.ClassInspections{Class: ff.Names[i], Problem: p, Result: res, Calendar: cal})
	}
	return out, nil
}

// checkInspection says, for check, that a class's inspection block is
// there and valid: its intervals, those within the limit, and the failure
// kinds; nothing when the class has no block.
func (a *app) checkInspection(cmd *cobra.Command, path string, c *modelfile.Class) error {
	if c.Inspection == nil {
		return nil
	}
	r, err := prepare(c, settings.Override{}, "discounted")
	if err != nil {
		return err
	}
	p, err := inspectionProblem(cmd.Context(), r, c.Inspection)
	if err != nil {
		return err
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
	_, err = fmt.Fprintf(a.stdout, "%s; hidden failures: %s; self-announcing: %s\n", line, hidden, announced)
	return err
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

// inspectionUnused notes, for a command that solves the class without its
// inspection block, that its figures assume a unit seen every period.
func (a *app) inspectionUnused(cmd *cobra.Command, c *modelfile.Class) {
	if c.Inspection != nil {
		a.note(fmt.Sprintf("%s: %s does not use the inspection block: its figures assume that every unit's condition is seen at the start of every period; "+
			"solve and forecast decide the next inspection with the action", c.Path, cmd.Name()))
	}
}

// intList says 1, 2, 4.
func intList(ks []int) string {
	parts := make([]string, len(ks))
	for i, k := range ks {
		parts[i] = strconv.Itoa(k)
	}
	return strings.Join(parts, ", ")
}
