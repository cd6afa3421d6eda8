package reports

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/optimize/robust"
)

// Brief is the printable policy brief of one class: page 1 with the
// recommendation, the advice per condition, the key assumptions, the
// traceability of the inputs and the sign-off; a page of charts; a page
// comparing discount rates when asked; and the certificate with the
// inputs. The caution box is on every page.
//
// Exactly one of Advice (discounted criterion) and Average (long-run
// average criterion) is set.
type Brief struct {
	Advice  *Advice
	Average *AverageAdvice
	// Forecast is the condition mix and spend over the brief's horizon.
	Forecast *Forecast
	// Model and Costs are the inputs printed on the last page.
	Model *condition.Model
	Costs *costs.Schedule
	// Imprint gives the date (printed and stamped as the creation date),
	// who the brief is prepared for and by, and the fallback fonts.
	Imprint
	// Compare, if not nil, adds a page comparing discount rates.
	Compare *Comparison
	// Robust, if not nil, adds the page "How sure are we?": the advice
	// that holds for every transition matrix the data allow, beside the
	// nominal advice of page 1 (discounted criterion only).
	Robust *RobustAdvice
}

func (b *Brief) head() *Header {
	if b.Average != nil {
		return &b.Average.Header
	}
	return &b.Advice.Header
}

func (b *Brief) problem() *optimize.Problem {
	if b.Average != nil {
		return b.Average.Problem
	}
	return b.Advice.Problem
}

func (b *Brief) policy() []int {
	if b.Average != nil {
		return b.Average.Result.Policy
	}
	return b.Advice.Result.Policy
}

func (b *Brief) warnings() []string {
	if b.Average != nil {
		return b.Average.Warnings
	}
	return b.Advice.Warnings
}

// Fields lists the user text the brief prints, by where it comes from.
func (b *Brief) Fields() []TextField {
	h := b.head()
	p := b.problem()
	out := append(headerFields(h, b.Imprint), nameFields("", p.States, p.Actions)...)
	for i, w := range b.warnings() {
		out = append(out, TextField{fmt.Sprintf("warnings[%d]", i), w})
	}
	return out
}

// headerFields are the fields every brief prints from its header and
// imprint.
func headerFields(h *Header, im Imprint) []TextField {
	return []TextField{{"name", h.Model}, {"currency", h.Currency}, {"source file", h.Source},
		{"prepared-for", im.PreparedFor}, {"prepared-by", im.PreparedBy}}
}

// nameFields are the state and action names of a model, as fields under
// prefix ("" or "components[2].").
func nameFields(prefix string, states, actions []string) []TextField {
	var out []TextField
	for s, name := range states {
		out = append(out, TextField{fmt.Sprintf("%sstates[%d].name", prefix, s), name})
	}
	for a, name := range actions {
		out = append(out, TextField{fmt.Sprintf("%sactions[%d].name", prefix, a), name})
	}
	return out
}

// rateWords says the discount rate of a key assumption: "4.00% per year
// (real)", or that the file gave a factor.
func (h *Header) rateWords() string {
	if r, ok := h.rate(); ok {
		return Percent(r, 2) + " per year (real)"
	}
	return "given as a discount factor"
}

// runningHeader is the running header of a brief: what it is, the model
// (shortened to fit) and the date.
func runningHeader(kind, model string, im Imprint) string {
	return "fixpoint " + kind + "  ·  " + model + "  ·  " + im.Date.Format("2006-01-02")
}

// WritePDF renders the brief. The same brief and date give byte-identical
// output. A name with characters no font prints is refused with a
// *GlyphError before anything is written.
func (b *Brief) WritePDF(w io.Writer) error {
	h := b.head()
	d, err := newDocWith("Maintenance policy brief: "+h.Model, runningHeader("maintenance policy brief", h.Model, b.Imprint), b.Imprint)
	if err != nil {
		return err
	}
	if err := d.fonts.check(b.Fields()); err != nil {
		return err
	}
	b.pageCharts(d, b.pageFront(d))
	if b.Robust != nil {
		b.pageRobust(d)
	}
	if b.Compare != nil {
		b.pageCompare(d)
	}
	b.pageInputs(d)
	return d.output(w)
}

// front is what page 1 of every brief carries: a recommendation, a
// table, notes under a heading of their own, the key assumptions and the
// sign-off. short, when not nil, is a shorter form of the assumptions
// (the scales named by their ends, the rest referred to where it is
// printed) for a page 1 that the full form would overfill.
type front struct {
	title, tableTitle, tableNote string
	recommendation               []string
	notesTitle                   string
	notes                        []string
	table                        pdfTable
	assumptions, short           []string
}

// drawFront lays out page 1 so that the recommendation, the key
// assumptions and the sign-off are always on it: the table and the notes
// take the room left between them, and what does not fit (the rows that
// overflow, the notes) continues on page 2 with a line saying so. The
// table breaks only with at least minPartRows rows on each side, else it
// moves to page 2 whole. It reports whether page 2 was started.
func (d *doc) drawFront(h *Header, im Imprint, f front) (continued bool) {
	d.pdf.AddPage()
	d.titleBlock(f.title, h.Model, "", true)
	d.traceBlock(traceOf(h, im), true)
	const contNote = "Continued on the next page: the rest of the table, the note on the table and the notes on this advice."
	recH := d.headingBlock("Recommendation", false)
	for _, r := range f.recommendation {
		recH += d.paragraphBlock(r, bodySize, ink, lineH, false)
	}
	contH := d.paragraphBlock(contNote, smallSize, muted, 3.8, false)
	f.table.title = f.tableTitle
	notesH := 0.0
	if len(f.notes) > 0 {
		notesH = d.headingBlock(f.notesTitle, false) + d.bullets(f.notes, false)
	}
	headH := d.headingBlock(f.tableTitle, false)
	noteH := d.paragraphBlock(f.tableNote, smallSize, muted, 3.8, false) + 1
	wholeH := headH + d.tableHeight(&f.table, len(f.table.rows)) + noteH + 2
	cols := d.layoutColumns(&f.table)[0]
	// With the key assumptions as, the limit the table and notes must
	// end above (room is kept for the line saying what continues unless
	// everything fits without it) and the rows of the table page 1 takes
	// (all when they fit; else its first rows, leaving at least
	// minPartRows for page 2; else none, the table moving whole).
	top := d.y() + recH
	plan := func(as []string) (tail, limit float64, k int) {
		tail = d.keyAssumptionsBlock(as, false) + d.signOffBlock(false)
		limit = contentBottom - tail
		if top+wholeH+notesH > limit {
			limit -= contH
		}
		return tail, limit, splitAt(len(f.table.rows), d.rowsFitting(&f.table, cols, 0, top+headH, limit))
	}
	// The shorter assumptions, when given, are used when the whole ones
	// would overfill page 1 or leave no room for the start of the table.
	assumptions := f.assumptions
	tail, limit, k := plan(assumptions)
	if f.short != nil && (top+contH+tail > contentBottom || (k == 0 && len(f.table.rows) > 0)) {
		assumptions = f.short
		tail, limit, k = plan(assumptions)
	}
	d.mark("recommendation")
	d.headingBlock("Recommendation", true)
	for _, r := range f.recommendation {
		d.paragraph(r)
	}
	next, noteHere := 0, false
	if k > 0 {
		d.headingBlock(f.tableTitle, true)
		next = d.tableUntil(&f.table, 0, limit, k)
	}
	if next == len(f.table.rows) && d.y()+noteH+1 <= limit {
		d.setY(d.y() + 1)
		d.note(f.tableNote)
		noteHere = true
	}
	notesHere := noteHere && d.y()+notesH <= limit
	if notesHere && len(f.notes) > 0 {
		d.headingBlock(f.notesTitle, true)
		d.bullets(f.notes, true)
	}
	var more []string
	switch {
	case next == 0 && len(f.table.rows) > 0:
		more = append(more, "the table “"+f.tableTitle+"”")
	case next < len(f.table.rows):
		more = append(more, "the rest of the table “"+f.tableTitle+"”")
	case !noteHere:
		more = append(more, "the note on the table")
	}
	if !notesHere && len(f.notes) > 0 {
		more = append(more, "“"+f.notesTitle+"”")
	}
	rest := len(more) > 0
	if rest {
		d.note("Continued on the next page: " + joinAnd(more) + ".")
	}
	d.keyAssumptionsBlock(assumptions, true)
	d.signOffBlock(true)
	if !rest {
		return false
	}
	d.pdf.AddPage()
	if !noteHere {
		switch {
		case next == 0:
			d.headingBlock(f.tableTitle, true)
		case next == len(f.table.rows):
			d.headingBlock(f.tableTitle+" (continued)", true)
		}
		if next < len(f.table.rows) {
			d.tablePart(&f.table, cols, next, contentBottom, 0)
		}
		d.setY(d.y() + 1)
		d.note(f.tableNote)
	}
	if len(f.notes) > 0 && !notesHere {
		d.need(d.headingBlock(f.notesTitle, false) + 2*lineH)
		d.headingBlock(f.notesTitle, true)
		d.bullets(f.notes, true)
	}
	d.setY(d.y() + 4)
	return true
}

// pageFront draws page 1; it reports whether page 2 was started with what
// page 1 could not hold.
func (b *Brief) pageFront(d *doc) bool {
	h := b.head()
	p := b.problem()
	var notes []string
	for _, n := range h.notes(b.policy(), p.Actions, b.warnings()) {
		notes = append(notes, capitalize(n))
	}
	f := front{title: "Maintenance policy brief", tableTitle: "Advice per condition", notesTitle: "Notes on the advice",
		notes: notes, assumptions: b.keyAssumptions()}
	f.short = shortScale(f.assumptions, p.States, h, "the table of advice per condition")
	cur := h.Currency
	valueHead := "Expected cost, present value (" + cur + ")"
	marginHead := "Margin (" + cur + ")"
	var value []float64
	var runnerUp []int
	var margin []float64
	if a := b.Average; a != nil {
		r := a.Result
		f.recommendation = a.recommendation()
		valueHead, marginHead = "Relative value ("+cur+")", "Margin ("+cur+" per period)"
		value, runnerUp, margin = r.Bias, r.RunnerUp, r.Margin
		f.tableNote = fmt.Sprintf("Relative value: the extra total cost, over the long run, of a unit starting in that condition rather than in %s (0 there). "+
			"Margin: how much the runner-up's cost in that condition must fall before it becomes the advice.", p.States[r.Ref])
	} else {
		r := b.Advice.Result
		f.recommendation = b.recommendation()
		if b.Robust != nil {
			f.recommendation = append(f.recommendation, b.Robust.whichAdvice())
		}
		value, runnerUp, margin = r.Value, r.RunnerUp, r.Margin
		f.tableNote = "Margin: how much the runner-up's cost in that condition must fall before it becomes the advice. " +
			"Present values are expected discounted costs from now on, for one unit starting in that condition."
	}
	f.table = pdfTable{header: []string{"Condition", "Advice", valueHead, "Runner-up", marginHead},
		widths: []float64{26, 22, 24, 22, 18}, right: []bool{false, false, true, false, true}}
	for s, act := range b.policy() {
		runner, m := "none (only action)", "–"
		if runnerUp[s] >= 0 {
			runner, m = p.Actions[runnerUp[s]], h.money(margin[s])
		}
		f.table.rows = append(f.table.rows, []string{h.stateLabel(s), p.Actions[act], h.money(value[s]), runner, m})
	}
	return d.drawFront(h, b.Imprint, f)
}

// shortScale is the assumptions with the condition scale (the item that
// starts "Condition scale") named by its ends, for a page 1 that the
// whole scale would overfill; where says where every condition is
// named.
func shortScale(items, states []string, h *Header, where string) []string {
	out := slices.Clone(items)
	for i, it := range out {
		if strings.HasPrefix(it, "Condition scale") {
			out[i] = fmt.Sprintf("Condition scale: %d conditions, best first, from %s to %s, each named in %s.", len(states), states[0], states[len(states)-1], where) +
				unsafeText(h)
		}
	}
	return out
}

// keyAssumptions are the assumptions a signer must agree with.
func (b *Brief) keyAssumptions() []string {
	h := b.head()
	p := b.problem()
	var out []string
	if b.Average != nil {
		out = append(out, "Criterion: least long-run average cost per period, undiscounted (no discount rate).")
	} else {
		out = append(out, "Discount rate: "+h.rateWords()+"; discount factor "+Fixed(p.Discount, 6)+" per period.")
	}
	out = append(out,
		"Period: "+Years(h.periodYears())+"; costs in "+h.Currency+" at constant prices, charged at the start of each period.",
		"Condition scale, best first: "+strings.Join(p.States, ", ")+"."+unsafeText(h),
		"Objective: least expected cost over an unlimited horizon; safety-critical states are never left as they are.")
	return out
}

func unsafeText(h *Header) string {
	var u []string
	for s := range h.States {
		if h.unsafe(s) {
			u = append(u, h.States[s])
		}
	}
	if len(u) == 0 {
		return ""
	}
	return " Unsafe: " + joinAnd(u) + "."
}

// certificateWords says the certificate in plain words, with the proven
// bound rounded up to the currency's minor unit.
func certificateWords(h *Header, status optimize.Status, gap float64, method string) string {
	if status == optimize.Certified {
		return fmt.Sprintf("Certified optimal: no other policy saves more than %s %s in any condition (proven by %s; the exact figures are on the certificate page).",
			h.moneyBound(gap), h.Currency, method)
	}
	return fmt.Sprintf("Not certified to the tolerance asked: another policy might save up to %s %s in some condition (%s); see the certificate page.",
		h.moneyBound(gap), h.Currency, method)
}

// recommendation says the advice in plain words: the rule, the long-run
// figures and the certificate.
func (b *Brief) recommendation() []string {
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
	return []string{s.String(), certificateWords(&a.Header, r.Status, r.Gap, methodTitles[r.Method])}
}

// recommendation says the average-criterion advice in plain words: the
// rule, the long-run average cost with its proven bounds, the relative
// values, and the certificate.
func (a *AverageAdvice) recommendation() []string {
	r, p := a.Result, a.Problem
	cur := a.Currency
	var s strings.Builder
	s.WriteString(a.Thresholds())
	fmt.Fprintf(&s, " Under this advice a unit costs on average %s %s per year in the long run (undiscounted; %s per period of %s); the least possible average is proven to lie between %s and %s %s per year.",
		a.money(a.perYear(r.Gain)), cur, a.money(r.Gain), a.Period.String(), a.money(a.perYear(r.GainLower)), a.money(a.perYear(r.GainUpper)), cur)
	worst := r.Ref
	for st := range r.Bias {
		if r.Bias[st] > r.Bias[worst] {
			worst = st
		}
	}
	if worst != r.Ref {
		fmt.Fprintf(&s, " Relative values say what the starting condition costs on top of that average: a unit starting %s costs %s %s more in total over the long run than one starting %s.",
			p.States[worst], a.money(r.Bias[worst]), cur, p.States[r.Ref])
	}
	var cert string
	excess := a.perYear(r.Gain - r.GainLower)
	if r.Status == optimize.Certified {
		cert = fmt.Sprintf("Certified optimal: no other policy has a long-run average cost lower by more than %s %s per year (proven by %s; the exact figures are on the certificate page).",
			a.moneyBound(excess), cur, methodTitles[r.Method])
	} else {
		cert = fmt.Sprintf("Not certified to the tolerance asked: another policy might cost up to %s %s per year less on average; see the certificate page.", a.moneyBound(excess), cur)
	}
	return []string{s.String(), cert}
}

func yearsText(y float64) string {
	return Fixed(y, 1) + " years"
}

// countText formats a number of units: whole, or with two decimals.
func countText(x float64) string {
	if math.Abs(x-math.Round(x)) < 1e-9 {
		return Money(x, 0)
	}
	return Money(x, 2)
}

// populationText says which starting population a forecast follows.
func populationText(states []string, counts []float64) string {
	total := 0.0
	var parts []string
	for s, x := range counts {
		total += x
		if x > 0 {
			parts = append(parts, states[s]+" "+countText(x))
		}
	}
	for s, x := range counts {
		if x == total {
			return unitsOf(total) + ", all starting " + states[s]
		}
	}
	return unitsOf(total) + " starting as " + joinAnd(parts)
}

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
