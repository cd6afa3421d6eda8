package main

import (
	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize/fleet"
	"fixpoint/reports"
)

func (a *app) newPlan() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "plan FLEET.yaml",
		Short: "Budget-constrained multi-year work plan of a fleet, with proven bounds",
		Long: `plan reads a fleet file (class configs, an inventory of units and a budget per
year) and plans the work of every year under the budget: the optimal plan of
the expected-count model, with a proven lower bound (Lagrangian relaxation of the
budgets) and the gap to the plan found, then a whole-unit work list.

Years t = 1..T; the inventory gives year 1; year-t work is charged to the budget
of year t (running costs are not); year-t costs are discounted by γ^(t-1); after
year T each unit is charged its unconstrained optimal value, discounted by γ^T.
Work in unsafe states is mandatory and funded first.`,
		Example: `  fixpoint plan configs/east-zone.yaml
  fixpoint plan configs/east-zone.yaml --budget 45000 --years 15 -o plan.json`,
		Args: exactArgs(1, "one fleet file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.plan(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddFleet(f)
	settings.AddYears(f, "horizon in `years` overriding the fleet file")
	settings.AddOutput(f, "table", "json", "csv")
	return cmd
}

// fleetPlan applies --budget and --years to a fleet file and plans it.
func (a *app) fleetPlan(cmd *cobra.Command, ff *modelfile.Fleet, st settings.Fleet) (*fleet.Problem, *fleet.Plan, error) {
	years := ff.Years
	if st.Years != 0 {
		if st.Years != float64(int(st.Years)) || st.Years > modelfile.MaxYears {
			return nil, nil, usagef("setting years: %g is not a whole number of years in [1, %d]", st.Years, modelfile.MaxYears)
		}
		years = int(st.Years)
		if !ff.PerYear && !st.HasBudget && years != len(ff.Budget) {
			return nil, nil, usagef("--years %d does not match the %d budgets listed in %s; give --budget too", years, len(ff.Budget), ff.Path)
		}
	}
	budget := make([]float64, years)
	for t := range budget {
		switch {
		case st.HasBudget:
			budget[t] = st.Budget
		case ff.PerYear:
			budget[t] = ff.Budget[0]
		default:
			budget[t] = ff.Budget[t]
		}
	}
	f, err := ff.Problem(budget)
	if err != nil {
		return nil, nil, err
	}
	p, err := fleet.Solve(cmd.Context(), f, &fleet.Settings{Gap: st.Gap})
	if err != nil {
		return nil, nil, err
	}
	return f, p, nil
}

func (a *app) plan(cmd *cobra.Command, path string) error {
	st, err := a.src.Plan()
	if err != nil {
		return err
	}
	file, err := a.load(cmd, path, modelfile.FleetFile)
	if err != nil {
		return err
	}
	if err := a.target(st.Output).Check(); err != nil {
		return err
	}
	ff := file.Fleet
	f, p, err := a.fleetPlan(cmd, ff, st.Fleet)
	if err != nil {
		return err
	}
	view := &reports.PlanReport{Model: ff.Name, Currency: ff.Currency, Fleet: f, Plan: p, Warnings: reports.PlanWarnings(f, p, st.Fleet.Gap)}
	for _, wn := range view.Warnings {
		a.warn(wn)
	}
	return a.emit(cmd, st.Output, view)
}
