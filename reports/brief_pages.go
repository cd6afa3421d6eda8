package reports

// The pages of a class brief after page 1: charts, the comparison across
// rates, how sure we are, and the inputs.

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/optimize/robust"
)

// pageCharts draws the charts: below the end of page 1's table when
// onPage and room is left, else on a page of their own.
func (b *Brief) pageCharts(d *doc, onPage bool) {
	h := b.head()
	p := b.problem()
	d.section("What the advice means over the years", onPage, 95)
	// By calendar year when a year holds whole periods; per period when a
	// period is longer than a year.
	f := b.Forecast.Forecast
	type column struct {
		label         string
		counts, spend []float64
		running       float64
	}
	var cols []column
	unit, mixWhen := "year", "units at the start of each year"
	if h.periodYears() <= 1 {
		for _, fy := range f.Years(h.Period) {
			cols = append(cols, column{strconv.Itoa(fy.Year), fy.Counts, fy.ActionSpend, fy.Running})
		}
	} else {
		unit, mixWhen = "period of "+h.Period.String(), "units at the start of each period"
		for k, per := range f.Periods {
			cols = append(cols, column{trimYear(b.Forecast.year(k)), per.Counts, per.ActionSpend, per.Running})
		}
	}
	horizon := float64(len(f.Periods)) * h.periodYears()
	pop := populationText(p.States, f.Periods[0].Counts)
	d.paragraph(fmt.Sprintf("The charts follow %s, under the advice, over %s (expected values: fractions of units, not a work list).", pop, Years(horizon)))
	cats := make([]string, len(cols))
	for k, c := range cols {
		cats[k] = c.label
	}
	colours := ramp(stateRamp, len(p.States))
	var mix []series
	for s, name := range p.States {
		v := make([]float64, len(cols))
		for k, c := range cols {
			v[k] = c.counts[s]
		}
		mix = append(mix, series{name: name, color: colours[s], values: v})
	}
	d.stackedBars(marginX, d.y(), contentW, 60, "Expected condition mix of the "+unitsOf(sum(f.Periods[0].Counts))+" ("+mixWhen+")",
		"year", "units", cats, mix, func(v float64) string { return Money(v, 0) })
	var spend []series
	run := make([]float64, len(cols))
	for k, c := range cols {
		run[k] = c.running
	}
	spend = append(spend, series{name: "running costs", values: run, hatch: true})
	acol := ramp(actionRamp, len(p.Actions))
	for act, name := range p.Actions {
		v := make([]float64, len(cols))
		used := false
		for k, c := range cols {
			v[k] = c.spend[act]
			used = used || v[k] != 0
		}
		if used {
			spend = append(spend, series{name: name, color: acol[act], values: v})
		}
	}
	d.stackedBars(marginX, d.y()+3, contentW, 60, "Expected spend per "+unit+" by action ("+h.Currency+"), for the same units", "year", h.Currency, cats, spend,
		func(v float64) string { return Money(v, 0) })
	if b.Advice == nil || b.Advice.Life == nil {
		return
	}
	a := b.Advice
	l := a.Life
	// The survival curves run over the horizon of the charts above (or
	// as far as they were computed, said in the title).
	n := min(l.Horizon, len(f.Periods))
	xs := make([]float64, n+1)
	for k := range xs {
		xs[k] = float64(k) * h.periodYears()
	}
	curves := []series{{name: "under the advice", color: ink, values: l.PolicySurvival[0][:n+1]}}
	if l.Passive != nil && !math.IsNaN(l.Passive.Periods[0]) {
		curves = append(curves, series{name: "left alone", color: stateRamp[2], values: l.PassiveSurvival[0][:n+1], dash: true})
	}
	title := fmt.Sprintf("Survival over the same %s: probability that one unit starting %s has not yet reached %s", Years(xs[n]), p.States[0], a.targetName())
	if n < len(f.Periods) {
		title = fmt.Sprintf("Survival over %s (as far as computed): probability that one unit starting %s has not yet reached %s", Years(xs[n]), p.States[0], a.targetName())
	}
	d.lineChart(marginX, d.y()+3, contentW, 56, title, "years", "probability", xs, curves, 0, 1, func(v float64) string { return Fixed(v, 1) }, nil)
	var tail []string
	tail = append(tail, fmt.Sprintf("after %s: %s under the advice", Years(xs[n]), Percent(l.PolicySurvival[0][n], 1)))
	if len(curves) > 1 {
		tail = append(tail, Percent(l.PassiveSurvival[0][n], 1)+" left alone")
	}
	d.note("Still short of " + a.targetName() + " " + strings.Join(tail, ", ") + ".")
}

func sum(x []float64) float64 {
	t := 0.0
	for _, v := range x {
		t += v
	}
	return t
}

// maxRateRowsStates is the most states for which the rate table keeps
// rates as rows and conditions as columns; with more it turns round.
const maxRateRowsStates = 7

func (b *Brief) pageCompare(d *doc) {
	c := b.Compare
	cmp := c.Compare
	d.pageTitle("Does the advice depend on the discount rate?")
	kind := "Rates are real (constant prices)."
	if c.HasInflation {
		kind = fmt.Sprintf("Rates were given as nominal and converted to real at %s inflation by the Fisher relation.", Percent(c.Inflation, 2))
	}
	d.paragraph("Advice per condition and equivalent annual cost (EAC) of a unit starting " + c.States[0] +
		" at each rate compared. " + kind + " At rate 0 the EAC is the long-run average cost per year. " +
		"Advice marked * (bold) differs from the advice at the next lower rate.")
	eac := "EAC (" + c.Currency + "/yr)"
	changed := func(r optimize.RateRow, s int) bool { return slices.Contains(r.Changed, s) }
	cell := func(r optimize.RateRow, s int) string {
		if changed(r, s) {
			return c.Actions[r.Policy[s]] + " *"
		}
		return c.Actions[r.Policy[s]]
	}
	byRate := pdfTable{header: append(append([]string{"Rate"}, c.States...), eac), keep: 1}
	byRate.widths = append(append([]float64{16}, slices.Repeat([]float64{16}, len(c.States))...), 18)
	byRate.right = append([]bool{true}, append(slices.Repeat([]bool{false}, len(c.States)), true)...)
	for _, r := range cmp.Rows {
		row := []string{c.rateText(r.Rate, 2)}
		bold := []bool{false}
		for s := range r.Policy {
			row = append(row, cell(r, s))
			bold = append(bold, changed(r, s))
		}
		byRate.rows = append(byRate.rows, append(row, c.money(r.EquivalentAnnual)))
		byRate.bold = append(byRate.bold, append(bold, false))
	}
	t := byRate
	if len(c.States) > maxRateRowsStates || len(d.layoutColumns(&byRate)) > 1 {
		// Turned round: conditions as rows, rates as columns, the EAC as
		// the last row; split into parts of rates when they do not fit.
		t = pdfTable{header: []string{"Condition"}, widths: []float64{30}, keep: 1}
		for _, r := range cmp.Rows {
			t.header = append(t.header, c.rateText(r.Rate, 2))
			t.widths = append(t.widths, 16)
		}
		for s := range c.States {
			row := []string{c.States[s]}
			bold := []bool{false}
			for _, r := range cmp.Rows {
				row = append(row, cell(r, s))
				bold = append(bold, changed(r, s))
			}
			t.rows = append(t.rows, row)
			t.bold = append(t.bold, bold)
		}
		last := []string{eac}
		for _, r := range cmp.Rows {
			last = append(last, c.money(r.EquivalentAnnual))
		}
		t.rows = append(t.rows, last)
		t.bold = append(t.bold, make([]bool, len(last)))
		t.shade = make([]*rgb, len(t.rows))
		t.shade[len(t.rows)-1] = &rgb{tableHeadShade, tableHeadShade, tableHeadShade}
	}
	d.table(t)
	sw := c.SwitchSentences()
	for i := range sw {
		sw[i] = fmt.Sprintf("(%d) %s", i+1, sw[i])
	}
	if len(sw) > 0 {
		d.paragraph("Switch points (every rate in the range at which the advice changes; numbered as in the chart): " + strings.Join(sw, " "))
	} else if len(cmp.Rows) > 1 {
		d.paragraph("The advice is the same at every rate between the smallest and the largest compared.")
	}
	d.paragraph(c.averageLine())
	if len(cmp.Curve) < 2 {
		return
	}
	xs := make([]float64, len(cmp.Curve))
	ys := make([]float64, len(cmp.Curve))
	for i, pt := range cmp.Curve {
		xs[i], ys[i] = 100*pt.Rate, pt.EquivalentAnnual
	}
	var marks []float64
	for _, s := range cmp.Switches {
		marks = append(marks, 100*s.Rate)
	}
	d.lineChart(marginX, d.y()+2, contentW, 62, "Equivalent annual cost against the real discount rate (switch points dashed and numbered)",
		"real discount rate (%)", c.Currency+" per year", xs, []series{{name: "EAC of a unit starting " + c.States[0], color: ink, values: ys}},
		slices.Min(ys), slices.Max(ys), func(v float64) string { return Money(v, 0) }, marks)
}

// whichAdvice says, for page 1 of a brief with a robust page, which
// advice the brief shows and where the robust advice differs.
func (r *RobustAdvice) whichAdvice() string {
	a := r.Analysis
	s := "Which advice: this page and the charts give the nominal advice, for the transition matrices in the config. " +
		"The page \"How sure are we?\" gives the robust advice, best for the worst matrices the data allow (" + r.setWords() + "): "
	if len(a.Differs) == 0 {
		return s + "it is the same in every condition."
	}
	names := make([]string, len(a.Differs))
	for i, st := range a.Differs {
		names[i] = r.Problem.Actions[a.Robust.Policy[st]] + " in " + r.Problem.States[st]
	}
	return s + "it advises " + joinAnd(names) + fmt.Sprintf(" instead, at a price of robustness of %s %s.", r.money(a.PriceOfRobustness), r.Currency)
}

// setWords names the ambiguity sets: "L1 sets of radius 0.1" or "L1
// sets at 90% confidence".
func (r *RobustAdvice) setWords() string {
	s := r.sets()
	kind := "L1"
	if s.Kind == robust.KL {
		kind = "Kullback-Leibler"
	}
	switch {
	case !math.IsNaN(s.Confidence) && s.Confidence > 0:
		return kind + " sets at " + strconv.FormatFloat(100*s.Confidence, 'f', -1, 64) + "% confidence"
	case !math.IsNaN(s.Radius):
		return kind + " sets of radius " + r.radiusText(s.Radius)
	}
	return kind + " sets, one per row"
}

func (b *Brief) pageRobust(d *doc) {
	pg := b.Robust.Page()
	d.pageTitle(pg.Title)
	for _, p := range pg.Intro {
		d.paragraph(p)
	}
	d.setY(d.y() + 1)
	d.pageTable(pg.Advice)
	d.setY(d.y() + 1)
	d.need(d.paragraphBlock(pg.SettleIntro, bodySize, ink, lineH, false) + 20)
	d.paragraph(pg.SettleIntro)
	if len(pg.Settle.Rows) > 0 {
		d.pageTable(pg.Settle)
	}
	for _, n := range pg.Closing {
		d.note(n)
	}
}

// probDecimals is the number of decimals that prints every probability
// of ps as given (at most 4).
func probDecimals(ps []float64) int {
	d := 0
	for _, p := range ps {
		for d < 4 && math.Abs(p*math.Pow(10, float64(d))-math.Round(p*math.Pow(10, float64(d)))) > 1e-9 {
			d++
		}
	}
	return d
}

// modelTables draws the inputs of one class: its scale with running costs
// and, per action, the admissible conditions, the transition
// probabilities (decimal-aligned) and the cost.
func (d *doc) modelTables(h *Header, m *condition.Model, c *costs.Schedule, prefix string) {
	d.heading(prefix+"Condition scale and running costs", 30)
	st := pdfTable{title: prefix + "Condition scale and running costs", header: []string{"Condition (best first)", "Unsafe", "Running cost per period (" + h.Currency + ")"},
		widths: []float64{40, 16, 34}, right: []bool{false, false, true}}
	for s, state := range m.States {
		unsafe := "no"
		if state.Unsafe {
			unsafe = "yes"
		}
		st.rows = append(st.rows, []string{state.Name, unsafe, h.money(c.Running[s])})
	}
	d.table(st)
	n := len(m.States)
	for act, action := range m.Actions {
		title := prefix + "Action: " + action.Name
		if action.Passive {
			title += " (passive: leave as it is)"
		}
		var none []string
		var ps []float64
		for s := range m.States {
			if !action.Admissible(s) {
				none = append(none, m.States[s].Name)
				continue
			}
			for _, e := range action.Rows[s] {
				ps = append(ps, e.P)
			}
		}
		dec := probDecimals(ps)
		prob := func(p float64) string { return Fixed(p, dec) }
		var t pdfTable
		if n <= 7 {
			t = pdfTable{header: append([]string{"from \\ to"}, append(m.StateNames(), "cost ("+h.Currency+")")...), keep: 1}
			t.widths = append(append([]float64{24}, slices.Repeat([]float64{14}, n)...), 18)
			t.decimal = append([]bool{false}, slices.Repeat([]bool{true}, n)...)
			t.right = append(slices.Repeat([]bool{false}, n+1), true)
		} else {
			t = pdfTable{header: []string{"from", "to", "probability", "cost (" + h.Currency + ")"},
				widths: []float64{40, 40, 16, 18}, decimal: []bool{false, false, true}, right: []bool{false, false, false, true}}
		}
		for s := range m.States {
			if !action.Admissible(s) {
				continue
			}
			if n <= 7 {
				row := append([]string{m.States[s].Name}, slices.Repeat([]string{"0"}, n)...)
				for _, e := range action.Rows[s] {
					row[1+e.To] = prob(e.P)
				}
				t.rows = append(t.rows, append(row, h.money(c.Action[act][s])))
				continue
			}
			for k, e := range action.Rows[s] {
				from, cost := "", ""
				if k == 0 {
					from, cost = m.States[s].Name, h.money(c.Action[act][s])
				}
				t.rows = append(t.rows, []string{from, m.States[e.To].Name, prob(e.P), cost})
			}
		}
		t.title = title
		d.need(d.headingBlock(title, false) + 16)
		d.headingBlock(title, true)
		if len(none) > 0 {
			d.note("Not admissible in: " + strings.Join(none, ", ") + ".")
		}
		d.table(t)
	}
}

func (b *Brief) pageInputs(d *doc) {
	h := b.head()
	d.pageTitle("Certificate and inputs")
	d.heading("Solver certificate", 30)
	var lines []string
	if a := b.Average; a != nil {
		r := a.Result
		lines = append(lines,
			fmt.Sprintf("Criterion: long-run average cost per period (undiscounted). Method: %s, %s.", methodTitles[r.Method], nouns(r.Iterations, "iteration", "iterations")),
			fmt.Sprintf("Gain of the advice %s %s per period; the optimal gain g* is proven to lie in [%s, %s] (width %s %s, tolerance %s): %s. "+
				"The bounds min(Th − h) ≤ g* ≤ max(Th − h) hold for any h (Odoni 1969; Puterman 1994, §8.5.5).",
				Fixed(r.Gain, 6), h.Currency, Fixed(r.GainLower, 6), Fixed(r.GainUpper, 6), sci(r.GainUpper-r.GainLower), h.Currency, sci(r.Tol), r.Status))
		lines = append(lines, tieLines(a.Problem, r.Ties, r.TieTol, h.Currency)...)
	} else {
		a := b.Advice
		r := a.Result
		lines = append(lines,
			fmt.Sprintf("Method: %s, %s; Bellman residual of the advice's exact values %s %s.",
				methodTitles[r.Method], a.iterationText(), sci(r.Residual), h.Currency),
			fmt.Sprintf("Proven gap: %s %s (tolerance %s): %s. By the contraction bounds Tv + γ/(1−γ)·min(Tv − v) ≤ v* ≤ Tv + γ/(1−γ)·max(Tv − v) "+
				"(MacQueen 1966; Puterman 1994, §6.6.3), no policy can beat the advice by more than the gap from any condition.",
				sci(r.Gap), h.Currency, sci(r.Tol), r.Status))
		lines = append(lines, a.tieLines()...)
	}
	for _, line := range lines {
		d.paragraph(line)
	}
	d.modelTables(h, b.Model, b.Costs, "")
}
