package reports

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
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
		_, limit, k = plan(assumptions)
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
