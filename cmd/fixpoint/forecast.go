package main

import (
	"fmt"
	"math"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/reports"
)

// maxForecastYears bounds a forecast horizon.
const maxForecastYears = 500

func (a *app) newForecast() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "forecast FILE",
		Short: "Expected condition mix and spend per year of a population under the advice",
		Long: `forecast solves a class config, then follows a population of units under the
advice: the expected number of units in each condition per period and the
expected spend per period split by action, with its present value. Give the
starting population with --mix (counts or shares per condition) or --from.`,
		Args: exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.forecast(cmd, args[0]) },
	}
	f := cmd.Flags()
	addSolverFlags(cmd)
	f.String("mix", "", "starting units per condition, e.g. `good=30,fair=50,worn=20` (counts or shares)")
	f.String("from", "", "start every unit in this `state` (with --units)")
	f.String("units", "1", "number of units for --from (`n`)")
	f.String("years", "10", "horizon in `years`; the forecast runs ceil(years / period_years) periods")
	f.String("simulate", "0", "fleet files: Monte-Carlo `runs` of the plan (--follow plan, practice or advice)")
	f.String("seed", "1", "seed of the Monte-Carlo (`n`)")
	f.String("follow", "plan", "fleet files: simulate the plan's policy, the whole-unit practice or the unconstrained advice")
	f.String("budget", "", "fleet files: budget per year overriding the fleet file (`amount`)")
	f.String("gap", "0.0001", "fleet files: target relative gap of the plan (`g`)")
	f.String("progress", "auto", "progress bar on stderr: auto (a terminal and over a second), always or never")
	addOutputFlags(cmd)
	return cmd
}

// addSolverFlags adds the flags that control a solve and its discounting.
func addSolverFlags(cmd *cobra.Command) {
	f := cmd.Flags()
	f.String("method", "auto", "solution method: auto, value, policy or lp")
	f.String("tol", fmt.Sprint(optimize.DefaultTol), "target proven gap, absolute, in `currency` units")
	f.String("max-iterations", "0", "cap on sweeps or steps; 0 = the method's default (`n`)")
	f.String("rate", "", "annual discount `rate` overriding the config (0.04 or 4%)")
	f.String("factor", "", "discount `factor` per period overriding the config")
}

// startMix reads --mix or --from/--units into counts per state.
func (a *app) startMix(m *condition.Model) ([]float64, error) {
	mix, from := strings.TrimSpace(a.str("mix")), strings.TrimSpace(a.str("from"))
	n := len(m.States)
	counts := make([]float64, n)
	switch {
	case mix != "" && from != "":
		return nil, usagef("give either --mix or --from, not both")
	case from != "":
		s := m.StateIndex(from)
		if s < 0 {
			return nil, usagef("setting from: unknown state %q%s", from, didYouMean(from, m.StateNames()))
		}
		units, err := a.number("units")
		if err != nil {
			return nil, err
		}
		if !(units > 0) || math.IsInf(units, 0) {
			return nil, usagef("setting units: %g is not a number of units > 0", units)
		}
		counts[s] = units
		return counts, nil
	case mix == "":
		return nil, usagef("give the starting population with --mix state=count,... or --from STATE")
	}
	seen := make(map[string]bool)
	total := 0.0
	for _, part := range strings.Split(mix, ",") {
		name, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" {
			return nil, usagef("setting mix: %q is not state=number", strings.TrimSpace(part))
		}
		s := m.StateIndex(name)
		if s < 0 {
			return nil, usagef("setting mix: unknown state %q%s", name, didYouMean(name, m.StateNames()))
		}
		if seen[name] {
			return nil, usagef("setting mix: state %q given twice", name)
		}
		seen[name] = true
		x, err := parseNumber(strings.TrimSpace(val))
		if err != nil || x < 0 {
			return nil, usagef("setting mix: %s=%s is not a count or share >= 0", name, strings.TrimSpace(val))
		}
		counts[s] = x
		total += x
	}
	if !(total > 0) || math.IsInf(total, 0) {
		return nil, usagef("setting mix: the population is empty")
	}
	return counts, nil
}

// horizonPeriods reads --years and converts it to periods.
func (a *app) horizonPeriods(periodYears float64) (int, error) {
	years, err := a.number("years")
	if err != nil {
		return 0, err
	}
	if !(years > 0) || years > maxForecastYears {
		return 0, usagef("setting years: %g is not a horizon in (0, %d] years", years, maxForecastYears)
	}
	// The small allowance keeps 10 years of 0.1-year periods at 100.
	return int(math.Ceil(years/periodYears - 1e-9)), nil
}

func (a *app) forecast(cmd *cobra.Command, path string) error {
	format, out, err := a.outputSettings(formats, path)
	if err != nil {
		return err
	}
	if m, err := a.loadModel(path); err == nil && m.Fleet != nil {
		if a.str("simulate") == "0" {
			return usagef("for a fleet file give --simulate N (or use fixpoint plan for the expected-count plan)")
		}
		// For a fleet, --years overrides the plan horizon only when given.
		if !cmd.Flags().Changed("years") && os.Getenv("FIXPOINT_YEARS") == "" {
			a.v.Set("years", "")
		}
		return a.simulateFleet(cmd, path, format, out)
	}
	settings, err := a.solverSettings()
	if err != nil {
		return err
	}
	c, p, err := a.loadProblem(path)
	if err != nil {
		return err
	}
	start, err := a.startMix(c.Model)
	if err != nil {
		return err
	}
	periods, err := a.horizonPeriods(c.Model.PeriodYears)
	if err != nil {
		return err
	}
	r, err := optimize.Solve(cmd.Context(), p, settings)
	if err != nil {
		return err
	}
	f, err := optimize.NewForecast(c.Model, c.Costs, p.Discount, r.Policy, start, periods)
	if err != nil {
		return err
	}
	view := &reports.Forecast{Model: c.Name, Currency: c.Currency, PeriodYears: c.Model.PeriodYears,
		States: p.States, Actions: p.Actions, Discount: p.Discount, Forecast: f}
	err = a.emit(cmd, out, format, view)
	if err != nil {
		return err
	}
	return uncertified(r)
}
