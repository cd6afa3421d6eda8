package main

import (
	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
)

// robustNotFor refuses the robust settings for a file or criterion they
// do not apply to: flags given on the command line, like every other
// flag, and robust advice asked for by the environment or a settings file.
func (a *app) robustNotFor(on bool, what, why string) error {
	if err := a.src.NotFor(what, why, settings.RobustKeys...); err != nil {
		return err
	}
	if on {
		return usagef("the robust settings (FIXPOINT_ROBUST* or the settings file) do not apply to %s%s", what, why)
	}
	return nil
}

// solveRobust solves a class for robust advice: the ambiguity sets from
// the config's uncertainty block or the --robust-* settings, then the
// analysis (nominal and robust solves, the price of robustness, which
// rows more data would settle) and its view. c is the class as loaded
// (r may carry a discount override).
func (a *app) solveRobust(cmd *cobra.Command, c *modelfile.Class, r *answer.Class, st settings.Solve) error {
	if st.Solver.Method == optimize.LinearProgram {
		return usagef("method lp does not apply to robust advice (the robust problem is not a linear program); use auto, value or policy")
	}
	if err := a.src.NotFor("robust advice", " (it shows no life figures)", "target"); err != nil {
		return err
	}
	view, err := a.env(cmd).RobustAdvice(c, r, st.Robust, st.Solver)
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return answer.RobustCheck(view.Analysis)
}
