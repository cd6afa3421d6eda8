package main

import (
	"io"
	"os"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"fixpoint/optimize/fleet"
	"fixpoint/reports"
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
work only, at least cost.`,
		Args: exactArgs(1, "one fleet file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.plan(cmd, args[0]) },
	}
	addFleetFlags(cmd)
	cmd.Flags().String("simulate", "1000", "Monte-Carlo `runs` of the whole-unit practice (0 = none)")
	cmd.Flags().String("seed", "1", "seed of the Monte-Carlo (`n`)")
	addOutputFlags(cmd)
	return cmd
}

// addFleetFlags adds the budget overrides and the gap target.
func addFleetFlags(cmd *cobra.Command) {
	f := cmd.Flags()
	f.String("budget", "", "budget per year overriding the fleet file (`amount`)")
	f.String("years", "", "horizon in years overriding the fleet file (`n`)")
	f.String("gap", "0.0001", "target relative gap between the bounds (`g`)")
}

// loadFleet reads a fleet file and applies --budget and --years.
func (a *app) loadFleet(path string) (*fleetFile, *fleet.Problem, error) {
	m, err := a.loadModel(path)
	if err != nil {
		return nil, nil, err
	}
	ff := m.Fleet
	if ff == nil {
		return nil, nil, &inputError{File: path, Msg: "not a fleet file (a fleet file has classes, inventory and budget)"}
	}
	years := ff.Years
	if s := a.str("years"); s != "" {
		if years, err = a.integer("years"); err != nil {
			return nil, nil, err
		}
		if years < 1 || years > maxYears {
			return nil, nil, usagef("setting years: %d is not in [1, %d]", years, maxYears)
		}
		if !ff.HasPerYear && a.str("budget") == "" && years != len(ff.Budget) {
			return nil, nil, usagef("--years %d does not match the %d budgets listed in %s; give --budget too", years, len(ff.Budget), path)
		}
	}
	budget := make([]float64, years)
	switch {
	case a.str("budget") != "":
		b, err := a.number("budget")
		if err != nil {
			return nil, nil, err
		}
		if !(b >= 0) || b > maxBudgetYear {
			return nil, nil, usagef("setting budget: %g is not a budget >= 0", b)
		}
		for t := range budget {
			budget[t] = b
		}
	case ff.HasPerYear:
		for t := range budget {
			budget[t] = ff.PerYear
		}
	default:
		copy(budget, ff.Budget)
	}
	f, err := ff.fleet(budget)
	return ff, f, err
}

func (a *app) gapTarget() (float64, error) {
	g, err := a.number("gap")
	if err != nil {
		return 0, err
	}
	if !(g > 0 && g < 1) {
		return 0, usagef("setting gap: %g is not in (0, 1)", g)
	}
	return g, nil
}

// fleetPlan plans a fleet file.
func (a *app) fleetPlan(cmd *cobra.Command, path string) (*fleetFile, *fleet.Problem, *fleet.Plan, float64, error) {
	gap, err := a.gapTarget()
	if err != nil {
		return nil, nil, nil, 0, err
	}
	ff, f, err := a.loadFleet(path)
	if err != nil {
		return nil, nil, nil, 0, err
	}
	p, err := fleet.Solve(cmd.Context(), f, &fleet.Settings{Gap: gap})
	if err != nil {
		return nil, nil, nil, 0, err
	}
	return ff, f, p, gap, nil
}

func (a *app) plan(cmd *cobra.Command, path string) error {
	format, out, err := a.outputSettings(formats, path)
	if err != nil {
		return err
	}
	ff, f, p, gap, err := a.fleetPlan(cmd, path)
	if err != nil {
		return err
	}
	view := &reports.PlanReport{Model: ff.Name, Currency: ff.Currency, Fleet: f, Plan: p, Warnings: reports.PlanWarnings(f, p, gap, ff.Currency)}
	runs, seed, err := a.runsAndSeed(true)
	if err != nil {
		return err
	}
	if runs > 0 {
		if view.Practice, err = fleet.Simulate(cmd.Context(), f, p, fleet.FollowPractice, runs, uint64(seed), 0, nil); err != nil {
			return err
		}
		view.Seed = uint64(seed)
	}
	for _, wn := range view.Warnings {
		a.warn(wn)
	}
	return a.emit(cmd, out, format, view)
}

// warn prints a warning on stderr.
func (a *app) warn(msg string) { io.WriteString(a.stderr, "fixpoint: warning: "+msg+"\n") }

// simulateFleet runs the Monte-Carlo of a fleet file for forecast
// --simulate.
func (a *app) simulateFleet(cmd *cobra.Command, path string, format string, out output) error {
	runs, seed, err := a.runsAndSeed(false)
	if err != nil {
		return err
	}
	rules := map[string]fleet.Rule{"plan": fleet.FollowPlan, "practice": fleet.FollowPractice, "advice": fleet.FollowAdvice}
	rule, ok := rules[a.str("follow")]
	if !ok {
		return usagef("setting follow: %q; want plan, practice or advice", a.str("follow"))
	}
	ff, f, p, _, err := a.fleetPlan(cmd, path)
	if err != nil {
		return err
	}
	bar := a.progress(runs, "simulating")
	sim, err := fleet.Simulate(cmd.Context(), f, p, rule, runs, uint64(seed), 0, bar.add)
	bar.finish()
	if err != nil {
		return err
	}
	view := &reports.SimulationReport{Model: ff.Name, Currency: ff.Currency, Fleet: f, Plan: p, Sim: sim, Seed: uint64(seed)}
	return a.emit(cmd, out, format, view)
}

// runsAndSeed reads --simulate (runs in [2, 1000000], or 0 when
// allowNone) and --seed.
func (a *app) runsAndSeed(allowNone bool) (int, int, error) {
	runs, err := a.integer("simulate")
	if err != nil {
		return 0, 0, err
	}
	if !(runs >= 2 && runs <= 1_000_000 || allowNone && runs == 0) {
		none := ""
		if allowNone {
			none = " or 0"
		}
		return 0, 0, usagef("setting simulate: %d is not a number of runs in [2, 1000000]%s", runs, none)
	}
	seed, err := a.integer("seed")
	return runs, seed, err
}

// progressBar shows progress on stderr when it is a terminal, the run
// takes longer than a second and --progress is not never (always shows it
// whatever the terminal).
type progressBar struct {
	a     *app
	total int
	label string
	start time.Time
	bar   *progressbar.ProgressBar
	mode  string
}

func (a *app) progress(total int, label string) *progressBar {
	return &progressBar{a: a, total: total, label: label, start: time.Now(), mode: a.str("progress")}
}

func (b *progressBar) enabled() bool {
	switch b.mode {
	case "never":
		return false
	case "always":
		return true
	}
	f, ok := b.a.stderr.(*os.File)
	return ok && term.IsTerminal(int(f.Fd())) && time.Since(b.start) > time.Second
}

// add is called with the number of items done (from any goroutine, one at
// a time).
func (b *progressBar) add(done int) {
	if b.bar == nil {
		if !b.enabled() {
			return
		}
		b.bar = progressbar.NewOptions(b.total, progressbar.OptionSetWriter(b.a.stderr),
			progressbar.OptionSetDescription(b.label), progressbar.OptionShowCount(),
			progressbar.OptionSetPredictTime(true), progressbar.OptionClearOnFinish())
	}
	b.bar.Set(done)
}

func (b *progressBar) finish() {
	if b.bar != nil {
		b.bar.Finish()
	}
}
