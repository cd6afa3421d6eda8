package reports

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"fixpoint/optimize/fleet"
)

// FleetBrief is the printable brief of a fleet's budget plan. Page 1 is
// the page to sign: the recommendation in words (the work of period 1,
// the problem solved, its proven bounds and what the budget costs), the
// work list of period 1 with its cost by class, the key assumptions
// (rate, period, budget rule, mandatory-work rule, horizon), the
// traceability and the sign-off. Later pages hold the expected spend per
// calendar year against the budget, the deferred units and the condition
// mix of each class, the inspection calendar when the plan has one, the
// plan at other discount rates when asked, and how the plan was found
// with the files it was made from. The caution box is on every page.
type FleetBrief struct {
	Plan *PlanReport
	// Rates, if not nil, adds the page "Budget plan by discount rate".
	Rates *PlanRates
	// GapTarget is the relative gap the plan was asked to prove (zero:
	// the planner's default, 1e-5).
	GapTarget float64
	// Sources are the files the fleet was read from (fleet file, class
	// configs, inventory), listed with their SHA-256 on the last page.
	Sources []SourceFile
	Imprint
}

// fleetChartClasses is the most classes the spend chart stacks one by
// one; with more it stacks mandatory and other work (more tints than
// this do not stay apart in a greyscale print).
const fleetChartClasses = 8

// Fields lists the user text the brief prints, by where it comes from.
func (b *FleetBrief) Fields() []TextField {
	r := b.Plan
	out := headerFields(&r.Header, b.Imprint)
	for i, c := range r.Fleet.Classes {
		p := fmt.Sprintf("classes[%d]", i)
		out = append(out, TextField{p + ".name", c.Name})
		out = append(out, nameFields(p+".", c.Model.StateNames(), c.Model.ActionNames())...)
	}
	for i, f := range b.Sources {
		out = append(out, TextField{fmt.Sprintf("sources[%d]", i), f.Path})
	}
	for i, w := range r.Warnings {
		out = append(out, TextField{fmt.Sprintf("warnings[%d]", i), w})
	}
	return out
}

// WritePDF renders the fleet brief; the same brief and date give
// byte-identical output. A name with characters no font prints is
// refused with a *GlyphError before anything is written.
func (b *FleetBrief) WritePDF(w io.Writer) error {
	d, err := b.layout()
	if err != nil {
		return err
	}
	return d.output(w)
}

// layout lays the brief out, page by page.
func (b *FleetBrief) layout() (*doc, error) {
	r := b.Plan
	d, err := newDocWith("Fleet plan brief: "+r.Model, runningHeader("fleet plan brief", r.Model, b.Imprint), b.Imprint)
	if err != nil {
		return nil, err
	}
	if err := d.fonts.check(b.Fields()); err != nil {
		return nil, err
	}
	cont := d.drawFront(&r.Header, b.Imprint, b.front())
	b.pageSpend(d, cont)
	b.pageMix(d)
	if len(r.Inspections) > 0 {
		b.pageInspections(d)
	}
	if b.Rates != nil {
		b.pageRates(d)
	}
	b.pageBounds(d)
	return d, nil
}

// firstPeriod says what period 1 is in the calendar: "year 1", "the
// first 6 months of year 1" or "years 1-2".
func firstPeriod(r *PlanReport) string {
	y := r.Plan.Period.Years()
	switch {
	case y == 1:
		return "year 1"
	case y < 1:
		return "the first " + Duration(y) + " of year 1"
	}
	return "period 1 (the first " + Duration(y) + ")"
}

// mandatory reports whether work on class c in condition s is mandatory:
// leaving the unit as it is is not admissible there (the planner's rule).
func (r *PlanReport) mandatory(c, s int) bool {
	pa := r.Plan.PassiveActions[c]
	return pa < 0 || !r.Fleet.Classes[c].Model.Actions[pa].Admissible(s)
}

// workList is the period-1 work list as table rows, with a total line
// for each class with more than one line and one for all classes; it
// returns the rows, their shading and the classes with no work.
func (b *FleetBrief) workList() (rows [][]string, shade []*rgb, bold [][]bool, idle []string) {
	r := b.Plan
	p, wl, f := r.Plan, r.Plan.First, r.Fleet
	grey := &rgb{tableHeadShade, tableHeadShade, tableHeadShade}
	all := 0
	for c, fc := range f.Classes {
		pa := p.PassiveActions[c]
		n, units, cost := 0, 0, 0.0
		for s, row := range wl.Units[c] {
			for a, u := range row {
				if u == 0 || a == pa {
					continue
				}
				kind := "planned"
				if r.mandatory(c, s) {
					kind = "mandatory"
				}
				x := float64(u) * fc.Costs.Action[a][s]
				name := r.stateName(c, s)
				if fc.Model.States[s].Unsafe {
					name += " (unsafe)"
				}
				rows = append(rows, []string{fc.Name, name, r.actionName(c, a),
					strconv.Itoa(u), Money(x, 0), kind})
				shade, bold = append(shade, nil), append(bold, nil)
				n, units, cost = n+1, units+u, cost+x
			}
		}
		all += units
		switch {
		case n == 0:
			idle = append(idle, fc.Name)
		case n > 1:
			rows = append(rows, []string{fc.Name + ": total", "", "", strconv.Itoa(units), Money(cost, 0), ""})
			shade, bold = append(shade, grey), append(bold, []bool{true, false, false, true, true})
		}
	}
	rows = append(rows, []string{"All classes", "", "", strconv.Itoa(all), Money(wl.Spend, 0), ""})
	shade, bold = append(shade, grey), append(bold, []bool{true, false, false, true, true})
	return rows, shade, bold, idle
}

// unitsText says a whole number of units: "1 unit", "1,200 units".
func unitsText(n int) string {
	if n == 1 {
		return "1 unit"
	}
	return Money(float64(n), 0) + " units"
}

// budgetText says the budgets: "60,000 EUR a calendar year" or "from
// 40,000 to 60,000 EUR a calendar year (listed with the spend)".
func budgetText(budget []float64, currency string) string {
	lo, hi := slices.Min(budget), slices.Max(budget)
	if hi-lo < 0.5 {
		return Money(lo, 0) + " " + currency + " a calendar year"
	}
	return "from " + Money(lo, 0) + " to " + Money(hi, 0) + " " + currency + " a calendar year (listed with the spend)"
}

func (b *FleetBrief) gapTarget() float64 {
	if b.GapTarget > 0 {
		return b.GapTarget
	}
	return 1e-5
}

func (b *FleetBrief) front() front {
	r := b.Plan
	p, f, wl, cur := r.Plan, r.Fleet, r.Plan.First, r.Currency
	when := firstPeriod(r)
	rows, shade, bold, idle := b.workList()
	f0 := front{title: "Fleet plan brief", tableTitle: "Work list for " + when, notesTitle: "Warnings"}
	f0.table = pdfTable{header: []string{"Class", "Condition", "Action", "Units", "Cost (" + cur + ")", "Work"},
		widths: []float64{26, 30, 22, 8, 14, 12}, right: []bool{false, false, false, true, true, false},
		rows: rows, shade: shade, bold: bold}
	note := "Units: whole units found in that condition that get the action (units left alone are not listed). Cost: units × the action's cost, " +
		"with a total per class. Work: mandatory in an unsafe condition, done first whatever the budget; planned, chosen within the budget."
	switch {
	case len(idle) > 0 && len(idle) <= 5:
		note += " No work is listed for " + joinAnd(idle) + "."
	case len(idle) > 5:
		note += fmt.Sprintf(" No work is listed for %d of the %s.", len(idle), nouns(len(f.Classes), "class", "classes"))
	}
	f0.tableNote = note
	listed := 0
	for c := range f.Classes {
		for _, row := range wl.Units[c] {
			for a, u := range row {
				if a != p.PassiveActions[c] {
					listed += u
				}
			}
		}
	}
	do := fmt.Sprintf("Do the work listed below in %s: %s, %s (%s of it mandatory, in unsafe conditions)",
		when, unitsText(listed), amount(wl.Spend, cur), amount(wl.Mandatory, cur))
	if p.Statement.Short[0] {
		do += "; year 1's budget cannot cover the mandatory work, so no other work is listed."
	} else {
		do += ", within the " + amount(wl.Limit, cur) + " the period may spend."
	}
	do += fmt.Sprintf(" %s the unconstrained advice would work on wait; later periods are the plan's policy, re-planned each year.",
		unitsText(wl.Deferred))
	gapCur := math.Max(0, p.Fluid-p.Lower)
	cert := fmt.Sprintf("Certified: the plan found, %s in present value, is within %s %s (%s) of the least cost of that problem "+
		"(proven lower bound %s; gap asked %s).", amount(p.Fluid, cur), r.moneyBound(gapCur), cur, Percent(max(0, p.Gap), 3), amount(p.Lower, cur), Percent(b.gapTarget(), 3))
	if p.Gap > b.gapTarget() {
		cert = fmt.Sprintf("Not certified to the gap asked (%s): the plan found, %s, may cost up to %s %s (%s) more than the best plan of that problem (proven lower bound %s).",
			Percent(b.gapTarget(), 3), amount(p.Fluid, cur), r.moneyBound(gapCur), cur, Percent(p.Gap, 3), amount(p.Lower, cur))
	}
	what := "the budget"
	if p.Statement.Kind == fleet.MandatoryFirst {
		what = "the budget, with mandatory work first,"
	}
	cert += fmt.Sprintf(" Without budgets the optimum is %s: %s costs %s in present value", amount(p.Unconstrained, cur), what, amount(p.Fluid-p.Unconstrained, cur))
	if least := amount(p.Lower-p.Unconstrained, cur); least != amount(p.Fluid-p.Unconstrained, cur) {
		cert += " (at least " + least + ")"
	}
	cert += "."
	f0.recommendation = []string{do, PlanStatement(f, p, cur), cert}
	f0.notes = append(f0.notes, r.Warnings...)
	f0.assumptions = b.keyAssumptions()
	if len(r.Inspections) > 0 {
		f0.short = slices.Clone(f0.assumptions)
		f0.short[len(f0.short)-1] = "Inspections: the plan takes each unit's condition as known every period and charges no inspection cost to the budget; " +
			"the inspection calendar, budgeted beside it, and the statutory rule are on a later page."
	}
	return f0
}

// keyAssumptions are the assumptions a signer of a fleet plan must agree
// with: rate, period, horizon, the budget rule, the mandatory-work rule,
// what is known of the fleet's condition and, with an inspection
// calendar, what the plan assumes of inspections.
func (b *FleetBrief) keyAssumptions() []string {
	r := b.Plan
	p, f, cur := r.Plan, r.Fleet, r.Currency
	units := 0.0
	for _, c := range f.Classes {
		units += sum(c.Counts)
	}
	short, _ := shortYears(p)
	mand, within := "none here", "expected work spend stays within it."
	if len(short) > 0 {
		mand, within = "here "+yearsWord(short), "expected work spend stays within it in every year that can fund the mandatory work."
	}
	out := []string{
		"Discount rate: " + r.rateWords() + "; discount factor " + Fixed(f.Discount.Factor(), 6) + " per period.",
		"Period and horizon: " + horizonText(f, p) + ", then each unit is charged its unconstrained optimal value; costs in " + cur +
			" at constant prices, charged at the start of each period.",
		"Budget: " + budgetText(f.Budget, cur) + " for work, not running costs; " + within,
		"Mandatory work on unsafe units is always done first; a year that cannot fund it does only that (" + mand + ").",
		fmt.Sprintf("Condition: %s in %s, from the inventory; later periods are a policy with expected counts.",
			unitsOf(units), nouns(len(f.Classes), "class", "classes")),
	}
	if len(r.Inspections) > 0 {
		out = append(out, "Inspections: the plan takes each unit's condition as known every period and charges no inspection cost to the budget; "+
			"the inspection calendar is budgeted beside it (a later page). Statutory: "+InspectionRule)
	}
	return out
}

// spendSeries is the planned spend per calendar year for the chart: by
// class for a few classes, else mandatory and other work.
func (b *FleetBrief) spendSeries() ([]series, string) {
	r := b.Plan
	p, f := r.Plan, r.Fleet
	Y := len(f.Budget)
	if len(f.Classes) > fleetChartClasses {
		other := make([]float64, Y)
		for y := range other {
			other[y] = p.Spend[y] - p.Mandatory[y]
		}
		return []series{{name: "mandatory work", color: actionRamp[len(actionRamp)-1], values: slices.Clone(p.Mandatory)},
			{name: "other planned work", color: actionRamp[0], values: other}}, "mandatory and other work"
	}
	acol := ramp(actionRamp, len(f.Classes))
	var out []series
	for c, fc := range f.Classes {
		v := make([]float64, Y)
		for k, y := range p.PeriodYear {
			for s, row := range p.Flow[c][k] {
				for a, x := range row {
					v[y] += x * fc.Costs.Action[a][s]
				}
			}
		}
		out = append(out, series{name: fc.Name, color: acol[c], values: v})
	}
	return out, "class"
}

func (b *FleetBrief) pageSpend(d *doc, onPage bool) {
	r := b.Plan
	p, f, cur := r.Plan, r.Fleet, r.Currency
	where := d.pagesOf("table", "Work list for "+firstPeriod(r))
	d.section("What the plan means over the years", onPage, 95)
	d.paragraph(fmt.Sprintf("The figures on this page are the plan's expected values: its policy applied to the expected units, from the inventory on. "+
		"Planned spend is the expected work spend of the periods that start in a calendar year; it is what the budget rule holds to. "+
		"The work list on %s is the whole-unit list of %s: it spends %s where the plan expects %s in that period.",
		where, firstPeriod(r), amount(p.First.Spend, cur), amount(p.PeriodSpend[0], cur)))
	cats := make([]string, len(f.Budget))
	for y := range cats {
		cats[y] = strconv.Itoa(y + 1)
	}
	ss, by := b.spendSeries()
	d.stackedBarsWithLimit(marginX, d.y()+1, contentW, 62, "Planned work spend per calendar year against the budget ("+cur+"; expected, by "+by+")",
		"year", cur, cats, ss, f.Budget, "budget", func(v float64) string { return Money(v, 0) })
	d.setY(d.y() + 2)
	starts := periodStarts(p)
	deferred := p.YearDeferred()
	t := pdfTable{header: []string{"Year", "Budget (" + cur + ")", "Rule", "Planned spend, expected (" + cur + ")", "Of which mandatory (" + cur + ")",
		"Deferred units (expected)", "Budget price"},
		widths: []float64{8, 16, 18, 18, 18, 14, 12}, right: []bool{true, true, false, true, true, true, true}}
	for y := range f.Budget {
		price := Fixed(p.Multipliers[y], 3)
		if !starts[y] || p.Statement.Short[y] {
			price = "-"
		}
		t.rows = append(t.rows, []string{strconv.Itoa(y + 1), Money(f.Budget[y], 0), r.yearRule(y, starts), Money(p.Spend[y], 0),
			Money(p.Mandatory[y], 0), Fixed(deferred[y], 1), price})
	}
	d.headedTable("Spend and budget per calendar year", t)
	d.note("Year: calendar year of the plan (year 1 starts with the inventory). Budget: the year's budget for work. " +
		"Rule: within budget, the expected work spend is kept within the budget; mandatory only, the budget cannot cover the mandatory work, " +
		"so only mandatory work is planned, at least cost; no period starts, no work falls in that year. " +
		"Planned spend: the expected work spend of the periods starting in the year (running costs are not charged to the budget); " +
		"of which mandatory: the part on units in unsafe conditions. Deferred units: expected units at the start of the year that the unconstrained advice " +
		"would work on and the plan leaves alone. Budget price: present value saved per extra " + cur + " of budget in that year (-: the year has no budget row).")
}

func (b *FleetBrief) pageMix(d *doc) {
	r := b.Plan
	p, f := r.Plan, r.Fleet
	K := len(p.PeriodYear)
	d.pageTitle("Deferred work and the condition of each class")
	xlabel, when := "period", "period"
	if p.Period.Years() == 1 {
		xlabel, when = "year", "year"
	}
	d.paragraph(fmt.Sprintf("Per %s of %s, expected values of the plan (fractions of units, not a work list).", when, Years(p.Period.Years())))
	pcats := make([]string, K)
	for k := range pcats {
		pcats[k] = strconv.Itoa(k + 1)
	}
	d.stackedBars(marginX, d.y()+1, contentW, 52, "Units deferred (expected): the unconstrained advice would work on them, the plan waits",
		xlabel, "units", pcats, []series{{name: "deferred units", color: stateRamp[2], values: p.Deferred}}, func(v float64) string { return Money(v, 0) })
	for c, fc := range f.Classes {
		cols := ramp(stateRamp, len(fc.Model.States))
		var mix []series
		for s, st := range fc.Model.States {
			v := make([]float64, K)
			for k := range v {
				v[k] = p.Expected[c][k][s]
			}
			mix = append(mix, series{name: st.Name, color: cols[s], values: v})
		}
		d.stackedBars(marginX, d.y()+3, contentW, 58, "Expected condition mix of "+fc.Name+" (units at the start of each "+when+")",
			xlabel, "units", pcats, mix, func(v float64) string { return Money(v, 0) })
	}
}

func (b *FleetBrief) pageInspections(d *doc) {
	r := b.Plan
	d.pageTitle("Inspection calendar")
	d.paragraph(PlanInspectionAssumption)
	d.paragraph("Statutory: " + InspectionRule)
	t := pdfTable{header: []string{"Year", "Class", "Inspections", "Of which call-outs", "Inspection cost (" + r.Currency + ")"},
		widths: []float64{8, 40, 14, 14, 18}, right: []bool{true, false, true, true, true}, rows: inspectionRows(r.Inspections)}
	d.table(t)
	d.note("Inspections: the expected inspections of the class in that calendar year under its inspection advice, call-outs after self-announcing failures included; " +
		"of which call-outs: those call-outs; inspection cost: the inspections times the cost of one. All classes: the sum over the classes.")
	for _, c := range r.Inspections {
		parts := make([]string, len(c.Problem.States))
		for s := range c.Problem.States {
			parts[s] = c.Problem.States[s] + ": " + Decision(c.Problem, c.Problem.Choices[s][c.Result.Policy[s]])
		}
		d.paragraph(fmt.Sprintf("Inspection advice for %s: %s. %s", c.Class, strings.Join(parts, "; "), LimitSentence(c.Problem)))
	}
}

func (b *FleetBrief) pageRates(d *doc) {
	v := b.Rates
	cur := v.Currency
	d.pageTitle("Budget plan by discount rate")
	d.paragraph("The plan solved again at each real discount rate, with everything else as on page 1. Bounds are proven for the problem each plan states; " +
		"present values are at each plan's own rate. A figure marked * (bold) is in a year where the plan's policy differs from the plan at the next lower rate " +
		"(some share of units given an action changes).")
	t := pdfTable{header: []string{"Rate", "Lower bound (" + cur + ")", "Plan found, present value (" + cur + ")", "Gap", "Without budget (" + cur + ")",
		"Cost of the budget (" + cur + ")", "Problem"},
		widths: []float64{10, 18, 18, 10, 18, 18, 18}, right: []bool{true, true, true, true, true, true, false}, keep: 1}
	for i, p := range v.Plans {
		kind := "within budget"
		if p.Statement.Kind == fleet.MandatoryFirst {
			kind = "mandatory first"
		}
		t.rows = append(t.rows, []string{v.rateLabel(i), Money(p.Lower, 0), Money(p.Fluid, 0), Percent(max(0, p.Gap), 3),
			Money(p.Unconstrained, 0), Money(p.Fluid-p.Unconstrained, 0), kind})
	}
	d.table(t)
	d.note("Lower bound and plan found: proven bounds on the least expected present cost of the fleet for the problem solved at that rate; gap: their relative difference. " +
		"Without budget: the least cost with no budgets; cost of the budget: the plan found less that. Problem: within budget, every year's expected work spend " +
		"within its budget; mandatory first, some year's budget cannot cover the mandatory work and that year does mandatory work only.")
	for k, m := range v.measures() {
		s := pdfTable{header: []string{"Year", "Budget (" + cur + ")"}, widths: []float64{8, 16}, right: []bool{true, true}, keep: 2}
		for i := range v.Plans {
			s.header = append(s.header, v.rateLabel(i))
			s.widths = append(s.widths, 16)
			s.right = append(s.right, true)
		}
		for y, bud := range v.Fleet.Budget {
			row, bold := []string{strconv.Itoa(y + 1), Money(bud, 0)}, []bool{false, false}
			for i, p := range v.Plans {
				changed := v.Changed[i] != nil && v.Changed[i][y]
				cell := Money(m.value(p, y), m.decimals)
				if changed {
					cell = "*" + cell
				}
				row, bold = append(row, cell), append(bold, changed)
			}
			s.rows, s.bold = append(s.rows, row), append(s.bold, bold)
		}
		d.headedTable(capitalize(m.title)+" at each rate", s)
		if k == 0 {
			d.note("Year and budget as on the spend page; each rate's column is the expected work spend of the periods starting in that year under the plan at that rate. " +
				"*: the plan's policy in that year differs from the plan at the rate to its left.")
		}
	}
	d.note("Of which mandatory: the part of the planned spend on units in unsafe conditions. Units deferred: expected units at the start of the year that the " +
		"unconstrained advice would work on and the plan leaves alone. Budget price: present value saved per extra " + cur + " of budget in that year, " +
		"at that rate (0: the budget does not bind). *: as above.")
}

func (b *FleetBrief) pageBounds(d *doc) {
	r := b.Plan
	p, f := r.Plan, r.Fleet
	d.pageTitle("How the plan was found, and its inputs")
	for _, l := range r.boundLines()[:3] {
		d.paragraph(l)
	}
	d.paragraph(fmt.Sprintf("Method: the expected-count model is a linear program whose yearly budget rows couple the classes, solved by Dantzig-Wolfe column generation "+
		"over the classes' policies (Dantzig and Wolfe, Oper. Res. 8, 1960), %s in %s; the Lagrangian relaxation of the yearly budget rows "+
		"gives the lower bound, and the plan found is a feasible plan of that model. Beyond the horizon each unit is charged its unconstrained optimal value.",
		nouns(p.Iterations, "round", "rounds"), nouns(p.Programs, "linear program", "linear programs")))
	if p.Statement.Kind == fleet.MandatoryFirst {
		d.paragraph(fmt.Sprintf("The least excess of each short year was found year by year before the plan, each proven within %s %s.", r.moneyBound(p.Statement.ExcessGap), r.Currency))
	}
	if r.Practice == nil {
		d.paragraph("The whole-unit practice (each period the units found get the plan's shares rounded to whole units) is valued by simulation: fixpoint plan shows it.")
	}
	t := pdfTable{header: []string{"Class", "Units", "Of which unsafe", "Conditions, best first"}, widths: []float64{30, 10, 12, 60}, right: []bool{false, true, true, false}}
	for _, c := range f.Classes {
		unsafe := 0.0
		for s, st := range c.Model.States {
			if st.Unsafe {
				unsafe += c.Counts[s]
			}
		}
		t.rows = append(t.rows, []string{c.Name, Money(sum(c.Counts), 0), Money(unsafe, 0), strings.Join(c.Model.StateNames(), ", ")})
	}
	d.headedTable("Classes and inventory", t)
	d.note("Units: the class's units in the inventory; of which unsafe: those in unsafe conditions at the start (their work is mandatory); conditions: the class's scale, best first. " +
		"Each class's transition matrices and costs are in its class config (fixpoint brief CLASS.yaml prints them).")
	if len(b.Sources) > 0 {
		d.need(d.headingBlock("Files", false) + 4*3.8)
		d.headingBlock("Files", true)
		d.sourceLines(b.Sources)
	}
}
