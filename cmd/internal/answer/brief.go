package answer

import (
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/reports"
)

// briefYears is the horizon of a brief's charts: --years, default 20.
func briefYears(st settings.Brief) float64 {
	if st.Years == 0 {
		return 20
	}
	return st.Years
}

// briefStart is the population a brief's charts follow: --mix or --from,
// else --units units in the best state.
func briefStart(m *condition.Model, st settings.Brief) ([]float64, error) {
	if st.HasStart {
		return st.Start.Counts(m)
	}
	start := make([]float64, len(m.States))
	start[0] = st.Start.Units
	return start, nil
}

// ClassBrief solves a class (c as loaded, r prepared under its criterion)
// for its brief: the advice (or the average-criterion advice), the rate
// comparison when the config or the settings give rates, the robust
// advice when the settings ask for it, and the forecast of the brief's
// population (--mix or --from, else --units units in the best state) over
// --years years (default 20).
func (e *Env) ClassBrief(c *modelfile.Class, r *Class, st settings.Brief, im reports.Imprint) (*reports.Brief, error) {
	start, err := briefStart(r.Model, st)
	if err != nil {
		return nil, err
	}
	years := briefYears(st)
	b := &reports.Brief{Model: r.Model, Costs: r.Costs, Imprint: im}
	factor := 1.0 // the average criterion's forecast is undiscounted
	var policy []int
	if r.Average {
		if b.Average, err = e.AverageAdvice(r, st.Solver); err != nil {
			return nil, err
		}
		policy = b.Average.Result.Policy
	} else {
		if b.Advice, err = e.Advise(r, st.Solver, st.Target); err != nil {
			return nil, err
		}
		policy, factor = b.Advice.Result.Policy, r.Discount.Factor()
		if len(st.Rates.List) > 0 || len(r.Compare) > 0 {
			if b.Compare, err = e.Comparison(st.Solver, r.Class, r.Problem, st.Rates); err != nil {
				return nil, err
			}
		}
		if st.Robust.On {
			if b.Robust, err = e.RobustAdvice(c, r, st.Robust, st.Solver); err != nil {
				return nil, err
			}
		}
	}
	fc, err := optimize.NewForecast(r.Model, r.Costs, factor, policy, start, r.Period.Count(years))
	if err != nil {
		return nil, err
	}
	b.Forecast = &reports.Forecast{Header: e.Header(r.Class), Actions: r.Problem.Actions, Factor: factor, Forecast: fc}
	return b, nil
}

// FleetBrief plans a fleet for its brief (at --rate or --factor when
// given, else the classes' discount), with the inspection calendar of the
// classes with an inspection block, the plans at --rates when given, and
// the files the fleet was read from.
func (e *Env) FleetBrief(ff *modelfile.Fleet, st settings.Brief, im reports.Imprint) (*reports.FleetBrief, error) {
	view, err := e.FleetReport(ff, st.Fleet, st.Override)
	if err != nil {
		return nil, err
	}
	b := &reports.FleetBrief{Plan: view, GapTarget: st.Fleet.Gap, Sources: FleetSources(ff), Imprint: im}
	if len(st.Rates.List) > 0 {
		if b.Rates, err = e.PlanRates(ff, st.Fleet, st.Rates); err != nil {
			return nil, err
		}
	}
	return b, nil
}

// InspectionBrief solves a class with an inspection block for its brief:
// the joint advice (action and next inspection) with the cost of each
// fixed interval, and the calendar of the brief's population (--mix or
// --from, else --units units in the best state), every unit inspected at
// the start of year 1, over --years whole years (default 20).
func (e *Env) InspectionBrief(c *modelfile.Class, st settings.Brief, im reports.Imprint) (*reports.InspectionBrief, error) {
	years, err := calendarYears(st.Years, 20)
	if err != nil {
		return nil, err
	}
	start, err := briefStart(c.Model, st)
	if err != nil {
		return nil, err
	}
	view, err := e.InspectionAdvice(c, st.Override, st.Solver)
	if err != nil {
		return nil, err
	}
	cal, err := view.Problem.Calendar(e.Ctx, view.Result.Policy, start, years)
	if err != nil {
		return nil, err
	}
	return &reports.InspectionBrief{Advice: view, Model: c.Model, Costs: c.Costs, Imprint: im,
		Calendar: &reports.InspectionCalendar{Header: view.Header, Problem: view.Problem, Result: view.Result, Calendar: cal, Start: start}}, nil
}
