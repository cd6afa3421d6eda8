package main

import (
	"errors"
	"math"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/reports"
)

// maxRateRows bounds the rows of a comparison.
const maxRateRows = 200

func (a *app) newCompare() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "compare FILE --rates 0.02,0.035,0.05 | --rates 0:0.12[:0.01]",
		Short: "Compare the advice across discount rates, with every switch point in the range",
		Long: `compare solves a class config at each discount rate given (a list, or a range
lo:hi with an optional step, default 1 point), reports the advice and the
present-value cost per condition and the equivalent annual cost at each rate,
finds every rate in the range at which the advice changes (not only between the
listed rates), and the long-run average cost (rate 0, undiscounted).

Rates are real annual rates; with --inflation they are nominal and converted
by the Fisher relation (1+nominal) = (1+real)(1+inflation). Without --rates the
config's discount.compare list is used.`,
		Args: exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.compare(cmd, args[0]) },
	}
	addSolverFlags(cmd)
	f := cmd.Flags()
	f.String("rates", "", "annual `rates`: a list 0.02,0.035,5% or a range lo:hi[:step]")
	f.String("inflation", "", "annual inflation `rate`: --rates are then nominal")
	addOutputFlags(cmd)
	return cmd
}

// parseRates reads a list or a range of rates.
func parseRates(s string) ([]float64, error) {
	s = strings.TrimSpace(s)
	if strings.Contains(s, ":") {
		parts := strings.Split(s, ":")
		if len(parts) > 3 {
			return nil, usagef("setting rates: %q is not lo:hi or lo:hi:step", s)
		}
		var v [3]float64
		for i, p := range parts {
			x, err := parseNumber(strings.TrimSpace(p))
			if err != nil {
				return nil, usagef("setting rates: %v", err)
			}
			v[i] = x
		}
		lo, hi := v[0], v[1]
		if !(hi > lo) {
			return nil, usagef("setting rates: range %s needs lo < hi", s)
		}
		step := v[2]
		if len(parts) < 3 {
			step = 0.01
			if hi-lo < 0.04 {
				step = (hi - lo) / 4
			}
		}
		if !(step > 0) || (hi-lo)/step > maxRateRows {
			return nil, usagef("setting rates: step %g gives more than %d rates", step, maxRateRows)
		}
		var rates []float64
		for k := 0; ; k++ {
			r := lo + float64(k)*step
			if r > hi+step*1e-9 {
				break
			}
			rates = append(rates, math.Round(r*1e12)/1e12)
		}
		if last := rates[len(rates)-1]; last < hi-step*1e-9 {
			rates = append(rates, hi)
		}
		return rates, nil
	}
	var rates []float64
	for _, p := range strings.Split(s, ",") {
		x, err := parseNumber(strings.TrimSpace(p))
		if err != nil {
			return nil, usagef("setting rates: %v", err)
		}
		rates = append(rates, x)
	}
	if len(rates) > maxRateRows {
		return nil, usagef("setting rates: %d rates, over the limit of %d", len(rates), maxRateRows)
	}
	return rates, nil
}

// comparisonRates returns the real rates to compare, sorted and without
// duplicates, and the inflation when the given rates are nominal.
func (a *app) comparisonRates(c *classFile) (rates []float64, inflation float64, hasInflation bool, err error) {
	if s := a.str("rates"); s != "" {
		if rates, err = parseRates(s); err != nil {
			return nil, 0, false, err
		}
	} else if len(c.Compare) > 0 {
		rates = slices.Clone(c.Compare)
	} else {
		return nil, 0, false, usagef("give the rates to compare with --rates (or discount.compare in the config)")
	}
	if a.str("inflation") != "" {
		if inflation, err = a.number("inflation"); err != nil {
			return nil, 0, false, err
		}
		if !(inflation > -1) || math.IsInf(inflation, 0) {
			return nil, 0, false, usagef("setting inflation: %g is not a rate above -1", inflation)
		}
		hasInflation = true
		for i, r := range rates {
			rates[i] = costs.RealRate(r, inflation)
		}
	}
	for i, r := range rates {
		// Fisher conversions of round numbers leave dust below 1e-15.
		if math.Abs(r) < 1e-15 {
			rates[i] = 0
		}
		if rates[i] < 0 || math.IsNaN(r) || math.IsInf(r, 0) {
			return nil, 0, false, usagef("setting rates: real rate %g is negative; compare rates >= 0", r)
		}
	}
	slices.Sort(rates)
	return slices.Compact(rates), inflation, hasInflation, nil
}

// comparison solves the class at the rates and wraps it for presentation.
func (a *app) comparison(cmd *cobra.Command, s *optimize.Settings, c *classFile, p *optimize.Problem,
	rates []float64, inflation float64, hasInflation bool) (*reports.Comparison, error) {
	period, err := costs.NewPeriod(c.Model.PeriodYears)
	if err != nil {
		return nil, &inputError{File: c.Path, Path: "period_years", Msg: err.Error()}
	}
	cmp, err := optimize.CompareRates(cmd.Context(), p, period, rates, 61, s)
	var me *optimize.MultichainError
	if errors.As(err, &me) {
		return nil, &inputError{File: c.Path, Msg: "rate 0: " + strings.TrimPrefix(err.Error(), "optimize: ")}
	}
	if err != nil {
		return nil, err
	}
	return &reports.Comparison{Model: c.Name, Currency: c.Currency, PeriodYears: c.Model.PeriodYears,
		States: p.States, Actions: p.Actions, Inflation: inflation, HasInflation: hasInflation, Compare: cmp}, nil
}

func (a *app) compare(cmd *cobra.Command, path string) error {
	format, out, err := a.outputSettings(formats, path)
	if err != nil {
		return err
	}
	settings, err := a.solverSettings()
	if err != nil {
		return err
	}
	c, p, err := a.loadProblem(path)
	if err != nil {
		return err
	}
	rates, inflation, hasInflation, err := a.comparisonRates(c)
	if err != nil {
		return err
	}
	view, err := a.comparison(cmd, settings, c, p, rates, inflation, hasInflation)
	if err != nil {
		return err
	}
	return a.emit(cmd, out, format, view)
}
