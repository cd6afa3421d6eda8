package reports

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"fixpoint/optimize/inspect"
)

// InspectionCalendar is the expected inspection calendar of a population
// of one class under its inspection advice: inspections, call-outs and
// their cost per calendar year.
type InspectionCalendar struct {
	Header
	Problem  *inspect.Problem
	Result   *inspect.Result
	Calendar *inspect.Calendar
	// Start is the number of units found in each state at time 0, when
	// every unit is inspected.
	Start []float64
}

// calendarTable is one row per calendar year.
func (v *InspectionCalendar) calendarTable() PageTable {
	p := v.Problem
	t := PageTable{
		Header:  []string{"year", "inspections", "of which call-outs", "unsafe found"},
		Numeric: []bool{true, true, true, true},
	}
	for _, a := range p.Actions {
		t.Header = append(t.Header, a)
		t.Numeric = append(t.Numeric, true)
	}
	t.Header = append(t.Header, "inspection cost", "action cost", "running cost", "risk cost", "total")
	t.Numeric = append(t.Numeric, true, true, true, true, true)
	for _, y := range v.Calendar.Years {
		row := []string{strconv.Itoa(y.Year + 1), Fixed(y.Epochs, 2), Fixed(y.Unscheduled, 2), Fixed(y.UnsafeFound, 2)}
		for _, x := range y.Actions {
			row = append(row, Fixed(x, 2))
		}
		t.Rows = append(t.Rows, append(row, Money(y.InspectionCost, 0), Money(y.ActionCost, 0), Money(y.RunningCost, 0),
			Money(y.RiskCost, 0), Money(y.Total, 0)))
	}
	return t
}

func (v *InspectionCalendar) adviceLine() string {
	p, r := v.Problem, v.Result
	parts := make([]string, len(p.States))
	for s := range p.States {
		parts[s] = p.States[s] + ": " + Decision(p, p.Choices[s][r.Policy[s]])
	}
	return "Advice followed (per condition found): " + strings.Join(parts, "; ") + "."
}

func (v *InspectionCalendar) units() float64 {
	total := 0.0
	for _, x := range v.Start {
		total += x
	}
	return total
}

// WriteTable writes one row per calendar year, then the advice followed,
// the present value, the statutory rule and the caution.
func (v *InspectionCalendar) WriteTable(w io.Writer) error {
	if _, err := fmt.Fprintf(w, "%s: expected inspections and spend per calendar year under the inspection advice (%s units, every one inspected at the start of year 1; %s)\n",
		v.Model, Fixed(v.units(), 2), v.Currency); err != nil {
		return err
	}
	t := v.calendarTable()
	if err := table(w, t.Header, t.Numeric, t.Rows); err != nil {
		return err
	}
	return writeLines(w, []string{
		"Inspections count every epoch: scheduled inspections and call-outs after self-announcing failures, each charged the inspection cost. " +
			"Unsafe found: epochs that find a unit unsafe. Action columns: how often each action is taken. Running cost: every period, seen or not; " +
			"risk cost: periods in a hidden failure, unseen.",
		v.adviceLine(),
		fmt.Sprintf("Present value of the spend over %s: %s %s (discount factor %s per period, costs at the start of each period).",
			nouns(len(v.Calendar.Years), "year", "years"), v.money(v.Calendar.PresentValue), v.Currency, Fixed(v.Problem.Discount, 6)),
		"Counts are expected values (fractions of units), not a work list.",
		"STATUTORY: " + InspectionRule,
		LimitSentence(v.Problem),
		"CAUTION: " + Caution,
	})
}

type calendarYearJSON struct {
	Year            int                `json:"year"`
	Inspections     float64            `json:"inspections"`
	CallOuts        float64            `json:"call_outs"`
	UnsafeFound     float64            `json:"unsafe_found"`
	Actions         map[string]float64 `json:"actions"`
	InspectionCost  float64            `json:"inspection_cost"`
	ActionCost      float64            `json:"action_cost"`
	RunningCost     float64            `json:"running_cost"`
	RiskCost        float64            `json:"risk_cost"`
	Total           float64            `json:"total"`
	HiddenUnitYears float64            `json:"hidden_unit_years"`
}

func calendarYears(p *inspect.Problem, cal *inspect.Calendar) []calendarYearJSON {
	out := make([]calendarYearJSON, 0, len(cal.Years))
	for _, y := range cal.Years {
		acts := make(map[string]float64, len(y.Actions))
		for a, x := range y.Actions {
			acts[p.Actions[a]] = x
		}
		out = append(out, calendarYearJSON{Year: y.Year + 1, Inspections: y.Epochs, CallOuts: y.Unscheduled, UnsafeFound: y.UnsafeFound,
			Actions: acts, InspectionCost: y.InspectionCost, ActionCost: y.ActionCost, RunningCost: y.RunningCost, RiskCost: y.RiskCost,
			Total: y.Total, HiddenUnitYears: y.HiddenUnitYears})
	}
	return out
}

// stateAdviceJSON is the advice of state s.
func stateAdviceJSON(p *inspect.Problem, r *inspect.Result, s int) inspectAdviceJSON {
	c := p.Choices[s][r.Policy[s]]
	return inspectAdviceJSON{State: p.States[s], Unsafe: p.Unsafe[s], Hidden: p.Hidden[s], Action: p.Actions[c.Action],
		InspectAfter: c.Interval, InspectAfterYears: p.Years(c.Interval), Advice: Decision(p, c),
		Value: r.Value[s], Lower: r.Lower[s], Upper: r.Upper[s]}
}

func adviceJSONList(p *inspect.Problem, r *inspect.Result) []inspectAdviceJSON {
	out := make([]inspectAdviceJSON, len(p.States))
	for s := range p.States {
		out[s] = stateAdviceJSON(p, r, s)
	}
	return out
}

// WriteJSON writes the calendar as one JSON object (keys in the README).
func (v *InspectionCalendar) WriteJSON(w io.Writer) error {
	p := v.Problem
	start := make(map[string]float64, len(v.Start))
	for s, x := range v.Start {
		start[p.States[s]] = x
	}
	out := struct {
		Model          string              `json:"model"`
		Currency       string              `json:"currency"`
		PeriodYears    float64             `json:"period_years"`
		DiscountFactor float64             `json:"discount_factor"`
		HorizonYears   int                 `json:"horizon_years"`
		Start          map[string]float64  `json:"start"`
		Advice         []inspectAdviceJSON `json:"advice"`
		Years          []calendarYearJSON  `json:"years"`
		PresentValue   float64             `json:"present_value"`
		Statutory      string              `json:"statutory"`
		Limit          string              `json:"limit"`
		Caution        string              `json:"caution"`
	}{Model: v.Model, Currency: v.Currency, PeriodYears: v.periodYears(), DiscountFactor: p.Discount, HorizonYears: len(v.Calendar.Years),
		Start: start, Advice: adviceJSONList(p, v.Result), Years: calendarYears(p, v.Calendar), PresentValue: v.Calendar.PresentValue,
		Statutory: InspectionRule, Limit: LimitSentence(p), Caution: Caution}
	return writeJSON(w, out)
}

// WriteCSV writes the comment lines (caution, what the numbers are, the
// statutory rule, the limit), then one row per calendar year: year,
// inspections, call_outs, unsafe_found, actions_<action>...,
// inspection_cost, action_cost, running_cost, risk_cost, total,
// hidden_unit_years.
func (v *InspectionCalendar) WriteCSV(w io.Writer) error {
	p := v.Problem
	if err := v.writeCSVPreamble(w, "expected inspections and spend per calendar year (undiscounted)"); err != nil {
		return err
	}
	for _, c := range []string{"statutory: " + InspectionRule, "limit: " + LimitSentence(p)} {
		if _, err := fmt.Fprintf(w, "# %s\n", c); err != nil {
			return err
		}
	}
	cw := newCSV(w)
	header := []string{"year", "inspections", "call_outs", "unsafe_found"}
	for _, a := range p.Actions {
		header = append(header, "actions_"+a)
	}
	cw.Write(append(header, "inspection_cost", "action_cost", "running_cost", "risk_cost", "total", "hidden_unit_years"))
	for _, y := range v.Calendar.Years {
		row := []string{strconv.Itoa(y.Year + 1), Fixed(y.Epochs, 6), Fixed(y.Unscheduled, 6), Fixed(y.UnsafeFound, 6)}
		for _, x := range y.Actions {
			row = append(row, Fixed(x, 6))
		}
		cw.Write(append(row, Fixed(y.InspectionCost, 6), Fixed(y.ActionCost, 6), Fixed(y.RunningCost, 6), Fixed(y.RiskCost, 6),
			Fixed(y.Total, 6), Fixed(y.HiddenUnitYears, 6)))
	}
	cw.Flush()
	return cw.Error()
}

// ClassInspections is the inspection calendar of one class of a fleet:
// its inspection advice, solved on its own, followed from the inventory.
type ClassInspections struct {
	Class    string
	Problem  *inspect.Problem
	Result   *inspect.Result
	Calendar *inspect.Calendar
}

// PlanInspectionAssumption says what a budget plan assumes about
// inspections and what the inspection calendar beside it is.
const PlanInspectionAssumption = "The budget plan assumes that every unit's condition is known at the start of every period " +
	"(as if it were inspected every period, at no cost) and charges no inspection cost to the budget. The inspection calendar " +
	"beside it follows each class's inspection advice (action and next inspection, solved to proven optimality on its own, " +
	"without the budget) from the inventory, every unit inspected at the start of year 1: the expected inspections and their " +
	"cost per calendar year, to budget beside the plan."

// inspectionYear is one row of a fleet's inspection calendar: a class in
// a calendar year (0-based), or all classes (callOuts NaN: not summed).
type inspectionYear struct {
	year                  int
	class                 string
	inspections, callOuts float64
	cost                  float64
}

// inspectionYears are the fleet calendar's rows: one per year and class,
// and the year's total over the classes when there are several.
func inspectionYears(classes []ClassInspections) []inspectionYear {
	if len(classes) == 0 {
		return nil
	}
	var rows []inspectionYear
	for y := range classes[0].Calendar.Years {
		total, cost := 0.0, 0.0
		for _, c := range classes {
			cy := c.Calendar.Years[y]
			total += cy.Epochs
			cost += cy.InspectionCost
			rows = append(rows, inspectionYear{y, c.Class, cy.Epochs, cy.Unscheduled, cy.InspectionCost})
		}
		if len(classes) > 1 {
			rows = append(rows, inspectionYear{y, "all classes", total, math.NaN(), cost})
		}
	}
	return rows
}

// inspectionRows are the fleet calendar's rows as text.
func inspectionRows(classes []ClassInspections) [][]string {
	var rows [][]string
	for _, r := range inspectionYears(classes) {
		callOuts := ""
		if !math.IsNaN(r.callOuts) {
			callOuts = Fixed(r.callOuts, 1)
		}
		rows = append(rows, []string{strconv.Itoa(r.year + 1), r.class, Fixed(r.inspections, 1), callOuts, Money(r.cost, 0)})
	}
	return rows
}

// inspectionLines say what the plan assumes about inspections and each
// class's inspection advice.
func inspectionLines(classes []ClassInspections) []string {
	lines := []string{PlanInspectionAssumption}
	for _, c := range classes {
		parts := make([]string, len(c.Problem.States))
		for s := range c.Problem.States {
			parts[s] = c.Problem.States[s] + ": " + Decision(c.Problem, c.Problem.Choices[s][c.Result.Policy[s]])
		}
		lines = append(lines, fmt.Sprintf("Inspection advice for %s: %s. %s", c.Class, strings.Join(parts, "; "), LimitSentence(c.Problem)))
	}
	return lines
}

// writeInspectionTable writes a fleet's inspection calendar with what
// the plan assumes and the statutory rule.
func writeInspectionTable(w io.Writer, classes []ClassInspections, currency string) error {
	if len(classes) == 0 {
		return nil
	}
	if _, err := fmt.Fprintf(w, "\nInspection calendar (classes with an inspection block; expected inspections per calendar year, %s):\n", currency); err != nil {
		return err
	}
	if err := table(w, []string{"year", "class", "inspections", "of which call-outs", "inspection cost"}, []bool{true, false, true, true, true},
		inspectionRows(classes)); err != nil {
		return err
	}
	return writeLines(w, append(inspectionLines(classes), "STATUTORY: "+InspectionRule))
}

type fleetInspectionJSON struct {
	Class  string              `json:"class"`
	Advice []inspectAdviceJSON `json:"advice"`
	Limit  string              `json:"limit"`
	Years  []calendarYearJSON  `json:"years"`
}

type inspectionCalendarJSON struct {
	Assumption string                `json:"assumption"`
	Classes    []fleetInspectionJSON `json:"classes"`
	Statutory  string                `json:"statutory"`
}

func inspectionJSON(classes []ClassInspections) *inspectionCalendarJSON {
	if len(classes) == 0 {
		return nil
	}
	out := &inspectionCalendarJSON{Assumption: PlanInspectionAssumption, Statutory: InspectionRule}
	for _, c := range classes {
		out.Classes = append(out.Classes, fleetInspectionJSON{Class: c.Class, Advice: adviceJSONList(c.Problem, c.Result),
			Limit: LimitSentence(c.Problem), Years: calendarYears(c.Problem, c.Calendar)})
	}
	return out
}

// inspectionCells are the CSV cells of a plan row of class name in year
// y: the class's expected inspections and their cost that year, or
// empty cells for a class without an inspection block.
func inspectionCells(classes []ClassInspections, name string, y int) []string {
	for _, c := range classes {
		if c.Class == name && y < len(c.Calendar.Years) {
			cy := c.Calendar.Years[y]
			return []string{Fixed(cy.Epochs, 6), Fixed(cy.InspectionCost, 6)}
		}
	}
	return []string{"", ""}
}
