package reports

import (
	"fmt"
	"io"
	"strconv"
	"time"
)

// FleetBrief is the printable brief of a fleet's budget plan: the problem
// solved with its bounds and what the budget costs, planned spend per
// calendar year against the budget, deferred units and the condition mix
// of each class over the periods, with the caution box on every page.
type FleetBrief struct {
	Plan *PlanReport
	Date time.Time
}

// WritePDF renders the fleet brief; the same plan and date give
// byte-identical output.
func (b *FleetBrief) WritePDF(w io.Writer) error {
	r := b.Plan
	p, f := r.Plan, r.Fleet
	d := newDoc("Fleet plan brief: "+r.Model,
		fmt.Sprintf("fixpoint fleet plan brief  ·  %s  ·  %s", r.Model, b.Date.Format("2006-01-02")), b.Date)
	pdf := d.pdf
	d.title("Fleet plan under the budget", r.Model, b.Date)
	units := 0.0
	for _, c := range f.Classes {
		for _, x := range c.Counts {
			units += x
		}
	}
	d.heading("Summary", 30)
	lines := r.boundLines()
	d.paragraph(fmt.Sprintf("%s units in %d classes over %s.", Money(units, 0), len(f.Classes), horizonText(f, p)))
	for _, l := range lines {
		d.paragraph(l)
	}
	if r.Practice == nil {
		d.paragraph("The whole-unit practice is not simulated in this brief (fixpoint plan shows it).")
	}
	if len(r.Warnings) > 0 {
		d.heading("Warnings", 20)
		for _, wn := range r.Warnings {
			d.paragraph(wn)
		}
	}
	Y, K := len(f.Budget), len(p.PeriodYear)
	cats := make([]string, Y)
	for t := range cats {
		cats[t] = strconv.Itoa(t + 1)
	}
	acol := ramp(actionRamp, len(f.Classes))
	var spend []series
	for c, fc := range f.Classes {
		v := make([]float64, Y)
		for k, y := range p.PeriodYear {
			for s, row := range p.Flow[c][k] {
				for a, x := range row {
					v[y] += x * fc.Costs.Action[a][s]
				}
			}
		}
		spend = append(spend, series{name: fc.Name, color: acol[c], values: v})
	}
	y := pdf.GetY() + 2
	if y+70 > contentBottom {
		pdf.AddPage()
		y = pdf.GetY()
	}
	d.stackedBarsWithLimit(marginX, y, contentW, 62, "Work spend per year by class against the budget ("+r.Currency+"; planned, expected, per calendar year)",
		"year", r.Currency, cats, spend, f.Budget, "budget", func(v float64) string { return Money(v, 0) })
	y = pdf.GetY() + 3
	if y+60 > contentBottom {
		pdf.AddPage()
		y = pdf.GetY()
	}
	pcats := make([]string, K)
	for k := range pcats {
		pcats[k] = strconv.Itoa(k + 1)
	}
	xlabel := "period"
	if p.Period.Years() == 1 {
		xlabel = "year"
	}
	d.stackedBars(marginX, y, contentW, 52, "Units deferred (expected): the unconstrained advice would work on them, the plan waits",
		xlabel, "units", pcats, []series{{name: "deferred units", color: stateRamp[2], values: p.Deferred}}, func(v float64) string { return Money(v, 0) })
	for c, fc := range f.Classes {
		if pdf.GetY()+70 > contentBottom {
			pdf.AddPage()
		}
		cols := ramp(stateRamp, len(fc.Model.States))
		var mix []series
		for s, st := range fc.Model.States {
			v := make([]float64, K)
			for k := range v {
				v[k] = p.Expected[c][k][s]
			}
			mix = append(mix, series{name: st.Name, color: cols[s], values: v})
		}
		d.stackedBars(marginX, pdf.GetY()+3, contentW, 58, "Expected condition mix of "+fc.Name+" (units at the start of each "+xlabel+")",
			xlabel, "units", pcats, mix, func(v float64) string { return Money(v, 0) })
	}
	d.heading("Spend and budget per calendar year", 40)
	t := pdfTable{header: []string{"Year", "Budget", "Rule", "Planned spend (exp.)", "Of which mandatory"},
		widths: []float64{10, 18, 22, 20, 20}, right: []bool{true, true, false, true, true}}
	starts := periodStarts(p)
	for i := range f.Budget {
		t.rows = append(t.rows, []string{strconv.Itoa(i + 1), Money(f.Budget[i], 0), r.yearRule(i, starts), Money(p.Spend[i], 0), Money(p.Mandatory[i], 0)})
	}
	d.table(t)
	d.paragraph("Bounds: the problem solved is stated above; a Lagrangian relaxation of the yearly budget rows gives the lower bound, and the plan found " +
		"is a feasible plan of the expected-count model. Beyond the horizon each unit is charged its unconstrained optimal value. " +
		"Beyond period 1 the fleet's condition is not known: later periods are the plan's policy and its expected units. " +
		"Re-plan each year from the new inspection results.")
	return d.output(w)
}
