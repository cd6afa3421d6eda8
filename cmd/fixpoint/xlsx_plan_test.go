package main

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"fixpoint/reports"
)

// The checks of the fleet workbooks (plan, plan --rates, forecast
// --simulate) against the JSON output of the same run.

// planLead is the leading cells of a per-period row: the period and,
// unless periods are one year, its calendar year and its start in years.
func planLead(p map[string]any, periodYears float64) []any {
	if periodYears == 1 {
		return []any{p["period"]}
	}
	return []any{p["period"], p["year"], p["start_years"]}
}

// keyedRows returns the rows of a long sheet keyed by the text cells
// from column lead on (class, condition[, action]), each row's numbers
// to be compared by the caller; it fails when the sheet and the JSON
// hold different numbers of rows.
func keyedRows(t *testing.T, f *excelize.File, sheet string, keys, want int) [][]any {
	t.Helper()
	_, rows := sheetTable(t, f, sheet)
	if len(rows) != want {
		t.Errorf("%s: %d rows, want %d (one per entry of the JSON)", sheet, len(rows), want)
	}
	for i, r := range rows {
		for _, c := range r[:keys] {
			if c == nil {
				t.Fatalf("%s row %d: an empty key cell in %v", sheet, i+firstRow, r)
			}
		}
	}
	return rows
}

func checkPlan(t *testing.T, f *excelize.File, js map[string]any) {
	cur := str(js["currency"])
	py := js["period_years"].(float64)
	problem := obj(js["problem"])
	mandatoryFirst := problem["kind"] == "mandatory_first"
	practice := obj(js["simulated_practice"]) != nil

	var years [][]any
	for _, x := range arr(js["years"]) {
		y := obj(x)
		rule := strings.ReplaceAll(str(y["rule"]), "_", " ")
		row := []any{y["year"], y["budget"], rule}
		if py != 1 {
			var ps []string
			for _, k := range arr(y["periods"]) {
				ps = append(ps, fmt.Sprint(k))
			}
			row = append(row, map[bool]string{true: "none", false: strings.Join(ps, ", ")}[len(ps) == 0])
		}
		price := y["budget_price"]
		if rule != "within budget" {
			price = "-" // no budget row in that year
		}
		row = append(row, y["planned_spend"], y["planned_mandatory_spend"], price)
		if mandatoryFirst {
			row = append(row, y["least_excess"])
		}
		if practice {
			q := obj(y["practice_spend"])
			row = append(row, q["p10"], q["p50"], q["p90"], q["mean"], y["practice_over_budget_share"])
		}
		years = append(years, row)
	}
	checkTable(t, f, "By year", years)

	// The work list: class, condition, action and units from the JSON; the
	// cost of each line (units times the action's cost, not in the JSON)
	// summed to the list's spend, which the plan computes on its own (the
	// demo's passive actions cost nothing).
	wl := obj(js["work_list"])
	_, got := sheetTable(t, f, "Work list")
	var work [][]any
	total := 0.0
	for i, x := range arr(wl["work"]) {
		w := obj(x)
		cost := any(nil)
		if i < len(got) {
			cost = got[i][4]
			c, _ := cost.(float64)
			total += c
		}
		work = append(work, []any{w["class"], w["state"], w["action"], w["units"], cost})
	}
	checkTable(t, f, "Work list", work)
	if spend := wl["spend"].(float64); math.Abs(total-spend) > workbookTol*spend {
		t.Errorf("Work list: costs sum to %g, want the work list's spend %g (rel tol %g)", total, spend, workbookTol)
	}

	periods := arr(js["periods"])
	var byPeriod [][]any
	shares := 0
	for _, x := range periods {
		p := obj(x)
		byPeriod = append(byPeriod, append(planLead(p, py), p["planned_spend"], p["expected_unsafe_units"], p["expected_deferred_units"]))
		for _, cls := range obj(p["shares"]) {
			for _, st := range obj(cls) {
				shares += len(obj(st))
			}
		}
	}
	checkTable(t, f, "By period", byPeriod)

	// Shares and expected units: one row per period, class, condition
	// (and action), in the workbook's order; the numbers are looked up in
	// the JSON by the row's names.
	lead := len(planLead(obj(periods[0]), py))
	period := func(r []any) map[string]any { return obj(periods[int(r[0].(float64))-1]) }
	var want [][]any
	for _, r := range keyedRows(t, f, "Shares", lead+3, shares) {
		p := period(r)
		class, state, action := str(r[lead]), str(r[lead+1]), str(r[lead+2])
		share := obj(obj(obj(p["shares"])[class])[state])[action]
		count := obj(obj(p["expected_counts"])[class])[state]
		units := any(nil)
		if s, ok := share.(float64); ok {
			units = s * count.(float64)
		}
		want = append(want, append(planLead(p, py), class, state, action, share, units))
	}
	checkTable(t, f, "Shares", want)
	counts := 0
	for _, x := range periods {
		for _, cls := range obj(obj(x)["expected_counts"]) {
			counts += len(obj(cls))
		}
	}
	want = nil
	unsafe := make([]float64, len(periods))
	for _, r := range keyedRows(t, f, "Expected units", lead+3, counts) {
		p := period(r)
		class, state := str(r[lead]), str(r[lead+1])
		x := obj(obj(p["expected_counts"])[class])[state]
		want = append(want, append(planLead(p, py), class, state, r[lead+2], x))
		if r[lead+2] == "yes" {
			unsafe[int(r[0].(float64))-1] += x.(float64)
		}
	}
	checkTable(t, f, "Expected units", want)
	// The unsafe flags add up to the plan's expected units in unsafe
	// conditions.
	for k, x := range periods {
		if w := obj(x)["expected_unsafe_units"].(float64); math.Abs(unsafe[k]-w) > 1e-9*math.Max(1, w) {
			t.Errorf("Expected units: period %d: %g units in conditions marked unsafe, the plan has %g", k+1, unsafe[k], w)
		}
	}

	checkMix(t, f, js)
	if cal := obj(js["inspection_calendar"]); cal != nil {
		checkInspections(t, f, cal)
	}

	facts := map[string]any{
		"problem solved":  problem["statement"],
		"kind of problem": problem["kind"],
		"lower bound, proven (" + cur + ", present value)":                                         js["lower_bound"],
		"plan found (" + cur + ", present value)":                                                  js["fluid_cost"],
		"gap, relative ((plan found - lower bound) / plan found)":                                  js["gap"],
		"optimum without budgets (" + cur + ", present value)":                                     js["unconstrained_cost"],
		"cost of the budget (plan found less the optimum without budgets, " + cur + ")":            js["cost_of_budget"],
		"cost of the budget, at least (lower bound less the optimum without budgets, " + cur + ")": js["cost_of_budget_at_least"],
		"column-generation rounds":                                                                 js["rounds"],
		"linear programs solved":                                                                   js["programs"],
		"work list spend, period 1 (" + cur + ")":                                                  wl["spend"],
		"of which mandatory (" + cur + ")":                                                         wl["mandatory_spend"],
		"what period 1 may spend (" + cur + ")":                                                    wl["limit"],
		"units deferred in period 1":                                                               wl["deferred"],
	}
	if mandatoryFirst {
		facts["largest proven gap of the programs that found them ("+cur+")"] = problem["least_excess_gap"]
	}
	if practice {
		c := obj(obj(js["simulated_practice"])["cost"])
		for item, key := range map[string]string{"present cost, mean": "mean", "standard error of the mean": "se", "P10": "p10", "median": "p50", "P90": "p90"} {
			facts["simulated practice: "+item+" ("+cur+")"] = c[key]
		}
	}
	checkFacts(t, f, "Summary", facts)
	checkFacts(t, f, "Assumptions", map[string]any{"period (years)": py, "discount factor per period": js["discount_factor"],
		"caution": reports.Caution, "model limits": reports.ModelLimits})
}

// checkInspections checks the Inspections sheet: a row per year and
// class, then the year's total when there are several classes (summed
// here from the classes of the JSON).
func checkInspections(t *testing.T, f *excelize.File, cal map[string]any) {
	classes := arr(cal["classes"])
	var want [][]any
	for y := range arr(obj(classes[0])["years"]) {
		n, cost := 0.0, 0.0
		for _, c := range classes {
			cy := obj(arr(obj(c)["years"])[y])
			n += cy["inspections"].(float64)
			cost += cy["inspection_cost"].(float64)
			want = append(want, []any{cy["year"], obj(c)["class"], cy["inspections"], cy["call_outs"], cy["inspection_cost"]})
		}
		if len(classes) > 1 {
			want = append(want, []any{y + 1, "all classes", n, nil, cost})
		}
	}
	checkTable(t, f, "Inspections", want)
}

// rateLabel is how the workbook heads the column of a rate: 5.00%.
func rateLabel(rate float64) string { return fmt.Sprintf("%.2f%%", rate*100) }

func checkPlanRates(t *testing.T, f *excelize.File, js map[string]any) {
	rates := arr(js["rates"])
	var bounds [][]any
	for _, x := range rates {
		r := obj(x)
		bounds = append(bounds, []any{r["rate"], r["discount_factor"], r["problem"], r["lower_bound"], r["fluid_cost"], r["gap"],
			r["unconstrained_cost"], r["cost_of_budget"]})
	}
	checkTable(t, f, "Bounds by rate", bounds)
	for _, m := range []struct{ sheet, key string }{{"Planned spend", "planned_spend"}, {"Mandatory spend", "planned_mandatory_spend"},
		{"Deferred units", "deferred_units"}, {"Budget price", "budget_price"}} {
		var want [][]any
		for y, x := range arr(obj(rates[0])["years"]) {
			row := []any{obj(x)["year"], obj(x)["budget"]}
			var changed []string
			for _, r := range rates {
				ry := obj(arr(obj(r)["years"])[y])
				row = append(row, ry[m.key])
				if ry["changed"] == true {
					changed = append(changed, rateLabel(obj(r)["rate"].(float64)))
				}
			}
			ch := any(nil)
			if len(changed) > 0 {
				ch = strings.Join(changed, ", ")
			}
			want = append(want, append(row, ch))
		}
		head := checkTable(t, f, m.sheet, want)
		for i, r := range rates {
			if want := rateLabel(obj(r)["rate"].(float64)); 2+i >= len(head) || head[2+i] != want {
				t.Errorf("%s: heading of column %d is %q, want %q", m.sheet, 3+i, head[min(2+i, len(head)-1)], want)
			}
		}
		// A year whose plan changed is bold on a tint at its rate, and no
		// other cell is.
		for y := range want {
			for i, r := range rates {
				ref, _ := excelize.CoordinatesToCellName(3+i, y+firstRow)
				changed := obj(arr(obj(r)["years"])[y])["changed"] == true
				if got := markedCell(t, f, m.sheet, ref); got != changed {
					t.Errorf("%s!%s: marked %v, want %v (the JSON's changed)", m.sheet, ref, got, changed)
				}
			}
		}
	}
	checkFacts(t, f, "Assumptions", map[string]any{"period (years)": js["period_years"]})
}

// markTint is the fill of a marked cell (reports' markTint).
const markTint = "B2D6CC"

// markedCell reports whether a cell is bold on the mark's tint.
func markedCell(t *testing.T, f *excelize.File, sheet, ref string) bool {
	t.Helper()
	id, err := f.GetCellStyle(sheet, ref)
	if err != nil {
		t.Fatal(err)
	}
	st, err := f.GetStyle(id)
	if err != nil {
		t.Fatal(err)
	}
	tinted := st.Fill.Pattern == 1 && len(st.Fill.Color) == 1 && strings.EqualFold(st.Fill.Color[0], markTint)
	return tinted && st.Font != nil && st.Font.Bold
}

// checkPlanRatesChanged is checkPlanRates for a case whose plans must
// differ in some year, so that the marks are seen.
func checkPlanRatesChanged(t *testing.T, f *excelize.File, js map[string]any) {
	n := 0
	for _, r := range arr(js["rates"]) {
		for _, y := range arr(obj(r)["years"]) {
			if obj(y)["changed"] == true {
				n++
			}
		}
	}
	if n == 0 {
		t.Fatal("test bug: no plan differs from the one at the rate to its left; choose rates that change the plan")
	}
	checkPlanRates(t, f, js)
}

func checkSimulation(t *testing.T, f *excelize.File, js map[string]any) {
	head, _ := sheetTable(t, f, "By year")
	cur := strings.TrimSuffix(strings.TrimPrefix(head[1], "budget ("), ")") // the simulation's JSON names no currency
	var years [][]any
	for _, x := range arr(js["years"]) {
		y := obj(x)
		s, tot := obj(y["spend"]), obj(y["total"])
		years = append(years, []any{y["year"], y["budget"], s["p10"], s["p50"], s["p90"], s["mean"], s["se"], y["expected_spend"],
			y["over_budget_share"], tot["p10"], tot["p50"], tot["p90"], tot["mean"]})
	}
	checkTable(t, f, "By year", years)

	periods := arr(js["periods"])
	head, _ = sheetTable(t, f, "Units per period")
	lead := len(head) - 8 // period (year, start), class, condition, six numbers
	entries := 0
	for _, x := range periods {
		for _, cls := range obj(obj(x)["units"]) {
			entries += len(obj(cls))
		}
	}
	var want [][]any
	for _, r := range keyedRows(t, f, "Units per period", lead+2, entries) {
		k := int(r[0].(float64)) - 1
		p := obj(periods[k])
		class, state := str(r[lead]), str(r[lead+1])
		q := obj(obj(obj(p["units"])[class])[state])
		row := []any{p["period"]}
		if lead == 3 {
			row = append(row, p["year"], r[2]) // the start in years is not in the JSON
		}
		want = append(want, append(row, class, state, q["p10"], q["p50"], q["p90"], q["mean"], q["se"], obj(obj(p["expected_units"])[class])[state]))
	}
	checkTable(t, f, "Units per period", want)

	c := obj(js["cost"])
	expected := "the expected-count forecast of the same rule"
	if js["follow"] == "practice" {
		expected = "the plan's own expected cost (expected-count model)"
	}
	checkFacts(t, f, "Summary", map[string]any{
		"present cost, mean (" + cur + ")": c["mean"], "standard error of the mean (" + cur + ")": c["se"],
		"P10 (" + cur + ")": c["p10"], "median (" + cur + ")": c["p50"], "P90 (" + cur + ")": c["p90"],
		expected + " (" + cur + ")": js["expected_cost"],
	})
	checkFacts(t, f, "Assumptions", map[string]any{"futures simulated": js["runs"], "caution": reports.Caution})
}

// formulaFleet is the demo fleet with names a spreadsheet would take for
// formulas (OWASP, "CSV Injection", lists = + - @ as the characters that
// start one; fleet names may not hold "=", which separates names in
// --mix).
func formulaFleet(t *testing.T) string {
	edits := map[string][]string{
		"east-zone.yaml":          {`"Kestrel Valley east zone assets (invented demo)"`, `'=HYPERLINK("http://example.invalid","open me")'`, "pumps: pumps.yaml", `"+pumps": pumps.yaml`},
		"pumps.yaml":              {"sound", `"-sound"`, "heavy_wear", `"@heavy_wear"`},
		"east-zone-inventory.csv": {",pumps,", ",+pumps,", "sound,", "-sound,", "heavy_wear,", "@heavy_wear,"},
	}
	return copyFleetWith(t, func(name, text string) string {
		if e, ok := edits[name]; ok {
			return strings.NewReplacer(e...).Replace(text)
		}
		return text
	})
}
