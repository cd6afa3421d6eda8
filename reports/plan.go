package reports

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"fixpoint/costs"
	"fixpoint/optimize/fleet"
)

// PlanReport presents a budget-constrained fleet plan: the problem solved
// in words next to its bounds, figures per calendar year, the whole-unit
// work list of the first period, the plan's policy and expected counts for
// later periods, and (when Practice is set) the simulated whole-unit
// practice, labelled as simulation.
type PlanReport struct {
	// Header gives the fleet's name, currency, period and discount (no
	// condition scale: each class has its own).
	Header
	Fleet *fleet.Problem
	Plan  *fleet.Plan
	// Practice is a Monte-Carlo of the whole-unit practice
	// (fleet.FollowPractice) with seed Seed, or nil.
	Practice *fleet.Simulation
	Seed     uint64
	Warnings []string
	// Inspections is the inspection calendar of the classes with an
	// inspection block (reports/inspect.go), printed beside the plan.
	Inspections []ClassInspections
}

// amount formats a sum of money with its currency: no decimals from 100
// up or for amounts whole to the currency's minor unit, the minor unit's
// decimals (MinorUnit) for other amounts below 100.
func amount(x float64, currency string) string {
	d := 0
	if dec := MinorUnit(currency); math.Abs(x) < 100 && math.Abs(x-math.Round(x)) >= math.Pow(10, -float64(dec))/2 {
		d = dec
	}
	return Money(x, d) + " " + currency
}

// yearList says a set of calendar years (0-based) as "1-3, 5 and 7".
func yearList(years []int) string {
	var parts []string
	for i := 0; i < len(years); {
		j := i
		for j+1 < len(years) && years[j+1] == years[j]+1 {
			j++
		}
		switch {
		case j == i:
			parts = append(parts, strconv.Itoa(years[i]+1))
		case j == i+1:
			parts = append(parts, strconv.Itoa(years[i]+1), strconv.Itoa(years[j]+1))
		default:
			parts = append(parts, fmt.Sprintf("%d-%d", years[i]+1, years[j]+1))
		}
		i = j + 1
	}
	return joinAnd(parts)
}

// yearsWord is "year 3" or "years 3-5".
func yearsWord(years []int) string {
	if len(years) == 1 {
		return "year " + yearList(years)
	}
	return "years " + yearList(years)
}

// shortYears and idleYears list the short years and the years that start
// no period.
func shortYears(p *fleet.Plan) (short, idle []int) {
	starts := make([]bool, len(p.Spend))
	for _, y := range p.PeriodYear {
		starts[y] = true
	}
	for y := range p.Spend {
		switch {
		case !starts[y]:
			idle = append(idle, y)
		case p.Statement.Short[y]:
			short = append(short, y)
		}
	}
	return short, idle
}

// horizonText is "10 years in 10 periods of 1 year"; when the budget
// years are not a whole number of periods, it says what the periods
// cover: "1 period of 5 years (5 years), the periods that start within
// the 4 budget years".
func horizonText(f *fleet.Problem, p *fleet.Plan) string {
	n := len(p.PeriodYear)
	word := "periods"
	if n == 1 {
		word = "period"
	}
	covered := float64(n) * p.Period.Years()
	if math.Abs(covered-float64(len(f.Budget))) < 1e-9 {
		return fmt.Sprintf("%s in %d %s of %s", nouns(len(f.Budget), "year", "years"), n, word, p.Period)
	}
	return fmt.Sprintf("%d %s of %s (%s years), the periods that start within the %d budget years", n, word, p.Period, trimYear(covered), len(f.Budget))
}

// excessSpan says the smallest and largest of f over the short years as
// an amount a calendar year: "by 762 EUR to 1,779 EUR a calendar year".
func excessSpan(short []int, f func(y int) float64, currency string) string {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, y := range short {
		lo, hi = min(lo, f(y)), max(hi, f(y))
	}
	if hi-lo > 0.5 {
		return fmt.Sprintf("by %s to %s a calendar year", amount(lo, currency), amount(hi, currency))
	}
	return "by " + amount(lo, currency) + " a calendar year"
}

// Two amounts over the budget are said in a short year, each labelled
// wherever it is printed: the least possible excess (Statement.Excess:
// the plan that spends least in that year, the earlier years kept to the
// rule) and the plan's expected excess (its expected work spend less the
// budget), which is at least as large.
const (
	leastExcessLabel = "(the least possible excess)"
	planExcessLabel  = "(the plan's expected excess)"
)

// leastExcess and planExcess say the two amounts over the budget of the
// short years.
func leastExcess(p *fleet.Plan, short []int, currency string) string {
	return excessSpan(short, func(y int) float64 { return p.Statement.Excess[y] }, currency) + " " + leastExcessLabel
}

func planExcess(f *fleet.Problem, p *fleet.Plan, short []int, currency string) string {
	return excessSpan(short, func(y int) float64 { return p.Spend[y] - f.Budget[y] }, currency) + " " + planExcessLabel
}

// PlanStatement says in words the problem the plan solves; every output
// of a plan prints it next to the bounds.
func PlanStatement(f *fleet.Problem, p *fleet.Plan, currency string) string {
	obj := fmt.Sprintf("the least expected present cost of the fleet over %s: work and running costs, then each unit's unconstrained optimal value",
		horizonText(f, p))
	short, _ := shortYears(p)
	if len(short) == 0 {
		return "Problem solved: " + obj + ", with each calendar year's expected work spend within its budget."
	}
	return fmt.Sprintf("The budget cannot cover the mandatory work (units in unsafe conditions) in %s: "+
		"even the plan that spends least in such a year, keeping the earlier years to this rule, exceeds its budget %s. "+
		"Problem solved: %s, with mandatory work first: in those years only the cheapest admissible action for every unit "+
		"(mandatory work at least cost, no other work), and there the plan found exceeds the budget %s; in every other year the expected work spend within its budget.",
		yearsWord(short), leastExcess(p, short, currency), obj, planExcess(f, p, short, currency))
}

// excessWhy says why the plan's expected excess is above the least
// possible one, or "" where they agree.
func excessWhy(f *fleet.Problem, p *fleet.Plan) string {
	short, _ := shortYears(p)
	for _, y := range short {
		if p.Spend[y]-f.Budget[y] > p.Statement.Excess[y]+0.5 {
			return "The plan's expected excess (its expected work spend less the budget) is above the least possible one because the plan that spends least " +
				"in such a year may choose other work (for example work that saves mandatory work later in the year), which the rule leaves out."
		}
	}
	return ""
}

// PlanWarnings lists what a reader must know about a plan: years whose
// budget cannot cover the mandatory work, a first period whose mandatory
// work exceeds what it may spend, years that start no period, and a gap
// target not met. Sentences start with a capital; sums carry the
// currency.
func PlanWarnings(f *fleet.Problem, p *fleet.Plan, target float64, currency string) []string {
	var out []string
	short, idle := shortYears(p)
	if len(short) > 0 {
		least := excessSpan(short, func(y int) float64 { return p.Statement.Excess[y] }, currency)
		out = append(out, capitalize(fmt.Sprintf("%s: the budget cannot cover the mandatory work in unsafe conditions; only mandatory work is planned, "+
			"and the plan exceeds the budget %s; the least possible excess is %s.",
			yearsWord(short), planExcess(f, p, short, currency), strings.TrimPrefix(least, "by "))))
	}
	if wl := p.First; wl.Mandatory > wl.Limit+0.005 && !p.Statement.Short[0] {
		out = append(out, fmt.Sprintf("Period 1: mandatory work on the inventory costs %s, above the %s the period may spend; it is done first and no other work is listed.",
			amount(wl.Mandatory, currency), amount(wl.Limit, currency)))
	}
	if len(idle) > 0 {
		out = append(out, capitalize(fmt.Sprintf("%s start no period (periods of %s): no work is planned in them and their budgets are not used.",
			yearsWord(idle), p.Period)))
	}
	if p.Gap > target {
		out = append(out, fmt.Sprintf("The proven gap %s is above the target %s after %s.", Percent(p.Gap, 3), Percent(target, 3), nouns(p.Iterations, "round", "rounds")))
	}
	return out
}

func (r *PlanReport) stateName(c, s int) string  { return r.Fleet.Classes[c].Model.States[s].Name }
func (r *PlanReport) actionName(c, a int) string { return r.Fleet.Classes[c].Model.Actions[a].Name }

// boundLines are the bounds, the cost of the budget and the practice, in
// words, after the statement.
func (r *PlanReport) boundLines() []string {
	p, cur := r.Plan, r.Currency
	what := "the budget"
	if p.Statement.Kind == fleet.MandatoryFirst {
		what = "the budget, with mandatory work first,"
	}
	statement := PlanStatement(r.Fleet, p, cur)
	if why := excessWhy(r.Fleet, p); why != "" {
		statement += " " + why
	}
	lines := []string{
		statement,
		fmt.Sprintf("Proven bounds on that problem (expected-count model): lower bound %s <= optimum <= plan found %s (gap %s).",
			amount(p.Lower, cur), amount(p.Fluid, cur), Percent(p.Gap, 3)),
		fmt.Sprintf("Without budgets the optimum is %s: %s costs %s in present value (plan found less unconstrained optimum; at least %s).",
			amount(p.Unconstrained, cur), what, amount(p.Fluid-p.Unconstrained, cur), amount(p.Lower-p.Unconstrained, cur)),
	}
	if s := r.Practice; s != nil {
		lines = append(lines, fmt.Sprintf("Simulated whole-unit practice (Monte-Carlo, %s futures, seed %d; an estimate, not a bound): "+
			"each period the units found get the plan's shares rounded to whole units, mandatory work first and the rest within what is left of the year's budget. "+
			"Present cost %s ± %s (mean ± standard error; P10 %s, P90 %s).",
			Money(float64(s.Runs), 0), r.Seed, amount(s.Cost.Mean, cur), Money(s.Cost.SE, 0), Money(s.Cost.P10, 0), Money(s.Cost.P90, 0)))
	}
	return lines
}

// yearRule says what rule holds in year y.
func (r *PlanReport) yearRule(y int, starts []bool) string {
	switch {
	case !starts[y]:
		return "no period starts"
	case r.Plan.Statement.Short[y]:
		return "mandatory only"
	}
	return "within budget"
}

func periodStarts(p *fleet.Plan) []bool {
	starts := make([]bool, len(p.Spend))
	for _, y := range p.PeriodYear {
		starts[y] = true
	}
	return starts
}

// periodHeader and periodLead give the leading columns of a per-period
// row: the period and, unless periods are one year, the calendar year in
// which it starts and its start in years.
func periodHeader(per costs.Period) []string {
	if per.Years() == 1 {
		return []string{"year"}
	}
	return []string{"period", "year", "starts (years)"}
}

func periodLead(p *fleet.Plan, k int) []string {
	if p.Period.Years() == 1 {
		return []string{strconv.Itoa(k + 1)}
	}
	start := math.Round(p.Period.Start(k)*1e6) / 1e6
	return []string{strconv.Itoa(k + 1), strconv.Itoa(p.PeriodYear[k] + 1), strconv.FormatFloat(start, 'f', -1, 64)}
}

// shareText is a condition's work in a period: "service 35%, replace 5%",
// or "-" when the plan leaves every unit there alone.
func (r *PlanReport) shareText(c, k, s int) string {
	pa := r.Plan.PassiveActions[c]
	var parts []string
	for a, x := range r.Plan.Shares[c][k][s] {
		if a != pa && x > 5e-4 {
			parts = append(parts, fmt.Sprintf("%s %s", r.actionName(c, a), Percent(x, 1)))
		}
	}
	if len(parts) == 0 {
		return "-"
	}
	return strings.Join(parts, ", ")
}

// WriteTable writes the statement and bounds, the figures per calendar
// year, the first period's work list, the plan's policy and expected
// units for later periods, then warnings and the caution.
func (r *PlanReport) WriteTable(w io.Writer) error {
	p, f := r.Plan, r.Fleet
	cur := r.Currency
	fmt.Fprintf(w, "%s: budget plan over %s (%s)\n", r.Model, horizonText(f, p), cur)
	if err := writeLines(w, append([]string{r.discountLine()}, r.boundLines()...)); err != nil {
		return err
	}
	starts := periodStarts(p)
	header := []string{"year", "budget", "rule", "planned spend (exp.)", "of which mandatory", "budget price"}
	numeric := []bool{true, true, false, true, true, true}
	if r.Practice != nil {
		header = append(header, "practice (sim.) median [P10, P90]", "practice over budget")
		numeric = append(numeric, true, true)
	}
	var rows [][]string
	for y, b := range f.Budget {
		price := Fixed(p.Multipliers[y], 3)
		if !starts[y] || p.Statement.Short[y] {
			price = "-"
		}
		row := []string{strconv.Itoa(y + 1), Money(b, 0), r.yearRule(y, starts), Money(p.Spend[y], 0), Money(p.Mandatory[y], 0), price}
		if s := r.Practice; s != nil {
			row = append(row, band(s.Spend[y], 0), Percent(s.OverBudget[y], 0))
		}
		rows = append(rows, row)
	}
	fmt.Fprintf(w, "\nPer calendar year (%s; the work of a period is charged to the year in which it starts):\n", cur)
	if err := table(w, header, numeric, rows); err != nil {
		return err
	}
	lines := []string{"Planned spend: the plan's expected work spend (running costs are not charged to the budget). " +
		"Budget price: present value saved per extra unit of budget in that year."}
	if r.Practice != nil {
		lines = append(lines, "Practice columns: simulated whole-unit practice (see above), share of futures whose spend exceeds the budget.")
	}
	if err := writeLines(w, lines); err != nil {
		return err
	}
	wl := p.First
	fmt.Fprintf(w, "\nWork list for period 1 (year 1, from the inventory; whole units; units left alone are not listed):\n")
	rows = nil
	for c, fc := range f.Classes {
		pa := p.PassiveActions[c]
		for s, row := range wl.Units[c] {
			for a, u := range row {
				if u > 0 && a != pa {
					rows = append(rows, []string{fc.Name, r.stateName(c, s), r.actionName(c, a), strconv.Itoa(u), Money(float64(u)*fc.Costs.Action[a][s], 0)})
				}
			}
		}
	}
	if err := table(w, []string{"class", "condition", "action", "units", "cost (" + cur + ")"}, []bool{false, false, false, true, true}, rows); err != nil {
		return err
	}
	if err := writeLines(w, []string{r.workListLine()}); err != nil {
		return err
	}
	K := len(p.PeriodYear)
	if len(f.Classes) <= 5 {
		for c, fc := range f.Classes {
			if K > 1 {
				fmt.Fprintf(w, "\nPlan for %s in later periods: share of the units in each condition to work on (the rest are left alone):\n", fc.Name)
				if err := r.classTable(w, c, 1, K, func(k, s int) string { return r.shareText(c, k, s) }); err != nil {
					return err
				}
			}
			fmt.Fprintf(w, "\nExpected units of %s per condition at the start of each period:\n", fc.Name)
			if err := r.classTable(w, c, 0, K, func(k, s int) string { return Fixed(p.Expected[c][k][s], 1) }); err != nil {
				return err
			}
		}
	} else {
		fmt.Fprintln(w, "\nThe plan's shares and expected units per class and period: --format json or csv.")
	}
	if err := writeInspectionTable(w, r.Inspections, cur); err != nil {
		return err
	}
	var tail []string
	if len(r.Warnings) > 0 {
		tail = append(tail, "", "WARNINGS:")
		tail = append(tail, r.Warnings...)
	}
	tail = append(tail, "", "Beyond period 1 the fleet's condition is not known: later periods are the plan's policy and its expected units, "+
		"not a work list. Re-plan each year from the new inspection results.",
		"CAUTION: "+Caution)
	return writeLines(w, tail)
}

// workListLine sums up the first period's work list.
func (r *PlanReport) workListLine() string {
	p, wl, cur := r.Plan, r.Plan.First, r.Currency
	deferred := fmt.Sprintf("%s deferred (the unconstrained advice would work on them).", nouns(wl.Deferred, "unit", "units"))
	if p.Statement.Short[0] {
		return fmt.Sprintf("Work list spend %s, of which mandatory %s: year 1's budget cannot cover the mandatory work, so no other work is listed. %s",
			amount(wl.Spend, cur), amount(wl.Mandatory, cur), deferred)
	}
	may := "the period may spend " + amount(wl.Limit, cur)
	if p.Period.Years() < 1 {
		may += " (year 1's budget less the plan's spend in its later periods)"
	}
	return fmt.Sprintf("Work list spend %s, of which mandatory %s; %s, mandatory work first. %s", amount(wl.Spend, cur), amount(wl.Mandatory, cur), may, deferred)
}

// classTable renders one row per period from..to-1 and one column per
// condition of class c.
func (r *PlanReport) classTable(w io.Writer, c, from, to int, cell func(k, s int) string) error {
	p := r.Plan
	header := periodHeader(p.Period)
	lead := len(header)
	for _, st := range r.Fleet.Classes[c].Model.States {
		name := st.Name
		if st.Unsafe {
			name += " (unsafe)"
		}
		header = append(header, name)
	}
	numeric := make([]bool, len(header))
	for i := range numeric {
		numeric[i] = true
	}
	var rows [][]string
	for k := from; k < to; k++ {
		row := periodLead(p, k)
		for s := range len(header) - lead {
			row = append(row, cell(k, s))
		}
		rows = append(rows, row)
	}
	return table(w, header, numeric, rows)
}

type planWork struct {
	Class     string `json:"class"`
	Condition string `json:"state"`
	Action    string `json:"action"`
	Units     int    `json:"units"`
}

type planYear struct {
	Year          int        `json:"year"`
	Budget        float64    `json:"budget"`
	Rule          string     `json:"rule"`
	Excess        float64    `json:"least_excess"`
	PlannedSpend  float64    `json:"planned_spend"`
	Mandatory     float64    `json:"planned_mandatory_spend"`
	BudgetPrice   float64    `json:"budget_price"`
	Periods       []int      `json:"periods"`
	PracticeSpend *quantJSON `json:"practice_spend,omitempty"`
	PracticeOver  *float64   `json:"practice_over_budget_share,omitempty"`
}

type planPeriod struct {
	Period         int                                      `json:"period"`
	Year           int                                      `json:"year"`
	StartYears     float64                                  `json:"start_years"`
	PlannedSpend   float64                                  `json:"planned_spend"`
	ExpectedCounts map[string]map[string]float64            `json:"expected_counts"`
	Shares         map[string]map[string]map[string]float64 `json:"shares"`
	UnsafeUnits    float64                                  `json:"expected_unsafe_units"`
	Deferred       float64                                  `json:"expected_deferred_units"`
}

// WriteJSON writes the plan (keys in the README): the problem solved
// ("problem": kind, statement, short years and excesses), lower_bound <=
// its optimum <= fluid_cost, gap = (fluid_cost - lower_bound)/fluid_cost,
// cost_of_budget = fluid_cost - unconstrained_cost; years[] per calendar
// year; work_list for period 1 (non-passive work only); periods[] with
// the plan's shares and expected counts; simulated_practice when
// simulated.
func (r *PlanReport) WriteJSON(w io.Writer) error {
	p, f := r.Plan, r.Fleet
	type problem struct {
		Kind      string    `json:"kind"`
		Statement string    `json:"statement"`
		Short     []int     `json:"short_years"`
		Excess    []float64 `json:"least_excess"`
		ExcessGap float64   `json:"least_excess_gap"`
	}
	type workList struct {
		Period    int        `json:"period"`
		Spend     float64    `json:"spend"`
		Mandatory float64    `json:"mandatory_spend"`
		Limit     float64    `json:"limit"`
		Deferred  int        `json:"deferred"`
		Work      []planWork `json:"work"`
	}
	type practice struct {
		Rule string    `json:"rule"`
		Runs int       `json:"runs"`
		Seed uint64    `json:"seed"`
		Cost quantJSON `json:"cost"`
	}
	out := struct {
		Model          string                  `json:"model"`
		Currency       string                  `json:"currency"`
		HorizonYears   int                     `json:"horizon_years"`
		PeriodYears    float64                 `json:"period_years"`
		DiscountFactor float64                 `json:"discount_factor"`
		Problem        problem                 `json:"problem"`
		LowerBound     float64                 `json:"lower_bound"`
		FluidCost      float64                 `json:"fluid_cost"`
		Gap            float64                 `json:"gap"`
		Unconstrained  float64                 `json:"unconstrained_cost"`
		CostOfBudget   float64                 `json:"cost_of_budget"`
		CostAtLeast    float64                 `json:"cost_of_budget_at_least"`
		Rounds         int                     `json:"rounds"`
		Programs       int                     `json:"programs"`
		Years          []planYear              `json:"years"`
		WorkList       workList                `json:"work_list"`
		Periods        []planPeriod            `json:"periods"`
		Practice       *practice               `json:"simulated_practice,omitempty"`
		Inspections    *inspectionCalendarJSON `json:"inspection_calendar,omitempty"`
		Warnings       []string                `json:"warnings"`
		Caution        string                  `json:"caution"`
	}{Model: r.Model, Currency: r.Currency, HorizonYears: len(f.Budget), PeriodYears: p.Period.Years(), DiscountFactor: f.Discount.Factor(),
		Problem:    problem{Kind: p.Statement.Kind.String(), Statement: PlanStatement(f, p, r.Currency), Short: []int{}, Excess: p.Statement.Excess, ExcessGap: p.Statement.ExcessGap},
		LowerBound: p.Lower, FluidCost: p.Fluid, Gap: p.Gap, Unconstrained: p.Unconstrained,
		CostOfBudget: p.Fluid - p.Unconstrained, CostAtLeast: p.Lower - p.Unconstrained, Rounds: p.Iterations, Programs: p.Programs,
		Inspections: inspectionJSON(r.Inspections), Warnings: append([]string{}, r.Warnings...), Caution: Caution}
	starts := periodStarts(p)
	periodsOf := make([][]int, len(f.Budget))
	for k, y := range p.PeriodYear {
		periodsOf[y] = append(periodsOf[y], k+1)
	}
	for y, b := range f.Budget {
		if p.Statement.Short[y] {
			out.Problem.Short = append(out.Problem.Short, y+1)
		}
		yr := planYear{Year: y + 1, Budget: b, Rule: strings.ReplaceAll(r.yearRule(y, starts), " ", "_"), Excess: p.Statement.Excess[y],
			PlannedSpend: p.Spend[y], Mandatory: p.Mandatory[y], BudgetPrice: p.Multipliers[y], Periods: append([]int{}, periodsOf[y]...)}
		if s := r.Practice; s != nil {
			q, over := qj(s.Spend[y]), s.OverBudget[y]
			yr.PracticeSpend, yr.PracticeOver = &q, &over
		}
		out.Years = append(out.Years, yr)
	}
	wl := p.First
	out.WorkList = workList{Period: 1, Spend: wl.Spend, Mandatory: wl.Mandatory, Limit: wl.Limit, Deferred: wl.Deferred, Work: []planWork{}}
	for c, fc := range f.Classes {
		pa := p.PassiveActions[c]
		for s, row := range wl.Units[c] {
			for a, u := range row {
				if u > 0 && a != pa {
					out.WorkList.Work = append(out.WorkList.Work, planWork{fc.Name, r.stateName(c, s), r.actionName(c, a), u})
				}
			}
		}
	}
	for k, y := range p.PeriodYear {
		per := planPeriod{Period: k + 1, Year: y + 1, StartYears: p.Period.Start(k), PlannedSpend: p.PeriodSpend[k],
			ExpectedCounts: map[string]map[string]float64{}, Shares: map[string]map[string]map[string]float64{},
			UnsafeUnits: p.UnsafeUnits[k], Deferred: p.Deferred[k]}
		for c, fc := range f.Classes {
			counts := map[string]float64{}
			shares := map[string]map[string]float64{}
			for s, x := range p.Expected[c][k] {
				counts[r.stateName(c, s)] = x
				sh := map[string]float64{}
				for a, v := range p.Shares[c][k][s] {
					if v > 0 {
						sh[r.actionName(c, a)] = v
					}
				}
				shares[r.stateName(c, s)] = sh
			}
			per.ExpectedCounts[fc.Name] = counts
			per.Shares[fc.Name] = shares
		}
		out.Periods = append(out.Periods, per)
	}
	if s := r.Practice; s != nil {
		out.Practice = &practice{Rule: s.Rule.String(), Runs: s.Runs, Seed: r.Seed, Cost: qj(s.Cost)}
	}
	return writeJSON(w, out)
}

// WriteCSV writes a caution comment line, then one row per period, class,
// condition and action that the plan uses or the work list lists:
// period, year, class, condition, action, share, expected_units,
// work_list_units (period 1 only), year_budget, year_rule,
// year_planned_spend; with an inspection calendar also
// class_year_inspections and class_year_inspection_cost (that class's
// expected inspections and their cost in that calendar year, repeated on
// each of its rows of the year; empty for a class without an inspection
// block), and the assumption and statutory rule as comment lines.
func (r *PlanReport) WriteCSV(w io.Writer) error {
	p, f := r.Plan, r.Fleet
	if err := r.writeCSVPreamble(w, "expected present cost of the fleet (fluid plan)"); err != nil {
		return err
	}
	if err := writeCSVNotes(w, r.Warnings); err != nil {
		return err
	}
	if len(r.Inspections) > 0 {
		if _, err := fmt.Fprintf(w, "# inspections: %s\n# statutory: %s\n", PlanInspectionAssumption, InspectionRule); err != nil {
			return err
		}
	}
	starts := periodStarts(p)
	cw := newCSV(w)
	header := []string{"period", "year", "class", "state", "action", "share", "expected_units", "work_list_units", "year_budget", "year_rule", "year_planned_spend"}
	if len(r.Inspections) > 0 {
		header = append(header, "class_year_inspections", "class_year_inspection_cost")
	}
	cw.Write(header)
	for k, y := range p.PeriodYear {
		for c, fc := range f.Classes {
			for s, sh := range p.Shares[c][k] {
				for a, x := range sh {
					units := ""
					if k == 0 {
						units = strconv.Itoa(p.First.Units[c][s][a])
					}
					if x == 0 && (k != 0 || p.First.Units[c][s][a] == 0) {
						continue
					}
					row := []string{strconv.Itoa(k + 1), strconv.Itoa(y + 1), fc.Name, r.stateName(c, s), r.actionName(c, a),
						Fixed(x, 6), Fixed(p.Expected[c][k][s]*x, 6), units, Fixed(f.Budget[y], 2),
						strings.ReplaceAll(r.yearRule(y, starts), " ", "_"), Fixed(p.Spend[y], 2)}
					if len(r.Inspections) > 0 {
						row = append(row, inspectionCells(r.Inspections, fc.Name, y)...)
					}
					cw.Write(row)
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
