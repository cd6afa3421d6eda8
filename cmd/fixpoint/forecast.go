package main

import (
	"fmt"
	"math"
	"strconv"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/progress"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/optimize/fleet"
	"fixpoint/reports"
)

func (a *app) newForecast() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "forecast FILE",
		Short: "Expected condition mix and spend of a population under the advice",
		Long: `forecast solves a class config, then follows a population of units under the
advice: the expected number of units in each condition per period and the
expected spend per period split by action, with its present value. Give the
starting population with --mix (counts or shares per condition) or --from.
For a class with an inspection block, it counts instead the inspections and
their cost per calendar year (every unit inspected at the start).

For a fleet file, --simulate N runs the budget plan (or, with --follow advice,
the unconstrained advice) N times on whole units and reports percentile bands.`,
		Example: `  fixpoint forecast configs/pumps.yaml --mix sound=60,light_wear=30,heavy_wear=10
  fixpoint forecast configs/pumps.yaml --from sound --units 40 --years 25 --format csv
  fixpoint forecast configs/east-zone.yaml --simulate 1000`,
		Args: exactArgs(1, "one class config or fleet file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.forecast(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddSolver(f)
	settings.AddOverride(f)
	settings.AddStart(f, "1")
	settings.AddYears(f, "horizon in `years` (default 10; for a fleet, the fleet file's)")
	settings.AddSimulation(f)
	settings.AddFleet(f)
	settings.AddOutput(f, settings.Reports()...)
	return cmd
}

func (a *app) forecast(cmd *cobra.Command, path string) error {
	st, err := a.src.Forecast()
	if err != nil {
		return err
	}
	f, err := a.load(cmd, path, modelfile.ClassFile, modelfile.FleetFile)
	if err != nil {
		return err
	}
	if err := a.target(st.Output).Check(); err != nil {
		return err
	}
	if f.Fleet != nil {
		if st.Simulate == 0 {
			return usagef("for a fleet file give --simulate N (or use fixpoint plan for the expected-count plan)")
		}
		if err := a.src.NotFor("a fleet file", " (the fleet's classes give the discount and the plan the policy)",
			"method", "tol", "max-iterations", "rate", "factor", "mix", "from", "units"); err != nil {
			return err
		}
		if st.Follow == "advice" {
			if err := a.src.NotFor("--follow advice", " (the unconstrained advice is not the plan; --gap is the plan's)", "gap"); err != nil {
				return err
			}
		}
		return a.simulateFleet(cmd, f.Fleet, st)
	}
	if err := a.src.NotFor("a class config", " (they apply to fleet files)", "simulate", "seed", "follow", "budget", "gap", "progress"); err != nil {
		return err
	}
	r, err := answer.Prepare(f.Class, st.Override, "")
	if err != nil {
		return err
	}
	if r.Average {
		if err := a.src.NotFor("the average criterion", " (it has no discounting)", "rate", "factor"); err != nil {
			return err
		}
	}
	start, err := st.Start.Counts(r.Model)
	if err != nil {
		return err
	}
	if f.Class.Inspection != nil {
		return a.forecastInspection(cmd, f.Class, start, st)
	}
	years := st.Years
	if years == 0 {
		years = 10
	}
	adv, err := a.env(cmd).ClassPolicy(r, st.Solver)
	if err != nil {
		return err
	}
	n := r.Period.Count(years)
	if covered := float64(n) * r.Period.Years(); math.Abs(covered-years) > 1e-9 {
		a.note(fmt.Sprintf("%g years is not a whole number of periods of %s: the forecast covers the %d period(s) that start within it, %s years",
			years, r.Period, n, strconv.FormatFloat(covered, 'f', -1, 64)))
	}
	fc, err := optimize.NewForecast(r.Model, r.Costs, adv.Factor, adv.Policy, start, n)
	if err != nil {
		return err
	}
	view := &reports.Forecast{Header: a.env(cmd).Header(r.Class), Actions: r.Problem.Actions, Factor: adv.Factor, Forecast: fc,
		Result: adv.Result, Average: adv.Average}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	if adv.Result != nil {
		return answer.Check(adv.Result)
	}
	return nil
}

// simulateFleet runs the Monte-Carlo of a fleet file for forecast
// --simulate.
func (a *app) simulateFleet(cmd *cobra.Command, ff *modelfile.Fleet, st settings.Forecast) error {
	f, p, err := a.env(cmd).FleetPlan(ff, st.Fleet)
	if err != nil {
		return err
	}
	bar := progress.New(a.stderr, st.Simulate, "simulating", st.Progress)
	rules := map[string]fleet.Rule{"plan": fleet.FollowPlan, "practice": fleet.FollowPractice, "advice": fleet.FollowAdvice}
	sim, err := fleet.Simulate(cmd.Context(), f, p, rules[st.Follow], st.Simulate, st.Seed, 0, bar.Add)
	bar.Finish()
	if err != nil {
		return err
	}
	view := &reports.SimulationReport{Header: a.env(cmd).FleetHeader(ff), Fleet: f, Plan: p, Sim: sim, Seed: st.Seed, Notes: answer.FleetNotes(f, p)}
	for _, n := range view.Notes {
		a.warn(n)
	}
	return a.emit(cmd, st.Output, view)
}
