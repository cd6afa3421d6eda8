package reports

import (
	"fmt"
	"io"
	"strconv"
	"time"
)

// FleetBrief is the printable brief of a fleet's budget plan: the bounds
// and what the cap costs, spend against the budget, deferred units and the
// condition mix of each class over the years, with the caution box on
// every page.
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
	d.paragraph(fmt.Sprintf("%s units in %d classes over %d years. The best plan found for the expected fleet costs %s %s in present value, "+
		"proven within %s of the best possible (lower bound %s). The whole-unit work list costs %s. Without the budget cap the fleet would cost %s: "+
		"the cap costs %s %s in present value.",
		Money(units, 0), len(f.Classes), len(f.Budget), Money(p.Fluid, 0), r.Currency, Percent(p.Gap, 3), Money(p.Lower, 0),
		Money(p.PlanCost, 0), Money(p.Unconstrained, 0), Money(p.PlanCost-p.Unconstrained, 0), r.Currency))
	if len(r.Warnings) > 0 {
		d.heading("Warnings", 20)
		for _, wn := range r.Warnings {
			d.paragraph(wn)
		}
	}
	cats := make([]string, len(f.Budget))
	for t := range cats {
		cats[t] = strconv.Itoa(t + 1)
	}
	acol := ramp(actionRamp, len(f.Classes))
	var spend []series
	for c, fc := range f.Classes {
		v := make([]float64, len(f.Budget))
		for t := range v {
			for s, row := range p.Work[c][t] {
				for a, u := range row {
					v[t] += float64(u) * fc.Costs.Action[a][s]
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
	d.stackedBarsWithLimit(marginX, y, contentW, 62, "Work spend per year by class against the budget ("+r.Currency+")",
		"year", r.Currency, cats, spend, f.Budget, "budget", func(v float64) string { return Money(v, 0) })
	y = pdf.GetY() + 3
	if y+60 > contentBottom {
		pdf.AddPage()
		y = pdf.GetY()
	}
	deferred := make([]float64, len(f.Budget))
	for t, n := range p.Deferred {
		deferred[t] = float64(n)
	}
	d.stackedBars(marginX, y, contentW, 52, "Units deferred: the unconstrained advice would work on them, the plan waits",
		"year", "units", cats, []series{{name: "deferred units", color: stateRamp[2], values: deferred}}, func(v float64) string { return Money(v, 0) })
	for c, fc := range f.Classes {
		if pdf.GetY()+70 > contentBottom {
			pdf.AddPage()
		}
		cols := ramp(stateRamp, len(fc.Model.States))
		var mix []series
		for s, st := range fc.Model.States {
			v := make([]float64, len(f.Budget))
			for t := range v {
				v[t] = p.Expected[c][t][s]
			}
			mix = append(mix, series{name: st.Name, color: cols[s], values: v})
		}
		d.stackedBars(marginX, pdf.GetY()+3, contentW, 58, "Expected condition mix of "+fc.Name+" (units at the start of each year)",
			"year", "units", cats, mix, func(v float64) string { return Money(v, 0) })
	}
	d.heading("Spend and budget per year", 40)
	t := pdfTable{header: []string{"Year", "Budget", "Spend (work list)", "Expected spend", "Deferred units", "Unsafe units (exp.)"},
		widths: []float64{10, 18, 18, 18, 14, 16}, right: []bool{true, true, true, true, true, true}}
	for i := range f.Budget {
		t.rows = append(t.rows, []string{strconv.Itoa(i + 1), Money(f.Budget[i], 0), Money(p.Spend[i], 0), Money(p.ExpectedSpend[i], 0),
			strconv.Itoa(p.Deferred[i]), Fixed(p.UnsafeUnits[i], 1)})
	}
	d.table(t)
	d.paragraph("Bounds: a Lagrangian relaxation of the annual budgets gives the lower bound; the plan found is a feasible plan of the expected-count model; " +
		"the work list rounds it to whole units. Beyond the horizon each unit is charged its unconstrained optimal value. " +
		"The work list beyond year 1 is a forecast: re-plan each year from the new inspection results.")
	return d.output(w)
}
