package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
)

// The commands' paths for a class config with an inspection block
// (modelfile.Inspection): solve answers the joint question (action and
// next inspection), forecast counts inspections per calendar year, plan
// reports each class's inspection calendar beside the budget plan, check
// says the block is valid.

// solveInspection answers solve for a class with an inspection block.
func (a *app) solveInspection(cmd *cobra.Command, c *modelfile.Class, st settings.Solve) error {
	if err := a.src.NotFor("a class with an inspection block",
		" (it is solved under the discounted criterion, and its long-run inspection figures replace the life figures)", answer.InspectionNotFor...); err != nil {
		return err
	}
	if err := a.robustNotFor(st.Robust.On, "a class with an inspection block", " (robust advice is for classes without one)"); err != nil {
		return err
	}
	view, err := a.env(cmd).InspectionAdvice(c, st.Override, st.Solver)
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return answer.InspectionCheck(view.Result)
}

// forecastInspection answers forecast for a class with an inspection
// block: inspections and spend per calendar year, every unit inspected at
// time 0.
func (a *app) forecastInspection(cmd *cobra.Command, c *modelfile.Class, start []float64, st settings.Forecast) error {
	view, err := a.env(cmd).InspectionCalendar(c, start, st.Years, st.Override, st.Solver)
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return answer.InspectionCheck(view.Result)
}

// checkInspection says, for check, that a class's inspection block is
// there and valid; nothing when the class has no block.
func (a *app) checkInspection(cmd *cobra.Command, path string, c *modelfile.Class) error {
	if c.Inspection == nil {
		return nil
	}
	line, err := a.env(cmd).InspectionCheckLine(path, c)
	if err != nil {
		return err
	}
	_, err = fmt.Fprintln(a.stdout, line)
	return err
}

// inspectionUnused notes, for a command that solves the class without its
// inspection block, that its figures assume a unit seen every period.
func (a *app) inspectionUnused(cmd *cobra.Command, c *modelfile.Class) {
	if c.Inspection != nil {
		a.note(fmt.Sprintf("%s: %s does not use the inspection block: its figures assume that every unit's condition is seen at the start of every period; "+
			"solve and forecast decide the next inspection with the action", c.Path, cmd.Name()))
	}
}
