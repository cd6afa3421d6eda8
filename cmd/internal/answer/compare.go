package answer

import (
	"errors"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/reports"
	"math"
	"slices"
	"strings"
)

// ComparisonRates returns the real rates to compare, sorted and without
// duplicates: the settings' list, else the config's discount.compare.
func ComparisonRates(c *modelfile.Class, r settings.Rates) ([]float64, error) {
	rates := slices.Clone(r.List)
	if len(rates) == 0 {
		rates = slices.Clone(c.Compare)
	}
	if len(rates) == 0 {
		return nil, settings.Errorf("give the rates to compare with --rates (or discount.compare in the config)")
	}
	for i, x := range rates {
		if r.HasInflation {
			x = costs.RealRate(x, r.Inflation)
		}
		// Fisher conversions of round numbers leave dust below 1e-15.
		if math.Abs(x) < 1e-15 {
			x = 0
		}
		switch {
		case x < 0 || math.IsNaN(x):
			return nil, settings.Errorf("setting rates: real rate %g is negative; compare rates >= 0", x)
		case x > costs.MaxRatePerYear:
			return nil, settings.Errorf("setting rates: real rate %g is above %d (%d00%%) per year", x, costs.MaxRatePerYear, costs.MaxRatePerYear)
		}
		rates[i] = x
	}
	slices.Sort(rates)
	return slices.Compact(rates), nil
}

// Comparison solves the class at the rates and wraps it for presentation.
func (e *Env) Comparison(s optimize.Settings, c *modelfile.Class, p *optimize.Problem, r settings.Rates) (*reports.Comparison, error) {
	rates, err := ComparisonRates(c, r)
	if err != nil {
		return nil, err
	}
	cmp, err := optimize.CompareRates(e.Ctx, p, c.Period, rates, 61, &s)
	var me *optimize.MultichainError
	if errors.As(err, &me) {
		return nil, &modelfile.Fault{File: c.Path, Msg: "rate 0: " + strings.TrimPrefix(err.Error(), "optimize: ")}
	}
	if err != nil {
		return nil, err
	}
	view := &reports.Comparison{Header: e.Header(c), Actions: p.Actions, Inflation: r.Inflation, HasInflation: r.HasInflation, Compare: cmp}
	for _, row := range cmp.Rows {
		w, _ := classSafety(c.Model, row.Policy)
		view.Warnings = append(view.Warnings, w)
	}
	return view, nil
}
