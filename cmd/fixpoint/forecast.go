package main

import (
	"math"
	"strings"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/condition"
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
	settings.AddOutput(f, "table", "json", "csv")
	return cmd
}

// startMix turns --mix or --from/--units into counts per state.
func startMix(m *condition.Model, st settings.Start) ([]float64, error) {
	n := len(m.States)
	counts := make([]float64, n)
	switch {
	case st.From != "":
		s := m.StateIndex(st.From)
		if s < 0 {
			return nil, usagef("setting from: unknown state %q%s", st.From, modelfile.DidYouMean(st.From, m.StateNames()))
		}
		counts[s] = st.Units
		return counts, nil
	case st.Mix == "":
		return nil, usagef("give the starting population with --mix state=count,... or --from STATE")
	}
	seen := make(map[string]bool)
	total := 0.0
	for _, part := range strings.Split(st.Mix, ",") {
		name, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" {
			return nil, usagef("setting mix: %q is not state=number", strings.TrimSpace(part))
		}
		s := m.StateIndex(name)
		if s < 0 {
			return nil, usagef("setting mix: unknown state %q%s", name, modelfile.DidYouMean(name, m.StateNames()))
		}
		if seen[name] {
			return nil, usagef("setting mix: state %q given twice", name)
		}
		seen[name] = true
		x, err := modelfile.ParseNumber(val)
		if err != nil || x < 0 || x > 1e12 {
			return nil, usagef("setting mix: %s=%s is not a count or share in [0, 1e12]", name, strings.TrimSpace(val))
		}
		counts[s] = x
		total += x
	}
	if !(total > 0) || math.IsInf(total, 0) {
		return nil, usagef("setting mix: the population is empty")
	}
	return counts, nil
}

// classPolicy solves a class under its criterion and returns the advice
// with the discount factor its present values use (1 under the average
// criterion: totals are then undiscounted).
func (a *app) classPolicy(cmd *cobra.Command, r *classRun, s optimize.Settings) ([]int, float64, *optimize.Result, error) {
	if r.Average {
		res, err := optimize.SolveAverage(cmd.Context(), r.Problem, &s)
		if err != nil {
			return nil, 0, nil, err
		}
		a.safetyWarnings(r, res.Policy)
		return res.Policy, 1, nil, nil
	}
	res, err := optimize.Solve(cmd.Context(), r.Problem, &s)
	if err != nil {
		return nil, 0, nil, err
	}
	a.safetyWarnings(r, res.Policy)
	return res.Policy, r.Discount.Factor(), res, nil
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
		return a.simulateFleet(cmd, f.Fleet, st)
	}
	if err := a.src.NotFor("a class config", " (they apply to fleet files)", "simulate", "follow", "budget", "gap", "progress"); err != nil {
		return err
	}
	r, err := prepare(f.Class, st.Override, "")
	if err != nil {
		return err
	}
	start, err := startMix(r.Model, st.Start)
	if err != nil {
		return err
	}
	years := st.Years
	if years == 0 {
		years = 10
	}
	policy, gamma, res, err := a.classPolicy(cmd, r, st.Solver)
	if err != nil {
		return err
	}
	fc, err := optimize.NewForecast(r.Model, r.Costs, gamma, policy, start, r.Period.Count(years))
	if err != nil {
		return err
	}
	view := &reports.Forecast{Header: header(r.Class), Actions: r.Problem.Actions, Factor: gamma, Forecast: fc}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	if res != nil {
		return uncertified(res)
	}
	return nil
}

// simulateFleet runs the Monte-Carlo of a fleet file for forecast
// --simulate.
func (a *app) simulateFleet(cmd *cobra.Command, ff *modelfile.Fleet, st settings.Forecast) error {
	f, p, err := a.fleetPlan(cmd, ff, st.Fleet)
	if err != nil {
		return err
	}
	bar := a.progress(st.Simulate, "simulating", st.Progress)
	sim, err := fleet.Simulate(cmd.Context(), f, p, st.Follow == "advice", st.Simulate, st.Seed, 0, bar.add)
	bar.finish()
	if err != nil {
		return err
	}
	view := &reports.SimulationReport{Model: ff.Name, Currency: ff.Currency, Fleet: f, Sim: sim, Follow: st.Follow, Seed: st.Seed}
	return a.emit(cmd, st.Output, view)
}
