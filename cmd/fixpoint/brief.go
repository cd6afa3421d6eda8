package main

import (
	"io"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"fixpoint/optimize"
	"fixpoint/reports"
)

func (a *app) newBrief() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "brief FILE -o BRIEF.pdf",
		Short: "Print the policy brief of a class config as a PDF",
		Long: `brief solves a class config and writes a printable PDF: the recommendation in
plain words with the per-condition advice and the key assumptions, charts of the
condition mix, spend and survival over the years, and the inputs with the solver
certificate. Every page carries the caution box.

The forecast charts follow --units units (default 100) starting in the best
state, or the population given by --mix or --from, over --years years
(default 20). The date printed and stamped is --date, or SOURCE_DATE_EPOCH,
or today: the same inputs and date give a byte-identical PDF.`,
		Args: exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.brief(cmd, args[0]) },
	}
	addSolverFlags(cmd)
	f := cmd.Flags()
	f.String("target", "", "`state` whose first passage the life figures measure (default: the worst state)")
	f.String("mix", "", "starting units per condition for the charts, e.g. `good=30,fair=50`")
	f.String("from", "", "start every unit of the charts in this `state`")
	f.String("units", "100", "number of units for the charts (`n`)")
	f.String("years", "20", "horizon of the charts in `years`")
	f.String("rates", "", "annual `rates` to compare on a page of their own (default: the config's discount.compare)")
	f.String("inflation", "", "annual inflation `rate`: --rates are then nominal")
	f.String("budget", "", "fleet files: budget per year overriding the fleet file (`amount`)")
	f.String("gap", "0.0001", "fleet files: target relative gap of the plan (`g`)")
	f.String("date", "", "date printed on the brief, `YYYY-MM-DD` (default: SOURCE_DATE_EPOCH or today)")
	f.StringP("output", "o", "", "the PDF `file` to write (required)")
	f.Bool("force", false, "replace the output file if it exists")
	return cmd
}

// briefDate reads --date, else SOURCE_DATE_EPOCH, else today (UTC).
func (a *app) briefDate() (time.Time, error) {
	if s := strings.TrimSpace(a.str("date")); s != "" {
		t, err := time.Parse("2006-01-02", s)
		if err != nil {
			return time.Time{}, usagef("setting date: %q is not a date YYYY-MM-DD", s)
		}
		return t, nil
	}
	if s := os.Getenv("SOURCE_DATE_EPOCH"); s != "" {
		sec, err := strconv.ParseInt(s, 10, 64)
		if err != nil {
			return time.Time{}, usagef("SOURCE_DATE_EPOCH: %q is not a number of seconds", s)
		}
		return time.Unix(sec, 0).UTC(), nil
	}
	y, m, d := time.Now().UTC().Date()
	return time.Date(y, m, d, 0, 0, 0, 0, time.UTC), nil
}

func (a *app) brief(cmd *cobra.Command, path string) error {
	force, err := a.boolean("force")
	if err != nil {
		return err
	}
	out := output{path: a.str("output"), force: force, inputs: []string{path}}
	if out.path == "" || out.path == "-" {
		return usagef("give the PDF file to write with -o FILE")
	}
	if err := out.check(); err != nil {
		return err
	}
	date, err := a.briefDate()
	if err != nil {
		return err
	}
	settings, err := a.solverSettings()
	if err != nil {
		return err
	}
	if m, err := a.loadModel(path); err == nil && m.Fleet != nil {
		return a.fleetBrief(cmd, path, date, out)
	}
	c, p, err := a.loadProblem(path)
	if err != nil {
		return err
	}
	start, err := a.briefStart(c)
	if err != nil {
		return err
	}
	periods, err := a.horizonPeriods(c.Model.PeriodYears)
	if err != nil {
		return err
	}
	adv, err := a.advise(cmd, settings, c, p)
	if err != nil {
		return err
	}
	f, err := optimize.NewForecast(c.Model, c.Costs, p.Discount, adv.Result.Policy, start, periods)
	if err != nil {
		return err
	}
	b := &reports.Brief{
		Advice: adv,
		Forecast: &reports.Forecast{Model: c.Name, Currency: c.Currency, PeriodYears: c.Model.PeriodYears,
			States: p.States, Actions: p.Actions, Discount: p.Discount, Forecast: f},
		Model: c.Model, Costs: c.Costs, Date: date,
	}
	if a.str("rates") != "" || len(c.Compare) > 0 {
		rates, inflation, hasInflation, err := a.comparisonRates(c)
		if err != nil {
			return err
		}
		if b.Compare, err = a.comparison(cmd, settings, c, p, rates, inflation, hasInflation); err != nil {
			return err
		}
	}
	if err := out.write(cmd.Context(), a.stdout, func(w io.Writer) error { return b.WritePDF(w) }); err != nil {
		return err
	}
	return uncertified(adv.Result)
}

// briefStart is the charts' population: --mix or --from, else --units
// units in the best state.
func (a *app) briefStart(c *classFile) ([]float64, error) {
	if a.str("mix") != "" || a.str("from") != "" {
		return a.startMix(c.Model)
	}
	units, err := a.number("units")
	if err != nil {
		return nil, err
	}
	if !(units > 0) {
		return nil, usagef("setting units: %g is not a number of units > 0", units)
	}
	start := make([]float64, len(c.Model.States))
	start[0] = units
	return start, nil
}

// fleetBrief prints the brief of a fleet file's budget plan.
func (a *app) fleetBrief(cmd *cobra.Command, path string, date time.Time, out output) error {
	if !cmd.Flags().Changed("years") && os.Getenv("FIXPOINT_YEARS") == "" {
		a.v.Set("years", "")
	}
	ff, f, p, gap, err := a.fleetPlan(cmd, path)
	if err != nil {
		return err
	}
	view := &reports.PlanReport{Model: ff.Name, Currency: ff.Currency, Fleet: f, Plan: p, Warnings: reports.PlanWarnings(f, p, gap, ff.Currency)}
	b := &reports.FleetBrief{Plan: view, Date: date}
	return out.write(cmd.Context(), a.stdout, func(w io.Writer) error { return b.WritePDF(w) })
}
