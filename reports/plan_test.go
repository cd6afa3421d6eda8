package reports

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"
	"unicode"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/fleet"
)

// testFleet is one invented class (good, worn, failed and unsafe) with
// units counts, periods of h years and budget per year for years years.
func testFleet(t testing.TB, h float64, counts []float64, budget float64, years int) *fleet.Problem {
	t.Helper()
	m := &condition.Model{PeriodYears: h, States: []condition.State{{Name: "good"}, {Name: "worn"}, {Name: "failed", Unsafe: true}}}
	m.Actions = []condition.Action{
		{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 0.8}, {To: 1, P: 0.15}, {To: 2, P: 0.05}}, {{To: 1, P: 0.7}, {To: 2, P: 0.3}}, nil}},
		{Name: "repair", Rows: [][]condition.Entry{nil, {{To: 0, P: 0.9}, {To: 1, P: 0.1}}, nil}},
		{Name: "replace", Rows: [][]condition.Entry{{{To: 0, P: 1}}, {{To: 0, P: 1}}, {{To: 0, P: 1}}}},
	}
	sched := &costs.Schedule{Currency: "EUR", Running: []float64{50 * h, 400 * h, 3000 * h},
		Action: [][]float64{{0, 0, 0}, {0, 600, 0}, {5000, 5000, 6000}}}
	per, err := costs.NewPeriod(h)
	if err != nil {
		t.Fatal(err)
	}
	d, err := costs.Rate(0.04, per)
	if err != nil {
		t.Fatal(err)
	}
	f := &fleet.Problem{Discount: d, Classes: []fleet.Class{{Name: "pumps", Model: m, Costs: sched, Counts: counts}}}
	for range years {
		f.Budget = append(f.Budget, budget)
	}
	return f
}

func planReport(t testing.TB, f *fleet.Problem, simulate bool) *PlanReport {
	t.Helper()
	p, err := fleet.Solve(context.Background(), f, &fleet.Settings{Gap: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	r := &PlanReport{Header: Header{Model: "test fleet (invented)", Currency: "EUR"}, Fleet: f, Plan: p, Warnings: PlanWarnings(f, p, 1e-4, "EUR")}
	if simulate {
		if r.Practice, err = fleet.Simulate(context.Background(), f, p, fleet.FollowPractice, 200, 3, 1, nil); err != nil {
			t.Fatal(err)
		}
		r.Seed = 3
	}
	return r
}

type planJSON struct {
	Problem struct {
		Kind, Statement string
		Short           []int `json:"short_years"`
	}
	LowerBound   float64 `json:"lower_bound"`
	FluidCost    float64 `json:"fluid_cost"`
	CostOfBudget float64 `json:"cost_of_budget"`
	Years        []struct {
		Year         int
		Rule         string
		PlannedSpend float64 `json:"planned_spend"`
		Periods      []int
	}
	Periods []struct {
		Period       int
		Year         int
		PlannedSpend float64 `json:"planned_spend"`
	}
	Practice *struct {
		Rule string
		Runs int
	} `json:"simulated_practice"`
	Warnings []string
}

func outputs(t *testing.T, r *PlanReport) (string, planJSON, string) {
	t.Helper()
	var tb, jb, cb bytes.Buffer
	if err := r.WriteTable(&tb); err != nil {
		t.Fatal(err)
	}
	if err := r.WriteJSON(&jb); err != nil {
		t.Fatal(err)
	}
	if err := r.WriteCSV(&cb); err != nil {
		t.Fatal(err)
	}
	var doc planJSON
	if err := json.Unmarshal(jb.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	return tb.String(), doc, cb.String()
}

// flat joins wrapped lines so that phrases can be searched.
func flat(s string) string { return strings.Join(strings.Fields(s), " ") }

// One sound unit under a budget that never binds: the budget costs
// nothing (like with like: plan found less the unconstrained optimum),
// the statement stands next to the bounds, and the whole-unit practice is
// labelled as simulation.
func TestPlanAmpleBudgetCostsNothing(t *testing.T) {
	r := planReport(t, testFleet(t, 1, []float64{1, 0, 0}, 1e9, 10), true)
	table, doc, _ := outputs(t, r)
	text := flat(table)
	if math.Abs(doc.CostOfBudget) > 1e-6*doc.FluidCost {
		t.Errorf("cost_of_budget %g, want 0", doc.CostOfBudget)
	}
	for _, want := range []string{
		"Problem solved: the least expected present cost of the fleet over 10 years in 10 periods of 1 year",
		"within its budget. Proven bounds on that problem",
		"the budget costs 0 EUR in present value",
		"Simulated whole-unit practice (Monte-Carlo, 200 futures, seed 3; an estimate, not a bound)",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("table lacks %q:\n%s", want, table)
		}
	}
	if doc.Problem.Kind != "within_budget" || doc.Practice == nil || doc.Practice.Rule != "practice" || doc.Practice.Runs != 200 {
		t.Errorf("problem %+v, practice %+v", doc.Problem, doc.Practice)
	}
}

// With a zero budget the problem solved is stated as mandatory work
// first, in every output; warnings start with a capital and carry the
// currency.
func TestPlanZeroBudgetStatesMandatoryFirst(t *testing.T) {
	r := planReport(t, testFleet(t, 1, []float64{10, 6, 3}, 0, 4), false)
	table, doc, csvText := outputs(t, r)
	if doc.Problem.Kind != "mandatory_first" || len(doc.Problem.Short) != 4 || !strings.Contains(doc.Problem.Statement, "cannot cover the mandatory work") {
		t.Errorf("problem %+v", doc.Problem)
	}
	if !strings.Contains(flat(table), doc.Problem.Statement) {
		t.Errorf("table lacks the statement %q", doc.Problem.Statement)
	}
	if !(doc.LowerBound <= doc.FluidCost) {
		t.Errorf("bounds %g, %g", doc.LowerBound, doc.FluidCost)
	}
	for _, y := range doc.Years {
		if y.Rule != "mandatory_only" {
			t.Errorf("year %d: rule %q", y.Year, y.Rule)
		}
	}
	if len(doc.Warnings) == 0 {
		t.Fatal("no warnings")
	}
	for _, w := range doc.Warnings {
		if !unicode.IsUpper([]rune(w)[0]) || !strings.Contains(w, " EUR") || strings.Contains(w, ".00 EUR") {
			t.Errorf("warning %q: want a capital, the currency and whole amounts", w)
		}
	}
	header := ""
	for _, line := range strings.Split(csvText, "\n") {
		if !strings.HasPrefix(line, "#") {
			header = line
			break
		}
	}
	if !strings.HasPrefix(header, "period,year,class,state,action,share,expected_units,work_list_units") {
		t.Errorf("CSV header: %q", header)
	}
}

// With half-year periods the figures per year are per calendar year (two
// periods each) and the per-period tables say the period, its year and
// its start.
func TestPlanPerCalendarYear(t *testing.T) {
	r := planReport(t, testFleet(t, 0.5, []float64{10, 6, 1}, 9000, 3), true)
	table, doc, _ := outputs(t, r)
	if len(doc.Years) != 3 || len(doc.Periods) != 6 {
		t.Fatalf("%d years, %d periods; want 3 and 6", len(doc.Years), len(doc.Periods))
	}
	for _, y := range doc.Years {
		sum := 0.0
		for _, k := range y.Periods {
			sum += doc.Periods[k-1].PlannedSpend
			if doc.Periods[k-1].Year != y.Year {
				t.Errorf("period %d in year %d, listed under year %d", k, doc.Periods[k-1].Year, y.Year)
			}
		}
		if len(y.Periods) != 2 || math.Abs(sum-y.PlannedSpend) > 1e-6 {
			t.Errorf("year %d: periods %v spend %g, year %g", y.Year, y.Periods, sum, y.PlannedSpend)
		}
	}
	for _, want := range []string{"over 3 years in 6 periods of 0.5 years", "period │ year │ starts (years)", "│      2 │    1 │            0.5 │"} {
		if !strings.Contains(table, want) {
			t.Errorf("table lacks %q:\n%s", want, table)
		}
	}
}

// The simulation report is per calendar year and per period, and says it
// is a simulation.
func TestSimulationReport(t *testing.T) {
	f := testFleet(t, 0.5, []float64{10, 6, 1}, 9000, 3)
	r := planReport(t, f, false)
	sim, err := fleet.Simulate(context.Background(), f, r.Plan, fleet.FollowPlan, 100, 4, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	sr := &SimulationReport{Header: Header{Model: "test", Currency: "EUR"}, Fleet: f, Plan: r.Plan, Sim: sim, Seed: 4}
	var tb, jb bytes.Buffer
	if err := sr.WriteTable(&tb); err != nil {
		t.Fatal(err)
	}
	if err := sr.WriteJSON(&jb); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Follow  string
		Years   []struct{ Year int }
		Periods []struct{ Period, Year int }
	}
	if err := json.Unmarshal(jb.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Follow != "plan" || len(doc.Years) != 3 || len(doc.Periods) != 6 || doc.Periods[5].Year != 3 {
		t.Errorf("follow %q, %d years, %d periods", doc.Follow, len(doc.Years), len(doc.Periods))
	}
	if !strings.Contains(tb.String(), "simulation (Monte-Carlo) of 100 futures") {
		t.Errorf("table does not say it is a simulation:\n%s", tb.String())
	}
}
