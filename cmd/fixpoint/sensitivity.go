package main

import (
	"fmt"

	"github.com/spf13/cobra"

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

// costFigures lists the cost figures of a class config as groups of
// (state, action) costs that move together.
func costFigures(c *modelfile.Class, p *optimize.Problem) ([]reports.CostFigure, [][]optimize.Pair) {
	m := c.Model
	var figs []reports.CostFigure
	var groups [][]optimize.Pair
	for s, st := range m.States {
		var g []optimize.Pair
		for _, ch := range p.Choices[s] {
			g = append(g, optimize.Pair{State: s, Action: ch.Action})
		}
		figs = append(figs, reports.CostFigure{Name: "running cost of " + st.Name,
			Path: fmt.Sprintf("states[%d].running_cost", s), Value: c.Costs.Running[s]})
		groups = append(groups, g)
	}
	for a, act := range m.Actions {
		var all []optimize.Pair
		for s := range m.States {
			if p.Find(s, a) >= 0 {
				all = append(all, optimize.Pair{State: s, Action: a})
			}
		}
		if len(all) == 0 {
			continue
		}
		if c.CostScalar[a] {
			figs = append(figs, reports.CostFigure{Name: "cost of " + act.Name, Path: fmt.Sprintf("actions[%d].cost", a),
				Value: c.Costs.Action[a][all[0].State]})
			groups = append(groups, all)
			continue
		}
		for _, pr := range all {
			name := m.States[pr.State].Name
			figs = append(figs, reports.CostFigure{Name: "cost of " + act.Name + " in " + name,
				Path: fmt.Sprintf("actions[%d].cost.%s", a, name), Value: c.Costs.Action[a][pr.State]})
			groups = append(groups, []optimize.Pair{pr})
		}
	}
	return figs, groups
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
	r, err := prepare(c, st.Override, "discounted")
	if err != nil {
		return err
	}
	res, err := optimize.Solve(cmd.Context(), r.Problem, &st.Solver)
	if err != nil {
		return err
	}
	figs, groups := costFigures(r.Class, r.Problem)
	ranges, err := optimize.CostRanges(cmd.Context(), r.Problem, res, groups)
	if err != nil {
		return err
	}
	for i := range figs {
		figs[i].Range = ranges[i]
	}
	view := &reports.Sensitivity{Header: header(r.Class), Problem: r.Problem, Result: res, Figures: figs}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return uncertified(res)
}
