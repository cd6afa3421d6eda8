package reports

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"fixpoint/costs"
	"fixpoint/optimize/fleet"

	"github.com/xuri/excelize/v2"
)

// WriteXLSX writes the plan as a workbook: the figures per calendar year,
// the whole-unit work list of period 1, the figures per period, the
// plan's shares and expected units per class and condition, the
// condition mix of each class per calendar year, the inspection calendar
// (when the fleet has one), a chart of the planned spend against the
// budget (and one of the simulated practice, when simulated), one of the
// units deferred per period and one of each class's condition mix (up to
// fleetChartClasses classes), the
// problem solved with its bounds, and the assumptions.
func (r *PlanReport) WriteXLSX(w io.Writer) error {
	p, cur := r.Plan, r.Currency
	b := newWorkbook(&r.Header, "budget plan of a fleet")
	years, at := r.yearSheet(b)
	r.workListSheet(b)
	byPeriod := r.periodSheets(b)
	mix, classCols := r.mixSheet(b)
	if len(r.Inspections) > 0 {
		inspectionSheet(b, r.Inspections, cur)
	}
	charts := b.sheet("Charts", r.Model+": the plan's spend per calendar year against the budget, and the condition mix of each class")
	spendChart(charts, years, at, len(r.Fleet.Budget), cur)
	next := charts.data + 22
	if r.Practice != nil {
		bandChart(charts, next, years, at, len(r.Fleet.Budget), cur,
			"Work spend per year of the simulated whole-unit practice (median and P10-P90) against the plan and the budget")
		next += 22
	}
	deferredChart(charts, next, byPeriod, len(r.Plan.PeriodYear))
	r.mixCharts(charts, next+21, mix, classCols)
	r.summarySheet(b)
	facts := append([]fact{{"criterion", "expected present cost of the fleet under the yearly budgets (expected-count model)"}},
		r.discountFacts()...)
	facts = append(facts, planFacts(r.Fleet, p)...)
	if s := r.Practice; s != nil {
		facts = append(facts, practiceFacts(s, r.Seed)...)
	}
	if len(r.Inspections) > 0 {
		facts = append(facts, fact{"inspections", PlanInspectionAssumption}, fact{"statutory", InspectionRule})
	}
	b.assumptions(facts)
	return b.write(w)
}

// spendCols are the columns (1-based) of a sheet of figures per calendar
// year that a chart reads; 0 where the sheet has none.
type spendCols struct {
	year, budget, spend, mandatory int
	// The band of a simulated spend and the expected spend beside it.
	p10, p50, p90, expected int
}

// columnList is the columns of a sheet being listed.
type columnList []column

// add appends a column and returns its number (1-based).
func (c *columnList) add(head string, k cellKind) int {
	*c = append(*c, column{head, k})
	return len(*c)
}

// yearColumns starts the columns of a sheet of figures per calendar
// year: the year and its budget.
func yearColumns(cur string) (*columnList, spendCols) {
	var cols columnList
	var at spendCols
	at.year = cols.add("year", intCell)
	at.budget = cols.add("budget ("+cur+")", moneyCell)
	return &cols, at
}

// yearSheet adds the figures per calendar year and returns the sheet
// with the columns its charts read.
func (r *PlanReport) yearSheet(b *workbook) (*sheet, spendCols) {
	p, f, cur := r.Plan, r.Fleet, r.Currency
	cols, at := yearColumns(cur)
	add := cols.add
	add("rule", textCell)
	byPeriod := p.Period.Years() != 1
	if byPeriod {
		add("periods starting in it", textCell)
	}
	at.spend = add("planned spend, expected ("+cur+")", moneyCell)
	at.mandatory = add("of which mandatory ("+cur+")", moneyCell)
	add("budget price", priceCell)
	short := p.Statement.Kind == fleet.MandatoryFirst
	if short {
		add("least spend over the budget ("+cur+")", moneyCell)
	}
	if r.Practice != nil {
		at.p10 = add("practice (sim.) P10 ("+cur+")", moneyCell)
		at.p50 = add("practice (sim.) median ("+cur+")", moneyCell)
		at.p90 = add("practice (sim.) P90 ("+cur+")", moneyCell)
		add("practice (sim.) mean ("+cur+")", moneyCell)
		add("practice over budget (share of futures)", percentCell)
		at.expected = at.spend
	}
	s := b.sheet("By year", fmt.Sprintf("%s: budget plan per calendar year over %s (%s; the work of a period is charged to the year in which it starts)",
		r.Model, horizonText(f, p), cur), *cols...)
	starts := periodStarts(p)
	periodsOf := make([][]string, len(f.Budget))
	for k, y := range p.PeriodYear {
		periodsOf[y] = append(periodsOf[y], strconv.Itoa(k+1))
	}
	for y, budget := range f.Budget {
		row := []any{y + 1, budget, r.yearRule(y, starts)}
		if byPeriod {
			row = append(row, orNone(strings.Join(periodsOf[y], ", ")))
		}
		price := any(p.Multipliers[y])
		if !starts[y] || p.Statement.Short[y] {
			price = "-"
		}
		row = append(row, p.Spend[y], p.Mandatory[y], price)
		if short {
			row = append(row, p.Statement.Excess[y])
		}
		if q := r.Practice; q != nil {
			sp := q.Spend[y]
			row = append(row, sp.P10, sp.P50, sp.P90, sp.Mean, q.OverBudget[y])
		}
		s.add(row...)
	}
	s.note("Planned spend: the plan's expected work spend (running costs are not charged to the budget). " +
		"Budget price: present value saved per extra unit of budget in that year (\"-\": the year has no budget row, because it starts no period or does mandatory work only).")
	if short {
		s.note("Least spend over the budget: in a year whose budget cannot cover the mandatory work, by how much even the plan that spends least there exceeds the budget.")
	}
	if r.Practice != nil {
		s.note("Practice columns: the simulated whole-unit practice (Monte-Carlo; an estimate, not a bound) and the share of futures whose spend exceeds the budget.")
	}
	return s, at
}

// orNone is s, or "none" when s is empty.
func orNone(s string) string {
	if s == "" {
		return "none"
	}
	return s
}

// workListSheet adds the whole-unit work list of period 1.
func (r *PlanReport) workListSheet(b *workbook) {
	p, f, cur := r.Plan, r.Fleet, r.Currency
	s := b.sheet("Work list", r.Model+": work list for period 1 (year 1, from the inventory; whole units; units left alone are not listed)",
		column{"class", textCell}, column{"condition", textCell}, column{"action", textCell}, column{"units", intCell}, column{"cost (" + cur + ")", moneyCell})
	for c, fc := range f.Classes {
		pa := p.PassiveActions[c]
		for st, row := range p.First.Units[c] {
			for a, u := range row {
				if u > 0 && a != pa {
					s.add(fc.Name, r.stateName(c, st), r.actionName(c, a), u, float64(u)*fc.Costs.Action[a][st])
				}
			}
		}
	}
	s.note(r.workListLine())
}

// periodColumns are the leading columns of a row per period, named as in
// the tables (periodHeader).
func periodColumns(per costs.Period) []column {
	heads := periodHeader(per)
	kinds := []cellKind{intCell, intCell, numberCell}
	cols := make([]column, len(heads))
	for i, h := range heads {
		cols[i] = column{h, kinds[i]}
	}
	return cols
}

// periodCells are the leading cells of period k's row: the period and,
// unless periods are one year, its calendar year and its start in years.
func periodCells(p *fleet.Plan, k int) []any {
	if p.Period.Years() == 1 {
		return []any{k + 1}
	}
	return []any{k + 1, p.PeriodYear[k] + 1, p.Period.Start(k)}
}

// periodSheets adds the figures per period, the plan's shares per
// class, condition and action, and the expected units per class and
// condition; it returns the sheet of the figures per period, whose last
// column is the units deferred.
func (r *PlanReport) periodSheets(b *workbook) *sheet {
	p, f, cur := r.Plan, r.Fleet, r.Currency
	lead := periodColumns(p.Period)
	s := b.sheet("By period", r.Model+": the plan per period (expected-count model)",
		append(append([]column(nil), lead...), column{"planned spend, expected (" + cur + ")", moneyCell},
			column{"units in unsafe conditions, expected", countCell}, column{"units deferred, expected", countCell})...)
	for k := range p.PeriodYear {
		s.add(append(periodCells(p, k), p.PeriodSpend[k], p.UnsafeUnits[k], p.Deferred[k])...)
	}
	s.note("Deferred: units the unconstrained advice would work on that the plan leaves alone.")

	shares := b.sheet("Shares", r.Model+": the plan's policy, the share of the units in each condition at the start of each period given each action",
		append(append([]column(nil), lead...), column{"class", textCell}, column{"condition", textCell}, column{"action", textCell},
			column{"share", percentCell}, column{"units given it, expected", countCell})...)
	shares.filter = true
	counts := b.sheet("Expected units", r.Model+": expected units per condition at the start of each period under the plan",
		append(append([]column(nil), lead...), column{"class", textCell}, column{"condition", textCell}, column{"unsafe", textCell},
			column{"units, expected", countCell})...)
	counts.filter = true
	for k := range p.PeriodYear {
		for c, fc := range f.Classes {
			for st, x := range p.Expected[c][k] {
				counts.add(append(periodCells(p, k), fc.Name, r.stateName(c, st), fc.Model.States[st].Unsafe, x)...)
				for a, v := range p.Shares[c][k][st] {
					if v > 0 {
						shares.add(append(periodCells(p, k), fc.Name, r.stateName(c, st), r.actionName(c, a), v, v*x)...)
					}
				}
			}
		}
	}
	shares.note("A condition's shares sum to 100%; the passive action's share is the units left alone. Period 1's work list rounds these shares to whole units on the inventory.")
	for _, sh := range []*sheet{shares, counts} {
		sh.note("Beyond period 1 the fleet's condition is not known: these are the plan's policy and its expected units (fractions of units), not a work list.")
	}
	return s
}

// deferredChart places at row of s a column chart of the expected units
// deferred per period (as the brief draws them), read from the last
// column of the sheet of figures per period.
func deferredChart(s *sheet, row int, byPeriod *sheet, periods int) {
	if periods == 0 {
		return
	}
	last, col := byPeriod.data+periods-1, len(byPeriod.cols)
	gap, vary := uint(50), false
	s.chart(1, row, &excelize.Chart{Type: excelize.Col, GapWidth: &gap, VaryColors: &vary,
		Series: []excelize.ChartSeries{{Name: byPeriod.cellRef(col, headRow), Categories: byPeriod.ref(1, byPeriod.data, last),
			Values: byPeriod.ref(col, byPeriod.data, last), Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(stateRamp[2])}}}},
		Title:     chartTitle("Units deferred (expected): the unconstrained advice would work on them, the plan waits"),
		Legend:    excelize.ChartLegend{Position: "bottom"},
		Dimension: excelize.ChartDimension{Width: 760, Height: 380},
		XAxis:     excelize.ChartAxis{Title: chartTitle("period")},
		YAxis:     excelize.ChartAxis{MajorGridLines: true, Title: chartTitle("units")},
	})
}

// yearPeriod is the period whose starting units stand for calendar year
// y: the first period that starts in it, else (a period longer than a
// year) the period it lies in.
func yearPeriod(p *fleet.Plan, y int) int {
	at := 0
	for k, py := range p.PeriodYear {
		if py == y {
			return k
		}
		if py < y {
			at = k
		}
	}
	return at
}

// mixSheet adds the condition mix of each class per calendar year: the
// share of the class's expected units in each condition at the start of
// the year. It returns the sheet and the column (1-based) of each
// class's first condition.
func (r *PlanReport) mixSheet(b *workbook) (*sheet, []int) {
	p, f := r.Plan, r.Fleet
	cols := columnList{{"year", intCell}}
	at := make([]int, len(f.Classes))
	for c, fc := range f.Classes {
		at[c] = len(cols) + 1
		for s := range fc.Model.States {
			cols.add(fc.Name+": "+r.stateName(c, s), percentCell)
		}
	}
	s := b.sheet("Condition mix", r.Model+": condition mix of each class per calendar year, the share of its expected units in each condition at the start of the year, under the plan", cols...)
	for y := range f.Budget {
		k := yearPeriod(p, y)
		row := []any{y + 1}
		for c := range f.Classes {
			total := 0.0
			for _, x := range p.Expected[c][k] {
				total += x
			}
			for _, x := range p.Expected[c][k] {
				row = append(row, x/total)
			}
		}
		s.add(row...)
	}
	s.note("Units at the start of the year's first period (of the period the year lies in when a period is longer than a year). " +
		"Beyond period 1 the fleet's condition is not known: these are the plan's expected units (fractions of units), not a work list.")
	return s, at
}

// mixCharts places at row of s a stacked column chart of the condition
// mix per calendar year of each class, up to fleetChartClasses of them,
// read from the sheet mix whose class blocks start at the columns at.
func (r *PlanReport) mixCharts(s *sheet, row int, mix *sheet, at []int) {
	f := r.Fleet
	last := mix.data + len(f.Budget) - 1
	if len(f.Budget) == 0 {
		return
	}
	cats := mix.ref(1, mix.data, last)
	gap, overlap, vary := uint(40), 100, false
	top, bottom := 1.0, 0.0
	for c, fc := range f.Classes[:min(len(f.Classes), fleetChartClasses)] {
		var series []excelize.ChartSeries
		for i, colour := range ramp(stateRamp, len(fc.Model.States)) {
			series = append(series, excelize.ChartSeries{Name: mix.cellRef(at[c]+i, headRow), Categories: cats,
				Values: mix.ref(at[c]+i, mix.data, last), Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(colour)}}})
		}
		s.chart(1, row+21*c, &excelize.Chart{Type: excelize.ColStacked, Series: series, GapWidth: &gap, Overlap: &overlap, VaryColors: &vary,
			Title:     chartTitle("Expected condition mix of " + fc.Name + " (share of its units at the start of each year, under the plan)"),
			Legend:    excelize.ChartLegend{Position: "bottom"},
			Dimension: excelize.ChartDimension{Width: 760, Height: 380},
			XAxis:     excelize.ChartAxis{Title: chartTitle("year")},
			YAxis: excelize.ChartAxis{MajorGridLines: true, Maximum: &top, Minimum: &bottom,
				NumFmt: excelize.ChartNumFmt{CustomNumFmt: "0%"}, Title: chartTitle("share of units")},
		})
	}
	if n := len(f.Classes) - fleetChartClasses; n > 0 {
		s.text(1, row+21*fleetChartClasses, fmt.Sprintf("%d further classes are not charted; their condition mix is on the Condition mix sheet.", n), s.b.wrapped)
	}
}

// inspectionSheet adds a fleet's inspection calendar with what the plan
// assumes and each class's inspection advice.
func inspectionSheet(b *workbook, classes []ClassInspections, cur string) {
	s := b.sheet("Inspections", b.h.Model+": expected inspections per calendar year of the classes with an inspection block ("+cur+")",
		column{"year", intCell}, column{"class", textCell}, column{"inspections", countCell}, column{"of which call-outs", countCell},
		column{"inspection cost (" + cur + ")", moneyCell})
	for _, y := range inspectionYears(classes) {
		callOuts := any(y.callOuts)
		if math.IsNaN(y.callOuts) {
			callOuts = nil
		}
		s.add(y.year+1, y.class, y.inspections, callOuts, y.cost)
	}
	for _, l := range inspectionLines(classes) {
		s.note(l)
	}
	s.note("STATUTORY: " + InspectionRule)
}

// spendChart places the chart of the planned spend per calendar year (and
// the mandatory part of it) against the budget, read from the columns at
// of sheet src. The budget is a line over the columns, dark and marked,
// so that it shows where the spend meets it and where it is zero.
func spendChart(s, src *sheet, at spendCols, rows int, cur string) {
	last := src.data + rows - 1
	cats := src.ref(at.year, src.data, last)
	col := func(c int, colour rgb) excelize.ChartSeries {
		return excelize.ChartSeries{Name: src.cellRef(c, headRow), Categories: cats, Values: src.ref(c, src.data, last),
			Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(colour)}}}
	}
	gap, overlap, vary := uint(50), 100, false
	xAxis, yAxis := spendAxes(cur)
	s.chart(1, s.data, &excelize.Chart{Type: excelize.Col, Series: []excelize.ChartSeries{col(at.spend, actionRamp[1]), col(at.mandatory, stateRamp[3])},
		GapWidth: &gap, Overlap: &overlap, VaryColors: &vary,
		Title:     chartTitle("Planned work spend per year (expected; of which mandatory) against the budget (" + cur + ")"),
		Legend:    excelize.ChartLegend{Position: "bottom"},
		Dimension: excelize.ChartDimension{Width: 760, Height: 400},
		XAxis:     xAxis, YAxis: yAxis,
	}, &excelize.Chart{Type: excelize.Line, Series: []excelize.ChartSeries{budgetSeries(src, at, cats, last)}, XAxis: xAxis, YAxis: yAxis})
}

// spendAxes are the axes of a chart of spend per calendar year. A combo
// chart takes its axes from its last part (excelize v2.11.1), so every
// part carries the same.
func spendAxes(cur string) (x, y excelize.ChartAxis) {
	return excelize.ChartAxis{Title: chartTitle("year")},
		excelize.ChartAxis{MajorGridLines: true, NumFmt: excelize.ChartNumFmt{CustomNumFmt: numberFormat(moneyCell, 0)}, Title: chartTitle(cur)}
}

// budgetSeries is the budget as a dark line with square markers.
func budgetSeries(src *sheet, at spendCols, cats string, last int) excelize.ChartSeries {
	fill := excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(ink)}}
	return excelize.ChartSeries{Name: src.cellRef(at.budget, headRow), Categories: cats, Values: src.ref(at.budget, src.data, last),
		Fill: fill, Line: excelize.LineOptions{Type: excelize.LineSolid, Width: 2.5},
		Marker: excelize.ChartMarker{Symbol: "square", Size: 8, Fill: fill}}
}

// bandChart places at row of s a line chart of a simulated spend per
// calendar year: its median and its P10-P90 band, the expected spend
// beside it and the budget, read from the columns at of sheet src. The
// budget, thick and marked, is drawn first, so that the thinner lines
// that meet it stay visible on it.
func bandChart(s *sheet, row int, src *sheet, at spendCols, rows int, cur, title string) {
	last := src.data + rows - 1
	cats := src.ref(at.year, src.data, last)
	line := func(c int, colour rgb, width float64, dash excelize.LineDashType) excelize.ChartSeries {
		fill := excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(colour)}}
		return excelize.ChartSeries{Name: src.cellRef(c, headRow), Categories: cats, Values: src.ref(c, src.data, last), Fill: fill,
			Line: excelize.LineOptions{Type: excelize.LineSolid, Width: width, Dash: dash}, Marker: excelize.ChartMarker{Symbol: "none"}}
	}
	xAxis, yAxis := spendAxes(cur)
	s.chart(1, row, &excelize.Chart{Type: excelize.Line,
		Series: []excelize.ChartSeries{budgetSeries(src, at, cats, last),
			line(at.p10, stateRamp[2], 1.25, excelize.LineDashDash), line(at.p50, stateRamp[3], 2.25, excelize.LineDashSolid),
			line(at.p90, stateRamp[2], 1.25, excelize.LineDashDash), line(at.expected, actionRamp[2], 1.75, excelize.LineDashSysDot)},
		Title:     chartTitle(title),
		Legend:    excelize.ChartLegend{Position: "bottom"},
		Dimension: excelize.ChartDimension{Width: 760, Height: 400},
		XAxis:     xAxis, YAxis: yAxis,
	})
}

// summarySheet adds the problem solved in words, its bounds, the cost of
// the budget, the work list's figures and the simulated practice, with
// the warnings below.
func (r *PlanReport) summarySheet(b *workbook) {
	p, f, cur := r.Plan, r.Fleet, r.Currency
	money := func(x float64) cell { return cell{x, moneyCell} }
	short, _ := shortYears(p)
	facts := []fact{
		{"problem solved", PlanStatement(f, p, cur)},
		{"kind of problem", p.Statement.Kind.String()},
	}
	if len(short) > 0 {
		facts = append(facts, fact{"years whose budget cannot cover the mandatory work", yearList(short)},
			fact{"largest proven gap of the programs that found them (" + cur + ")", cell{p.Statement.ExcessGap, sciCell}})
	}
	facts = append(facts,
		fact{"lower bound, proven (" + cur + ", present value)", money(p.Lower)},
		fact{"plan found (" + cur + ", present value)", money(p.Fluid)},
		fact{"gap, relative ((plan found - lower bound) / plan found)", cell{p.Gap, sciCell}},
		fact{"optimum without budgets (" + cur + ", present value)", money(p.Unconstrained)},
		fact{"cost of the budget (plan found less the optimum without budgets, " + cur + ")", money(p.Fluid - p.Unconstrained)},
		fact{"cost of the budget, at least (lower bound less the optimum without budgets, " + cur + ")", money(p.Lower - p.Unconstrained)},
		fact{"column-generation rounds", cell{p.Iterations, intCell}},
		fact{"linear programs solved", cell{p.Programs, intCell}},
		fact{"work list spend, period 1 (" + cur + ")", money(p.First.Spend)},
		fact{"of which mandatory (" + cur + ")", money(p.First.Mandatory)},
		fact{"what period 1 may spend (" + cur + ")", money(p.First.Limit)},
		fact{"units deferred in period 1", cell{p.First.Deferred, intCell}},
	)
	if s := r.Practice; s != nil {
		facts = append(facts,
			fact{"simulated practice: present cost, mean (" + cur + ")", money(s.Cost.Mean)},
			fact{"simulated practice: standard error of the mean (" + cur + ")", money(s.Cost.SE)},
			fact{"simulated practice: P10 (" + cur + ")", money(s.Cost.P10)},
			fact{"simulated practice: median (" + cur + ")", money(s.Cost.P50)},
			fact{"simulated practice: P90 (" + cur + ")", money(s.Cost.P90)})
	}
	s := b.summary(fmt.Sprintf("%s: the problem solved and its proven bounds (%s)", r.Model, cur), facts)
	for _, wn := range r.Warnings {
		s.note("Warning: " + wn)
	}
	s.note("Bounds are proven for the problem stated, on the expected-count model; the simulated practice is an estimate with a standard error, not a bound. " +
		"Beyond period 1 the fleet's condition is not known: re-plan each year from the new inspection results.")
}

// planFacts are the conventions of a fleet plan, for an Assumptions
// sheet.
func planFacts(f *fleet.Problem, p *fleet.Plan) []fact {
	classes := make([]string, len(f.Classes))
	for c, fc := range f.Classes {
		units := 0.0
		for _, x := range fc.Counts {
			units += x
		}
		classes[c] = fmt.Sprintf("%s (%s units)", fc.Name, Money(units, 0))
	}
	return []fact{
		{"classes", strings.Join(classes, ", ")},
		{"horizon", horizonText(f, p)},
		{"budget", "the work of a period is charged to the budget of the calendar year in which it starts; running costs are not charged to it"},
		{"mandatory work", "work in conditions where the passive action is not admissible (unsafe ones): always done; where a year's budget cannot cover it, that year does mandatory work only, at least cost"},
		{"end of the horizon", "after the last period each unit is charged its unconstrained optimal value, so that a plan cannot gain by running the fleet down"},
		{"model", "expected-count (fluid) model: expected units per condition; a linear program whose yearly budget rows couple the classes"},
		{"bounds", "Dantzig-Wolfe column generation; the lower bound is the Lagrangian relaxation of the yearly budget rows at the budget prices " +
			"(G. B. Dantzig and P. Wolfe, Oper. Res. 8, 1960; L. S. Lasdon, Optimization Theory for Large Systems, 1970)"},
		{"whole units", "only period 1 gets a whole-unit work list, from the inventory; later periods are the plan's policy and its expected units, not a work list"},
	}
}

// practiceFacts say how a fleet was simulated.
func practiceFacts(s *fleet.Simulation, seed uint64) []fact {
	return []fact{
		{"simulated", ruleText(s.Rule)},
		{"futures simulated", cell{s.Runs, intCell}},
		{"seed", strconv.FormatUint(seed, 10) + " (future r draws from its own PCG stream (seed, r): the same seed gives the same futures on any number of cores)"},
		{"simulation", "Monte-Carlo on whole units: an estimate with a standard error, not a bound; P10, median and P90 are percentiles of the futures (linear interpolation)"},
	}
}
