package main

import (
	"io"
	"os"
	"time"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/reports"
)

func (a *app) newBrief() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "brief FILE -o BRIEF.pdf",
		Short: "Print the policy brief of a class config or a fleet plan as a PDF",
		Long: `brief solves a class config and writes a printable PDF: the recommendation in
plain words with the per-condition advice and the key assumptions, charts of the
condition mix, spend and survival over the years, and the inputs with the solver
certificate. Every page carries the caution box. For a fleet file it prints the
budget plan.

The forecast charts follow --units units (default 100) starting in the best
state, or the population given by --mix or --from, over --years years
(default 20). The date printed and stamped is --date, or SOURCE_DATE_EPOCH,
or today: the same inputs and date give a byte-identical PDF.`,
		Example: `  fixpoint brief configs/pumps.yaml -o pumps-brief.pdf
  fixpoint brief configs/pumps.yaml -o brief.pdf --rates 2%,4%,6% --date 2026-12-01
  fixpoint brief configs/east-zone.yaml -o fleet-brief.pdf`,
		Args: exactArgs(1, "one class config or fleet file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.brief(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddSolver(f)
	settings.AddOverride(f)
	settings.AddTarget(f)
	settings.AddStart(f, "100")
	settings.AddYears(f, "horizon of the charts in `years` (default 20; for a fleet, the fleet file's)")
	settings.AddRates(f, "annual `rates` to compare on a page of their own (default: the config's discount.compare)")
	settings.AddFleet(f)
	settings.AddDate(f)
	f.StringP("output", "o", "", "the PDF `file` to write (required)")
	f.Bool("force", false, "replace the output file if it exists")
	f.String("format", "pdf", "output format: pdf")
	return cmd
}

func (a *app) brief(cmd *cobra.Command, path string) error {
	st, err := a.src.Brief(time.Now(), os.Getenv("SOURCE_DATE_EPOCH"))
	if err != nil {
		return err
	}
	f, err := a.load(cmd, path, modelfile.ClassFile, modelfile.FleetFile)
	if err != nil {
		return err
	}
	out := a.target(st.Output)
	if err := out.Check(); err != nil {
		return err
	}
	if f.Fleet != nil {
		if err := a.src.NotFor("a fleet file", " (they shape a class brief)",
			"method", "tol", "max-iterations", "rate", "factor", "target", "mix", "from", "units", "rates", "inflation"); err != nil {
			return err
		}
		ff := f.Fleet
		fl, p, err := a.fleetPlan(cmd, ff, st.Fleet)
		if err != nil {
			return err
		}
		view := &reports.PlanReport{Model: ff.Name, Currency: ff.Currency, Fleet: fl, Plan: p, Warnings: reports.PlanWarnings(fl, p, st.Fleet.Gap)}
		b := &reports.FleetBrief{Plan: view, Date: st.Date}
		return out.Write(cmd.Context(), a.stdout, func(w io.Writer) error { return b.WritePDF(w) })
	}
	if err := a.src.NotFor("a class config", " (they apply to fleet files)", "budget", "gap"); err != nil {
		return err
	}
	r, err := prepare(f.Class, st.Override, "")
	if err != nil {
		return err
	}
	if r.Average {
		return &modelfile.Fault{File: path, Path: "criterion", Msg: "brief prints the discounted criterion only; give --rate or --factor, or use solve for the average criterion"}
	}
	start := make([]float64, len(r.Model.States))
	start[0] = st.Start.Units
	if st.HasStart {
		if start, err = st.Start.Counts(r.Model); err != nil {
			return err
		}
	}
	years := st.Years
	if years == 0 {
		years = 20
	}
	adv, err := a.advise(cmd, r, st.Solver, st.Target)
	if err != nil {
		return err
	}
	fc, err := optimize.NewForecast(r.Model, r.Costs, r.Discount.Factor(), adv.Result.Policy, start, r.Period.Count(years))
	if err != nil {
		return err
	}
	b := &reports.Brief{
		Advice:   adv,
		Forecast: &reports.Forecast{Header: header(r.Class), Actions: r.Problem.Actions, Factor: r.Discount.Factor(), Forecast: fc},
		Model:    r.Model, Costs: r.Costs, Imprint: reports.Imprint{Date: st.Date},
	}
	if len(st.Rates.List) > 0 || len(r.Compare) > 0 {
		if b.Compare, err = comparison(cmd, st.Solver, r.Class, r.Problem, st.Rates); err != nil {
			return err
		}
	}
	if err := out.Write(cmd.Context(), a.stdout, func(w io.Writer) error { return b.WritePDF(w) }); err != nil {
		return err
	}
	return uncertified(adv.Result)
}
