package main

import (
	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/reports"
)

func (a *app) newSensitivity() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "sensitivity FILE",
		Short: "How far each cost can move before the advice changes",
		Long: `sensitivity solves a class config (discounted criterion) and reports, for every
condition and every action not advised there, the margin: how much that
action's cost in that condition must fall before it becomes the advice; and,
for every cost figure of the config (each running cost, each action cost),
the range over which it can vary alone without changing the advice anywhere,
with the change that happens first beyond each end.`,
		Example: `  fixpoint sensitivity configs/pumps.yaml
  fixpoint sensitivity configs/pumps.yaml --rate 5% -o ranges.csv`,
		Args: exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.sensitivity(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddSolver(f)
	settings.AddOverride(f)
	settings.AddOutput(f, settings.Reports()...)
	return cmd
}

func (a *app) sensitivity(cmd *cobra.Command, path string) error {
	st, err := a.src.Sensitivity()
	if err != nil {
		return err
	}
	c, err := a.class(cmd, path)
	if err != nil {
		return err
	}
	a.inspectionUnused(cmd, c)
	if err := a.target(st.Output).Check(); err != nil {
		return err
	}
	if c.Criterion == modelfile.Average && !st.Override.Given() {
		return &modelfile.Fault{File: path, Path: "criterion", Msg: "sensitivity works under the discounted criterion only; give --rate or --factor"}
	}
	r, err := answer.Prepare(c, st.Override, "discounted")
	if err != nil {
		return err
	}
	res, err := optimize.Solve(cmd.Context(), r.Problem, &st.Solver)
	if err != nil {
		return answer.SolveFault(path, err)
	}
	figs, groups := answer.CostFigures(r.Class, r.Problem)
	ranges, err := optimize.CostRanges(cmd.Context(), r.Problem, res, groups)
	if err != nil {
		return answer.SolveFault(path, err)
	}
	for i := range figs {
		figs[i].Range = ranges[i]
	}
	env := a.env(cmd)
	view := &reports.Sensitivity{Header: env.Header(r.Class), Problem: r.Problem, Result: res, Figures: figs, Warnings: env.SafetyWarnings(r, res.Policy)}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return answer.Check(res)
}
