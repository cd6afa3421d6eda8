package reports

import (
	"fmt"
	"io"
	"math"
	"strings"

	"fixpoint/optimize/robust"
)

// WriteXLSX writes the robust advice as a workbook: per condition the
// robust advice, its worst-case cost with the bounds, its cost under the
// nominal matrices, the nominal advice (bold on a tint where it differs)
// and the price of robustness, with the worst-case cost of every action;
// which rows more data would settle, ranked; every row's ambiguity set;
// the summary (set, radius or confidence, price of robustness, the
// confidence statement) and the assumptions.
func (r *RobustAdvice) WriteXLSX(w io.Writer) error {
	a, p, cur := r.Analysis, r.Problem, r.Currency
	rob, nom := a.Robust, a.Nominal
	b := newWorkbook(&r.Header, "robust advice per condition")
	cols := []column{{"condition", textCell}, {"unsafe", textCell}, {"robust advice", textCell},
		{"worst case (" + cur + ")", moneyCell}, {"lower bound (" + cur + ")", moneyCell}, {"upper bound (" + cur + ")", moneyCell},
		{"under nominal matrices (" + cur + ")", moneyCell}, {"nominal advice", textCell}, {"differs", textCell},
		{"nominal optimum (" + cur + ")", moneyCell}, {"nominal advice's worst case (" + cur + ")", moneyCell},
		{"price of robustness (" + cur + ")", moneyCell}, {"runner-up", textCell}, {"margin (" + cur + ")", moneyCell}}
	for _, name := range p.Actions {
		cols = append(cols, column{name + " now, then the robust advice, worst case (" + cur + ")", moneyCell})
	}
	s := b.sheet("Robust advice", fmt.Sprintf("%s: robust advice per condition (worst-case present value of expected costs over the ambiguity sets, %s)", r.Model, cur), cols...)
	for st := range rob.Policy {
		differs := nom.Policy[st] != rob.Policy[st]
		nominal := any(p.Actions[nom.Policy[st]])
		if differs {
			nominal = marked{nominal}
		}
		row := []any{p.States[st], r.unsafe(st), p.Actions[rob.Policy[st]], rob.WorstCase[st], rob.Lower[st], rob.Upper[st],
			a.NominalCost[st], nominal, differs, nom.Value[st], a.NominalWorstCase[st], a.Price[st], nil, nil}
		if rob.RunnerUp[st] >= 0 {
			row[12], row[13] = p.Actions[rob.RunnerUp[st]], rob.Margin[st]
		}
		s.add(append(row, qRow(p, st, rob.Q[st])...)...)
	}
	s.note("How sure: " + r.sets().Statement)
	s.note("Thresholds: " + thresholds(p.States, p.Actions, rob.Policy))
	s.note(r.differsSentence())
	s.note(r.priceSentence())
	s.note("Worst case: a proven upper bound on the robust advice's expected cost over every matrix in the sets; lower and upper bound: proven bounds on the least worst case of any policy. " +
		"Under nominal matrices: the robust advice's expected cost with the config's rows; nominal optimum: the nominal advice's. " +
		"Nominal advice: the advice for the config's rows, bold on a tint where it differs from the robust advice. " +
		"Price of robustness: under nominal matrices less the nominal optimum.")
	for _, l := range tieLines(p, rob.Ties, rob.TieTol, cur) {
		s.note(l)
	}
	for _, n := range r.notes() {
		s.note("Note: " + n)
	}

	r.settleSheet(b)
	r.setsSheet(b)

	facts := []fact{
		{"ambiguity set", r.setKindText()},
		{"radius of every row", radiusCell(r, r.sets().Radius)},
		{"confidence", confidenceCell(r.sets().Confidence)},
		{"how sure (the statement the confidence supports)", r.sets().Statement},
		{"price of robustness (" + cur + ", the most over conditions)", cell{a.PriceOfRobustness, moneyCell}},
		{"price of robustness reached in", p.States[a.PriceState]},
		{"conditions where the robust advice differs from the nominal advice", orNone(strings.Join(r.names(a.Differs), ", "))},
	}
	if len(rob.WorstCase) > 0 {
		facts = append(facts,
			fact{"worst case from " + p.States[0] + " (" + cur + ")", cell{rob.WorstCase[0], moneyCell}},
			fact{"under nominal matrices from " + p.States[0] + " (" + cur + ")", cell{a.NominalCost[0], moneyCell}},
			fact{"nominal optimum from " + p.States[0] + " (" + cur + ")", cell{nom.Value[0], moneyCell}})
	}
	sum := b.summary(r.Model+": how sure are we", facts)
	sum.note(r.differsSentence())
	sum.note(r.priceSentence())

	af := append([]fact{{"criterion", "worst-case expected discounted cost (present value) over the ambiguity sets"}}, r.discountFacts()...)
	af = append(af,
		fact{"ambiguity set", r.setKindText()},
		fact{"confidence statement", r.sets().Statement},
		fact{"robust solver", fmt.Sprintf("%s, %s, %d exact evaluations of the adversary's chain", methodTitles[rob.Method], iterationText(rob.Method, rob.Iterations), rob.Evaluations)},
		fact{"certificate", rob.Status.String() + " (whether the proven gap of the robust answer is within the tolerance)"},
		fact{"proven gap (" + cur + ")", cell{rob.Gap, sciCell}},
		fact{"evaluation gap (" + cur + ")", cell{rob.EvalGap, sciCell}},
		fact{"tolerance (" + cur + ")", cell{rob.Tol, sciCell}},
		fact{"robust Bellman residual (" + cur + ")", cell{rob.Residual, sciCell}},
		fact{"inner-problem tolerance (" + cur + ", KL sets; 0 for L1, solved exactly)", cell{rob.InnerTol, sciCell}},
		fact{"nominal solver", methodTitles[nom.Method]},
		fact{"nominal certificate", nom.Status.String()},
		fact{"nominal proven gap (" + cur + ")", cell{nom.Gap, sciCell}},
		fact{"which data would settle it", "one row at a time with four times the observations: " + r.settleRule()},
		fact{"thresholds", thresholds(p.States, p.Actions, rob.Policy)},
	)
	b.assumptions(af)
	return b.write(w)
}

// setKindText names the kind of the sets and where their radii come
// from.
func (r *RobustAdvice) setKindText() string {
	s := r.sets()
	kind := "L1 ball around each row (Iyengar 2005; Nilim and El Ghaoui 2005)"
	if s.Kind == robust.KL {
		kind = "Kullback-Leibler ball around each row (Iyengar 2005; Nilim and El Ghaoui 2005)"
	}
	switch {
	case s.Source == robust.Derived && s.Kind == robust.KL:
		return kind + ", radii from the observations per row and the confidence (method of types, union bound over the rows)"
	case s.Source == robust.Derived:
		return kind + ", radii from the observations per row and the confidence (Weissman et al. 2003, union bound over the rows)"
	}
	return kind + ", radii given"
}

// radiusCell is a radius for a workbook: the number, "whole simplex", or
// "per row" when the sets have no common radius.
func radiusCell(r *RobustAdvice, x float64) any {
	switch {
	case math.IsNaN(x):
		return "per row (see the Sets sheet)"
	case math.IsInf(x, 1) || r.sets().Kind == robust.L1 && x >= 2:
		return "whole simplex"
	}
	return cell{x, numberCell}
}

// confidenceCell is the confidence level, or why there is none.
func confidenceCell(x float64) any {
	if math.IsNaN(x) {
		return "none (the radii were given, not derived from records)"
	}
	return cell{x, percentCell}
}

// observationsCell is a row's observations: the count, "none" (known
// exactly) or "-" (not counted).
func observationsCell(n int, exact bool) any {
	switch {
	case exact:
		return "none"
	case n < 0:
		return "-"
	}
	return n
}

// settleSheet adds the ranking of which data would settle it.
func (r *RobustAdvice) settleSheet(b *workbook) {
	a, p, cur := r.Analysis, r.Problem, r.Currency
	s := b.sheet("Settle", fmt.Sprintf("%s: which data would settle it, the rows ranked by how much four times the observations would lower the worst-case cost (%s)", r.Model, cur),
		column{"rank", intCell}, column{"action", textCell}, column{"in condition", textCell}, column{"observations", intCell},
		column{"radius", numberCell}, column{"with 4× data", numberCell}, column{"worst case falls by (" + cur + ")", moneyCell},
		column{"most in", textCell}, column{"advice would change in", textCell}, column{"screened", textCell},
		column{"accuracy (" + cur + ")", sciCell}, column{"certificate", textCell})
	for i, g := range a.Settle {
		newR := radiusCell(r, g.NewRadius)
		if g.Exact {
			newR = cell{0.0, numberCell}
		}
		most, advice := any(p.States[g.MaxState]), any(orNone(r.adviceChanges(g)))
		if g.Screened {
			most, advice = "-", "cannot change the answer"
		}
		s.add(i+1, p.Actions[g.Action], p.States[g.State], observationsCell(g.Observations, g.Exact), radiusCell(r, g.Radius), newR,
			g.MaxChange, most, advice, g.Screened, g.Accuracy, g.Status.String())
	}
	if len(a.Settle) == 0 {
		s.note("No row has a set larger than one point: more data would change nothing.")
	}
	s.note(fmt.Sprintf("Which data would settle it: how much the worst-case cost falls if one row had four times the observations (%s), largest first. "+
		"Inspect the conditions at the top of this list more closely before the next review.", r.settleRule()))
	s.note("Row: an action and the condition it is taken in (one row of its transition matrix). Observations: the transitions counted in that row (none: known exactly; -: not counted). " +
		"Worst case falls by: the largest fall of the worst-case cost over conditions, in the condition under most in. " +
		"Screened: a bound showed that the row cannot change the answer, so it was not solved again.")
}

// setsSheet adds every row's ambiguity set.
func (r *RobustAdvice) setsSheet(b *workbook) {
	p, sets := r.Problem, r.sets()
	s := b.sheet("Sets", r.Model+": the ambiguity set of every admissible row (an action in a condition)",
		column{"condition", textCell}, column{"action", textCell}, column{"radius", numberCell}, column{"observations", intCell},
		column{"support", textCell}, column{"widened", textCell})
	s.filter = true
	for _, rows := range sets.Rows {
		for _, row := range rows {
			radius := radiusCell(r, row.Radius)
			if row.NoData {
				radius = "whole simplex"
			}
			s.add(p.States[row.State], p.Actions[row.Action], radius, observationsCell(row.Observations, false),
				strings.Join(r.names(row.Support), ", "), orNone(strings.Join(r.names(row.Widened), ", ")))
		}
	}
	s.note("Radius: the size of the row's set (L1: the largest total change of the probabilities; KL: the largest divergence from the model's row). " +
		"Support: the conditions the row may move to; widened: those the config allows beyond the model's own transitions.")
}
