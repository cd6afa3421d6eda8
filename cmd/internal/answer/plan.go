package answer

import (
	"path/filepath"
	"slices"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/costs"
	"fixpoint/optimize/fleet"
	"fixpoint/reports"
)

// FleetHeader is the reports header of a fleet: its name, currency and the
// classes' shared period and discount.
func (e *Env) FleetHeader(ff *modelfile.Fleet) reports.Header {
	c := ff.Classes[0]
	return reports.Header{Model: ff.Name, Currency: ff.Currency, Period: c.Period, Discount: c.Discount, Source: ff.Path, SHA256: ff.SHA256, Version: e.Version}
}

// FleetReport plans a fleet (at the discount of o when given, else the
// classes' own) and wraps the plan with its warnings and the inspection
// calendar of the classes with an inspection block.
func (e *Env) FleetReport(ff *modelfile.Fleet, st settings.Fleet, o settings.Override) (*reports.PlanReport, error) {
	var d costs.Discount
	if o.Given() {
		var err error
		if d, err = Override(ff.Classes[0].Period, o); err != nil {
			return nil, err
		}
	}
	f, p, err := e.FleetPlan(ff, st, d)
	if err != nil {
		return nil, err
	}
	h := e.FleetHeader(ff)
	h.Discount = f.Discount
	view := &reports.PlanReport{Header: h, Fleet: f, Plan: p, Warnings: append(FleetNotes(f, p), reports.PlanWarnings(f, p, st.Gap, ff.Currency)...)}
	if view.Inspections, err = e.FleetInspections(ff, len(f.Budget)); err != nil {
		return nil, err
	}
	return view, nil
}

// FleetSources are the files a fleet was read from, with their SHA-256:
// the fleet file (by its name), each class config once in the fleet
// file's order and the inventory (by their paths from the fleet file's
// directory, as the fleet file names them), so that the list does not
// depend on where the command ran.
func FleetSources(ff *modelfile.Fleet) []reports.SourceFile {
	dir := filepath.Dir(ff.Path)
	rel := func(p string) string {
		if r, err := filepath.Rel(dir, p); err == nil {
			return filepath.ToSlash(r)
		}
		return p
	}
	out := []reports.SourceFile{{Role: "fleet file", Path: filepath.Base(ff.Path), SHA256: ff.SHA256}}
	seen := map[string]bool{}
	for _, c := range ff.Classes {
		if !seen[c.Path] {
			seen[c.Path] = true
			out = append(out, reports.SourceFile{Role: "class config", Path: rel(c.Path), SHA256: c.SHA256})
		}
	}
	return append(out, reports.SourceFile{Role: "inventory", Path: rel(ff.Inventory), SHA256: ff.InventorySHA256})
}

// FleetPlan applies --budget and --years to a fleet file and plans it at
// discount d (zero: the classes' own).
func (e *Env) FleetPlan(ff *modelfile.Fleet, st settings.Fleet, d ...costs.Discount) (*fleet.Problem, *fleet.Plan, error) {
	years := ff.Years
	if st.Years != 0 {
		if st.Years != float64(int(st.Years)) || st.Years > modelfile.MaxYears {
			return nil, nil, settings.Errorf("setting years: %g is not a whole number of years in [1, %d]", st.Years, modelfile.MaxYears)
		}
		years = int(st.Years)
		if !ff.PerYear && !st.HasBudget && years != len(ff.Budget) {
			return nil, nil, settings.Errorf("--years %d does not match the %d budgets listed in %s; give --budget too", years, len(ff.Budget), ff.Path)
		}
	}
	budget := make([]float64, years)
	for t := range budget {
		switch {
		case st.HasBudget:
			budget[t] = st.Budget
		case ff.PerYear:
			budget[t] = ff.Budget[0]
		default:
			budget[t] = ff.Budget[t]
		}
	}
	f, err := ff.Problem(budget)
	if err != nil {
		return nil, nil, err
	}
	if len(d) > 0 && !d[0].IsZero() {
		f.Discount = d[0]
	}
	p, err := fleet.Solve(e.Ctx, f, &fleet.Settings{Gap: st.Gap})
	if err != nil {
		return nil, nil, SolveFault(ff.Path, err)
	}
	return f, p, nil
}

// PlanRates plans a fleet at each of the rates (real, after any
// inflation) and puts the plans side by side, marking the years where the
// plan changes from one rate to the next.
func (e *Env) PlanRates(ff *modelfile.Fleet, st settings.Fleet, rates settings.Rates) (*reports.PlanRates, error) {
	period := ff.Classes[0].Period
	view := &reports.PlanRates{Header: e.FleetHeader(ff)}
	view.Discount = costs.Discount{} // each plan has its own
	view.Inflation, view.HasInflation = rates.Inflation, rates.HasInflation
	// Lowest rate first (the Fisher relation keeps the order), each once,
	// so that a year marked changed differs from the next lower rate.
	list := slices.Clone(rates.List)
	slices.Sort(list)
	list = slices.Compact(list)
	for _, r := range list {
		if rates.HasInflation {
			r = costs.RealRate(r, rates.Inflation)
		}
		d, err := costs.Rate(r, period)
		if err != nil {
			return nil, settings.Errorf("setting rates: %v", modelfile.Plain(err))
		}
		f, p, err := e.FleetPlan(ff, st, d)
		if err != nil {
			return nil, err
		}
		var changed []bool
		if n := len(view.Plans); n > 0 {
			changed = fleet.ChangedYears(view.Plans[n-1], p, 1e-6)
		}
		view.Fleet = f
		view.Discounts = append(view.Discounts, d)
		view.Plans = append(view.Plans, p)
		view.Changed = append(view.Changed, changed)
	}
	return view, nil
}
