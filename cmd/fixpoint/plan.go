package main

import (
	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize/fleet"
)

func (a *app) newPlan() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "plan FLEET.yaml",
		Short: "Budget-constrained multi-year work plan of a fleet, with proven bounds",
		Long: `plan reads a fleet file (class configs, an inventory of units and a budget
per calendar year) and plans the work under the budgets: the optimal plan of the
expected-count model, with a proven lower bound (Lagrangian relaxation of the
yearly budget rows) and the gap to the plan found, the problem solved stated in
words; a whole-unit work list for the first period; the plan's policy and its
expected units for later periods; and a Monte-Carlo of the whole-unit practice
(--simulate runs, --seed; 0 runs for none).

The plan runs over the periods that start within the horizon's years; a period's
work is charged to the calendar year in which it starts (running costs are not);
period-k costs are discounted by γ^k, γ the factor per period; after the last
period each unit is charged its unconstrained optimal value. Work in unsafe states
is mandatory: where a year's budget cannot cover it, that year does mandatory
work only, at least cost. For classes with an inspection block, the expected
inspections and their cost per calendar year under each class's inspection
advice are reported beside the plan, which assumes the condition known every
period.`,
		Example: `  fixpoint plan configs/east-zone.yaml
  fixpoint plan configs/east-zone.yaml --budget 45000 --years 15 -o plan.json
  fixpoint plan configs/east-zone.yaml --rates 3%,5%,7% -o plan-rates.xlsx`,
		Args: exactArgs(1, "one fleet file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.plan(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddFleet(f)
	settings.AddYears(f, "horizon in `years` overriding the fleet file")
	settings.AddOverride(f)
	settings.AddRates(f, "annual `rates` to plan at side by side: a list 3%,5%,7% or a range lo:hi[:step]")
	f.String("simulate", "1000", "Monte-Carlo `runs` of the whole-unit practice (0 = none)")
	f.String("seed", "1", "seed of the random numbers (`n`)")
	settings.AddOutput(f, settings.Reports()...)
	return cmd
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
	if len(st.Rates.List) > 0 {
		if err := a.src.NotFor("a plan across rates", " (each rate gets its own discount; the practice is simulated by a single-rate plan)",
			"rate", "factor", "simulate", "seed"); err != nil {
			return err
		}
		return a.planRates(cmd, ff, st)
	}
	if err := a.src.NotFor("a plan at one rate", " (it makes --rates nominal; give --rates)", "inflation"); err != nil {
		return err
	}
	if st.Simulate == 0 {
		if err := a.src.NotFor("a plan with --simulate 0", " (it seeds the Monte-Carlo of the practice)", "seed"); err != nil {
			return err
		}
	}
	view, err := a.env(cmd).FleetReport(ff, st.Fleet, st.Override)
	if err != nil {
		return err
	}
	if st.Simulate > 0 {
		if view.Practice, err = fleet.Simulate(cmd.Context(), view.Fleet, view.Plan, fleet.FollowPractice, st.Simulate, st.Seed, 0, nil); err != nil {
			return err
		}
		view.Seed = st.Seed
	}
	for _, wn := range view.Warnings {
		a.warn(wn)
	}
	return a.emit(cmd, st.Output, view)
}

// planRates plans a fleet at each of the --rates and shows the plans
// side by side.
func (a *app) planRates(cmd *cobra.Command, ff *modelfile.Fleet, st settings.Plan) error {
	view, err := a.env(cmd).PlanRates(ff, st.Fleet, st.Rates)
	if err != nil {
		return err
	}
	return a.emit(cmd, st.Output, view)
}
