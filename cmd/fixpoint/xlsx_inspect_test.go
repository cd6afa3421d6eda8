package main

import (
	"fmt"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"fixpoint/reports"
)

// The checks of the workbooks of inspection advice (solve), the
// inspection calendar (forecast) and robust advice (solve --robust)
// against the JSON output of the same run, and of the plan's condition
// mix.

const reliefValves = "../../configs/relief-valves.yaml"

// orNil is v, or nil for a JSON null.
func orNil(v any) any { return v }

// intervalLabel is how the fixed-interval sheet names an interval of k
// periods of py years: "6 months (2 periods)".
func intervalLabel(k, py float64) string {
	unit := "periods"
	if k == 1 {
		unit = "period"
	}
	return fmt.Sprintf("%s (%d %s)", reports.Duration(k*py), int(k), unit)
}

// longRunWant is the long-run cells of a row of the fixed-interval
// sheet, from a long_run object of the JSON (n/a when it is null).
func longRunWant(l map[string]any) []any {
	if l == nil {
		return []any{"n/a", "n/a", "n/a", "n/a", "n/a"}
	}
	return []any{l["epochs_per_year"], l["inspections_per_year"], l["call_outs_per_year"], l["hidden_days_per_unit_year"], l["cost_per_year"]}
}

func checkInspectionAdvice(t *testing.T, f *excelize.File, js map[string]any) {
	cur := str(js["currency"])
	py := js["period_years"].(float64)
	states := arr(js["states"])
	var advice, decisions [][]any
	for _, x := range states {
		st := obj(x)
		row := []any{st["state"], st["unsafe"], st["hidden"], st["advice"], st["action"], st["inspect_after"], st["inspect_after_years"],
			st["value"], st["lower"], st["upper"], nil, nil, orNil(st["margin"])}
		if ru := obj(st["runner_up"]); ru != nil {
			row[10], row[11] = ru["action"], ru["inspect_after"]
		}
		advice = append(advice, row)
		for _, d := range arr(st["decisions"]) {
			dc := obj(d)
			advised := dc["action"] == st["action"] && dc["inspect_after"] == st["inspect_after"]
			decisions = append(decisions, []any{st["state"], dc["action"], dc["inspect_after"], dc["inspect_after_years"], dc["q"], advised})
		}
	}
	checkTable(t, f, "Advice", advice)
	checkTable(t, f, "Decisions", decisions)

	cert := obj(js["certificate"])
	asAdvised := []any{"as advised", nil, nil}
	for range states {
		asAdvised = append(asAdvised, 0.0)
	}
	asAdvised = append(append(asAdvised, 0.0, nil), longRunWant(obj(js["long_run"]))...)
	fixed := [][]any{append(asAdvised, cert["status"])}
	for _, x := range arr(js["fixed_intervals"]) {
		fx := obj(x)
		k := fx["inspect_after"].(float64)
		row := []any{intervalLabel(k, py), k, fx["inspect_after_years"]}
		worst, at := 0.0, ""
		for i, s := range states {
			name := str(obj(s)["state"])
			e := obj(fx["extra_cost"])[name].(float64)
			row = append(row, e)
			if i == 0 || e > worst {
				worst, at = e, name
			}
		}
		if worst != fx["max_extra_cost"].(float64) {
			t.Errorf("fixed interval %g: the largest extra cost over the states is %g, the JSON's max_extra_cost %g", k, worst, fx["max_extra_cost"])
		}
		row = append(append(row, fx["max_extra_cost"], at), longRunWant(obj(fx["long_run"]))...)
		fixed = append(fixed, append(row, fx["status"]))
	}
	checkTable(t, f, "Fixed intervals", fixed)

	if l := obj(js["long_run"]); l != nil {
		facts := map[string]any{
			"inspections and call-outs per unit-year":                              l["epochs_per_year"],
			"scheduled inspections per unit-year":                                  l["inspections_per_year"],
			"call-outs after self-announcing failures per unit-year":               l["call_outs_per_year"],
			"mean periods between epochs":                                          l["periods_between_epochs"],
			"probability that an epoch (call-outs included) finds the unit unsafe": l["unsafe_at_epoch"],
			"days in a hidden failure, unseen, per unit-year":                      l["hidden_days_per_unit_year"],
			"years in a hidden failure, unseen, per unit-year":                     l["hidden_years_per_unit_year"],
			"long-run cost per unit-year (" + cur + ", undiscounted)":              l["cost_per_year"],
			"long-run cost per unit-period (" + cur + ", undiscounted)":            l["cost_per_period"],
		}
		if x := l["unsafe_at_inspection"]; x != nil {
			facts["probability that a scheduled inspection finds the unit unsafe"] = x
		}
		if x := l["hidden_at_inspection"]; x != nil {
			facts["probability that a scheduled inspection finds a hidden failure"] = x
		}
		for name, x := range obj(l["found"]) {
			facts["share of epochs that find the unit "+name] = x
		}
		checkFacts(t, f, "Summary", facts)
	}
	insp := obj(js["inspection"])
	checkFacts(t, f, "Assumptions", map[string]any{
		"period (years)": py, "discount rate per year": js["discount_rate"], "discount factor per period": js["discount_factor"],
		"proven gap (" + cur + ")": cert["max_gap"], "tolerance (" + cur + ")": cert["tolerance"], "Bellman residual (" + cur + ")": cert["bellman_residual"],
		"certificate":                   str(cert["status"]) + " (whether the proven gap is within the tolerance)",
		"inspection cost (" + cur + ")": insp["cost"], "downtime cost per inspection (" + cur + ")": insp["downtime_cost"],
		"limit on the interval (years, max_interval_years)": insp["max_interval_years"],
		"hidden failures (found only by an inspection)":     joinOrNone(arr(insp["hidden"])),
		"self-announcing failures":                          joinOrNone(arr(insp["self_announcing"])),
		"statutory":                                         js["statutory"], "limit": js["limit"], "timing": js["timing"],
		"model": js["model"], "caution": reports.Caution, "model limits": reports.ModelLimits,
	})
}

// joinOrNone joins names with ", ", or says "none".
func joinOrNone(names []any) string {
	if len(names) == 0 {
		return "none"
	}
	parts := make([]string, len(names))
	for i, n := range names {
		parts[i] = str(n)
	}
	return strings.Join(parts, ", ")
}

func checkInspectionCalendar(t *testing.T, f *excelize.File, js map[string]any) {
	cur := str(js["currency"])
	head, _ := sheetTable(t, f, "By year")
	actions := headsAfter(head[5:len(head)-6], 0, " (times taken)")
	var years [][]any
	for _, x := range arr(js["years"]) {
		y := obj(x)
		row := []any{y["year"], y["inspections"], y["inspections"].(float64) - y["call_outs"].(float64), y["call_outs"], y["unsafe_found"]}
		for _, a := range actions {
			row = append(row, obj(y["actions"])[a])
		}
		years = append(years, append(row, y["inspection_cost"], y["action_cost"], y["running_cost"], y["risk_cost"], y["total"], y["hidden_unit_years"]))
	}
	checkTable(t, f, "By year", years)
	var advice [][]any
	units := 0.0
	for _, x := range arr(js["advice"]) {
		st := obj(x)
		n := obj(js["start"])[str(st["state"])]
		units += n.(float64)
		advice = append(advice, []any{st["state"], st["unsafe"], st["hidden"], st["advice"], st["action"], st["inspect_after"], st["inspect_after_years"],
			st["value"], st["lower"], st["upper"], n})
	}
	checkTable(t, f, "Advice", advice)
	n := len(arr(js["years"]))
	checkFacts(t, f, "Summary", map[string]any{
		fmt.Sprintf("present value of the spend over %d years (%s)", n, cur): js["present_value"],
		"units": units, "years": n,
	})
	checkFacts(t, f, "Assumptions", map[string]any{"period (years)": js["period_years"], "discount factor per period": js["discount_factor"],
		"statutory": js["statutory"], "limit": js["limit"], "caution": reports.Caution})
}

// radiusWant is how the workbook shows a radius of the JSON: the number,
// or "whole simplex" (null, or an L1 radius of 2 or more).
func radiusWant(js map[string]any, r any) any {
	x, ok := r.(float64)
	if !ok || str(obj(js["robust"])["set"]) == "l1" && x >= 2 {
		return "whole simplex"
	}
	return x
}

func checkRobust(t *testing.T, f *excelize.File, js map[string]any) {
	cur := str(js["currency"])
	head, _ := sheetTable(t, f, "Robust advice")
	actions := headsAfter(head, 14, " now, then the robust advice, worst case ("+cur+")")
	states := arr(js["states"])
	var want [][]any
	var differs []string
	for _, x := range states {
		st := obj(x)
		d := st["nominal_action"] != st["action"]
		if d {
			differs = append(differs, str(st["state"]))
		}
		row := []any{st["state"], st["unsafe"], st["action"], st["worst_case"], st["lower"], st["upper"], st["nominal"], st["nominal_action"], d,
			st["nominal_value"], st["nominal_worst_case"], st["price"], orNil(st["runner_up"]), orNil(st["margin"])}
		for _, a := range actions {
			row = append(row, numOrNil(obj(st["q"])[a]))
		}
		want = append(want, row)
	}
	checkTable(t, f, "Robust advice", want)
	// The nominal advice is bold on a tint where it differs, and nowhere
	// else; the conditions are the JSON's differs.
	for i, x := range states {
		ref, _ := excelize.CoordinatesToCellName(8, i+firstRow)
		d := obj(x)["nominal_action"] != obj(x)["action"]
		if got := markedCell(t, f, "Robust advice", ref); got != d {
			t.Errorf("Robust advice!%s: marked %v, want %v (the nominal advice differs)", ref, got, d)
		}
	}
	rob := obj(js["robust"])
	if got := joinOrNone(arr(rob["differs"])); got != joinOrNone(anySlice(differs)) {
		t.Errorf("robust.differs %q, the states' nominal_action differ in %q", got, differs)
	}

	var settle [][]any
	for i, x := range arr(js["settle"]) {
		g := obj(x)
		obs := any("-")
		switch {
		case g["exact"] == true:
			obs = "none"
		case g["observations"] != nil:
			obs = g["observations"]
		}
		newR := radiusWant(js, g["new_radius"])
		if g["exact"] == true {
			newR = 0.0
		}
		most, changes := any(g["max_state"]), "none"
		var parts []string
		for _, s := range states { // in scale order
			name := str(obj(s)["state"])
			if a, ok := obj(g["advice_changes"])[name]; ok {
				parts = append(parts, name+": "+str(a))
			}
		}
		if len(parts) > 0 {
			changes = strings.Join(parts, ", ")
		}
		if g["screened"] == true {
			most, changes = "-", "cannot change the answer"
		}
		settle = append(settle, []any{i + 1, g["action"], g["state"], obs, radiusWant(js, g["radius"]), newR, g["max_change"], most, changes,
			g["screened"], g["accuracy"], g["status"]})
	}
	checkTable(t, f, "Settle", settle)

	var sets [][]any
	for _, x := range arr(js["sets"]) {
		s := obj(x)
		radius := radiusWant(js, s["radius"])
		if s["whole_simplex"] == true {
			radius = "whole simplex"
		}
		obs := any("-")
		if s["observations"] != nil {
			obs = s["observations"]
		}
		support := joinOrNone(arr(s["support"]))
		sets = append(sets, []any{s["state"], s["action"], radius, obs, support, joinOrNone(arr(s["widened"]))})
	}
	checkTable(t, f, "Sets", sets)

	radius := any("per row (see the Sets sheet)")
	if rob["radius"] != nil {
		radius = radiusWant(js, rob["radius"])
	}
	confidence := any("none (the radii were given, not derived from records)")
	if rob["confidence"] != nil {
		confidence = rob["confidence"]
	}
	first := obj(states[0])
	name := str(first["state"])
	checkFacts(t, f, "Summary", map[string]any{
		"radius of every row": radius, "confidence": confidence,
		"how sure (the statement the confidence supports)":                   js["statement"],
		"price of robustness (" + cur + ", the most over conditions)":        rob["price_of_robustness"],
		"price of robustness reached in":                                     js["price_state"],
		"conditions where the robust advice differs from the nominal advice": joinOrNone(arr(rob["differs"])),
		"worst case from " + name + " (" + cur + ")":                         first["worst_case"],
		"under nominal matrices from " + name + " (" + cur + ")":             first["nominal"],
		"nominal optimum from " + name + " (" + cur + ")":                    first["nominal_value"],
	})
	cert, nom := obj(js["certificate"]), obj(js["nominal_certificate"])
	checkFacts(t, f, "Assumptions", map[string]any{
		"period (years)": js["period_years"], "discount rate per year": js["discount_rate"], "discount factor per period": js["discount_factor"],
		"confidence statement":     js["statement"],
		"proven gap (" + cur + ")": cert["max_gap"], "evaluation gap (" + cur + ")": cert["evaluation_gap"],
		"tolerance (" + cur + ")": cert["tolerance"], "robust Bellman residual (" + cur + ")": cert["bellman_residual"],
		"inner-problem tolerance (" + cur + ", KL sets; 0 for L1, solved exactly)": cert["inner_tolerance"],
		"nominal certificate": nom["status"], "nominal proven gap (" + cur + ")": nom["max_gap"],
		"thresholds": js["thresholds"], "caution": reports.Caution, "model limits": reports.ModelLimits,
	})
}

func anySlice(xs []string) []any {
	out := make([]any, len(xs))
	for i, x := range xs {
		out[i] = x
	}
	return out
}

// checkMix checks the plan's Condition mix sheet: per calendar year the
// share of each class's expected units in each condition, at the start
// of the first period that starts in the year (else of the period the
// year lies in), computed here from the periods of the JSON.
func checkMix(t *testing.T, f *excelize.File, js map[string]any) {
	head, _ := sheetTable(t, f, "Condition mix")
	periods := arr(js["periods"])
	var want [][]any
	for _, x := range arr(js["years"]) {
		y := int(obj(x)["year"].(float64))
		// The first period whose year is y, else the last one before it.
		var p map[string]any
		for _, q := range periods {
			if py := int(obj(q)["year"].(float64)); py < y || py == y && (p == nil || int(p["year"].(float64)) < y) {
				p = obj(q)
			}
		}
		row := []any{y}
		totals := map[string]float64{}
		for class, cs := range obj(p["expected_counts"]) {
			for _, n := range obj(cs) {
				totals[class] += n.(float64)
			}
		}
		for _, h := range head[1:] {
			class, state, ok := strings.Cut(h, ": ")
			if !ok {
				t.Fatalf("Condition mix: heading %q is not class: condition", h)
			}
			n, ok := obj(obj(p["expected_counts"])[class])[state].(float64)
			if !ok {
				t.Fatalf("Condition mix: heading %q names no class and condition of the plan", h)
			}
			row = append(row, n/totals[class])
		}
		want = append(want, row)
	}
	checkTable(t, f, "Condition mix", want)
}
