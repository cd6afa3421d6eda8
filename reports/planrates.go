package reports

import (
	"fmt"
	"io"
	"strconv"

	"fixpoint/costs"
	"fixpoint/optimize/fleet"
)

// PlanRates is the budget plan of one fleet at several discount rates,
// side by side.
type PlanRates struct {
	// Header gives the fleet's name, currency and period; its Discount is
	// not used (each plan has its own).
	Header
	Fleet *fleet.Problem
	// Discounts[i] is the discount (a real annual rate) of Plans[i];
	// Changed[i][y] marks the years where plan i differs from plan i-1
	// (nil for i = 0).
	Discounts []costs.Discount
	Plans     []*fleet.Plan
	Changed   [][]bool
}

// measure is one per-year figure of the plans: its title, its value,
// its decimals in a table, and its sheet and kind in a workbook.
type measure struct {
	title    string
	value    func(p *fleet.Plan, y int) float64
	decimals int
	sheet    string
	kind     cellKind
}

func (r *PlanRates) measures() []measure {
	return []measure{
		{"planned work spend per year (expected, " + r.Currency + ")", func(p *fleet.Plan, y int) float64 { return p.Spend[y] }, 0, "Planned spend", moneyCell},
		{"of which mandatory (" + r.Currency + ")", func(p *fleet.Plan, y int) float64 { return p.Mandatory[y] }, 0, "Mandatory spend", moneyCell},
		{"units deferred at the start of the year (expected)", func(p *fleet.Plan, y int) float64 { return p.YearDeferred()[y] }, 1, "Deferred units", countCell},
		{"budget price (present value saved per extra " + r.Currency + " of budget)", func(p *fleet.Plan, y int) float64 { return p.Multipliers[y] }, 3, "Budget price", priceCell},
	}
}

func (r *PlanRates) rateLabel(i int) string { return Percent(r.Discounts[i].RatePerYear(), 2) }

// WriteTable writes the bounds at each rate, then one table per figure
// with a row per year and a column per rate; a "*" marks a year whose plan
// differs from the plan at the rate to its left.
func (r *PlanRates) WriteTable(w io.Writer) error {
	fmt.Fprintf(w, "%s: budget plan by discount rate (real rates; %s)\n", r.Model, r.Currency)
	var rows [][]string
	for i, p := range r.Plans {
		rows = append(rows, []string{r.rateLabel(i), Money(p.Lower, 0), Money(p.Fluid, 0), Percent(max(0, p.Gap), 3), Money(p.Unconstrained, 0),
			Money(p.Fluid-p.Unconstrained, 0), p.Statement.Kind.String()})
	}
	header := []string{"rate", "lower bound", "plan found", "gap", "without budget", "cost of the budget", "problem"}
	if err := table(w, header, []bool{true, true, true, true, true, true, false}, rows); err != nil {
		return err
	}
	for _, m := range r.measures() {
		fmt.Fprintf(w, "\n%s:\n", capitalize(m.title))
		header := []string{"year", "budget"}
		numeric := []bool{true, true}
		for i := range r.Plans {
			header = append(header, r.rateLabel(i))
			numeric = append(numeric, true)
		}
		var rows [][]string
		for y, b := range r.Fleet.Budget {
			row := []string{strconv.Itoa(y + 1), Money(b, 0)}
			for i, p := range r.Plans {
				cell := Money(m.value(p, y), m.decimals)
				if r.Changed[i] != nil && r.Changed[i][y] {
					cell = "*" + cell
				}
				row = append(row, cell)
			}
			rows = append(rows, row)
		}
		if err := table(w, header, numeric, rows); err != nil {
			return err
		}
	}
	return writeLines(w, []string{
		"*: the plan's policy in that year differs from the plan at the rate to its left (some share of units given an action changes).",
		"Bounds are proven for the problem stated by each plan (plan --rate R --format json gives its statement); present values at each plan's own rate.",
		"CAUTION: " + Caution,
	})
}

type planRateYear struct {
	Year           int     `json:"year"`
	Budget         float64 `json:"budget"`
	PlannedSpend   float64 `json:"planned_spend"`
	MandatorySpend float64 `json:"planned_mandatory_spend"`
	DeferredUnits  float64 `json:"deferred_units"`
	BudgetPrice    float64 `json:"budget_price"`
	Changed        bool    `json:"changed"`
}

type planRate struct {
	Rate           float64        `json:"rate"`
	DiscountFactor float64        `json:"discount_factor"`
	Problem        string         `json:"problem"`
	Lower          float64        `json:"lower_bound"`
	Fluid          float64        `json:"fluid_cost"`
	Gap            float64        `json:"gap"`
	Unconstrained  float64        `json:"unconstrained_cost"`
	CostOfBudget   float64        `json:"cost_of_budget"`
	Years          []planRateYear `json:"years"`
}

func (r *PlanRates) rows() []planRate {
	var out []planRate
	for i, p := range r.Plans {
		d := r.Discounts[i]
		pr := planRate{Rate: d.RatePerYear(), DiscountFactor: d.Factor(), Problem: p.Statement.Kind.String(), Lower: p.Lower, Fluid: p.Fluid,
			Gap: max(0, p.Gap), Unconstrained: p.Unconstrained, CostOfBudget: p.Fluid - p.Unconstrained}
		deferred := p.YearDeferred()
		for y, b := range r.Fleet.Budget {
			pr.Years = append(pr.Years, planRateYear{Year: y + 1, Budget: b, PlannedSpend: p.Spend[y], MandatorySpend: p.Mandatory[y],
				DeferredUnits: deferred[y], BudgetPrice: p.Multipliers[y], Changed: r.Changed[i] != nil && r.Changed[i][y]})
		}
		out = append(out, pr)
	}
	return out
}

// WriteJSON writes the plans as one JSON object: model, currency,
// period_years, rates_are, rates[] (rate, discount_factor, problem,
// lower_bound, fluid_cost, gap, unconstrained_cost, cost_of_budget,
// years[]), caution.
func (r *PlanRates) WriteJSON(w io.Writer) error {
	return writeJSON(w, struct {
		Model       string     `json:"model"`
		Currency    string     `json:"currency"`
		PeriodYears float64    `json:"period_years"`
		RatesAre    string     `json:"rates_are"`
		Rates       []planRate `json:"rates"`
		Caution     string     `json:"caution"`
	}{r.Model, r.Currency, r.periodYears(), "real", r.rows(), Caution})
}

// WriteCSV writes one row per rate and year after the comment lines:
// rate, year, budget, planned_spend, planned_mandatory_spend,
// deferred_units, budget_price, changed.
func (r *PlanRates) WriteCSV(w io.Writer) error {
	if err := r.writeCSVPreamble(w, "expected present cost of the fleet at each rate (fluid plan)"); err != nil {
		return err
	}
	cw := newCSV(w)
	cw.Write([]string{"rate", "year", "budget", "planned_spend", "planned_mandatory_spend", "deferred_units", "budget_price", "changed"})
	for _, pr := range r.rows() {
		for _, y := range pr.Years {
			cw.Write([]string{Fixed(pr.Rate, 8), strconv.Itoa(y.Year), Fixed(y.Budget, 6), Fixed(y.PlannedSpend, 6), Fixed(y.MandatorySpend, 6),
				Fixed(y.DeferredUnits, 6), Fixed(y.BudgetPrice, 6), strconv.FormatBool(y.Changed)})
		}
	}
	cw.Flush()
	return cw.Error()
}
