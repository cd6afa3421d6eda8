package reports

import (
	"fmt"
	"io"
	"slices"
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
	// Inflation is the annual inflation rate when HasInflation: the rates
	// were given as nominal and converted to real by the Fisher relation.
	Inflation    float64
	HasInflation bool
}

// nominal is the nominal rate of plan i (with inflation).
func (r *PlanRates) nominal(i int) float64 {
	return costs.NominalRate(r.Discounts[i].RatePerYear(), r.Inflation)
}

// ratesAre says what the rates are, for titles and JSON.
func (r *PlanRates) ratesAre() string {
	if r.HasInflation {
		return fmt.Sprintf("real rates, converted from nominal at %s inflation by the Fisher relation", Percent(r.Inflation, 2))
	}
	return "real rates"
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
		{"planned work spend per calendar year (expected, " + r.Currency + ")", func(p *fleet.Plan, y int) float64 { return p.Spend[y] }, 0, "Planned spend", moneyCell},
		{"of which mandatory (" + r.Currency + ")", func(p *fleet.Plan, y int) float64 { return p.Mandatory[y] }, 0, "Mandatory spend", moneyCell},
		{"units deferred at the start of the year (expected)", func(p *fleet.Plan, y int) float64 { return p.YearDeferred()[y] }, 1, "Deferred units", countCell},
		{"budget price (present value saved per extra " + r.Currency + " of budget)", func(p *fleet.Plan, y int) float64 { return p.Multipliers[y] }, 3, "Budget price", priceCell},
	}
}

func (r *PlanRates) rateLabel(i int) string {
	if r.HasInflation {
		return Percent(r.nominal(i), 2) + " (real " + Percent(r.Discounts[i].RatePerYear(), 2) + ")"
	}
	return Percent(r.Discounts[i].RatePerYear(), 2)
}

// WriteTable writes the bounds at each rate, then one table per figure
// with a row per year and a column per rate; a "*" marks a year whose plan
// differs from the plan at the rate to its left.
func (r *PlanRates) WriteTable(w io.Writer) error {
	fmt.Fprintf(w, "%s: budget plan by discount rate (%s; %s)\n", r.Model, r.ratesAre(), r.Currency)
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
	Nominal        *float64       `json:"nominal_rate,omitempty"`
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
		if r.HasInflation {
			nom := r.nominal(i)
			pr.Nominal = &nom
		}
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
		Inflation   *float64   `json:"inflation"`
		Rates       []planRate `json:"rates"`
		Caution     string     `json:"caution"`
	}{r.Model, r.Currency, r.periodYears(), ratesAreJSON(r.HasInflation), inflationJSON(r.Inflation, r.HasInflation), r.rows(), Caution})
}

// ratesAreJSON and inflationJSON are the "rates_are" and "inflation" of
// the JSON of comparisons and plans across rates.
func ratesAreJSON(hasInflation bool) string {
	if hasInflation {
		return "real, converted from nominal by the Fisher relation"
	}
	return "real"
}

func inflationJSON(inflation float64, has bool) *float64 {
	if !has {
		return nil
	}
	return &inflation
}

// WriteCSV writes one row per rate and year after the comment lines (a
// rates line saying whether they were converted from nominal): rate,
// nominal_rate (empty without inflation), discount_factor, problem,
// lower_bound, fluid_cost, gap, unconstrained_cost, cost_of_budget (the
// plan's figures, repeated on each of its rows), year, budget,
// planned_spend, planned_mandatory_spend, deferred_units, budget_price,
// changed.
func (r *PlanRates) WriteCSV(w io.Writer) error {
	if err := r.writeCSVPreambleRates(w, "expected present cost of the fleet at each rate (fluid plan)", csvRatesLine(r.HasInflation, r.Inflation)); err != nil {
		return err
	}
	cw := newCSV(w)
	cw.Write([]string{"rate", "nominal_rate", "discount_factor", "problem", "lower_bound", "fluid_cost", "gap", "unconstrained_cost", "cost_of_budget",
		"year", "budget", "planned_spend", "planned_mandatory_spend", "deferred_units", "budget_price", "changed"})
	for _, pr := range r.rows() {
		nom := ""
		if pr.Nominal != nil {
			nom = Fixed(*pr.Nominal, 8)
		}
		plan := []string{Fixed(pr.Rate, 8), nom, Fixed(pr.DiscountFactor, 8), pr.Problem, Fixed(pr.Lower, 6), Fixed(pr.Fluid, 6),
			strconv.FormatFloat(pr.Gap, 'g', 6, 64), Fixed(pr.Unconstrained, 6), Fixed(pr.CostOfBudget, 6)}
		for _, y := range pr.Years {
			cw.Write(append(slices.Clone(plan), strconv.Itoa(y.Year), Fixed(y.Budget, 6), Fixed(y.PlannedSpend, 6), Fixed(y.MandatorySpend, 6),
				Fixed(y.DeferredUnits, 6), Fixed(y.BudgetPrice, 6), strconv.FormatBool(y.Changed)))
		}
	}
	cw.Flush()
	return cw.Error()
}
