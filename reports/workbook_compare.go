package reports

import (
	"fmt"
	"io"
	"math"
	"strings"

	"fixpoint/optimize"

	"github.com/xuri/excelize/v2"
)

// WriteXLSX writes the comparison as a workbook: the advice by rate, the
// present values by rate, the switch points, the long-run average, the
// equivalent annual cost against the rate with its chart, and the
// assumptions.
func (c *Comparison) WriteXLSX(w io.Writer) error {
	cmp, cur := c.Compare, c.Currency
	b := newWorkbook(&c.Header, "advice by discount rate")
	kind := "real rates"
	lead := []column{{"rate (real)", percentCell}}
	if c.HasInflation {
		kind = fmt.Sprintf("nominal rates converted to real at %s inflation (Fisher)", Percent(c.Inflation, 2))
		lead = []column{{"rate (nominal)", percentCell}, {"rate (real, used)", percentCell}}
	}
	lead = append(lead, column{"discount factor", factorCell})
	leadRow := func(rate, factor float64) []any {
		if c.HasInflation {
			return []any{c.nominal(rate), rate, factor}
		}
		return []any{rate, factor}
	}
	eac := column{"EAC at the rates compared (" + cur + "/yr)", moneyCell}

	cols := append([]column(nil), lead...)
	for _, st := range c.States {
		cols = append(cols, column{st, textCell})
	}
	advice := b.sheet("Advice by rate", fmt.Sprintf("%s: advice by discount rate (%s)", c.Model, kind),
		append(cols, eac, column{"changed", textCell})...)
	cols = append([]column(nil), lead...)
	for _, st := range c.States {
		cols = append(cols, column{st + " (" + cur + ")", moneyCell})
	}
	values := b.sheet("Present value by rate", fmt.Sprintf("%s: present value of expected costs per condition (%s)", c.Model, cur),
		append(cols, eac)...)
	for _, r := range cmp.Rows {
		arow, vrow := leadRow(r.Rate, r.Discount), leadRow(r.Rate, r.Discount)
		for s, a := range r.Policy {
			arow = append(arow, c.Actions[a])
			if r.Result != nil {
				vrow = append(vrow, r.Result.Value[s])
			} else {
				vrow = append(vrow, "unbounded")
			}
		}
		changed := make([]string, len(r.Changed))
		for i, s := range r.Changed {
			changed[i] = c.States[s]
		}
		advice.add(append(arow, r.EquivalentAnnual, strings.Join(changed, ", "))...)
		values.add(append(vrow, r.EquivalentAnnual)...)
	}
	eacNote := "EAC: equivalent annual cost of a unit starting " + c.States[0] +
		": the level amount per year, paid at the start of each year for ever, with the same present value (v·r/(1+r)); at rate 0 the long-run average cost per year."
	advice.note(eacNote)
	values.note(eacNote)
	if cmp.Rows[0].Rate == 0 {
		values.note("At rate 0 the present value is unbounded; the EAC there is the long-run average cost per year.")
	}

	cols = []column{{"rate (real)", rateCell}}
	if c.HasInflation {
		cols = append(cols, column{"rate (nominal)", rateCell})
	}
	cols = append(cols, column{"condition", textCell}, column{"advice below this rate", textCell},
		column{"advice above this rate", textCell}, column{"in words", textCell})
	sw := b.sheet("Switch points", fmt.Sprintf("%s: every rate between %s and %s at which the advice changes (located to 1e-9)",
		c.Model, c.rateText(cmp.Rows[0].Rate, 2), c.rateText(cmp.Rows[len(cmp.Rows)-1].Rate, 2)), cols...)
	words := c.SwitchSentences()
	for i, x := range cmp.Switches {
		row := []any{x.Rate}
		if c.HasInflation {
			row = append(row, c.nominal(x.Rate))
		}
		sw.add(append(row, c.States[x.State], c.Actions[x.Above], c.Actions[x.Below], words[i])...)
	}
	if len(cmp.Switches) == 0 {
		sw.note("The advice is the same at every rate in the range.")
	}

	if a := cmp.Average; a != nil {
		b.summary(c.Model+": long-run average cost (undiscounted, rate 0)", []fact{
			{"long-run average cost per year (" + cur + ")", cell{c.perYear(a.Gain), moneyCell}},
			{"proven lower bound per year (" + cur + ")", cell{c.perYear(a.GainLower), moneyCell}},
			{"proven upper bound per year (" + cur + ")", cell{c.perYear(a.GainUpper), moneyCell}},
			{"long-run average cost per period (" + cur + ")", cell{a.Gain, moneyCell}},
			{"certificate", a.Status.String()},
		})
	} else {
		b.summary(c.Model+": long-run average cost (undiscounted, rate 0)", []fact{{"long-run average", c.averageLine()}})
	}

	if len(cmp.Curve) >= 2 {
		c.curveSheet(b, advice)
	}

	var uncertain []string
	gap, tol := 0.0, 0.0
	for _, r := range cmp.Rows {
		switch {
		case r.Result != nil:
			gap, tol = max(gap, r.Result.Gap), r.Result.Tol
			if r.Result.Status != optimize.Certified {
				uncertain = append(uncertain, Percent(r.Rate, 2))
			}
		case r.Average != nil && r.Average.Status != optimize.Certified:
			uncertain = append(uncertain, Percent(r.Rate, 2))
		}
	}
	status := "certified at every rate"
	if len(uncertain) > 0 {
		status = "not certified at " + joinAnd(uncertain)
	}
	facts := []fact{{"criterion", "expected discounted cost (present value) at each rate; at rate 0 the long-run average cost"},
		{"rates", kind}}
	if c.HasInflation {
		facts = append(facts, fact{"inflation per year", cell{c.Inflation, percentCell}})
	}
	b.assumptions(append(facts,
		fact{"timing", "costs are charged at the start of each period"},
		fact{"certificate", status},
		fact{"largest proven gap over the rates (" + cur + ")", cell{gap, sciCell}},
		fact{"tolerance (" + cur + ")", cell{tol, sciCell}},
	))
	return b.write(w)
}

// curveSheet adds the equivalent annual cost sampled over the range of
// rates, with a chart of it and of the rates compared (read from the
// advice sheet).
func (c *Comparison) curveSheet(b *workbook, advice *sheet) {
	cmp, cur := c.Compare, c.Currency
	s := b.sheet("EAC chart", fmt.Sprintf("%s: equivalent annual cost of a unit starting %s against the real discount rate", c.Model, c.States[0]),
		column{"rate (real)", percentCell}, column{"EAC, sampled curve (" + cur + "/yr)", moneyCell})
	for _, pt := range cmp.Curve {
		s.add(pt.Rate, pt.EquivalentAnnual)
	}
	last := s.next - 1
	rateCol, eacCol := 1, 3+len(c.States)
	if c.HasInflation {
		rateCol, eacCol = 2, 4+len(c.States)
	}
	rows := advice.data + len(cmp.Rows) - 1
	lo, hi := cmp.Curve[0].EquivalentAnnual, cmp.Curve[0].EquivalentAnnual
	for _, pt := range cmp.Curve {
		lo, hi = min(lo, pt.EquivalentAnnual), max(hi, pt.EquivalentAnnual)
	}
	ymin := niceFloor(lo - 0.05*(hi-lo))
	s.note("The curve samples the EAC at evenly spaced rates; the dots are the rates compared. Between switch points the advice is fixed.")
	vary := false
	s.chart(4, firstDataRow, &excelize.Chart{
		Type: excelize.Scatter, VaryColors: &vary,
		Series: []excelize.ChartSeries{
			{Name: s.cellRef(2, headRow), Categories: s.ref(1, s.data, last), Values: s.ref(2, s.data, last),
				Line:   excelize.LineOptions{Type: excelize.LineSolid, Width: 2, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(ink)}}},
				Marker: excelize.ChartMarker{Symbol: "none"}},
			{Name: quoteSheet(advice.name) + "!" + mustCell(eacCol, headRow), Categories: advice.ref(rateCol, advice.data, rows),
				Values: advice.ref(eacCol, advice.data, rows), Line: excelize.LineOptions{Type: excelize.LineNone},
				Marker: excelize.ChartMarker{Symbol: "circle", Size: 7,
					Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(stateRamp[2])}}}},
		},
		Title:     chartTitle("Equivalent annual cost against the real discount rate"),
		Legend:    excelize.ChartLegend{Position: "bottom"},
		Dimension: excelize.ChartDimension{Width: 720, Height: 400},
		XAxis:     excelize.ChartAxis{NumFmt: excelize.ChartNumFmt{CustomNumFmt: "0%"}, Title: chartTitle("real discount rate per year")},
		YAxis: excelize.ChartAxis{MajorGridLines: true, Minimum: &ymin, NumFmt: excelize.ChartNumFmt{CustomNumFmt: numberFormat(moneyCell, 0)},
			Title: chartTitle(cur + " per year")},
	})
}

// niceFloor rounds x down to a round number (one significant digit of
// its magnitude's step), for an axis minimum.
func niceFloor(x float64) float64 {
	if x <= 0 {
		return 0
	}
	step := math.Pow(10, math.Floor(math.Log10(x)))
	return math.Floor(x/step) * step
}

func chartTitle(text string) excelize.ChartTitle {
	return excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: text}}}
}

func mustCell(col, row int) string {
	ref, _ := excelize.CoordinatesToCellName(col, row, true)
	return ref
}

// hex is c as a spreadsheet colour: "B2673E".
func hex(c rgb) string { return fmt.Sprintf("%02X%02X%02X", c.R, c.G, c.B) }

// WriteXLSX writes the sensitivity as a workbook: the margins of every
// action not advised, the range of every cost figure, and the assumptions.
func (s *Sensitivity) WriteXLSX(w io.Writer) error {
	cur := s.Currency
	b := newWorkbook(&s.Header, "cost sensitivity of the advice")
	m := b.sheet("Margins", fmt.Sprintf("%s: how much costs must change before the advice changes (%s)", s.Model, cur),
		column{"condition", textCell}, column{"advice", textCell}, column{"alternative", textCell}, column{"margin (" + cur + ")", moneyCell})
	for _, x := range s.margins() {
		m.add(x.State, x.Advice, x.Action, x.Margin)
	}
	m.note("Margin: by how much the alternative's cost in that condition must fall before it becomes the advice there.")
	limit := func(x float64) any {
		if math.IsInf(x, 0) {
			return "no limit"
		}
		return x
	}
	r := b.sheet("Cost ranges", fmt.Sprintf("%s: the range over which each cost figure can move alone without changing the advice (%s)", s.Model, cur),
		column{"cost figure", textCell}, column{"config path", textCell}, column{"now (" + cur + ")", moneyCell},
		column{"advice holds from (" + cur + ")", moneyCell}, column{"up to (" + cur + ")", moneyCell},
		column{"first change below", textCell}, column{"first change above", textCell})
	for _, f := range s.Figures {
		r.add(f.Name, f.Path, f.Value, limit(f.Value+f.Range.Lower), limit(f.Value+f.Range.Upper),
			s.change(f.Range.LowerState, f.Range.LowerAction), s.change(f.Range.UpperState, f.Range.UpperAction))
	}
	r.note("Each range moves one figure alone, all others fixed; within it the advice is optimal in every condition (exact: the values move linearly while the advice is fixed).")
	facts := append([]fact{{"criterion", "expected discounted cost (present value)"}}, s.discountFacts()...)
	b.assumptions(append(facts, resultFacts(s.Result, cur)...))
	return b.write(w)
}
