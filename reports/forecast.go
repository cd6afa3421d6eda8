package reports

import (
	"fmt"
	"io"
	"math"

	"fixpoint/optimize"
)

// Forecast is the expected evolution of a population of one class under
// the advice, ready to present.
type Forecast struct {
	Header
	Actions []string
	// Factor is the discount factor per period of PresentValue (1 under
	// the average criterion: the total is then undiscounted).
	Factor   float64
	Forecast *optimize.Forecast
	// Result or Average, when set, is the solve behind the advice
	// (discounted or long-run average): the workbook states its
	// certificate.
	Result  *optimize.Result
	Average *optimize.AverageResult
}

// criterion says what the present value of the forecast is.
func (f *Forecast) criterion() string {
	if f.Factor == 1 {
		return "average"
	}
	return "expected discounted cost (present value)"
}

// year returns the year at the start of period k.
func (f *Forecast) year(k int) float64 { return f.Period.Start(k) }

// WriteTable writes two tables with one row per period: the expected units
// per condition, and the spend per action with the running cost and the
// total; then the present value and the caution.
func (f *Forecast) WriteTable(w io.Writer) error {
	// The time column is the start of the period in years from the
	// start (0 for the first), as plan's "starts (years)"; CSV and JSON
	// keep the key "year" for it.
	counts := []string{"period", "starts (years)"}
	spend := []string{"period", "starts (years)"}
	cn, sn := []bool{true, true}, []bool{true, true}
	for _, s := range f.States {
		counts = append(counts, s)
		cn = append(cn, true)
	}
	for _, a := range f.Actions {
		spend = append(spend, a)
		sn = append(sn, true)
	}
	spend = append(spend, "running", "total")
	sn = append(sn, true, true)
	var crows, srows [][]string
	for _, p := range f.Forecast.Periods {
		lead := []string{fmt.Sprint(p.Period), f.yearText(p.Period)}
		crow := append([]string(nil), lead...)
		for _, x := range p.Counts {
			crow = append(crow, Fixed(x, 2))
		}
		srow := append([]string(nil), lead...)
		for _, x := range p.ActionSpend {
			srow = append(srow, Money(x, 0))
		}
		crows = append(crows, crow)
		srows = append(srows, append(srow, Money(p.Running, 0), Money(p.Total, 0)))
	}
	if _, err := fmt.Fprintf(w, "%s: expected units per condition at the start of each period, under the advice\n", f.Model); err != nil {
		return err
	}
	if err := table(w, counts, cn, crows); err != nil {
		return err
	}
	if _, err := fmt.Fprintf(w, "\nExpected spend per period (%s): what the advice does to those units, and their running costs\n", f.Currency); err != nil {
		return err
	}
	if err := table(w, spend, sn, srows); err != nil {
		return err
	}
	return writeLines(w, []string{
		fmt.Sprintf("Present value of the spend over %s: %s %s (discount factor %s per period, costs at the start of each period).",
			periodCount(len(f.Forecast.Periods)), f.money(f.Forecast.PresentValue), f.Currency, Fixed(f.Factor, 6)),
		"Counts are expected values (fractions of units), not a work list.",
		"CAUTION: " + Caution,
	})
}

func trimYear(y float64) string {
	if y == float64(int(y)) {
		return fmt.Sprint(int(y))
	}
	return Fixed(y, 2)
}

// yearText formats the start of period k in years with the decimals the
// period needs, the same for every row ("0.00", "0.25", ..., "1.00").
func (f *Forecast) yearText(k int) string {
	dec := 0
	for p := f.periodYears(); dec < 3 && math.Abs(p-math.Round(p)) > 1e-9; p *= 10 {
		dec++
	}
	return Fixed(f.year(k), dec)
}

type forecastPeriodJSON struct {
	Period      int                `json:"period"`
	Year        float64            `json:"year"`
	Counts      map[string]float64 `json:"counts"`
	ActionSpend map[string]float64 `json:"action_spend"`
	RunningCost float64            `json:"running_cost"`
	TotalSpend  float64            `json:"total_spend"`
}

type forecastJSON struct {
	Model          string               `json:"model"`
	Currency       string               `json:"currency"`
	PeriodYears    float64              `json:"period_years"`
	DiscountFactor float64              `json:"discount_factor"`
	Periods        []forecastPeriodJSON `json:"periods"`
	FinalCounts    map[string]float64   `json:"final_counts"`
	PresentValue   float64              `json:"present_value"`
	Caution        string               `json:"caution"`
}

// WriteJSON writes the forecast as one JSON object (keys in the README).
func (f *Forecast) WriteJSON(w io.Writer) error {
	out := forecastJSON{Model: f.Model, Currency: f.Currency, PeriodYears: f.periodYears(), DiscountFactor: f.Factor,
		FinalCounts: f.byState(f.Forecast.Final), PresentValue: f.Forecast.PresentValue, Caution: Caution}
	for _, p := range f.Forecast.Periods {
		spend := make(map[string]float64, len(f.Actions))
		for a, x := range p.ActionSpend {
			spend[f.Actions[a]] = x
		}
		out.Periods = append(out.Periods, forecastPeriodJSON{Period: p.Period, Year: f.year(p.Period),
			Counts: f.byState(p.Counts), ActionSpend: spend, RunningCost: p.Running, TotalSpend: p.Total})
	}
	return writeJSON(w, out)
}

func (f *Forecast) byState(x []float64) map[string]float64 {
	m := make(map[string]float64, len(x))
	for s, v := range x {
		m[f.States[s]] = v
	}
	return m
}

// WriteCSV writes a caution comment line, then one row per period: period,
// year, count_<state>..., spend_<action>..., running_cost, total_spend.
func (f *Forecast) WriteCSV(w io.Writer) error {
	if err := f.writeCSVPreamble(w, f.criterion()); err != nil {
		return err
	}
	cw := newCSV(w)
	header := []string{"period", "year"}
	for _, s := range f.States {
		header = append(header, "count_"+s)
	}
	for _, a := range f.Actions {
		header = append(header, "spend_"+a)
	}
	cw.Write(append(header, "running_cost", "total_spend"))
	for _, p := range f.Forecast.Periods {
		row := []string{fmt.Sprint(p.Period), Fixed(f.year(p.Period), 6)}
		for _, x := range p.Counts {
			row = append(row, Fixed(x, 6))
		}
		for _, x := range p.ActionSpend {
			row = append(row, Fixed(x, 6))
		}
		cw.Write(append(row, Fixed(p.Running, 6), Fixed(p.Total, 6)))
	}
	cw.Flush()
	return cw.Error()
}
