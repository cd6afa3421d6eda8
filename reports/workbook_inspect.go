package reports

import (
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/xuri/excelize/v2"

	"fixpoint/optimize/inspect"
)

// WriteXLSX writes the inspection advice as a workbook: per condition
// found the action and the next inspection interval with the cost and
// its bounds, every admissible decision's cost, what each fixed interval
// costs against the advice (with its long-run figures), the long-run
// figures of the advice, and the assumptions (the inspection block, the
// statutory rule, the certificate).
func (v *InspectionAdvice) WriteXLSX(w io.Writer) error {
	r, p, cur := v.Result, v.Problem, v.Currency
	b := newWorkbook(&v.Header, "action and next inspection per condition")
	s := b.sheet("Advice", fmt.Sprintf("%s: when to look again, action and next inspection per condition found (present value of expected costs, %s)", v.Model, cur),
		column{"condition", textCell}, column{"unsafe", textCell}, column{"hidden", textCell}, column{"advice", textCell},
		column{"action", textCell}, column{"inspect again after (periods)", intCell}, column{"inspect again after (years)", numberCell},
		column{"expected cost (" + cur + ")", moneyCell}, column{"lower bound (" + cur + ")", moneyCell}, column{"upper bound (" + cur + ")", moneyCell},
		column{"runner-up", textCell}, column{"runner-up interval (periods)", intCell}, column{"margin (" + cur + ")", moneyCell})
	for st := range p.States {
		c := p.Choices[st][r.Policy[st]]
		row := []any{p.States[st], p.Unsafe[st], p.Hidden[st], Decision(p, c), p.Actions[c.Action], c.Interval, p.Years(c.Interval),
			r.Value[st], r.Lower[st], r.Upper[st], nil, nil, nil}
		if i := r.RunnerUp[st]; i >= 0 {
			rc := p.Choices[st][i]
			row[10], row[11], row[12] = p.Actions[rc.Action], rc.Interval, r.Margin[st]
		}
		s.add(row...)
	}
	s.note("STATUTORY: " + InspectionRule)
	s.note(LimitSentence(p))
	s.note("Hidden: an unsafe condition that only an inspection finds. Expected cost: the present value of the expected costs from that inspection on under the advice; " +
		"lower and upper bound: proven bounds on the least such cost. Margin: how much the runner-up decision's cost in that condition must fall before it becomes the advice.")
	for _, l := range v.tieLines() {
		s.note(l)
	}
	for _, n := range v.notes() {
		s.note("Note: " + n)
	}

	d := b.sheet("Decisions", fmt.Sprintf("%s: every admissible decision at an inspection, then the advice (present value of expected costs, %s)", v.Model, cur),
		column{"condition", textCell}, column{"action", textCell}, column{"inspect again after (periods)", intCell},
		column{"inspect again after (years)", numberCell}, column{"cost, then the advice (" + cur + ")", moneyCell}, column{"advised", textCell})
	d.filter = true
	for st := range p.States {
		for i, c := range p.Choices[st] {
			d.add(p.States[st], p.Actions[c.Action], c.Interval, p.Years(c.Interval), r.Q[st][i], i == r.Policy[st])
		}
	}
	d.note("Cost, then the advice: the expected cost of taking that decision at an inspection that finds the condition, and following the advice after.")

	v.fixedSheet(b)
	v.longRunSheet(b)

	facts := append([]fact{{"criterion", "expected discounted cost (present value) from an inspection, over the action and the next inspection interval"}},
		v.discountFacts()...)
	facts = append(facts, inspectionFacts(p, cur, v.Plan)...)
	facts = append(facts,
		fact{"solver", methodTitles[r.Method] + ", " + iterationText(r.Method, r.Iterations)},
		fact{"certificate", r.Status.String() + " (whether the proven gap is within the tolerance)"},
		fact{"proven gap (" + cur + ")", cell{r.Gap, sciCell}},
		fact{"tolerance (" + cur + ")", cell{r.Tol, sciCell}},
		fact{"Bellman residual (" + cur + ")", cell{r.Residual, sciCell}},
		fact{"bounds", fmt.Sprintf("Porteus (Management Science 18, 1971) for decisions of random length, with the least and greatest expected discount over one decision, %s and %s",
			Fixed(r.ModulusLow, 6), Fixed(r.Modulus, 6))})
	b.assumptions(facts)
	return b.write(w)
}

// inspectionFacts are the inspection block as the model sees it, the
// timing and the statutory rule, for an Assumptions sheet; pl (the
// config's block) may be nil, and then its cost is the problem's.
func inspectionFacts(p *inspect.Problem, cur string, pl *inspect.Plan) []fact {
	ks := func(xs []int) string {
		if len(xs) == 0 {
			return "none"
		}
		parts := make([]string, len(xs))
		for i, k := range xs {
			parts[i] = intervalText(p, k)
		}
		return strings.Join(parts, ", ")
	}
	names := func(mark func(s int) bool) string {
		if out := markedStates(p, mark); len(out) > 0 {
			return strings.Join(out, ", ")
		}
		return "none"
	}
	var out []fact
	if pl != nil {
		out = append(out, fact{"inspection cost (" + cur + ")", cell{pl.Cost, moneyCell}}, fact{"downtime cost per inspection (" + cur + ")", cell{pl.Downtime, moneyCell}})
	} else {
		out = append(out, fact{"cost of an inspection or call-out, downtime included (" + cur + ")", cell{p.EpochCost, moneyCell}})
	}
	out = append(out,
		fact{"admissible intervals", ks(p.Intervals)},
		fact{"intervals above the limit (not admissible)", ks(p.Excluded)},
		fact{"limit on the interval (years, max_interval_years)", cell{p.MaxIntervalYears, numberCell}},
		fact{"hidden failures (found only by an inspection)", names(func(s int) bool { return p.Hidden[s] })},
		fact{"self-announcing failures", names(func(s int) bool { return p.Unsafe[s] && !p.Hidden[s] })})
	if pl != nil {
		for s, c := range pl.RiskCost {
			if c != 0 {
				out = append(out, fact{"risk cost per period unseen in " + p.States[s] + " (" + cur + ")", cell{c, moneyCell}})
			}
		}
	}
	return append(out, fact{"timing", InspectionTiming}, fact{"statutory", InspectionRule}, fact{"limit", LimitSentence(p)})
}

// longRunCellsXLSX are the long-run cells of a row of the fixed-interval
// sheet: epochs, scheduled inspections and call-outs per unit-year, days
// in a hidden failure unseen and the cost per unit-year; "n/a" where the
// figures are not defined.
func longRunCellsXLSX(l *inspect.LongRun) []any {
	if l == nil {
		return []any{"n/a", "n/a", "n/a", "n/a", "n/a"}
	}
	return []any{l.EpochsPerYear, l.InspectionsPerYear, l.CallOutsPerYear, 365.25 * l.HiddenShare, l.CostPerYear}
}

// fixedSheet adds what each fixed interval costs against the advice.
func (v *InspectionAdvice) fixedSheet(b *workbook) {
	p, cur := v.Problem, v.Currency
	cols := []column{{"inspect every", textCell}, {"periods", intCell}, {"years", numberCell}}
	for _, st := range p.States {
		cols = append(cols, column{"extra cost from " + st + " (" + cur + ")", moneyCell})
	}
	cols = append(cols, column{"largest extra cost (" + cur + ")", moneyCell}, column{"in condition", textCell},
		column{"inspections and call-outs per unit-year", countCell}, column{"scheduled inspections per unit-year", countCell},
		column{"call-outs per unit-year", countCell}, column{"days in a hidden failure per unit-year", countCell},
		column{"cost per unit-year (" + cur + ", undiscounted)", moneyCell}, column{"certificate", textCell})
	s := b.sheet("Fixed intervals", fmt.Sprintf("%s: what a fixed inspection interval costs against the advice (actions re-optimised for each interval; extra costs in present value, %s)", v.Model, cur), cols...)
	row := []any{"as advised", nil, nil}
	for range p.States {
		row = append(row, 0.0)
	}
	row = append(append(row, 0.0, nil), longRunCellsXLSX(v.LongRun)...)
	s.add(append(row, v.Result.Status.String())...)
	for i, f := range v.Fixed {
		worst, at := worstExcess(f)
		row := []any{intervalText(p, f.Interval), f.Interval, p.Years(f.Interval)}
		for _, x := range f.Excess {
			row = append(row, x)
		}
		row = append(append(row, worst, p.States[at]), longRunCellsXLSX(v.FixedLongRun[i])...)
		s.add(append(row, f.Result.Status.String())...)
	}
	s.note("Inspect every: one interval whatever the condition found (as advised: the advice). Extra cost from a condition: what that habit costs in present value above the advice, " +
		"for a unit found in it. Per unit-year, in the long run: inspections and call-outs (every epoch), of which scheduled inspections and call-outs after self-announcing failures; " +
		"days in a hidden failure, unseen; the long-run cost, undiscounted (n/a: not defined, the conditions found form several closed classes).")
	if h := v.habitLine(); h != "" {
		s.note(h)
	}
}

// longRunSheet adds the long-run figures of the advice (the Summary).
func (v *InspectionAdvice) longRunSheet(b *workbook) {
	l, p, cur := v.LongRun, v.Problem, v.Currency
	var facts []fact
	if l == nil {
		facts = append(facts, fact{"long run", "not defined: under the advice the conditions found at inspections form several closed classes"})
	} else {
		prob := func(x float64) any {
			if math.IsNaN(x) {
				return "n/a (no inspection is ever scheduled to happen)"
			}
			return cell{x, percentCell}
		}
		facts = append(facts,
			fact{"inspections and call-outs per unit-year", cell{l.EpochsPerYear, countCell}},
			fact{"scheduled inspections per unit-year", cell{l.InspectionsPerYear, countCell}},
			fact{"call-outs after self-announcing failures per unit-year", cell{l.CallOutsPerYear, countCell}},
			fact{"mean periods between epochs", cell{l.PeriodsBetween, countCell}},
			fact{"probability that a scheduled inspection finds the unit unsafe", prob(l.UnsafeAtInspection)},
			fact{"probability that a scheduled inspection finds a hidden failure", prob(l.HiddenAtInspection)},
			fact{"probability that an epoch (call-outs included) finds the unit unsafe", cell{l.UnsafeAtEpoch, percentCell}},
			fact{"days in a hidden failure, unseen, per unit-year", cell{365.25 * l.HiddenShare, countCell}},
			fact{"years in a hidden failure, unseen, per unit-year", cell{l.HiddenShare, numberCell}},
			fact{"long-run cost per unit-year (" + cur + ", undiscounted)", cell{l.CostPerYear, moneyCell}},
			fact{"long-run cost per unit-period (" + cur + ", undiscounted)", cell{l.CostPerPeriod, moneyCell}})
		for st, x := range l.Found {
			facts = append(facts, fact{"share of epochs that find the unit " + p.States[st], cell{x, percentCell}})
		}
	}
	s := b.summary(v.Model+": the advice in the long run, per unit", facts)
	for _, line := range v.figureLines() {
		s.note(line)
	}
}

// WriteXLSX writes the inspection calendar as a workbook: the expected
// inspections, call-outs, actions and spend per calendar year, the advice
// followed, charts of the inspections and of the spend by kind per year
// (as the brief draws them), the present value and the assumptions.
func (v *InspectionCalendar) WriteXLSX(w io.Writer) error {
	p, r, cur := v.Problem, v.Result, v.Currency
	b := newWorkbook(&v.Header, "inspection calendar")
	var cols columnList
	at := struct{ year, scheduled, callOuts, inspection, action, running, risk int }{}
	at.year = cols.add("year", intCell)
	cols.add("inspections and call-outs", countCell)
	at.scheduled = cols.add("scheduled inspections", countCell)
	at.callOuts = cols.add("call-outs after self-announcing failures", countCell)
	cols.add("unsafe found", countCell)
	for _, a := range p.Actions {
		cols.add(a+" (times taken)", countCell)
	}
	at.inspection = cols.add("inspection cost ("+cur+")", moneyCell)
	at.action = cols.add("action cost ("+cur+")", moneyCell)
	at.running = cols.add("running cost ("+cur+")", moneyCell)
	at.risk = cols.add("risk cost ("+cur+")", moneyCell)
	cols.add("total ("+cur+")", moneyCell)
	cols.add("unit-years in a hidden failure, unseen", countCell)
	years := b.sheet("By year", fmt.Sprintf("%s: expected inspections and spend per calendar year under the inspection advice (%s units, every one inspected at the start of year 1; %s, undiscounted)",
		v.Model, Fixed(v.units(), 2), cur), cols...)
	for _, y := range v.Calendar.Years {
		row := []any{y.Year + 1, y.Epochs, y.Epochs - y.Unscheduled, y.Unscheduled, y.UnsafeFound}
		row = append(row, anys(y.Actions)...)
		years.add(append(row, y.InspectionCost, y.ActionCost, y.RunningCost, y.RiskCost, y.Total, y.HiddenUnitYears)...)
	}
	years.note("Inspections and call-outs count every epoch, each charged the inspection cost. Unsafe found: epochs that find a unit unsafe. " +
		"Times taken: how often each action is taken. Running cost: every period, seen or not; risk cost: periods in a hidden failure, unseen.")
	years.note("Counts are expected values (fractions of units), not a work list.")
	years.note("STATUTORY: " + InspectionRule)

	adv := b.sheet("Advice", v.Model+": the advice followed, per condition found at an inspection (present value of expected costs, "+cur+")",
		column{"condition", textCell}, column{"unsafe", textCell}, column{"hidden", textCell}, column{"advice", textCell}, column{"action", textCell},
		column{"inspect again after (periods)", intCell}, column{"inspect again after (years)", numberCell},
		column{"expected cost (" + cur + ")", moneyCell}, column{"lower bound (" + cur + ")", moneyCell}, column{"upper bound (" + cur + ")", moneyCell},
		column{"units found at the start", countCell})
	for st := range p.States {
		c := p.Choices[st][r.Policy[st]]
		adv.add(p.States[st], p.Unsafe[st], p.Hidden[st], Decision(p, c), p.Actions[c.Action], c.Interval, p.Years(c.Interval),
			r.Value[st], r.Lower[st], r.Upper[st], v.Start[st])
	}
	adv.note(LimitSentence(p))

	if n := len(v.Calendar.Years); n > 0 {
		last := years.data + n - 1
		cats := years.ref(at.year, years.data, last)
		col := func(c int, colour rgb) excelize.ChartSeries {
			return excelize.ChartSeries{Name: years.cellRef(c, headRow), Categories: cats, Values: years.ref(c, years.data, last),
				Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(colour)}}}
		}
		ch := b.sheet("Charts", v.Model+": what the advice means over the years, for the same units")
		gap, overlap, vary := uint(40), 100, false
		ch.chart(1, ch.data, &excelize.Chart{Type: excelize.ColStacked,
			Series:   []excelize.ChartSeries{col(at.scheduled, actionRamp[2]), col(at.callOuts, actionRamp[0])},
			GapWidth: &gap, Overlap: &overlap, VaryColors: &vary,
			Title:     chartTitle("Expected inspections per calendar year"),
			Legend:    excelize.ChartLegend{Position: "bottom"},
			Dimension: excelize.ChartDimension{Width: 760, Height: 380},
			XAxis:     excelize.ChartAxis{Title: chartTitle("year")},
			YAxis:     excelize.ChartAxis{MajorGridLines: true, Title: chartTitle("inspections")},
		})
		kinds := ramp(actionRamp, 3)
		xAxis, yAxis := spendAxes(cur)
		ch.chart(1, ch.data+21, &excelize.Chart{Type: excelize.ColStacked,
			Series:   []excelize.ChartSeries{col(at.running, muted), col(at.inspection, kinds[0]), col(at.action, kinds[1]), col(at.risk, kinds[2])},
			GapWidth: &gap, Overlap: &overlap, VaryColors: &vary,
			Title:     chartTitle("Expected spend per calendar year by kind (" + cur + ")"),
			Legend:    excelize.ChartLegend{Position: "bottom"},
			Dimension: excelize.ChartDimension{Width: 760, Height: 380},
			XAxis:     xAxis, YAxis: yAxis,
		})
	}

	b.summary(v.Model+": the calendar's spend", []fact{
		{fmt.Sprintf("present value of the spend over %d years (%s)", len(v.Calendar.Years), cur), cell{v.Calendar.PresentValue, moneyCell}},
		{"units", cell{v.units(), countCell}},
		{"years", cell{len(v.Calendar.Years), intCell}},
	})

	facts := append([]fact{{"criterion", "expected discounted cost (present value) from an inspection, over the action and the next inspection interval"}},
		v.discountFacts()...)
	facts = append(facts, fact{"start", "every unit inspected at the start of year 1, found in the conditions of the starting mix"})
	facts = append(facts, inspectionFacts(p, cur, nil)...)
	facts = append(facts,
		fact{"solver", methodTitles[r.Method] + ", " + iterationText(r.Method, r.Iterations)},
		fact{"certificate", r.Status.String() + " (whether the proven gap is within the tolerance)"},
		fact{"proven gap (" + cur + ")", cell{r.Gap, sciCell}},
		fact{"tolerance (" + cur + ")", cell{r.Tol, sciCell}},
		fact{"Bellman residual (" + cur + ")", cell{r.Residual, sciCell}})
	b.assumptions(facts)
	return b.write(w)
}
