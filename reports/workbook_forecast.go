package reports

import (
	"fmt"
	"io"

	"github.com/xuri/excelize/v2"
)

// WriteXLSX writes the forecast as a workbook: the expected units per
// condition and the spend per period, both summed by calendar year
// (optimize.(*Forecast).Years), charts of the condition mix and of the
// spend, the present value and the assumptions.
func (f *Forecast) WriteXLSX(w io.Writer) error {
	fc, cur := f.Forecast, f.Currency
	b := newWorkbook(&f.Header, "forecast under the advice")
	lead := []column{{"period", intCell}, {"year", numberCell}}

	cols := append([]column(nil), lead...)
	for _, s := range f.States {
		cols = append(cols, column{s, countCell})
	}
	units := b.sheet("Units per period", f.Model+": expected units per condition at the start of each period, under the advice", cols...)
	for _, p := range fc.Periods {
		units.add(append([]any{p.Period, f.year(p.Period)}, anys(p.Counts)...)...)
	}
	n := len(fc.Periods)
	units.add(append([]any{n, f.year(n)}, anys(fc.Final)...)...)
	units.note(fmt.Sprintf("The last row (period %d) is the mix at the end of the horizon, after the last period's work. "+
		"Counts are expected values (fractions of units), not a work list.", n))

	cols = append([]column(nil), lead...)
	for _, a := range f.Actions {
		cols = append(cols, column{a + " (" + cur + ")", moneyCell})
	}
	cols = append(cols, column{"running (" + cur + ")", moneyCell}, column{"total (" + cur + ")", moneyCell})
	spend := b.sheet("Spend per period", fmt.Sprintf("%s: expected spend per period (%s): what the advice does to the units, and their running costs", f.Model, cur), cols...)
	for _, p := range fc.Periods {
		spend.add(append(append([]any{p.Period, f.year(p.Period)}, anys(p.ActionSpend)...), p.Running, p.Total)...)
	}

	cols = []column{{"year", intCell}, {"periods starting in it", intCell}}
	for _, s := range f.States {
		cols = append(cols, column{s + " (units at the start)", countCell})
	}
	for _, a := range f.Actions {
		cols = append(cols, column{a + " (" + cur + ")", moneyCell})
	}
	cols = append(cols, column{"running (" + cur + ")", moneyCell}, column{"total (" + cur + ")", moneyCell})
	years := f.Forecast.Years(f.Period)
	byYear := b.sheet("By year", fmt.Sprintf("%s: the periods summed by the calendar year in which each starts (year 0 is the first; %s)", f.Model, cur), cols...)
	for _, y := range years {
		byYear.add(append(append(append([]any{y.Year, y.Periods}, anys(y.Counts)...), anys(y.ActionSpend)...), y.Running, y.Total)...)
	}
	byYear.note("Units are those at the start of the year's first period (of the period it lies in when a period is longer than a year); spend sums the periods that start in the year.")

	f.charts(b, units, spend, byYear, len(years))

	b.summary(f.Model+": the forecast's spend", []fact{
		{fmt.Sprintf("present value of the spend over %d periods (%s)", n, cur), cell{fc.PresentValue, moneyCell}},
		{"discount factor per period (1: undiscounted)", cell{f.Factor, factorCell}},
		{"periods", cell{n, intCell}},
	})

	var facts []fact
	switch {
	case f.Factor == 1:
		facts = append(facts, fact{"criterion", "long-run average cost per period (undiscounted); the present value is the undiscounted total"})
	default:
		facts = append(append(facts, fact{"criterion", "expected discounted cost (present value)"}), f.discountFacts()...)
	}
	switch {
	case f.Result != nil:
		facts = append(facts, resultFacts(f.Result, cur)...)
	case f.Average != nil:
		facts = append(facts, fact{"certificate", f.Average.Status.String() + " (whether the proven bounds on the gain are within the tolerance)"},
			fact{"proven gap of the gain per period (" + cur + ")", cell{f.Average.GainUpper - f.Average.GainLower, sciCell}},
			fact{"tolerance (" + cur + ")", cell{f.Average.Tol, sciCell}})
	}
	b.assumptions(facts)
	return b.write(w)
}

// charts adds the Charts sheet: the condition mix and the spend by
// calendar year, or by period when a period is longer than a year (as the
// brief draws them).
func (f *Forecast) charts(b *workbook, units, spend, byYear *sheet, years int) {
	nStates, nActions := len(f.States), len(f.Actions)
	// Where the data are: the sheet, the category column, the first state
	// column, the first action column and the number of rows.
	mixSheet, spendSheet, cat, stateCol, actionCol, rows := byYear, byYear, 1, 3, 3+nStates, years
	unit := "year"
	if f.periodYears() > 1 {
		mixSheet, spendSheet, cat, stateCol, actionCol, rows = units, spend, 2, 3, 3, len(f.Forecast.Periods)
		unit = "period of " + f.Period.String()
	}
	if rows == 0 {
		return
	}
	last := mixSheet.data + rows - 1
	s := b.sheet("Charts", f.Model+": what the advice means over the years")
	var mix []excelize.ChartSeries
	for i, c := range ramp(stateRamp, nStates) {
		mix = append(mix, excelize.ChartSeries{Name: units.cellRef(3+i, headRow), // the state's name
			Categories: mixSheet.ref(cat, mixSheet.data, last), Values: mixSheet.ref(stateCol+i, mixSheet.data, last),
			Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(c)}}})
	}
	gap, overlap, vary := uint(40), 100, false
	s.chart(1, s.data, &excelize.Chart{Type: excelize.ColStacked, Series: mix, GapWidth: &gap, Overlap: &overlap, VaryColors: &vary,
		Title:     chartTitle("Expected condition mix of the population (units at the start of each " + unit + ")"),
		Legend:    excelize.ChartLegend{Position: "bottom"},
		Dimension: excelize.ChartDimension{Width: 760, Height: 380},
		XAxis:     excelize.ChartAxis{Title: chartTitle(unit)},
		YAxis:     excelize.ChartAxis{MajorGridLines: true, Title: chartTitle("units")},
	})
	running := actionCol + nActions
	series := []excelize.ChartSeries{{Name: spendSheet.cellRef(running, headRow),
		Categories: spendSheet.ref(cat, spendSheet.data, last), Values: spendSheet.ref(running, spendSheet.data, last),
		Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(muted)}}}}
	colours := ramp(actionRamp, nActions)
	for a := range nActions {
		used := false
		for _, p := range f.Forecast.Periods {
			used = used || p.ActionSpend[a] != 0
		}
		if used {
			series = append(series, excelize.ChartSeries{Name: spendSheet.cellRef(actionCol+a, headRow),
				Categories: spendSheet.ref(cat, spendSheet.data, last), Values: spendSheet.ref(actionCol+a, spendSheet.data, last),
				Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(colours[a])}}})
		}
	}
	s.chart(1, s.data+21, &excelize.Chart{Type: excelize.ColStacked, Series: series, GapWidth: &gap, Overlap: &overlap, VaryColors: &vary,
		Title:     chartTitle("Expected spend per " + unit + " by action (" + f.Currency + ")"),
		Legend:    excelize.ChartLegend{Position: "bottom"},
		Dimension: excelize.ChartDimension{Width: 760, Height: 380},
		XAxis:     excelize.ChartAxis{Title: chartTitle(unit)},
		YAxis: excelize.ChartAxis{MajorGridLines: true, NumFmt: excelize.ChartNumFmt{CustomNumFmt: numberFormat(moneyCell, 0)},
			Title: chartTitle(f.Currency)},
	})
}

// anys converts numbers to row cells.
func anys(xs []float64) []any {
	out := make([]any, len(xs))
	for i, x := range xs {
		out[i] = x
	}
	return out
}
