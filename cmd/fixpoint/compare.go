package main

import (
	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
)

func (a *app) newCompare() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "compare FILE --rates 2%,3.5%,5% | --rates 0%:12%[:1%]",
		Short: "Compare the advice across discount rates, with every switch point in the range",
		Long: `compare solves a class config at each discount rate given (a list, or a range
lo:hi with an optional step, default 1 point), reports the advice and the
present-value cost per condition and the equivalent annual cost at each rate,
finds every rate in the range at which the advice changes (not only between the
listed rates), and the long-run average cost (rate 0, undiscounted).

Rates are real annual rates, written 3.5% or 0.035; with --inflation they are
nominal and converted by the Fisher relation (1+nominal) = (1+real)(1+inflation).
Without --rates the config's discount.compare list is used.`,
		Example: `  fixpoint compare configs/pumps.yaml --rates 2%,3.5%,5%,7%
  fixpoint compare configs/pumps.yaml --rates 0%:12% --format csv -o rates.csv
  fixpoint compare configs/pumps.yaml --rates 4%,6%,9% --inflation 2.5%`,
		Args: exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.compare(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddSolver(f)
	settings.AddRates(f, "annual `rates`: a list 2%,3.5%,0.05 or a range lo:hi[:step]")
	settings.AddOutput(f, settings.Reports()...)
	return cmd
}

func (a *app) compare(cmd *cobra.Command, path string) error {
	st, err := a.src.Compare()
	if err != nil {
		return err
	}
	c, err := a.class(cmd, path)
	if err != nil {
		return err
	}
	a.inspectionUnused(cmd, c)
	if err := a.target(st.Output).Check(); err != nil {
		return err
	}
	p, err := optimize.Build(c.Model, c.Costs, c.Discount.Factor())
	if err != nil {
		return &modelfile.Fault{File: c.Path, Msg: err.Error()}
	}
	view, err := a.env(cmd).Comparison(st.Solver, c, p, st.Rates)
	if err != nil {
		return err
	}
	return a.emit(cmd, st.Output, view)
}
