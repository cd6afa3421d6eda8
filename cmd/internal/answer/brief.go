package answer

import (
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/reports"
)

// ClassBrief solves a class (under its criterion) for its brief: the
// advice (or the average-criterion advice), the rate comparison when the
// config or the settings give rates, and the forecast of the brief's
// population (--mix or --from, else --units units in the best state) over
// --years years (default 20).
func (e *Env) ClassBrief(r *Class, st settings.Brief, im reports.Imprint) (*reports.Brief, error) {
	var err error
	start := make([]float64, len(r.Model.States))
	start[0] = st.Start.Units
	if st.HasStart {
		if start, err = st.Start.Counts(r.Model); err != nil {
			return nil, err
		}
	}
	years := st.Years
	if years == 0 {
		years = 20
	}
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
	}
	fc, err := optimize.NewForecast(r.Model, r.Costs, factor, policy, start, r.Period.Count(years))
	if err != nil {
		return nil, err
	}
	b.Forecast = &reports.Forecast{Header: e.Header(r.Class), Actions: r.Problem.Actions, Factor: factor, Forecast: fc}
	return b, nil
}
