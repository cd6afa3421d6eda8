package reports

import (
	"fmt"
	"io"
	"math"

	"github.com/xuri/excelize/v2"

	"fixpoint/optimize"
)

// WriteXLSX writes the advice as a workbook: the advice per condition
// (with the Q-value of every action), the summary of the long run, the
// life figures, the survival curves from the best condition period by
// period, and the assumptions.
func (a *Advice) WriteXLSX(w io.Writer) error {
	r, p, cur := a.Result, a.Problem, a.Currency
	b := newWorkbook(&a.Header, "advice per condition")
	cols := []column{{"condition", textCell}, {"unsafe", textCell}, {"advice", textCell},
		{"expected cost (" + cur + ")", moneyCell}, {"lower bound (" + cur + ")", moneyCell}, {"upper bound (" + cur + ")", moneyCell},
		{"runner-up", textCell}, {"margin (" + cur + ")", moneyCell}}
	s := b.sheet("Advice", fmt.Sprintf("%s: advice per condition (present value of expected costs, %s)", a.Model, cur),
		append(cols, qColumns(p.Actions, cur)...)...)
	for st := range r.Policy {
		row := []any{p.States[st], a.unsafe(st), p.Actions[r.Policy[st]], r.Value[st], r.Lower[st], r.Upper[st], nil, nil}
		if r.RunnerUp[st] >= 0 {
			row[6], row[7] = p.Actions[r.RunnerUp[st]], r.Margin[st]
		}
		s.add(append(row, qRow(p, st, r.Q[st])...)...)
	}
	s.note("Thresholds: " + a.Thresholds())
	for _, l := range a.tieLines() {
		s.note(l)
	}
	s.note("Margin: how much the runner-up's cost in that condition must fall before it becomes the advice. " +
		"\"<action> now, then the advice\": the expected cost of taking that action once and following the advice after (empty where not admissible).")
	for _, n := range a.notes(r.Policy, p.Actions, a.Warnings) {
		s.note("Note: " + n)
	}
	if a.Life != nil {
		a.lifeWorkbook(b)
	}
	facts := append([]fact{{"criterion", "expected discounted cost (present value)"}}, a.discountFacts()...)
	b.assumptions(append(append(facts, resultFacts(r, cur)...), fact{"thresholds", a.Thresholds()}))
	return b.write(w)
}

// qColumns are the columns of the Q-values, one per action.
func qColumns(actions []string, cur string) []column {
	cols := make([]column, len(actions))
	for i, name := range actions {
		cols[i] = column{name + " now, then the advice (" + cur + ")", moneyCell}
	}
	return cols
}

// qRow is the Q-values of state s, one per action, nil where the action
// is not admissible.
func qRow(p *optimize.Problem, s int, q []float64) []any {
	out := make([]any, len(p.Actions))
	for k, c := range p.Choices[s] {
		out[c.Action] = q[k]
	}
	return out
}

// resultFacts states how a discounted answer was found and certified.
func resultFacts(r *optimize.Result, cur string) []fact {
	return []fact{
		{"solver", methodTitles[r.Method] + ", " + iterationText(r.Method, r.Iterations)},
		{"certificate", r.Status.String() + " (whether the proven gap is within the tolerance)"},
		{"proven gap (" + cur + ")", cell{r.Gap, sciCell}},
		{"tolerance (" + cur + ")", cell{r.Tol, sciCell}},
		{"Bellman residual (" + cur + ")", cell{r.Residual, sciCell}},
	}
}

// passage is a passage time for a workbook: the number, "never" when the
// target is never reached, "n/a" when it is not defined.
func passage(x float64) any {
	switch {
	case math.IsInf(x, 1):
		return "never"
	case math.IsNaN(x):
		return "n/a"
	}
	return x
}

// lifeWorkbook adds the summary of the long run, the life figures and
// the survival curves.
func (a *Advice) lifeWorkbook(b *workbook) {
	l, p, cur := a.Life, a.Problem, a.Currency
	var facts []fact
	if l.Stationary == nil {
		facts = append(facts, fact{"long run", l.StationaryErr.Error() + "; long-run figures are left out"})
	} else {
		facts = append(facts,
			fact{"long-run cost per year under the advice (" + cur + ", undiscounted)", cell{l.CostPerYear, moneyCell}},
			fact{"long-run cost per period under the advice (" + cur + ", undiscounted)", cell{l.CostPerPeriod, moneyCell}},
			fact{"share of units in unsafe states", cell{l.UnsafeShare, percentCell}})
		for act, share := range l.ActionShare {
			if share > 0 && !a.isPassive(act) {
				facts = append(facts, fact{"mean time between uses of " + p.Actions[act] + " (periods)", cell{l.PeriodsBetween[act], periodsCell}})
			}
		}
	}
	if eac := l.EquivalentAnnual[0]; !math.IsNaN(eac) {
		facts = append(facts, fact{"equivalent annual cost of a unit starting " + p.States[0] + " (" + cur + " per year)", cell{eac, moneyCell}})
	}
	b.summary(a.Model+": the advice in the long run", facts)

	yearsToo := a.periodYears() != 1
	cols := []column{{"condition", textCell}, {"left alone (periods)", periodsCell}, {"under the advice (periods)", periodsCell}}
	if yearsToo {
		cols = append(cols, column{"left alone (years)", periodsCell}, column{"under the advice (years)", periodsCell})
	}
	s := b.sheet("Life", fmt.Sprintf("%s: life of a unit, expected time to first reach %s", a.Model, a.targetName()),
		append(cols, column{"long-run share", percentCell})...)
	for st := range p.States {
		left := any("n/a")
		if l.Passive != nil {
			left = passage(l.Passive.Periods[st])
		}
		row := []any{p.States[st], left, passage(l.Policy.Periods[st])}
		if yearsToo {
			leftY := any("n/a")
			if l.Passive != nil {
				leftY = passage(l.Passive.Periods[st] * a.periodYears())
			}
			row = append(row, leftY, passage(l.Policy.Periods[st]*a.periodYears()))
		}
		share := any("n/a")
		if l.Stationary != nil {
			share = l.Stationary[st]
		}
		s.add(append(row, share)...)
	}

	s = b.sheet("Survival", fmt.Sprintf("%s: probability that a unit starting %s has not yet reached %s", a.Model, p.States[0], a.targetName()),
		column{"period", intCell}, column{"after (years)", numberCell}, column{"left alone", percentCell}, column{"under the advice", percentCell})
	passive := l.Passive != nil && !math.IsNaN(l.Passive.Periods[0])
	for k := 0; k <= l.Horizon; k++ {
		left := any("n/a")
		if passive {
			left = l.PassiveSurvival[0][k]
		}
		s.add(k, a.Period.Start(k), left, l.PolicySurvival[0][k])
	}
	a.survivalChart(s, passive, l.Horizon+1)
}

// survivalChart places beside the Survival table a native line chart of
// its curves against the years (as the brief draws them): under the
// advice, and left alone where that is defined.
func (a *Advice) survivalChart(s *sheet, passive bool, rows int) {
	last := s.data + rows - 1
	cats := s.ref(2, s.data, last)
	line := func(col int, colour rgb, dash excelize.LineDashType) excelize.ChartSeries {
		fill := excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{hex(colour)}}
		return excelize.ChartSeries{Name: s.cellRef(col, headRow), Categories: cats, Values: s.ref(col, s.data, last), Fill: fill,
			Line: excelize.LineOptions{Type: excelize.LineSolid, Width: 2, Dash: dash}, Marker: excelize.ChartMarker{Symbol: "none"}}
	}
	series := []excelize.ChartSeries{line(4, ink, excelize.LineDashSolid)}
	if passive {
		series = append(series, line(3, stateRamp[2], excelize.LineDashDash))
	}
	top, bottom := 1.0, 0.0
	s.chart(6, s.data, &excelize.Chart{Type: excelize.Line, Series: series,
		Title:     chartTitle(fmt.Sprintf("Survival: probability that one unit starting %s has not yet reached %s", a.Problem.States[0], a.targetName())),
		Legend:    excelize.ChartLegend{Position: "bottom"},
		Dimension: excelize.ChartDimension{Width: 640, Height: 360},
		XAxis:     excelize.ChartAxis{Title: chartTitle("after (years)"), TickLabelSkip: max(1, rows/10)},
		YAxis: excelize.ChartAxis{MajorGridLines: true, Maximum: &top, Minimum: &bottom,
			NumFmt: excelize.ChartNumFmt{CustomNumFmt: "0%"}, Title: chartTitle("probability")},
	})
}

// WriteXLSX writes the average-criterion answer as a workbook: the advice
// per condition with the relative values, the gain and its bounds, and
// the assumptions.
func (a *AverageAdvice) WriteXLSX(w io.Writer) error {
	r, p, cur := a.Result, a.Problem, a.Currency
	b := newWorkbook(&a.Header, "advice per condition, long-run average cost")
	cols := []column{{"condition", textCell}, {"unsafe", textCell}, {"advice", textCell},
		{"relative value (" + cur + ")", moneyCell}, {"runner-up", textCell}, {"margin (" + cur + ")", moneyCell}}
	s := b.sheet("Advice", fmt.Sprintf("%s: advice per condition, long-run average cost criterion (undiscounted, %s)", a.Model, cur),
		append(cols, qColumns(p.Actions, cur)...)...)
	for st := range r.Policy {
		row := []any{p.States[st], a.unsafe(st), p.Actions[r.Policy[st]], r.Bias[st], nil, nil}
		if r.RunnerUp[st] >= 0 {
			row[4], row[5] = p.Actions[r.RunnerUp[st]], r.Margin[st]
		}
		s.add(append(row, qRow(p, st, r.Q[st])...)...)
	}
	s.note("Thresholds: " + a.Thresholds())
	s.note(fmt.Sprintf("Relative value: the extra total cost of starting in that condition rather than in %s (0 there). "+
		"\"<action> now, then the advice\": relative value of taking that action once and following the advice after.", p.States[r.Ref]))
	for _, n := range a.notes(r.Policy, p.Actions, a.Warnings) {
		s.note("Note: " + n)
	}
	b.summary(a.Model+": long-run average cost of the advice (undiscounted)", []fact{
		{"long-run average cost per year (" + cur + ")", cell{a.perYear(r.Gain), moneyCell}},
		{"proven lower bound per year (" + cur + ")", cell{a.perYear(r.GainLower), moneyCell}},
		{"proven upper bound per year (" + cur + ")", cell{a.perYear(r.GainUpper), moneyCell}},
		{"long-run average cost per period (" + cur + ")", cell{r.Gain, moneyCell}},
		{"proven lower bound per period (" + cur + ")", cell{r.GainLower, moneyCell}},
		{"proven upper bound per period (" + cur + ")", cell{r.GainUpper, moneyCell}},
	})
	b.assumptions([]fact{
		{"criterion", "long-run average cost per period (undiscounted)"},
		{"solver", fmt.Sprintf("%s, %d iterations; gain bounds min/max (Th - h) (Odoni 1969)", methodTitles[r.Method], r.Iterations)},
		{"certificate", r.Status.String() + " (whether the proven bounds on the gain are within the tolerance)"},
		{"proven gap of the gain per period (" + cur + ")", cell{r.GainUpper - r.GainLower, sciCell}},
		{"tolerance (" + cur + ")", cell{r.Tol, sciCell}},
		{"thresholds", a.Thresholds()},
	})
	return b.write(w)
}

// maxJointRows is the largest joint table a workbook holds: a sheet of a
// few hundred thousand cells is what a spreadsheet opens comfortably, and
// the CSV and JSON outputs hold any size.
const maxJointRows = 20000

// WriteXLSX writes the joint advice as a workbook: each component's rule
// alone, the grouping rules, the full joint table (up to maxJointRows
// joint states), the figures of joint planning and the assumptions.
func (s *SystemAdvice) WriteXLSX(w io.Writer) error {
	sys, r, cur := s.System, s.Result, s.Currency
	n, acts := sys.Size()
	b := newWorkbook(&s.Header, "joint advice")
	sh := b.sheet("Components", fmt.Sprintf("%s: joint advice for %d components sharing a shutdown (%s joint states, %s joint actions)",
		s.Model, len(sys.Components), Money(n, 0), Money(acts, 0)),
		column{"component", textCell}, column{"worked on alone (the others as new)", textCell})
	for _, a := range s.Alone {
		sh.add(sys.Components[a.Component].Name, s.aloneSentence(a))
	}

	sh = b.sheet("Grouping", s.Model+": work brought forward because the machine is stopped anyway",
		column{"stopped for", textCell}, column{"in condition (the others as new)", textCell},
		column{"also work on", textCell}, column{"when it is", textCell}, column{"action", textCell})
	for _, g := range s.Groups {
		trig, comp := sys.Components[g.Trigger], sys.Components[g.Component]
		for _, x := range g.Extra {
			sh.add(trig.Name, trig.Model.States[g.TriggerState].Name, comp.Name, comp.Model.States[x].Name, comp.Model.Actions[g.Actions[x]].Name)
		}
	}
	if len(s.Groups) == 0 {
		sh.note("No grouping: the shared shutdown does not bring any work forward in the cases summarised.")
	}
	for _, g := range s.GroupSentences() {
		sh.note(g)
	}

	cols := []column{{"joint state", textCell}}
	for _, c := range sys.Components {
		cols = append(cols, column{c.Name, textCell})
	}
	cols = append(cols, column{"action", textCell})
	for _, c := range sys.Components {
		cols = append(cols, column{"do " + c.Name, textCell})
	}
	cols = append(cols, column{"expected cost (" + cur + ")", moneyCell}, column{"lower bound (" + cur + ")", moneyCell},
		column{"upper bound (" + cur + ")", moneyCell}, column{"runner-up", textCell}, column{"margin (" + cur + ")", moneyCell})
	sh = b.sheet("Joint advice", s.Model+": advice in every joint state (present value of expected costs, "+cur+")", cols...)
	if len(r.Policy) > maxJointRows {
		sh.note(fmt.Sprintf("The joint table has %s joint states, more than a workbook holds here (%s); write it with --format csv or json.",
			Money(float64(len(r.Policy)), 0), Money(maxJointRows, 0)))
	} else {
		for st := range r.Policy {
			names, runnerUp := s.jointNames(st)
			row := make([]any, len(names))
			for i, n := range names {
				row[i] = n
			}
			var runner, margin any
			if runnerUp != "" {
				runner, margin = runnerUp, r.Margin[st]
			}
			sh.add(append(row, r.Value[st], r.Lower[st], r.Upper[st], runner, margin)...)
		}
	}

	facts := []fact{
		{"expected cost of a machine starting as new (" + cur + ", present value)", cell{r.Value[0], moneyCell}},
		{"proven lower bound (" + cur + ")", cell{r.Lower[0], moneyCell}},
		{"proven upper bound (" + cur + ")", cell{r.Upper[0], moneyCell}},
	}
	if pv, py := s.saving(); !math.IsNaN(pv) {
		facts = append(facts,
			fact{"planning the components separately (" + cur + ", present value)", cell{s.Separate.Value[0], moneyCell}},
			fact{"saving of joint planning (" + cur + ", present value)", cell{pv, moneyCell}},
			fact{"saving of joint planning (" + cur + " per year)", cell{py, moneyCell}})
	}
	b.summary(s.Model+": what joint planning is worth, from the state where every component is as new ("+sys.StateName(0)+")", facts)

	af := append([]fact{{"criterion", "expected discounted cost (present value)"}}, s.discountFacts()...)
	b.assumptions(append(af,
		fact{"shutdown cost per period with work (" + cur + ")", cell{sys.Shutdown, moneyCell}},
		fact{"down cost per period with a component unsafe (" + cur + ")", cell{sys.Down, moneyCell}},
		fact{"solver", fmt.Sprintf("structured value iteration (Kronecker mode products), %d sweeps", r.Sweeps)},
		fact{"certificate", r.Status.String() + " (whether the proven gap is within the tolerance)"},
		fact{"proven gap (" + cur + ")", cell{r.Gap, sciCell}},
		fact{"tolerance (" + cur + ")", cell{r.Tol, sciCell}},
		fact{"Bellman residual at the estimate (" + cur + ")", cell{r.Residual, sciCell}},
		fact{"rules", s.rulesText()},
	))
	return b.write(w)
}
