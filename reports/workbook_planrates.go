package reports

import (
	"fmt"
	"io"
	"strings"

	"fixpoint/optimize/fleet"
)

// WriteXLSX writes the plans at several rates as a workbook: the bounds
// at each rate, one sheet per figure per calendar year with a column per
// rate (the years whose plan changed from the rate to the left marked),
// and the assumptions.
func (r *PlanRates) WriteXLSX(w io.Writer) error {
	cur := r.Currency
	b := newWorkbook(&r.Header, "budget plan by discount rate")
	s := b.sheet("Bounds by rate", fmt.Sprintf("%s: budget plan at each real discount rate (present values at each plan's own rate, %s)", r.Model, cur),
		column{"rate (real)", percentCell}, column{"discount factor", factorCell}, column{"problem", textCell},
		column{"lower bound (" + cur + ")", moneyCell}, column{"plan found (" + cur + ")", moneyCell}, column{"gap, relative", sciCell},
		column{"without budget (" + cur + ")", moneyCell}, column{"cost of the budget (" + cur + ")", moneyCell})
	for _, x := range r.rows() {
		s.add(x.Rate, x.DiscountFactor, x.Problem, x.Lower, x.Fluid, x.Gap, x.Unconstrained, x.CostOfBudget)
	}
	s.note("Bounds are proven for the problem stated by each plan (plan --rate R gives its statement in words); the gap is (plan found - lower bound) / plan found.")
	for _, m := range r.measures() {
		cols := []column{{"year", intCell}, {"budget (" + cur + ")", moneyCell}}
		for i := range r.Plans {
			cols = append(cols, column{r.rateLabel(i), m.kind})
		}
		s := b.sheet(m.sheet, r.Model+": "+m.title+", by real discount rate", append(cols, column{"changed at", textCell})...)
		for y, budget := range r.Fleet.Budget {
			row := []any{y + 1, budget}
			var changed []string
			for i, p := range r.Plans {
				v := any(m.value(p, y))
				if r.Changed[i] != nil && r.Changed[i][y] {
					v = marked{v}
					changed = append(changed, r.rateLabel(i))
				}
				row = append(row, v)
			}
			if len(changed) > 0 {
				row = append(row, strings.Join(changed, ", "))
			}
			s.add(row...)
		}
		s.note("Bold on a tint, and named under \"changed at\": the plan's policy in that year differs from the plan at the rate to its left (some share of units given an action changes).")
	}
	facts := []fact{{"criterion", "expected present cost of the fleet under the yearly budgets (expected-count model), at each rate"},
		{"rates", "real rates per year; each plan is solved at its own rate, and its present values are at that rate"},
		{"timing", "costs are charged at the start of each period"}}
	b.assumptions(append(facts, planFacts(r.Fleet, r.Plans[0])...))
	return b.write(w)
}

// WriteXLSX writes the simulation as a workbook: the spend per calendar
// year (the P10-P90 band, median and mean against the expected-count
// forecast, the share over budget, the spend with running costs), the
// units per period, class and condition, a chart of the spend bands
// against the budget, the present cost and the assumptions.
func (r *SimulationReport) WriteXLSX(w io.Writer) error {
	s, cur := r.Sim, r.Currency
	b := newWorkbook(&r.Header, "simulation of a fleet")
	cols, at := yearColumns(cur)
	add := cols.add
	at.p10 = add("work spend P10 ("+cur+")", moneyCell)
	at.p50 = add("work spend median ("+cur+")", moneyCell)
	at.p90 = add("work spend P90 ("+cur+")", moneyCell)
	add("work spend mean ("+cur+")", moneyCell)
	add("standard error of the mean ("+cur+")", moneyCell)
	at.expected = add(expectedLabel(s.Rule)+" ("+cur+")", moneyCell)
	add("over budget (share of futures)", percentCell)
	add("with running costs P10 ("+cur+")", moneyCell)
	add("with running costs median ("+cur+")", moneyCell)
	add("with running costs P90 ("+cur+")", moneyCell)
	add("with running costs mean ("+cur+")", moneyCell)
	years := b.sheet("By year", fmt.Sprintf("%s: simulation (Monte-Carlo) of %s futures, work spend per calendar year (%s)", r.Model, Money(float64(s.Runs), 0), cur), *cols...)
	for y := range s.Spend {
		sp, tot := s.Spend[y], s.Total[y]
		years.add(y+1, r.Fleet.Budget[y], sp.P10, sp.P50, sp.P90, sp.Mean, sp.SE, s.ExpectedSpend[y], s.OverBudget[y], tot.P10, tot.P50, tot.P90, tot.Mean)
	}
	of := "the plan's shares"
	if s.Rule == fleet.FollowAdvice {
		of = "the advice"
	}
	years.note("Mean: the Monte-Carlo mean; " + expectedLabel(s.Rule) + ": the expected-count forecast of " + of +
		". Over budget: share of futures whose work spend exceeds the year's budget. Running costs are not charged to the budget.")

	lead := periodColumns(r.Plan.Period)
	units := b.sheet("Units per period", r.Model+": simulated units per condition at the start of each period",
		append(append([]column(nil), lead...), column{"class", textCell}, column{"condition", textCell},
			column{"P10", countCell}, column{"median", countCell}, column{"P90", countCell}, column{"mean", countCell},
			column{"standard error of the mean", countCell}, column{expectedLabel(s.Rule), countCell})...)
	units.filter = true
	for k := range s.Units[0] {
		for c, fc := range r.Fleet.Classes {
			for st, q := range s.Units[c][k] {
				units.add(append(periodCells(r.Plan, k), fc.Name, fc.Model.States[st].Name, q.P10, q.P50, q.P90, q.Mean, q.SE, s.ExpectedUnits[c][k][st])...)
			}
		}
	}

	charts := b.sheet("Charts", r.Model+": simulated work spend per calendar year against the budget")
	bandChart(charts, charts.data, years, at, len(s.Spend), cur,
		"Simulated work spend per year (median and P10-P90) against the "+expectedLabel(s.Rule)+" spend and the budget ("+cur+")")

	money := func(x float64) cell { return cell{x, moneyCell} }
	compare := "the expected-count forecast of the same rule"
	if s.Rule == fleet.FollowPractice {
		compare = "the plan's own expected cost (expected-count model)"
	}
	b.summary(fmt.Sprintf("%s: simulated present cost (%s)", r.Model, cur), []fact{
		{"present cost, mean (" + cur + ")", money(s.Cost.Mean)},
		{"standard error of the mean (" + cur + ")", money(s.Cost.SE)},
		{"P10 (" + cur + ")", money(s.Cost.P10)},
		{"median (" + cur + ")", money(s.Cost.P50)},
		{"P90 (" + cur + ")", money(s.Cost.P90)},
		{compare + " (" + cur + ")", money(s.ExpectedCost)},
	})
	facts := append([]fact{{"criterion", "present cost of each simulated future: work and running costs of period k discounted by the factor to the power k, then each unit's unconstrained optimal value"}},
		r.discountFacts()...)
	facts = append(facts, practiceFacts(s, r.Seed)...)
	facts = append(facts, fact{"plan behind the shares", PlanStatement(r.Fleet, r.Plan, cur)})
	b.assumptions(append(facts, planFacts(r.Fleet, r.Plan)...))
	return b.write(w)
}
