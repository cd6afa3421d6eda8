package reports

import (
	"fmt"
	"io"
	"strconv"
	"strings"

	"fixpoint/condition"
	"fixpoint/costs"
)

// InspectionBrief is the printable brief of a class with an inspection
// block. Page 1 says which advice it shows (the joint advice: at each
// inspection the action and when to inspect again), in words and per
// condition, with the statutory-limit rule (InspectionRule), the key
// assumptions, the traceability and the sign-off; the page "When to look
// again" (InspectionAdvice.LookAgain) follows, then charts of the
// expected inspections and spend per calendar year of the brief's
// population, and the certificate with the inputs. The caution box is on
// every page.
type InspectionBrief struct {
	Advice *InspectionAdvice
	// Calendar follows the brief's population under the advice, every
	// unit inspected at the start of year 1.
	Calendar *InspectionCalendar
	// Model and Costs are the inputs printed on the last page.
	Model *condition.Model
	Costs *costs.Schedule
	Imprint
}

// Fields lists the user text the brief prints, by where it comes from.
func (b *InspectionBrief) Fields() []TextField {
	v := b.Advice
	out := append(headerFields(&v.Header, b.Imprint), nameFields("", v.Problem.States, v.Problem.Actions)...)
	for i, w := range v.Warnings {
		out = append(out, TextField{fmt.Sprintf("warnings[%d]", i), w})
	}
	return out
}

// WritePDF renders the brief; the same brief and date give
// byte-identical output. A name with characters no font prints is
// refused with a *GlyphError before anything is written.
func (b *InspectionBrief) WritePDF(w io.Writer) error {
	d, err := b.layout()
	if err != nil {
		return err
	}
	return d.output(w)
}

// layout lays the brief out, page by page.
func (b *InspectionBrief) layout() (*doc, error) {
	v := b.Advice
	d, err := newDocWith("Maintenance and inspection brief: "+v.Model, runningHeader("maintenance and inspection brief", v.Model, b.Imprint), b.Imprint)
	if err != nil {
		return nil, err
	}
	if err := d.fonts.check(b.Fields()); err != nil {
		return nil, err
	}
	cont := d.drawFront(&v.Header, b.Imprint, b.front())
	spilled := d.drawPage(v.LookAgain(), cont)
	b.pageCharts(d, spilled)
	b.pageInputs(d)
	return d, nil
}

func (b *InspectionBrief) front() front {
	v := b.Advice
	p, r, cur := v.Problem, v.Result, v.Currency
	var notes []string
	for _, n := range v.notes() {
		notes = append(notes, capitalize(n))
	}
	f := front{title: "Maintenance and inspection brief", tableTitle: "Action and next inspection per condition found", notesTitle: "Notes on the advice",
		notes: notes, assumptions: b.keyAssumptions()}
	f.short = shortScale(f.assumptions, p.States, &v.Header, "the table of action and next inspection")
	f.table = pdfTable{header: []string{"Condition found", "Advice", "Expected cost, present value (" + cur + ")", "Runner-up", "Margin (" + cur + ")"},
		widths: []float64{20, 36, 18, 22, 12}, right: []bool{false, false, true, false, true}}
	for s := range p.States {
		runner, margin := "none (only decision)", "–"
		if i := r.RunnerUp[s]; i >= 0 {
			c := p.Choices[s][i]
			runner, margin = p.Actions[c.Action]+", "+Duration(p.Years(c.Interval)), v.money(r.Margin[s])
		}
		f.table.rows = append(f.table.rows, []string{v.label(s), Decision(p, p.Choices[s][r.Policy[s]]), v.money(r.Value[s]), runner, margin})
	}
	f.tableNote = "Advice: the action, then the next inspection. Expected cost: present value from an inspection finding that condition on. " +
		"Runner-up: the next best decision; margin: how much its cost must fall to become the advice. Hidden: found only by an inspection."
	rec := "Which advice: the joint advice of the inspection block: at each inspection the action and when to inspect again, chosen together " +
		"(the condition is seen only at inspections, or when a failure announces itself)."
	if l := v.LongRun; l != nil {
		rec += fmt.Sprintf(" Per unit and year under it: %s scheduled inspections; long-run cost %s %s per unit-year (undiscounted).",
			Fixed(l.InspectionsPerYear, 3), v.money(l.CostPerYear), cur)
	}
	if h := v.habitLine(); h != "" {
		rec += " " + h
	}
	f.recommendation = []string{rec, "Statutory: " + InspectionRule, certificateWords(&v.Header, r.Status, r.Gap, methodTitles[r.Method])}
	return f
}

// keyAssumptions are the assumptions a signer must agree with: rate,
// period, the inspection plan and its limit, hidden and self-announcing
// failures, the scale and the objective.
func (b *InspectionBrief) keyAssumptions() []string {
	v := b.Advice
	p, pl, cur := v.Problem, v.Plan, v.Currency
	durations := func(ks []int) string {
		out := make([]string, len(ks))
		for i, k := range ks {
			out[i] = Duration(p.Years(k))
		}
		return joinAnd(out)
	}
	insp := fmt.Sprintf("Inspection: %s %s each, call-outs too", v.money(pl.Cost), cur)
	if pl.Downtime > 0 {
		insp += fmt.Sprintf(", plus %s %s downtime", v.money(pl.Downtime), cur)
	}
	insp += "; every " + strings.Replace(durations(p.Intervals), " and ", " or ", 1) + ", within the limit of " + Years(p.MaxIntervalYears) + " of the statutory or written scheme"
	if len(p.Excluded) > 0 {
		insp += " (" + durations(p.Excluded) + " excluded)"
	}
	insp += "."
	failures := "Failures: every unsafe condition announces itself (a call-out in the period it happens)."
	if h := v.hidden(); len(h) > 0 {
		var risk []string
		for _, s := range pl.Hidden {
			if s < len(pl.RiskCost) && pl.RiskCost[s] > 0 {
				risk = append(risk, fmt.Sprintf("%s %s %s", p.States[s], v.money(pl.RiskCost[s]), cur))
			}
		}
		failures = "Hidden failures: " + joinAnd(h) + ", found only by an inspection"
		if len(risk) > 0 {
			failures += " (risk cost per period unseen: " + strings.Join(risk, ", ") + ")"
		}
		failures += "."
		if a := v.announced(); len(a) > 0 {
			failures += " Self-announcing: " + joinAnd(a) + " (a call-out in the period it happens)."
		}
	}
	return []string{
		"Discount rate: " + v.rateWords() + "; discount factor " + Fixed(p.Discount, 6) + " per period.",
		"Period: " + Years(v.periodYears()) + "; costs in " + cur + " at constant prices, charged as they fall due and discounted to the inspection.",
		insp,
		failures,
		"Condition scale, best first: " + strings.Join(p.States, ", ") + "." + unsafeText(&v.Header),
		"Objective: least expected discounted cost; inspections see the true condition; unsafe states are never left as they are.",
	}
}

func (b *InspectionBrief) pageCharts(d *doc, onPage bool) {
	v, c := b.Advice, b.Calendar
	cur := v.Currency
	d.section("What the advice means over the years", onPage, 80)
	years := c.Calendar.Years
	d.paragraph(fmt.Sprintf("The charts follow %s, every one inspected at the start of year 1 and then under the advice, over %s "+
		"(expected values: fractions of units, not a work list). Present value of the spend over these years: %s %s.",
		populationText(v.Problem.States, c.Start), Years(float64(len(years))), v.money(c.Calendar.PresentValue), cur))
	cats := make([]string, len(years))
	sched, calls := make([]float64, len(years)), make([]float64, len(years))
	insp, act, run, risk := make([]float64, len(years)), make([]float64, len(years)), make([]float64, len(years)), make([]float64, len(years))
	for i, y := range years {
		cats[i] = strconv.Itoa(y.Year + 1)
		sched[i], calls[i] = y.Epochs-y.Unscheduled, y.Unscheduled
		insp[i], act[i], run[i], risk[i] = y.InspectionCost, y.ActionCost, y.RunningCost, y.RiskCost
	}
	d.stackedBars(marginX, d.y()+1, contentW, 56, "Expected inspections per calendar year, for the same units", "year", "inspections", cats,
		[]series{{name: "scheduled inspections", color: actionRamp[2], values: sched}, {name: "call-outs after self-announcing failures", color: actionRamp[0], values: calls}},
		func(x float64) string { return Money(x, 0) })
	cols := ramp(actionRamp, 3)
	spend := []series{{name: "running costs", values: run, hatch: true}, {name: "inspections and call-outs", color: cols[0], values: insp},
		{name: "actions", color: cols[1], values: act}, {name: "risk of hidden failures unseen", color: cols[2], values: risk}}
	d.stackedBars(marginX, d.y()+3, contentW, 60, "Expected spend per calendar year by kind ("+cur+"), for the same units", "year", cur, cats, spend,
		func(x float64) string { return Money(x, 0) })
	d.note("Inspections count every epoch: scheduled inspections and call-outs after self-announcing failures, each charged the inspection cost. " +
		"Running costs are charged every period, seen or not; the risk cost for each period a unit spends in a hidden failure, unseen.")
}

func (b *InspectionBrief) pageInputs(d *doc) {
	v := b.Advice
	d.pageTitle("Certificate and inputs")
	d.heading("Solver certificate", 30)
	r := v.Result
	d.paragraph(v.solverLine())
	d.paragraph(fmt.Sprintf("Proven gap: %s %s (tolerance %s): %s. The advice is evaluated exactly and bounded by the bounds of Porteus (Management Science 18, 1971) "+
		"for decisions of random length: with d = Tv − v, lo = min d and hi = max d, Tv + lo·f(lo < 0 ? β : β_lo) ≤ v* ≤ Tv + hi·f(hi < 0 ? β_lo : β), "+
		"f(b) = b/(1−b), where β_lo = %s and β = %s are the least and greatest expected discount over one decision; "+
		"so no decision rule can beat the advice by more than the gap from any condition found.",
		sci(r.Gap), v.Currency, sci(r.Tol), r.Status, Fixed(r.ModulusLow, 6), Fixed(r.Modulus, 6)))
	for _, l := range v.tieLines() {
		d.paragraph(l)
	}
	d.note(InspectionTiming)
	d.modelTables(&v.Header, b.Model, b.Costs, "")
}
