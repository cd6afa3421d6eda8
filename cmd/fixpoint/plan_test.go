package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

const demoFleet = "../../configs/east-zone.yaml"

// copyFleet copies the demo fleet's files into a temporary directory and
// applies edits (file -> old -> new, the first occurrence).
func copyFleet(t *testing.T, edits map[string][2]string) string {
	t.Helper()
	return copyFleetWith(t, func(name, text string) string {
		e, ok := edits[name]
		if !ok {
			return text
		}
		if !strings.Contains(text, e[0]) {
			t.Fatalf("test bug: %q not in %s", e[0], name)
		}
		return strings.Replace(text, e[0], e[1], 1)
	})
}

// copyFleetWith copies the demo fleet's files into a temporary directory,
// each file's text passed through edit, and returns the fleet file.
func copyFleetWith(t *testing.T, edit func(name, text string) string) string {
	t.Helper()
	dir := t.TempDir()
	for _, name := range []string{"east-zone.yaml", "pumps.yaml", "valves.yaml", "east-zone-inventory.csv"} {
		data, err := os.ReadFile(filepath.Join("..", "..", "configs", name))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, name), []byte(edit(name, string(data))), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, "east-zone.yaml")
}

func TestPlanJSON(t *testing.T) {
	var doc struct {
		Problem struct {
			Kind, Statement string
		}
		LowerBound float64 `json:"lower_bound"`
		FluidCost  float64 `json:"fluid_cost"`
		Gap        float64
		Years      []struct {
			Year         int
			Budget       float64
			PlannedSpend float64 `json:"planned_spend"`
		}
		WorkList struct {
			Work []struct {
				Class, Condition, Action string
				Units                    int
			}
			Deferred int
		} `json:"work_list"`
		Periods []struct {
			ExpectedCounts map[string]map[string]float64 `json:"expected_counts"`
		}
		Practice struct {
			Runs int
			Cost struct{ Mean, SE float64 }
		} `json:"simulated_practice"`
		Warnings []string
	}
	runJSON(t, &doc, "plan", demoFleet, "--format", "json")
	if !(doc.LowerBound <= doc.FluidCost) || doc.Gap > 1e-4 || doc.Problem.Kind != "within_budget" || !strings.HasPrefix(doc.Problem.Statement, "Problem solved:") {
		t.Errorf("bounds %g, %g, gap %g, problem %+v", doc.LowerBound, doc.FluidCost, doc.Gap, doc.Problem)
	}
	if doc.Practice.Runs != 1000 || !(doc.Practice.Cost.SE > 0) {
		t.Errorf("simulated practice %+v", doc.Practice)
	}
	if len(doc.Years) != 10 || len(doc.Periods) != 10 {
		t.Fatalf("%d years, %d periods", len(doc.Years), len(doc.Periods))
	}
	for _, y := range doc.Years {
		if y.PlannedSpend > y.Budget+1e-6 {
			t.Errorf("year %d: planned spend %g above budget %g", y.Year, y.PlannedSpend, y.Budget)
		}
	}
	for k, p := range doc.Periods {
		units := 0.0
		for _, cls := range p.ExpectedCounts {
			for _, x := range cls {
				units += x
			}
		}
		if math.Abs(units-280) > 1e-6 {
			t.Errorf("period %d: %g units expected, the inventory has 280", k+1, units)
		}
	}
	if len(doc.WorkList.Work) == 0 || doc.WorkList.Deferred == 0 {
		t.Errorf("period 1: work %v, deferred %d", doc.WorkList.Work, doc.WorkList.Deferred)
	}
}

func TestPlanBadInput(t *testing.T) {
	for _, tc := range []struct {
		name  string
		edits map[string][2]string
		want  string
	}{
		{"unknown class", map[string][2]string{"east-zone-inventory.csv": {",valves,", ",valvs,"}}, `east-zone-inventory.csv:`},
		{"unknown class names line", map[string][2]string{"east-zone-inventory.csv": {",valves,", ",valvs,"}}, `unknown class "valvs"; did you mean "valves"?`},
		{"unknown condition", map[string][2]string{"east-zone-inventory.csv": {",pumps,sound,", ",pumps,shiny,"}}, `unknown condition "shiny" for class pumps`},
		{"duplicate unit", map[string][2]string{"east-zone-inventory.csv": {"KV-V0001,", "KV-P001,"}}, `unit "KV-P001" is listed twice (also line`},
		{"negative budget", map[string][2]string{"east-zone.yaml": {"per_year: 60000", "per_year: -5"}}, "budget.per_year: budget -5 is not in [0, 1e+15]"},
		{"budget list length", map[string][2]string{"east-zone.yaml": {"per_year: 60000", "per_year: [1, 2, 3]"}}, "budget.per_year: 3 budgets for 10 years"},
		{"missing class file", map[string][2]string{"east-zone.yaml": {"valves: valves.yaml", "valves: gates.yaml"}}, "gates.yaml: file not found"},
		{"different periods", map[string][2]string{"valves.yaml": {"period_years: 1", "period_years: 0.5"}}, "have different periods"},
		{"different discount", map[string][2]string{"valves.yaml": {"rate: 0.04", "rate: 0.05"}}, "have different discount factors"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := copyFleet(t, tc.edits)
			out := filepath.Join(filepath.Dir(path), "plan.json")
			code, stdout, stderr := runCLI(t, "plan", path, "-o", out)
			if code != exitInput || stdout != "" || !strings.Contains(stderr, tc.want) {
				t.Errorf("exit %d, stdout %q, stderr:\n%s\nwant %q", code, stdout, stderr, tc.want)
			}
			if _, err := os.Stat(out); err == nil {
				t.Error("an output file was written")
			}
		})
	}
}

// --budget and --years override the fleet file; a zero budget leaves only
// mandatory work and warns when it exceeds the budget.
func TestPlanOverrides(t *testing.T) {
	var doc struct {
		Years []struct {
			Budget float64
		}
		WorkList struct {
			Work []struct {
				Class, Action string
				Condition     string `json:"state"`
			}
		} `json:"work_list"`
		Warnings []string
	}
	runJSON(t, &doc, "plan", demoFleet, "--format", "json", "--budget", "0", "--years", "3")
	if len(doc.Years) != 3 || doc.Years[0].Budget != 0 {
		t.Fatalf("years %d, budget %g", len(doc.Years), doc.Years[0].Budget)
	}
	for _, w := range doc.WorkList.Work {
		if w.Condition != "failed" && w.Condition != "seized" {
			t.Errorf("zero budget: %+v is not mandatory work", w)
		}
	}
	if len(doc.Warnings) == 0 || !strings.Contains(doc.Warnings[0], "cannot cover the mandatory work") {
		t.Errorf("warnings %q", doc.Warnings)
	}
}

func TestForecastSimulate(t *testing.T) {
	var doc struct {
		Runs  int
		Years []struct {
			Spend         struct{ Mean, SE, P10, P50, P90 float64 }
			ExpectedSpend float64 `json:"expected_spend"`
		}
	}
	runJSON(t, &doc, "forecast", demoFleet, "--simulate", "400", "--seed", "7", "--format", "json")
	if doc.Runs != 400 || len(doc.Years) != 10 {
		t.Fatalf("runs %d, years %d", doc.Runs, len(doc.Years))
	}
	for i, y := range doc.Years {
		s := y.Spend
		if !(s.P10 <= s.P50 && s.P50 <= s.P90) || math.Abs(s.Mean-y.ExpectedSpend) > 3*s.SE+1e-6 {
			t.Errorf("year %d: spend %+v, expected %g", i+1, s, y.ExpectedSpend)
		}
	}
	_, a, _ := runCLI(t, "forecast", demoFleet, "--simulate", "50", "--seed", "3", "--format", "csv")
	_, b, _ := runCLI(t, "forecast", demoFleet, "--simulate", "50", "--seed", "3", "--format", "csv")
	if a != b || a == "" {
		t.Error("the same seed gave different simulations")
	}
	if code, _, stderr := runCLI(t, "forecast", demoFleet); code != exitUsage || !strings.Contains(stderr, "--simulate") {
		t.Errorf("fleet forecast without --simulate: exit %d, %s", code, stderr)
	}
}

// Plans across rates: golden outputs, and at each rate the same plan as a
// single plan at that rate.
func TestPlanAcrossRates(t *testing.T) {
	for _, format := range []string{"table", "json", "csv"} {
		code, out, stderr := runCLI(t, "plan", demoFleet, "--rates", "3%,5%,7%", "--format", format)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", format, code, stderr)
		}
		golden(t, "plan-rates-east."+format, out)
	}
	var across struct {
		Rates []struct {
			Rate  float64 `json:"rate"`
			Fluid float64 `json:"fluid_cost"`
			Lower float64 `json:"lower_bound"`
			Years []struct {
				PlannedSpend float64 `json:"planned_spend"`
			} `json:"years"`
		} `json:"rates"`
	}
	runJSON(t, &across, "plan", demoFleet, "--rates", "3%:7%:2%", "--format", "json")
	if len(across.Rates) != 3 {
		t.Fatalf("%d rates, want 3", len(across.Rates))
	}
	for _, r := range across.Rates {
		var one struct {
			Fluid float64 `json:"fluid_cost"`
			Lower float64 `json:"lower_bound"`
			Years []struct {
				PlannedSpend float64 `json:"planned_spend"`
			} `json:"years"`
		}
		runJSON(t, &one, "plan", demoFleet, "--rate", strconv.FormatFloat(r.Rate, 'g', -1, 64), "--simulate", "0", "--format", "json")
		if math.Abs(one.Fluid-r.Fluid) > 1e-9*math.Abs(one.Fluid) || math.Abs(one.Lower-r.Lower) > 1e-9*math.Abs(one.Lower) {
			t.Errorf("rate %g: across rates %g/%g, alone %g/%g", r.Rate, r.Lower, r.Fluid, one.Lower, one.Fluid)
		}
		for y := range one.Years {
			if math.Abs(one.Years[y].PlannedSpend-r.Years[y].PlannedSpend) > 1e-6 {
				t.Errorf("rate %g, year %d: spend %g across rates, %g alone", r.Rate, y+1, r.Years[y].PlannedSpend, one.Years[y].PlannedSpend)
			}
		}
	}
	if code, _, stderr := runCLI(t, "plan", demoFleet, "--rates", "3%,5%", "--rate", "4%"); code != exitUsage || !strings.Contains(stderr, "--rate does not apply to a plan across rates") {
		t.Errorf("--rates with --rate: exit %d, %s", code, stderr)
	}
}

// plan --rates takes the rates lowest first, each once, so that "changed"
// always compares with the next lower rate; with --inflation the rates
// are nominal, converted by the Fisher relation, and the JSON and CSV
// carry both.
func TestPlanRatesOrderAndInflation(t *testing.T) {
	code, stdout, stderr := runCLI(t, "plan", demoFleet, "--rates", "7%,3%,7%", "--inflation", "2%", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Inflation *float64 `json:"inflation"`
		Rates     []struct {
			Rate    float64  `json:"rate"`
			Nominal *float64 `json:"nominal_rate"`
		} `json:"rates"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Inflation == nil || math.Abs(*doc.Inflation-0.02) > 1e-15 || len(doc.Rates) != 2 {
		t.Fatalf("inflation %v, %d rates; want 0.02 and 2 rates", doc.Inflation, len(doc.Rates))
	}
	for i, nominal := range []float64{0.03, 0.07} {
		real := (1+nominal)/1.02 - 1 // the Fisher relation, computed here
		r := doc.Rates[i]
		if r.Nominal == nil || math.Abs(*r.Nominal-nominal) > 1e-12 || math.Abs(r.Rate-real) > 1e-12 {
			t.Errorf("rates[%d] = real %g nominal %v, want real %g nominal %g", i, r.Rate, r.Nominal, real, nominal)
		}
	}
	code, stdout, _ = runCLI(t, "plan", demoFleet, "--rates", "7%,3%", "--inflation", "2%", "--format", "csv")
	if code != 0 || !strings.Contains(stdout, "\n# rates: real rates per year in the rate column, converted from the nominal rates in the nominal_rate column at 2.00% inflation by the Fisher relation; costs at the start of each period\n") ||
		!strings.Contains(stdout, "\nrate,nominal_rate,discount_factor,problem,lower_bound,fluid_cost,gap,") || !strings.Contains(stdout, ",0.03000000,") {
		t.Errorf("plan --rates --inflation CSV lacks the rates line, the plan columns or the nominal rate:\n%.900s", stdout)
	}
}
