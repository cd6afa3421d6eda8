package reports

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"time"

	"fixpoint/condition"
	"fixpoint/costs"
)

// Brief is the printable policy brief of one class: a recommendation page,
// a page of charts, and a page of inputs and the certificate, with the
// caution box on every page.
type Brief struct {
	Advice *Advice
	// Forecast is the condition mix and spend over the brief's horizon.
	Forecast *Forecast
	// Model and Costs are the inputs printed on the last page.
	Model *condition.Model
	Costs *costs.Schedule
	// Date is printed on the brief and stamped as its creation date.
	Date time.Time
	// Compare, if not nil, adds a page comparing discount rates.
	Compare *Comparison
}

// WritePDF renders the brief. The same brief and date give byte-identical
// output.
func (b *Brief) WritePDF(w io.Writer) error {
	a := b.Advice
	d := newDoc("Maintenance policy brief: "+a.Model,
		fmt.Sprintf("fixpoint maintenance policy brief  ·  %s  ·  %s", a.Model, b.Date.Format("2006-01-02")), b.Date)
	b.pageAdvice(d)
	b.pageCharts(d)
	if b.Compare != nil {
		b.pageCompare(d)
	}
	b.pageInputs(d)
	return d.output(w)
}

func (b *Brief) pageAdvice(d *doc) {
	a := b.Advice
	p := d.pdf
	d.title("Maintenance policy brief", a.Model, b.Date)
	d.heading("Recommendation", 30)
	d.paragraph(b.recommendation())
	d.heading("Advice per condition", 40)
	cur := a.Currency
	t := pdfTable{
		header: []string{"Condition", "Advice", "Expected cost, present value (" + cur + ")", "Runner-up", "Margin (" + cur + ")"},
		widths: []float64{26, 22, 24, 22, 18},
		right:  []bool{false, false, true, false, true},
	}
	r := a.Result
	for s := range r.Policy {
		runner, margin := "none (only action)", "-"
		if r.RunnerUp[s] >= 0 {
			runner, margin = a.Problem.Actions[r.RunnerUp[s]], Money(r.Margin[s], 2)
		}
		t.rows = append(t.rows, []string{a.stateLabel(s), a.Problem.Actions[r.Policy[s]], Money(r.Value[s], 2), runner, margin})
	}
	d.table(t)
	d.font("", smallSize, muted)
	p.MultiCell(contentW, 3.8, "Margin: how much the runner-up's cost in that condition must fall before it becomes the advice. "+
		"Present values are expected discounted costs from now on, for one unit starting in that condition.", "", "L", false)
	p.Ln(2)
	d.heading("Key assumptions", 30)
	rate := "given as a discount factor"
	if r, ok := a.rate(); ok {
		rate = Percent(r, 2) + " per year (real)"
	}
	for _, line := range []string{
		"Discount rate: " + rate + "; discount factor " + Fixed(a.Problem.Discount, 6) + " per period.",
		"Period: " + Years(a.periodYears()) + "; costs in " + cur + " at constant prices, charged at the start of each period.",
		"Condition scale, best first: " + strings.Join(a.Problem.States, ", ") + ".",
		"Objective: least expected discounted cost over an unlimited horizon; safety-critical states are never left as they are.",
	} {
		d.paragraph(line)
	}
	d.heading("Sign-off", 24)
	d.font("", bodySize, ink)
	for _, line := range []string{"Reviewed by (competent person): ______________________________   Date: ____________",
		"Approved by: ______________________________   Date: ____________"} {
		p.Ln(3)
		p.MultiCell(contentW, lineH, line, "", "L", false)
	}
}

// recommendation says the advice in plain words.
func (b *Brief) recommendation() string {
	a := b.Advice
	l := a.Life
	cur := a.Currency
	var s strings.Builder
	s.WriteString(a.Thresholds())
	if l != nil && l.Stationary != nil {
		fmt.Fprintf(&s, " Under this advice a unit costs on average %s %s per year in the long run (undiscounted)", Money(l.CostPerYear, 0), cur)
		if eac := l.EquivalentAnnual[0]; !math.IsNaN(eac) {
			fmt.Fprintf(&s, "; its discounted cost from %s is equivalent to %s %s per year", a.Problem.States[0], Money(eac, 0), cur)
		}
		s.WriteString(".")
	}
	if l != nil {
		target := a.targetName()
		adv := l.Policy.Periods[0]
		switch {
		case math.IsInf(adv, 1):
			fmt.Fprintf(&s, " A unit starting %s is not expected to reach %s under the advice", a.Problem.States[0], target)
		case !math.IsNaN(adv):
			fmt.Fprintf(&s, " A unit starting %s is expected to first reach %s after %s under the advice", a.Problem.States[0], target, yearsText(adv*a.periodYears()))
		}
		if l.Passive != nil && !math.IsNaN(l.Passive.Periods[0]) && !math.IsInf(l.Passive.Periods[0], 0) {
			fmt.Fprintf(&s, ", against %s if left alone", yearsText(l.Passive.Periods[0]*a.periodYears()))
		}
		if !math.IsNaN(adv) {
			s.WriteString(".")
		}
		if !math.IsNaN(l.UnsafeShare) {
			fmt.Fprintf(&s, " In the long run %s of units are expected to be in an unsafe state at any time.", Percent(l.UnsafeShare, 1))
		}
	}
	r := a.Result
	fmt.Fprintf(&s, " The advice is %s: no policy can do better by more than %s %s from any condition (%s).",
		r.Status, sci(r.Gap), cur, methodTitles[r.Method])
	for _, n := range a.notes(r.Policy, a.Problem.Actions, a.Warnings) {
		s.WriteString(" " + n)
	}
	return s.String()
}

func yearsText(y float64) string {
	return Fixed(y, 1) + " years"
}

func (b *Brief) pageCharts(d *doc) {
	a := b.Advice
	p := d.pdf
	p.AddPage()
	d.font("B", 12, ink)
	p.MultiCell(contentW, 6, "What the advice means over the years", "", "L", false)
	p.Ln(2)
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
	if a.periodYears() <= 1 {
		for _, fy := range f.Years(a.Period) {
			cols = append(cols, column{fmt.Sprint(fy.Year), fy.Counts, fy.ActionSpend, fy.Running})
		}
	} else {
		unit, mixWhen = "period of "+a.Period.String(), "units at the start of each period"
		for k, per := range f.Periods {
			cols = append(cols, column{trimYear(b.Forecast.year(k)), per.Counts, per.ActionSpend, per.Running})
		}
	}
	cats := make([]string, len(cols))
	for k, c := range cols {
		cats[k] = c.label
	}
	colours := ramp(stateRamp, len(a.Problem.States))
	var mix []series
	for s, name := range a.Problem.States {
		v := make([]float64, len(cols))
		for k, c := range cols {
			v[k] = c.counts[s]
		}
		mix = append(mix, series{name: name, color: colours[s], values: v})
	}
	y := p.GetY()
	d.stackedBars(marginX, y, contentW, 62, "Expected condition mix of the population ("+mixWhen+")",
		"year", "units", cats, mix, func(v float64) string { return Money(v, decimalsFor(niceStep(v+1, 1))) })
	y = p.GetY() + 3
	var spend []series
	run := make([]float64, len(cols))
	for k, c := range cols {
		run[k] = c.running
	}
	spend = append(spend, series{name: "running costs", values: run, hatch: true})
	acol := ramp(actionRamp, len(a.Problem.Actions))
	for act, name := range a.Problem.Actions {
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
	d.stackedBars(marginX, y, contentW, 62, "Expected spend per "+unit+" by action ("+a.Currency+")", "year", a.Currency, cats, spend,
		func(v float64) string { return Money(v, 0) })
	y = p.GetY() + 3
	if l := a.Life; l != nil {
		xs := make([]float64, l.Horizon+1)
		for k := range xs {
			xs[k] = float64(k) * a.periodYears()
		}
		curves := []series{{name: "under the advice", color: ink, values: l.PolicySurvival[0]}}
		if l.Passive != nil && !math.IsNaN(l.Passive.Periods[0]) {
			curves = append(curves, series{name: "left alone", color: stateRamp[2], values: l.PassiveSurvival[0], dash: true})
		}
		d.lineChart(marginX, y, contentW, 58,
			fmt.Sprintf("Survival: probability that a unit starting %s has not yet reached %s", a.Problem.States[0], a.targetName()),
			"years", "probability", xs, curves, 0, 1, func(v float64) string { return Fixed(v, 1) }, nil, nil)
	}
}

func (b *Brief) pageCompare(d *doc) {
	c := b.Compare
	cmp := c.Compare
	p := d.pdf
	p.AddPage()
	d.font("B", 12, ink)
	p.MultiCell(contentW, 6, "Does the advice depend on the discount rate?", "", "L", false)
	p.Ln(1)
	kind := "Rates are real (constant prices)."
	if c.HasInflation {
		kind = fmt.Sprintf("Rates were given as nominal and converted to real at %s inflation by the Fisher relation.", Percent(c.Inflation, 2))
	}
	d.paragraph("Advice per condition and equivalent annual cost (EAC) of a unit starting " + c.States[0] +
		" at each rate compared. " + kind + " At rate 0 the EAC is the long-run average cost per year.")
	t := pdfTable{header: append(append([]string{"Rate"}, c.States...), "EAC ("+c.Currency+"/yr)")}
	t.widths = append(append([]float64{16}, slices.Repeat([]float64{16}, len(c.States))...), 18)
	t.right = append([]bool{true}, append(slices.Repeat([]bool{false}, len(c.States)), true)...)
	for _, r := range cmp.Rows {
		row := []string{c.rateText(r.Rate, 2)}
		for _, a := range r.Policy {
			row = append(row, c.Actions[a])
		}
		t.rows = append(t.rows, append(row, Money(r.EquivalentAnnual, 2)))
	}
	d.table(t)
	if sw := c.SwitchSentences(); len(sw) > 0 {
		d.paragraph("Switch points (every rate in the range at which the advice changes): " + strings.Join(sw, " "))
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
	var labels []string
	for _, sw := range cmp.Switches {
		marks = append(marks, 100*sw.Rate)
		labels = append(labels, fmt.Sprintf("%s: %s→%s", c.States[sw.State], c.Actions[sw.Above], c.Actions[sw.Below]))
	}
	d.lineChart(marginX, p.GetY()+2, contentW, 64, "Equivalent annual cost against the real discount rate (switch points dashed)",
		"real discount rate (%)", c.Currency+" per year", xs, []series{{name: "EAC of a unit starting " + c.States[0], color: ink, values: ys}},
		slices.Min(ys), slices.Max(ys), func(v float64) string { return Money(v, 0) }, marks, labels)
}

func (b *Brief) pageInputs(d *doc) {
	a := b.Advice
	p := d.pdf
	m, c := b.Model, b.Costs
	p.AddPage()
	d.font("B", 12, ink)
	p.MultiCell(contentW, 6, "Inputs and certificate", "", "L", false)
	p.Ln(1)
	d.heading("Condition scale and running costs", 30)
	st := pdfTable{header: []string{"Condition (best first)", "Unsafe", "Running cost per period (" + a.Currency + ")"},
		widths: []float64{40, 16, 34}, right: []bool{false, false, true}}
	for s, state := range m.States {
		unsafe := "no"
		if state.Unsafe {
			unsafe = "yes"
		}
		st.rows = append(st.rows, []string{state.Name, unsafe, Money(c.Running[s], 2)})
	}
	d.table(st)
	n := len(m.States)
	for act, action := range m.Actions {
		title := "Action: " + action.Name
		if action.Passive {
			title += " (passive: leave as it is)"
		}
		d.heading(title, 24)
		var none []string
		for s := range m.States {
			if !action.Admissible(s) {
				none = append(none, m.States[s].Name)
			}
		}
		if len(none) > 0 {
			d.font("", smallSize, muted)
			p.MultiCell(contentW, 3.8, "Not admissible in: "+strings.Join(none, ", ")+".", "", "L", false)
			p.Ln(0.5)
		}
		var t pdfTable
		if n <= 7 {
			t = pdfTable{header: append([]string{"from \\ to"}, append(m.StateNames(), "cost ("+a.Currency+")")...)}
			t.widths = append(append([]float64{24}, slices.Repeat([]float64{14}, n)...), 18)
			t.right = append([]bool{false}, slices.Repeat([]bool{true}, n+1)...)
		} else {
			t = pdfTable{header: []string{"from", "next-period probabilities", "cost (" + a.Currency + ")"},
				widths: []float64{24, 70, 18}, right: []bool{false, false, true}}
		}
		for s := range m.States {
			if !action.Admissible(s) {
				continue
			}
			row := []string{m.States[s].Name}
			if n <= 7 {
				probs := slices.Repeat([]string{"0"}, n)
				for _, e := range action.Rows[s] {
					probs[e.To] = trimProb(e.P)
				}
				row = append(row, probs...)
			} else {
				var parts []string
				for _, e := range action.Rows[s] {
					parts = append(parts, m.States[e.To].Name+" "+trimProb(e.P))
				}
				row = append(row, strings.Join(parts, ", "))
			}
			t.rows = append(t.rows, append(row, Money(c.Action[act][s], 2)))
		}
		d.table(t)
	}
	d.heading("Solver certificate", 30)
	r := a.Result
	lines := []string{
		fmt.Sprintf("Method: %s, %s; Bellman residual of the advice's exact values %s %s.",
			methodTitles[r.Method], a.iterationText(), sci(r.Residual), a.Currency),
		fmt.Sprintf("Proven gap: %s %s (tolerance %s): %s. By the contraction bounds Tv + γ/(1−γ)·min(Tv − v) ≤ v* ≤ Tv + γ/(1−γ)·max(Tv − v) "+
			"(MacQueen 1966; Puterman 1994, §6.6.3), no policy can beat the advice by more than the gap from any condition.",
			sci(r.Gap), a.Currency, sci(r.Tol), r.Status),
	}
	lines = append(lines, a.tieLines()...)
	for _, line := range lines {
		d.paragraph(line)
	}
}

func trimProb(p float64) string {
	s := fmt.Sprintf("%.4f", p)
	s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	return s
}
