package reports

import (
	"fmt"
	"io"
	"strconv"

	"fixpoint/optimize/fleet"
)

// SimulationReport presents a Monte-Carlo of a fleet: spend per calendar
// year, units per period and the present cost, each against the
// expected-count forecast of the same rule, labelled as simulation.
type SimulationReport struct {
	Header
	Fleet *fleet.Problem
	Plan  *fleet.Plan
	Sim   *fleet.Simulation
	Seed  uint64
	// Notes are the plan's safety notes (out-of-service work, units
	// kept unsafe), printed by every output.
	Notes []string
}

func band(q fleet.Quantiles, decimals int) string {
	return fmt.Sprintf("%s [%s, %s]", Money(q.P50, decimals), Money(q.P10, decimals), Money(q.P90, decimals))
}

// ruleText says what the simulated fleet follows.
func ruleText(r fleet.Rule) string {
	switch r {
	case fleet.FollowPractice:
		return "the whole-unit practice (each period the plan's shares rounded to whole units on the units found, mandatory work first, the rest within what is left of the year's budget)"
	case fleet.FollowAdvice:
		return "the unconstrained advice (no budget)"
	}
	return "the budget plan's policy (each unit draws its action from the plan's shares)"
}

// expectedLabel names the comparison column.
func expectedLabel(r fleet.Rule) string {
	if r == fleet.FollowPractice {
		return "plan (expected)"
	}
	return "expected"
}

// WriteTable writes the present cost, the spend per calendar year
// (median, P10 and P90, mean against the expected-count forecast, share
// over budget) and, for up to five classes, the units per condition at
// the start of each period, then the caution.
func (r *SimulationReport) WriteTable(w io.Writer) error {
	s := r.Sim
	cur := r.Currency
	fmt.Fprintf(w, "%s: simulation (Monte-Carlo) of %s futures under %s; seed %d\n", r.Model, Money(float64(s.Runs), 0), ruleText(s.Rule), r.Seed)
	compare := "the expected-count forecast of the same rule"
	if s.Rule == fleet.FollowPractice {
		compare = "the plan's own expected cost (expected-count model)"
	}
	if err := writeLines(w, []string{r.discountLine(), fmt.Sprintf("Simulated present cost %s ± %s (mean ± standard error; P10 %s, P90 %s); %s: %s.",
		amount(s.Cost.Mean, cur), Money(s.Cost.SE, 0), Money(s.Cost.P10, 0), Money(s.Cost.P90, 0), compare, amount(s.ExpectedCost, cur))}); err != nil {
		return err
	}
	var rows [][]string
	for y := range s.Spend {
		rows = append(rows, []string{strconv.Itoa(y + 1), Money(r.Fleet.Budget[y], 0), band(s.Spend[y], 0), Money(s.Spend[y].Mean, 0),
			Money(s.ExpectedSpend[y], 0), Percent(s.OverBudget[y], 0), band(s.Total[y], 0)})
	}
	fmt.Fprintf(w, "\nPer calendar year (%s), simulated median [P10, P90]:\n", cur)
	if err := table(w, []string{"year", "budget", "work spend", "mean", expectedLabel(s.Rule), "over budget", "with running costs"},
		[]bool{true, true, true, true, true, true, true}, rows); err != nil {
		return err
	}
	if len(r.Fleet.Classes) <= 5 {
		pr := &PlanReport{Fleet: r.Fleet, Plan: r.Plan}
		for c, fc := range r.Fleet.Classes {
			fmt.Fprintf(w, "\nSimulated units of %s per condition at the start of each period, median [P10, P90]:\n", fc.Name)
			if err := pr.classTable(w, c, 0, len(s.Units[c]), func(k, i int) string { return band(s.Units[c][k][i], 0) }); err != nil {
				return err
			}
		}
	}
	of := "the plan's shares"
	if s.Rule == fleet.FollowAdvice {
		of = "the advice"
	}
	lines := []string{"", "Mean: the Monte-Carlo mean; " + expectedLabel(s.Rule) + ": the expected-count forecast of " + of +
		". Over budget: share of futures whose work spend exceeds the year's budget."}
	for _, n := range r.Notes {
		lines = append(lines, "Note: "+n)
	}
	return writeLines(w, append(lines, "CAUTION: "+Caution))
}

type quantJSON struct {
	Mean float64 `json:"mean"`
	SE   float64 `json:"se"`
	P10  float64 `json:"p10"`
	P50  float64 `json:"p50"`
	P90  float64 `json:"p90"`
}

func qj(q fleet.Quantiles) quantJSON { return quantJSON{q.Mean, q.SE, q.P10, q.P50, q.P90} }

// WriteJSON writes {"model", "runs", "seed", "follow", "cost",
// "expected_cost", "years": [{"year", "budget", "spend", "total",
// "expected_spend", "over_budget_share"}], "periods": [{"period", "year",
// "units": {class: {state: {mean, se, p10, p50, p90}}}, "expected_units"}],
// "caution"}.
func (r *SimulationReport) WriteJSON(w io.Writer) error {
	s := r.Sim
	type year struct {
		Year          int       `json:"year"`
		Budget        float64   `json:"budget"`
		Spend         quantJSON `json:"spend"`
		Total         quantJSON `json:"total"`
		ExpectedSpend float64   `json:"expected_spend"`
		Over          float64   `json:"over_budget_share"`
	}
	type period struct {
		Period   int                             `json:"period"`
		Year     int                             `json:"year"`
		Units    map[string]map[string]quantJSON `json:"units"`
		Expected map[string]map[string]float64   `json:"expected_units"`
	}
	out := struct {
		Model          string    `json:"model"`
		Currency       string    `json:"currency"`
		PeriodYears    float64   `json:"period_years"`
		DiscountRate   *float64  `json:"discount_rate"`
		DiscountFactor float64   `json:"discount_factor"`
		Runs           int       `json:"runs"`
		Seed           uint64    `json:"seed"`
		Follow         string    `json:"follow"`
		Cost           quantJSON `json:"cost"`
		ExpectedCost   float64   `json:"expected_cost"`
		Years          []year    `json:"years"`
		Periods        []period  `json:"periods"`
		Notes          []string  `json:"notes,omitempty"`
		Caution        string    `json:"caution"`
	}{Notes: r.Notes, Model: r.Model, Currency: r.Currency, PeriodYears: r.periodYears(), DiscountRate: r.jsonRate(), DiscountFactor: r.Discount.Factor(), Runs: s.Runs, Seed: r.Seed, Follow: s.Rule.String(), Cost: qj(s.Cost), ExpectedCost: s.ExpectedCost, Caution: Caution}
	for y := range s.Spend {
		out.Years = append(out.Years, year{Year: y + 1, Budget: r.Fleet.Budget[y], Spend: qj(s.Spend[y]), Total: qj(s.Total[y]),
			ExpectedSpend: s.ExpectedSpend[y], Over: s.OverBudget[y]})
	}
	for k := range s.Units[0] {
		p := period{Period: k + 1, Year: r.Plan.PeriodYear[k] + 1, Units: map[string]map[string]quantJSON{}, Expected: map[string]map[string]float64{}}
		for c, fc := range r.Fleet.Classes {
			p.Units[fc.Name] = map[string]quantJSON{}
			p.Expected[fc.Name] = map[string]float64{}
			for st, q := range s.Units[c][k] {
				p.Units[fc.Name][fc.Model.States[st].Name] = qj(q)
				p.Expected[fc.Name][fc.Model.States[st].Name] = s.ExpectedUnits[c][k][st]
			}
		}
		out.Periods = append(out.Periods, p)
	}
	return writeJSON(w, out)
}

// WriteCSV writes a caution comment line, then one row per quantity:
// period, year, quantity (cost; spend, total per year; class:state units
// per period), mean, se, p10, p50, p90. Yearly rows have an empty period,
// the cost row both empty.
func (r *SimulationReport) WriteCSV(w io.Writer) error {
	s := r.Sim
	if err := r.writeCSVPreamble(w, "simulated present cost (Monte-Carlo)"); err != nil {
		return err
	}
	if err := writeCSVNotes(w, r.Notes); err != nil {
		return err
	}
	cw := newCSV(w)
	cw.Write([]string{"period", "year", "quantity", "mean", "se", "p10", "p50", "p90"})
	row := func(period, year, name string, q fleet.Quantiles) {
		cw.Write([]string{period, year, name, Fixed(q.Mean, 4), Fixed(q.SE, 4), Fixed(q.P10, 4), Fixed(q.P50, 4), Fixed(q.P90, 4)})
	}
	row("", "", "cost", s.Cost)
	for y := range s.Spend {
		row("", strconv.Itoa(y+1), "spend", s.Spend[y])
		row("", strconv.Itoa(y+1), "total", s.Total[y])
	}
	for k, yk := range r.Plan.PeriodYear {
		for c, fc := range r.Fleet.Classes {
			for st, q := range s.Units[c][k] {
				row(strconv.Itoa(k+1), strconv.Itoa(yk+1), "units:"+fc.Name+":"+fc.Model.States[st].Name, q)
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
