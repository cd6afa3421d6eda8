package reports

import (
	"fixpoint/optimize/fleet"
	"fmt"
	"io"
	"math"
	"strconv"
)

// PlanReport presents a budget-constrained fleet plan.
type PlanReport struct {
	Model    string
	Currency string
	Fleet    *fleet.Problem
	Plan     *fleet.Plan
	Warnings []string
}

// PlanWarnings lists what a reader must know about a plan: mandatory work
// beyond the budget, rounding that lifts the expected spend above it, and
// a gap target not met.
func PlanWarnings(f *fleet.Problem, p *fleet.Plan, target float64) []string {
	var out []string
	var over []string
	worst := 0.0
	for t, b := range f.Budget {
		if m := p.Mandatory[t]; m > b {
			out = append(out, fmt.Sprintf("year %d: mandatory work in unsafe states costs %s, above the budget of %s by %s; it is funded first and no other work is planned that year",
				t+1, Money(m, 2), Money(b, 2), Money(m-b, 2)))
		}
		if e := p.ExpectedSpend[t]; e > b*1.005 && e > p.Mandatory[t] {
			over = append(over, strconv.Itoa(t+1))
			worst = max(worst, e-b)
		}
	}
	if len(over) > 0 {
		out = append(out, fmt.Sprintf("in years %s the whole-unit plan is expected to spend more than the budget (by up to %s): whole units, and more failures than the expected-count plan balanced, need more mandatory work; re-plan each year from the new inspections",
			joinAnd(over), Money(worst, 2)))
	}
	if p.Gap > target {
		out = append(out, fmt.Sprintf("the proven gap %s is above the target %s after %d rounds", Percent(p.Gap, 3), Percent(target, 3), p.Iterations))
	}
	return out
}

func (r *PlanReport) stateName(c, s int) string  { return r.Fleet.Classes[c].Model.States[s].Name }
func (r *PlanReport) actionName(c, a int) string { return r.Fleet.Classes[c].Model.Actions[a].Name }

// WriteTable writes the bounds, the spend per year against the budget,
// the work list and the expected condition mix, then warnings and the
// caution.
func (r *PlanReport) WriteTable(w io.Writer) error {
	p, f := r.Plan, r.Fleet
	cur := r.Currency
	T := len(f.Budget)
	fmt.Fprintf(w, "%s: budget plan for %d years (%s)\n", r.Model, T, cur)
	lines := []string{
		fmt.Sprintf("Bounds on the expected-count model: lower bound %s <= optimum <= best plan found %s (gap %s); whole-unit plan %s (%s above the lower bound).",
			Money(p.Lower, 0), Money(p.Fluid, 0), Percent(p.Gap, 3), Money(p.PlanCost, 0), Percent(relGap(p.PlanCost, p.Lower), 3)),
		fmt.Sprintf("Unconstrained optimum %s: the budget cap costs %s in present value.", Money(p.Unconstrained, 0), Money(p.PlanCost-p.Unconstrained, 0)),
	}
	if err := writeLines(w, lines); err != nil {
		return err
	}
	rows := make([][]string, T)
	for t := range T {
		rows[t] = []string{strconv.Itoa(t + 1), Money(f.Budget[t], 0), Money(p.Spend[t], 0), Money(p.ExpectedSpend[t], 0),
			strconv.Itoa(p.Deferred[t]), Fixed(p.UnsafeUnits[t], 1), Fixed(p.Multipliers[t], 3)}
	}
	if err := table(w, []string{"year", "budget", "spend (work list)", "expected spend", "units deferred", "units unsafe (exp.)", "budget price"},
		[]bool{true, true, true, true, true, true, true}, rows); err != nil {
		return err
	}
	fmt.Fprintln(w, "Budget price: present value saved per extra unit of budget in that year. Deferred: the unconstrained advice would work on them, the plan waits.")
	fmt.Fprintln(w, "\nWork list (year 1 for the inventory; later years for the expected fleet; units left alone are not listed):")
	rows = nil
	for t := range T {
		for c := range f.Classes {
			pa := p.PassiveActions[c]
			for s, row := range p.Work[c][t] {
				for a, u := range row {
					if u > 0 && a != pa {
						rows = append(rows, []string{strconv.Itoa(t + 1), f.Classes[c].Name, r.stateName(c, s), r.actionName(c, a), strconv.Itoa(u)})
					}
				}
			}
		}
	}
	if err := table(w, []string{"year", "class", "condition", "action", "units"}, []bool{true, false, false, false, true}, rows); err != nil {
		return err
	}
	if len(f.Classes) <= 5 {
		for c, fc := range f.Classes {
			fmt.Fprintf(w, "\nExpected units of %s per condition at the start of each year:\n", fc.Name)
			if err := mixTable(w, fc.Model.States, T, func(t, s int) string { return Fixed(p.Expected[c][t][s], 1) }); err != nil {
				return err
			}
		}
	} else {
		fmt.Fprintln(w, "\nExpected condition mix per class and year: --format json or csv.")
	}
	var tail []string
	if len(r.Warnings) > 0 {
		tail = append(tail, "", "WARNINGS:")
		tail = append(tail, r.Warnings...)
	}
	tail = append(tail, "", "The work list beyond year 1 is a forecast: re-plan each year from the new inspection results.",
		"CAUTION: "+Caution)
	return writeLines(w, tail)
}

func relGap(x, lower float64) float64 {
	if x == 0 {
		return 0
	}
	return (x - lower) / math.Abs(x)
}

type planWork struct {
	Class     string `json:"class"`
	Condition string `json:"condition"`
	Action    string `json:"action"`
	Units     int    `json:"units"`
}

type planYear struct {
	Year           int                           `json:"year"`
	Budget         float64                       `json:"budget"`
	Spend          float64                       `json:"spend"`
	ExpectedSpend  float64                       `json:"expected_spend"`
	Mandatory      float64                       `json:"mandatory_spend"`
	BudgetPrice    float64                       `json:"budget_price"`
	Work           []planWork                    `json:"work"`
	Deferred       int                           `json:"deferred"`
	UnsafeUnits    float64                       `json:"expected_unsafe_units"`
	ExpectedCounts map[string]map[string]float64 `json:"expected_counts"`
}

// WriteJSON writes the plan (keys in the README): lower_bound <= exact
// optimum of the expected-count model <= fluid_cost, gap = (fluid_cost -
// lower_bound)/fluid_cost, plan_cost the expected cost of the whole-unit
// plan; work lists non-passive work only.
func (r *PlanReport) WriteJSON(w io.Writer) error {
	p, f := r.Plan, r.Fleet
	out := struct {
		Model         string     `json:"model"`
		Currency      string     `json:"currency"`
		LowerBound    float64    `json:"lower_bound"`
		FluidCost     float64    `json:"fluid_cost"`
		PlanCost      float64    `json:"plan_cost"`
		Gap           float64    `json:"gap"`
		Unconstrained float64    `json:"unconstrained_cost"`
		CostOfCap     float64    `json:"cost_of_budget_cap"`
		Rounds        int        `json:"rounds"`
		Years         []planYear `json:"years"`
		Warnings      []string   `json:"warnings"`
		Caution       string     `json:"caution"`
	}{Model: r.Model, Currency: r.Currency, LowerBound: p.Lower, FluidCost: p.Fluid, PlanCost: p.PlanCost, Gap: p.Gap,
		Unconstrained: p.Unconstrained, CostOfCap: p.PlanCost - p.Unconstrained, Rounds: p.Iterations,
		Warnings: append([]string{}, r.Warnings...), Caution: Caution}
	for t, b := range f.Budget {
		y := planYear{Year: t + 1, Budget: b, Spend: p.Spend[t], ExpectedSpend: p.ExpectedSpend[t], Mandatory: p.Mandatory[t],
			BudgetPrice: p.Multipliers[t], Work: []planWork{}, Deferred: p.Deferred[t], UnsafeUnits: p.UnsafeUnits[t],
			ExpectedCounts: map[string]map[string]float64{}}
		for c, fc := range f.Classes {
			pa := p.PassiveActions[c]
			counts := map[string]float64{}
			for s, x := range p.Expected[c][t] {
				counts[r.stateName(c, s)] = x
			}
			y.ExpectedCounts[fc.Name] = counts
			for s, row := range p.Work[c][t] {
				for a, u := range row {
					if u > 0 && a != pa {
						y.Work = append(y.Work, planWork{fc.Name, r.stateName(c, s), r.actionName(c, a), u})
					}
				}
			}
		}
		out.Years = append(out.Years, y)
	}
	return writeJSON(w, out)
}

// WriteCSV writes a caution comment line, then one row per year, class,
// condition and action with units (passive ones included): year, class,
// condition, action, units, expected_units, budget, spend.
func (r *PlanReport) WriteCSV(w io.Writer) error {
	p, f := r.Plan, r.Fleet
	if _, err := fmt.Fprintf(w, "# %s\n", Caution); err != nil {
		return err
	}
	cw := newCSV(w)
	cw.Write([]string{"year", "class", "condition", "action", "units", "expected_units", "budget", "spend"})
	for t, b := range f.Budget {
		for c, fc := range f.Classes {
			for s, row := range p.Work[c][t] {
				for a, u := range row {
					if u == 0 {
						continue
					}
					cw.Write([]string{strconv.Itoa(t + 1), fc.Name, r.stateName(c, s), r.actionName(c, a), strconv.Itoa(u),
						Fixed(p.Expected[c][t][s]*p.Shares[c][t][s][a], 6), Fixed(b, 2), Fixed(p.Spend[t], 2)})
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
