package main

import (
	"fmt"

	"github.com/spf13/cobra"

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
		Args: exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.sensitivity(cmd, args[0]) },
	}
	addSolverFlags(cmd)
	addOutputFlags(cmd)
	return cmd
}

// costFigures lists the cost figures of a class config as groups of
// (state, action) costs that move together.
func costFigures(c *classFile, p *optimize.Problem) ([]reports.CostFigure, [][]optimize.Pair) {
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
			if p.Choices[s] != nil && slicesContainsAction(p.Choices[s], a) {
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

func slicesContainsAction(cs []optimize.Choice, a int) bool {
	for _, c := range cs {
		if c.Action == a {
			return true
		}
	}
	return false
}

func (a *app) sensitivity(cmd *cobra.Command, path string) error {
	format, out, err := a.outputSettings(formats, path)
	if err != nil {
		return err
	}
	settings, err := a.solverSettings()
	if err != nil {
		return err
	}
	c, p, err := a.loadProblem(path)
	if err != nil {
		return err
	}
	if !c.HasRate && !c.HasFactor {
		return &inputError{File: path, Path: "discount", Msg: "sensitivity needs a discount rate or factor (in the config, or --rate / --factor)"}
	}
	r, err := optimize.Solve(cmd.Context(), p, settings)
	if err != nil {
		return err
	}
	figs, groups := costFigures(c, p)
	ranges, err := optimize.CostRanges(cmd.Context(), p, r, groups)
	if err != nil {
		return err
	}
	for i := range figs {
		figs[i].Range = ranges[i]
	}
	view := &reports.Sensitivity{Model: c.Name, Currency: c.Currency, Unsafe: c.unsafe(), Problem: p, Result: r, Figures: figs}
	if err := a.emit(cmd, out, format, view); err != nil {
		return err
	}
	return uncertified(r)
}
