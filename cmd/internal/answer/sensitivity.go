package answer

import (
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/optimize"
	"fixpoint/reports"
	"fmt"
)

// CostFigures lists the cost figures of a class config as groups of
// (state, action) costs that move together.
func CostFigures(c *modelfile.Class, p *optimize.Problem) ([]reports.CostFigure, [][]optimize.Pair) {
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
