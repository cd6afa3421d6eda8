package reports

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
)

// SystemBrief is the printable brief of a machine of components sharing
// a shutdown: page 1 with the joint advice in words (what to do to each
// component, and what to bring forward when the machine is stopped
// anyway), what joint planning saves against planning the components
// separately, the expected cost and its certificate in words, the key
// assumptions, the traceability and the sign-off; then the certificate
// and the inputs of every component. The caution box is on every page.
type SystemBrief struct {
	Advice *SystemAdvice
	Imprint
}

// Fields lists the user text the brief prints, by where it comes from.
func (b *SystemBrief) Fields() []TextField {
	s := b.Advice
	out := headerFields(&s.Header, b.Imprint)
	for i, c := range s.System.Components {
		p := fmt.Sprintf("components[%d]", i)
		out = append(out, TextField{p + ".name", c.Name})
		out = append(out, nameFields(p+".", c.Model.StateNames(), c.Model.ActionNames())...)
	}
	return out
}

// WritePDF renders the brief; the same brief and date give
// byte-identical output. A name with characters no font prints is
// refused with a *GlyphError before anything is written.
func (b *SystemBrief) WritePDF(w io.Writer) error {
	s := b.Advice
	d, err := newDocWith("Joint maintenance brief: "+s.Model, runningHeader("joint maintenance brief", s.Model, b.Imprint), b.Imprint)
	if err != nil {
		return err
	}
	if err := d.fonts.check(b.Fields()); err != nil {
		return err
	}
	d.drawFront(&s.Header, b.Imprint, b.front())
	b.pageInputs(d)
	return d.output(w)
}

func (b *SystemBrief) front() front {
	s := b.Advice
	sys, r := s.System, s.Result
	cur := s.Currency
	f := front{title: "Joint maintenance brief", tableTitle: "What to do to each component", notesTitle: "When the machine is stopped anyway",
		tableNote: "Each rule is what the joint advice does to that component when every other component is as new; " +
			"the grouping rules say what the shared shutdown brings forward. The full joint table (every combination of conditions) is in the CSV and JSON outputs of solve."}
	f.table = pdfTable{header: []string{"Component", "Worked on alone (the others as new)"}, widths: []float64{24, 76}}
	for _, a := range s.Alone {
		f.table.rows = append(f.table.rows, []string{sys.Components[a.Component].Name, s.aloneSentence(a)})
	}
	n, _ := sys.Size()
	rec := fmt.Sprintf("The %d components of this machine share a shutdown: stopping it for work costs %s %s per period", len(sys.Components), s.money(sys.Shutdown), cur)
	if sys.DownOnUnsafe {
		rec += fmt.Sprintf(", and while any component is unsafe the machine is out of use at %s %s per period more", s.money(sys.Down), cur)
	}
	rec += fmt.Sprintf(". The advice is planned jointly over all %s combinations of their conditions.", Money(n, 0))
	groups := s.GroupSentences()
	if len(groups) > 0 {
		rec += fmt.Sprintf(" Besides each component's own rule, %s work forward when the machine is stopped anyway.", nouns(len(groups), "grouping rule brings", "grouping rules bring"))
	} else {
		rec += " The shared shutdown brings no work forward in the cases summarised: each component follows its own rule."
	}
	cost := fmt.Sprintf("A machine starting with every component as new is expected to cost %s %s in present value, proven within %s to %s %s.",
		s.money(r.Value[0]), cur, s.money(r.Lower[0]), s.money(r.Upper[0]), cur)
	if pv, py := s.saving(); !math.IsNaN(pv) {
		cost += fmt.Sprintf(" Planning the components separately (each with the shutdown charged to it alone) would cost %s %s: joint planning saves %s %s in present value",
			s.money(s.Separate.Value[0]), cur, s.money(pv), cur)
		if !math.IsNaN(py) {
			cost += fmt.Sprintf(", %s %s per year", s.money(py), cur)
		}
		cost += "."
	}
	f.recommendation = []string{rec, cost, certificateWords(&s.Header, r.Status, r.Gap, "structured value iteration")}
	if len(s.Notes) > 0 {
		f.notesTitle = "Safety notes, and when the machine is stopped anyway"
		f.notes = append(f.notes, s.Notes...)
	}
	f.notes = append(f.notes, groups...)
	var scales []string
	for _, c := range sys.Components {
		scales = append(scales, c.Name+": "+strings.Join(c.Model.StateNames(), ", "))
	}
	downRule := "a component in an unsafe state does not stop the machine (down_when: never)"
	if sys.DownOnUnsafe {
		downRule = "any component in an unsafe state puts the machine out of use"
	}
	f.assumptions = []string{
		"Discount rate: " + s.rateWords() + "; discount factor " + Fixed(s.Discount.Factor(), 6) + " per period.",
		"Period: " + Years(s.periodYears()) + "; costs in " + cur + " at constant prices, charged at the start of each period.",
		"Shutdown: " + s.money(sys.Shutdown) + " " + cur + " in each period with work on any component; " + downRule + ".",
		"Condition scales, best first: " + strings.Join(scales, "; ") + ".",
		"Objective: least expected discounted cost of the whole machine over an unlimited horizon; unsafe conditions are never left as they are.",
	}
	f.short = slices.Clone(f.assumptions)
	f.short[3] = fmt.Sprintf("Condition scales: each of the %d components' scales, best first, is listed with its inputs on the certificate pages.", len(sys.Components))
	return f
}

func (b *SystemBrief) pageInputs(d *doc) {
	s := b.Advice
	sys, r := s.System, s.Result
	d.need(90)
	d.font("B", 12, ink)
	d.put(marginX, d.y(), 6, "Certificate and inputs")
	d.setY(d.y() + 7)
	d.heading("Solver certificate", 30)
	n, acts := sys.Size()
	d.paragraph(fmt.Sprintf("Method: structured value iteration over %s joint states and %s joint actions (Kronecker mode products, no joint matrix formed), %s; "+
		"Bellman residual at the estimate %s %s.", Money(n, 0), Money(acts, 0), nouns(r.Sweeps, "sweep", "sweeps"), sci(r.Residual), s.Currency))
	d.paragraph(fmt.Sprintf("Proven gap: %s %s (tolerance %s): %s. By the contraction bounds Tv + γ/(1−γ)·min(Tv − v) ≤ v* ≤ Tv + γ/(1−γ)·max(Tv − v) "+
		"(MacQueen 1966; Puterman 1994, §6.6.3), no joint policy can beat the advice by more than the gap from any combination of conditions.",
		sci(r.Gap), s.Currency, sci(r.Tol), r.Status))
	if s.Separate != nil {
		d.paragraph(fmt.Sprintf("Separate planning: each component's policy solved alone with the shutdown charged to it, then evaluated in the joint model "+
			"(%s; value from all as new within [%s, %s] %s).", nouns(s.Separate.Sweeps, "sweep", "sweeps"), s.money(s.Separate.Lower[0]), s.money(s.Separate.Upper[0]), s.Currency))
	}
	for i, c := range sys.Components {
		d.need(60)
		d.heading(fmt.Sprintf("Component %d of %d: %s", i+1, len(sys.Components), c.Name), 40)
		d.modelTables(&s.Header, c.Model, c.Costs, "")
	}
}
