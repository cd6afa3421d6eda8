package optimize

import (
	"math"

	"fixpoint/costs"
)

// ForecastYear is one calendar year of a forecast: the periods that start
// in it, summed.
type ForecastYear struct {
	// Year counts from 0 (the year in which the forecast starts).
	Year int
	// Counts are the expected units per state at the start of the year's
	// first period.
	Counts []float64
	// ActionSpend, Running and Total are the sums over the year's periods.
	ActionSpend    []float64
	Running, Total float64
	// Periods is the number of periods that start in the year (0 for a
	// year inside a period longer than a year).
	Periods int
}

// Years sums the forecast's periods by the calendar year in which each
// starts (period k starts k·period years after the start): with
// half-year periods each year holds two, with two-year periods every
// other year holds none (its Counts are then those at the start of the
// period it lies in). Only whole years the forecast covers are returned.
func (f *Forecast) Years(period costs.Period) []ForecastYear {
	if len(f.Periods) == 0 {
		return nil
	}
	// Whole years covered: the end of the last period, rounded down.
	n := int(math.Floor(period.Start(len(f.Periods)) + 1e-9))
	out := make([]ForecastYear, n)
	for y := range out {
		out[y].Year = y
		out[y].ActionSpend = make([]float64, len(f.Periods[0].ActionSpend))
	}
	for k, per := range f.Periods {
		y := period.Year(k)
		if y >= n {
			break
		}
		fy := &out[y]
		if fy.Periods == 0 {
			fy.Counts = per.Counts
		}
		fy.Periods++
		for a, x := range per.ActionSpend {
			fy.ActionSpend[a] += x
		}
		fy.Running += per.Running
		fy.Total += per.Total
	}
	for y := range out {
		if out[y].Counts == nil && y > 0 {
			out[y].Counts = out[y-1].Counts
		}
	}
	return out
}
