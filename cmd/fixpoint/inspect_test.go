package main

import (
	"encoding/json"
	"math"
	"os"
	"strings"
	"testing"

	"fixpoint/reports"
)

// The invented relief-valve demo: a class config with an inspection block,
// and a fleet of it.
const (
	demoRelief      = "../../configs/relief-valves.yaml"
	demoReliefFleet = "../../configs/relief-fleet.yaml"
)

// solveJSON runs solve --format json and decodes the output.
func solveJSON(t *testing.T, args ...string) map[string]any {
	t.Helper()
	code, out, stderr := runCLI(t, append([]string{"solve", "--format", "json"}, args...)...)
	if code != 0 {
		t.Fatalf("solve %v: exit %d: %s", args, code, stderr)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("solve %v: %v", args, err)
	}
	return doc
}

// With inspection cost 0, one allowed interval of 1 period and no hidden
// failures the inspection model is today's MDP exactly (issue 14's
// reduction; the timing convention of optimize/inspect's package comment):
// the same action and, to the tolerance, the same value in every state.
func TestInspectionReduction(t *testing.T) {
	pumps, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	const block = "inspection: {cost: 0, intervals: [1], max_interval_years: 1}\n"
	for _, tc := range []struct {
		name, config string
	}{
		{"base", base},
		{"pumps", string(pumps)},
		{"pumps with downtime 0 and empty lists", string(pumps) + "\n"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			plain := writeFile(t, "plain.yaml", tc.config)
			extra := block
			if strings.Contains(tc.name, "empty lists") {
				extra = "inspection:\n  cost: 0\n  downtime_cost: 0\n  intervals: [1]\n  hidden: []\n  risk_cost: {}\n  max_interval_years: 1\n"
			}
			joint := writeFile(t, "joint.yaml", tc.config+"\n"+extra)
			const tol = 1e-7
			want := solveJSON(t, plain, "--tol", "1e-8")
			got := solveJSON(t, joint, "--tol", "1e-8")
			ws, gs := want["states"].([]any), got["states"].([]any)
			if len(ws) != len(gs) {
				t.Fatalf("%d states with the block, %d without", len(gs), len(ws))
			}
			for i := range ws {
				w, g := ws[i].(map[string]any), gs[i].(map[string]any)
				if g["action"] != w["action"] {
					t.Errorf("state %v: action %v with the block, %v without", w["state"], g["action"], w["action"])
				}
				if g["inspect_after"] != 1.0 {
					t.Errorf("state %v: inspect_after %v, want 1 (the only interval)", w["state"], g["inspect_after"])
				}
				for _, k := range []string{"value", "lower", "upper"} {
					if d := math.Abs(g[k].(float64) - w[k].(float64)); d > tol*max(1, math.Abs(w[k].(float64))) {
						t.Errorf("state %v: %s = %g with the block, %g without (tol %g)", w["state"], k, g[k], w[k], tol)
					}
				}
			}
		})
	}
}

// The solve JSON carries, for every state, inspect_after (periods) and
// inspect_after_years beside action, value, lower and upper; the advised
// interval is never above the limit; an unsafe state never gets the
// passive action; the statutory rule and the caution are there.
func TestInspectionSolveJSON(t *testing.T) {
	doc := solveJSON(t, demoRelief)
	for _, k := range []string{"model", "currency", "discount_factor", "method", "iterations", "inspection", "states",
		"fixed_intervals", "long_run", "certificate", "statutory", "limit", "timing", "caution"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("missing key %q", k)
		}
	}
	period := doc["period_years"].(float64)
	insp := doc["inspection"].(map[string]any)
	limit := insp["max_interval_years"].(float64)
	for _, s := range doc["states"].([]any) {
		st := s.(map[string]any)
		for _, k := range []string{"state", "unsafe", "hidden", "action", "inspect_after", "inspect_after_years", "value", "lower", "upper", "runner_up", "margin", "decisions"} {
			if _, ok := st[k]; !ok {
				t.Errorf("state %v: missing key %q", st["state"], k)
			}
		}
		k, years := st["inspect_after"].(float64), st["inspect_after_years"].(float64)
		if k != math.Trunc(k) || k < 1 {
			t.Errorf("state %v: inspect_after %v is not a whole number of periods", st["state"], k)
		}
		if math.Abs(years-k*period) > 1e-12 {
			t.Errorf("state %v: inspect_after_years = %g, want %g periods × %g = %g", st["state"], years, k, period, k*period)
		}
		if years > limit*(1+1e-9) {
			t.Errorf("state %v: advised interval %g years is above the limit %g", st["state"], years, limit)
		}
		lo, v, hi := st["lower"].(float64), st["value"].(float64), st["upper"].(float64)
		if !(lo <= v+1e-9 && v <= hi+1e-9) {
			t.Errorf("state %v: lower %g <= value %g <= upper %g fails", st["state"], lo, v, hi)
		}
		if st["unsafe"] == true && st["action"] == "leave" {
			t.Errorf("unsafe state %v advised the passive action", st["state"])
		}
		// The value is the least Q-value over the decisions listed.
		best := math.Inf(1)
		for _, d := range st["decisions"].([]any) {
			best = min(best, d.(map[string]any)["q"].(float64))
		}
		if math.Abs(best-v) > 1e-3 {
			t.Errorf("state %v: value %g, least Q-value %g (tol 1e-3, the tolerance)", st["state"], v, best)
		}
	}
	fixed := doc["fixed_intervals"].([]any)
	if got, want := len(fixed), len(insp["admissible_intervals"].([]any)); got != want {
		t.Errorf("%d fixed intervals, want one per admissible interval (%d)", got, want)
	}
	for _, f := range fixed {
		fj := f.(map[string]any)
		for state, x := range fj["extra_cost"].(map[string]any) {
			// A fixed habit is one of the advice's options: it cannot beat
			// the optimum by more than the two certified gaps.
			if x.(float64) < -2e-3 {
				t.Errorf("every %v periods: extra cost %g in %s is below -2·tol", fj["inspect_after"], x, state)
			}
		}
	}
	if len(insp["excluded_intervals"].([]any)) != 1 {
		t.Errorf("excluded_intervals = %v, want [12] (3 years above the 2-year limit)", insp["excluded_intervals"])
	}
	if doc["statutory"] != reports.InspectionRule || !strings.Contains(doc["caution"].(string), "Advisory only") {
		t.Errorf("statutory %q, caution %q", doc["statutory"], doc["caution"])
	}
}

func TestInspectionGolden(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"solve-relief-valves", []string{"solve", demoRelief}},
		{"forecast-relief-valves", []string{"forecast", demoRelief, "--mix", "good=30,sluggish=8,stuck=2", "--years", "4"}},
	} {
		for _, format := range []string{"table", "json", "csv"} {
			t.Run(tc.name+"/"+format, func(t *testing.T) {
				code, out, stderr := runCLI(t, append(tc.args, "--format", format)...)
				if code != 0 {
					t.Fatalf("exit %d: %s", code, stderr)
				}
				golden(t, tc.name+"."+format, out)
			})
		}
	}
}

// Every output of every command that uses an inspection block (table,
// JSON, CSV) says that the statutory interval and a competent person's
// scheme of examination take precedence over the advised interval.
func TestInspectionStatutoryRuleEverywhere(t *testing.T) {
	rule := strings.Join(strings.Fields(reports.InspectionRule), " ")
	for _, args := range [][]string{
		{"solve", demoRelief},
		{"forecast", demoRelief, "--from", "good", "--units", "10", "--years", "2"},
		{"plan", demoReliefFleet, "--simulate", "0"},
	} {
		for _, format := range []string{"table", "json", "csv"} {
			t.Run(args[0]+"/"+format, func(t *testing.T) {
				code, out, stderr := runCLI(t, append(args, "--format", format)...)
				if code != 0 {
					t.Fatalf("exit %d: %s", code, stderr)
				}
				// Tables wrap lines; compare word by word.
				if text := strings.Join(strings.Fields(strings.ReplaceAll(out, "\n  ", " ")), " "); !strings.Contains(text, rule) {
					t.Errorf("%s --format %s lacks the statutory rule:\n%s", args[0], format, out)
				}
				if !strings.Contains(out, "Advisory only") {
					t.Errorf("%s --format %s lacks the caution", args[0], format)
				}
			})
		}
	}
}

// The forecast's calendar, propagated period by period, and the long-run
// figures of solve, from the stationary distribution of the states found
// (renewal-reward theorem; optimize/inspect's package comment), are two
// computations of the same rate: averaged over years 21-40 the calendar's
// inspections per unit-year approach solve's epochs_per_year.
func TestInspectionCalendarMatchesLongRun(t *testing.T) {
	doc := solveJSON(t, demoRelief)
	rate := doc["long_run"].(map[string]any)["epochs_per_year"].(float64)
	code, out, stderr := runCLI(t, "forecast", demoRelief, "--from", "good", "--units", "100", "--years", "40", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var fc struct {
		Years []struct {
			Year        int     `json:"year"`
			Inspections float64 `json:"inspections"`
		} `json:"years"`
	}
	if err := json.Unmarshal([]byte(out), &fc); err != nil {
		t.Fatal(err)
	}
	if len(fc.Years) != 40 || fc.Years[0].Inspections < 100 {
		t.Fatalf("%d years, year 1 %g inspections; want 40 years and every unit inspected at time 0", len(fc.Years), fc.Years[0].Inspections)
	}
	sum := 0.0
	for _, y := range fc.Years[20:] {
		sum += y.Inspections
	}
	got, want := sum/20/100, rate
	if math.Abs(got-want) > 0.01*want {
		t.Errorf("calendar: %g inspections per unit-year over years 21-40, long run %g (tol 1%%)", got, want)
	}
}

// The fleet plan reports the inspection calendar of its classes beside
// the budget plan, in every format, and says what the plan assumes.
func TestInspectionPlanCalendar(t *testing.T) {
	code, out, stderr := runCLI(t, "plan", demoReliefFleet, "--simulate", "0", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Calendar *struct {
			Assumption string `json:"assumption"`
			Classes    []struct {
				Class string `json:"class"`
				Years []struct {
					Year           int     `json:"year"`
					Inspections    float64 `json:"inspections"`
					InspectionCost float64 `json:"inspection_cost"`
				} `json:"years"`
			} `json:"classes"`
		} `json:"inspection_calendar"`
		Horizon int `json:"horizon_years"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Calendar == nil || len(doc.Calendar.Classes) != 1 {
		t.Fatalf("inspection_calendar = %+v, want one class", doc.Calendar)
	}
	c := doc.Calendar.Classes[0]
	if len(c.Years) != doc.Horizon {
		t.Errorf("%d calendar years, plan horizon %d", len(c.Years), doc.Horizon)
	}
	// 24 units in the inventory, each inspected at the start of year 1;
	// the inspection costs 90 + 30 downtime (configs/relief-valves.yaml).
	if c.Years[0].Inspections < 24 {
		t.Errorf("year 1: %g inspections, want at least the 24 units of the inventory", c.Years[0].Inspections)
	}
	for _, y := range c.Years {
		if d := math.Abs(y.InspectionCost - 120*y.Inspections); d > 1e-6 {
			t.Errorf("year %d: inspection cost %g, want 120 × %g inspections", y.Year, y.InspectionCost, y.Inspections)
		}
	}
	if !strings.Contains(doc.Calendar.Assumption, "no inspection cost") {
		t.Errorf("assumption = %q", doc.Calendar.Assumption)
	}
	code, out, stderr = runCLI(t, "plan", demoReliefFleet, "--simulate", "0", "--format", "csv")
	if code != 0 {
		t.Fatalf("csv: exit %d: %s", code, stderr)
	}
	if !strings.Contains(out, "class_year_inspections,class_year_inspection_cost") || !strings.Contains(out, "# inspections: The budget plan assumes") {
		t.Errorf("plan CSV lacks the inspection columns or the assumption:\n%s", out)
	}
	code, out, _ = runCLI(t, "plan", demoFleet, "--simulate", "0", "--format", "csv")
	if code != 0 || strings.Contains(out, "class_year_inspections") {
		t.Errorf("a fleet without inspection blocks: exit %d, inspection columns present", code)
	}
}

// Faults of an inspection block are located: file, line, field path and
// problem, with every fault of the file listed at once.
func TestInspectionConfigFaults(t *testing.T) {
	const good = "inspection:\n  cost: 50\n  intervals: [1, 2, 4]\n  hidden: [failed]\n  risk_cost: {failed: 900}\n  max_interval_years: 4\n"
	// base has 23 lines; the block starts at line 24.
	for _, tc := range []struct {
		name, old, new string
		want           []string
	}{
		{"unknown hidden state", "hidden: [failed]", "hidden: [faild]",
			[]string{`bad.yaml:27: inspection.hidden[0]: unknown state "faild"; did you mean "failed"?`}},
		{"hidden state not unsafe", "hidden: [failed]", "hidden: [worn]",
			[]string{`bad.yaml:27: inspection.hidden[0]: state "worn" is not unsafe; only an unsafe state can be a hidden failure`}},
		{"intervals not increasing", "[1, 2, 4]", "[1, 4, 2]",
			[]string{"bad.yaml:26: inspection.intervals[2]: an interval of 2 periods does not exceed the one before (4)"}},
		{"limit leaves no interval", "max_interval_years: 4", "max_interval_years: 0.5",
			[]string{"bad.yaml:29: inspection.max_interval_years: the shortest allowed interval, 1 periods (1 years), exceeds the limit of 0.5 years; no interval is admissible"}},
		{"interval not whole", "[1, 2, 4]", "[1, 2.5, 4]", []string{"bad.yaml:26: inspection.intervals[1]: want a whole number, got the number 2.5"}},
		{"interval zero", "[1, 2, 4]", "[0, 2, 4]", []string{"bad.yaml:26: inspection.intervals[0]: an interval of 0 periods is outside 1..10000 periods"}},
		{"no intervals", "[1, 2, 4]", "[]", []string{"bad.yaml:26: inspection.intervals: no interval is allowed"}},
		{"missing limit", "  max_interval_years: 4\n", "", []string{`bad.yaml:25: inspection.max_interval_years: missing required key "max_interval_years"`}},
		{"missing cost", "  cost: 50\n", "", []string{`inspection.cost: missing required key "cost"`}},
		{"negative cost", "cost: 50", "cost: -5", []string{"bad.yaml:25: inspection.cost: inspection cost -5 is not a finite number >= 0"}},
		{"nan limit", "max_interval_years: 4", "max_interval_years: .nan", []string{"bad.yaml:29: inspection.max_interval_years: .nan is not a finite number"}},
		{"risk cost of a state not hidden", "{failed: 900}", "{failed: 900, worn: 10}",
			[]string{`bad.yaml:28: inspection.risk_cost.worn: state "worn" has a risk cost but is not a hidden failure state`}},
		{"risk cost unknown state", "{failed: 900}", "{failed: 900, wron: 10}", []string{`bad.yaml:28: inspection.risk_cost.wron: unknown state "wron"`}},
		{"unknown key", "  cost: 50\n", "  cost: 50\n  costs: 5\n", []string{`bad.yaml:26: inspection.costs: unknown key "costs"; did you mean "cost"?`}},
		{"not a mapping", good, "inspection: 5\n", []string{"bad.yaml:24: inspection: want a mapping (key: value lines), got the number 5"}},
		{"average criterion", "inspection:\n", "criterion: average\ninspection:\n",
			[]string{"bad.yaml:25: inspection: the inspection model is solved under the discounted criterion"}},
		{"several at once", "hidden: [failed]", "hidden: [worn]\n  downtime_cost: -1",
			[]string{`inspection.hidden[0]: state "worn" is not unsafe`, "bad.yaml:28: inspection.downtime_cost: downtime cost -1 is not a finite number >= 0",
				`inspection.risk_cost.failed: state "failed" has a risk cost but is not a hidden failure state`}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if !strings.Contains(good, tc.old) {
				t.Fatalf("test bug: %q not in the block", tc.old)
			}
			path := writeFile(t, "bad.yaml", base+strings.Replace(good, tc.old, tc.new, 1))
			for _, args := range [][]string{{"check", path}, {"solve", path}, {"forecast", path, "--from", "good"}} {
				code, stdout, stderr := runCLI(t, args...)
				if code != exitInput || stdout != "" {
					t.Errorf("%s: exit %d (want %d), stdout %q\nstderr: %s", args[0], code, exitInput, stdout, stderr)
				}
				for _, w := range tc.want {
					if !strings.Contains(stderr, w) {
						t.Errorf("%s: stderr lacks %q:\n%s", args[0], w, stderr)
					}
				}
			}
		})
	}
	t.Run("valid", func(t *testing.T) {
		path := writeFile(t, "ok.yaml", base+good)
		code, out, stderr := runCLI(t, "check", path)
		if code != 0 || !strings.Contains(out, "inspection: ok: intervals of 1, 2, 4 periods") || !strings.Contains(out, "hidden failures: failed") {
			t.Errorf("check: exit %d, stdout %q, stderr %q", code, out, stderr)
		}
	})
}

// Flags that do not apply to a class with an inspection block are usage
// errors; the solver, discount and output flags apply.
func TestInspectionFlags(t *testing.T) {
	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"solve", demoRelief, "--criterion", "average"}, exitUsage, "--criterion does not apply to a class with an inspection block"},
		{[]string{"solve", demoRelief, "--target", "stuck"}, exitUsage, "--target does not apply to a class with an inspection block"},
		{[]string{"solve", demoRelief, "--workers", "2"}, exitUsage, "--workers does not apply to a class config"},
		{[]string{"forecast", demoRelief, "--from", "good", "--years", "2.5"}, exitUsage, "2.5 is not a whole number of years"},
		{[]string{"forecast", demoRelief, "--from", "good", "--simulate", "10"}, exitUsage, "--simulate does not apply to a class config"},
		{[]string{"solve", demoRelief, "--method", "value", "--max-iterations", "2"}, exitUncertified, "not certified"},
		{[]string{"solve", demoRelief, "--method", "lp", "--rate", "3%", "--tol", "0.01", "--format", "csv"}, exitOK, ""},
	} {
		t.Run(strings.Join(tc.args[2:], " "), func(t *testing.T) {
			code, _, stderr := runCLI(t, tc.args...)
			if code != tc.code || !strings.Contains(stderr, tc.want) {
				t.Errorf("%v: exit %d (want %d), stderr %q (want %q)", tc.args, code, tc.code, stderr, tc.want)
			}
		})
	}
}

// Every method gives the same joint advice and values on the demo.
func TestInspectionMethodsAgree(t *testing.T) {
	first := solveJSON(t, demoRelief, "--method", "policy", "--tol", "1e-7")
	for _, m := range []string{"value", "lp"} {
		doc := solveJSON(t, demoRelief, "--method", m, "--tol", "1e-7")
		for i, s := range doc["states"].([]any) {
			got, want := s.(map[string]any), first["states"].([]any)[i].(map[string]any)
			if got["action"] != want["action"] || got["inspect_after"] != want["inspect_after"] {
				t.Errorf("%s: state %v: %v after %v, policy iteration %v after %v", m, got["state"], got["action"], got["inspect_after"], want["action"], want["inspect_after"])
			}
			if d := math.Abs(got["value"].(float64) - want["value"].(float64)); d > 1e-6 {
				t.Errorf("%s: state %v: value differs by %g (tol 1e-6)", m, got["state"], d)
			}
		}
	}
}

// The starter class config documents the inspection block in comments;
// uncommented, it checks and solves.
func TestStarterInspectionBlock(t *testing.T) {
	data, err := os.ReadFile("../internal/starters/files/class.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	at := strings.Index(text, "# inspection:")
	if at < 0 {
		t.Fatal("starters/class.yaml does not document the inspection block")
	}
	var block strings.Builder
	for _, line := range strings.SplitAfter(text[at:], "\n") {
		block.WriteString(strings.TrimPrefix(line, "# "))
	}
	path := writeFile(t, "starter.yaml", text[:at]+block.String())
	if code, out, stderr := runCLI(t, "check", path); code != 0 || !strings.Contains(out, "inspection: ok") {
		t.Fatalf("check: exit %d, stdout %q, stderr %s", code, out, stderr)
	}
	if code, out, stderr := runCLI(t, "solve", path); code != 0 || !strings.Contains(out, "then inspect again in") {
		t.Fatalf("solve: exit %d, stderr %s\n%s", code, stderr, out)
	}
}

// Commands that solve the class without its block say so.
func TestInspectionUnusedNote(t *testing.T) {
	code, _, stderr := runCLI(t, "sensitivity", demoRelief)
	if code != 0 || !strings.Contains(stderr, "sensitivity does not use the inspection block") {
		t.Errorf("sensitivity: exit %d, stderr %q", code, stderr)
	}
}
