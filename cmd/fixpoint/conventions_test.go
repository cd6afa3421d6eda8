package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// writeFleet writes a fleet of one class (the class config text, named
// pumps) with three units and returns the fleet file's path.
func writeFleet(t *testing.T, class, budget string) string {
	t.Helper()
	dir := t.TempDir()
	for name, text := range map[string]string{
		"class.yaml": class,
		"inv.csv":    "# invented units\nunit,class,condition\nU1,pumps,good\nU2,pumps,worn\nU3,pumps,failed\n",
		"fleet.yaml": "version: 1\nname: test fleet\ncurrency: EUR\nclasses:\n  pumps: class.yaml\ninventory: inv.csv\nbudget: " + budget + "\n",
	} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, "fleet.yaml")
}

// A fleet class with criterion: average is refused in one located line
// by every command that takes fleets: the plan is a present-value plan.
func TestFleetClassWithAverageCriterion(t *testing.T) {
	path := writeFleet(t, strings.Replace(base, "discount:\n", "criterion: average\ndiscount:\n", 1), "{years: 3, per_year: 2000}")
	want := path + ":5: classes.pumps: the fleet plan is a present-value plan (discounted criterion); class file " +
		filepath.Join(filepath.Dir(path), "class.yaml") + " has criterion: average\n"
	for _, args := range [][]string{
		{"check", path}, {"plan", path}, {"forecast", path, "--simulate", "10"},
		{"brief", path, "-o", filepath.Join(t.TempDir(), "b.pdf")},
	} {
		code, stdout, stderr := runCLI(t, args...)
		if code != exitInput || stdout != "" || strings.Count(stderr, "\n") != 1 || !strings.HasSuffix(stderr, want) {
			t.Errorf("%s: exit %d, want 1 and the one line %q: %s", args[0], code, want, stderr)
		}
	}
}

// plan's and forecast --simulate's tables state the discount, as the other
// tables do, including a --rate override.
func TestPlanTableStatesTheDiscount(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		// 1/1.04 and 1/1.03: closed form.
		{[]string{"plan", demoFleet, "--simulate", "0"}, "Discount factor 0.961538 per period of 1 year (rate 4.00% per year)"},
		{[]string{"plan", demoFleet, "--simulate", "0", "--rate", "3%"}, "Discount factor 0.970874 per period of 1 year (rate 3.00% per year)"},
		{[]string{"forecast", demoFleet, "--simulate", "10"}, "Discount factor 0.961538 per period of 1 year (rate 4.00% per year)"},
	} {
		code, stdout, stderr := runCLI(t, tc.args...)
		if code != 0 || !strings.Contains(strings.Join(strings.Fields(stdout), " "), tc.want) {
			t.Errorf("%v: exit %d, want %q in:\n%.600s%s", tc.args, code, tc.want, stdout, stderr)
		}
	}
}

// The README's list of brief's solver flags for systems is true: each flag
// it names for systems works on the demo system, and --method, which it
// says is refused, is.
func TestReadmeBriefSolverFlagsForSystems(t *testing.T) {
	data, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	flat := strings.Join(strings.Fields(string(data)), " ")
	const claim = "the solver flags `--method`, `--tol`, `--max-iterations` for classes, and `--tol`, `--max-iterations` for systems (a system's joint model is solved by value iteration, so `--method` is refused for it)"
	if !strings.Contains(flat, claim) {
		t.Fatalf("README lacks the sentence on brief's solver flags for systems: %q", claim)
	}
	pdf := filepath.Join(t.TempDir(), "c.pdf")
	if code, _, stderr := runCLI(t, "brief", demoSystem, "-o", pdf, "--tol", "0.01", "--max-iterations", "100000"); code != 0 {
		t.Errorf("brief system --tol --max-iterations: exit %d, %s", code, stderr)
	}
	if code, _, stderr := runCLI(t, "brief", demoSystem, "-o", pdf, "--force", "--method", "value"); code != exitUsage || !strings.Contains(stderr, "--method does not apply to a system file") {
		t.Errorf("brief system --method value: exit %d, %s", code, stderr)
	}
}

// A rate of 1 without % (100% a year) runs, with a warning suggesting 1%;
// 100% written as a percentage does not warn.
func TestRateOfOneWarns(t *testing.T) {
	const hint = "rate 1 is 100% a year; for 1% write 1%"
	path := writeFile(t, "r1.yaml", strings.Replace(base, "rate: 0.05", "rate: 1", 1))
	for _, tc := range []struct {
		args []string
		warn bool
	}{
		{[]string{"check", path}, true},
		{[]string{"solve", path}, true},
		{[]string{"solve", demo, "--rate", "1"}, true},
		{[]string{"solve", demo, "--rate", "100%"}, false},
		{[]string{"solve", demo}, false},
	} {
		code, _, stderr := runCLI(t, tc.args...)
		if code != 0 || strings.Contains(stderr, "warning: ") != tc.warn || (tc.warn && strings.Count(stderr, hint) != 1) {
			t.Errorf("%v: exit %d, want a warning %v (once, %q): %s", tc.args, code, tc.warn, hint, stderr)
		}
	}
	if _, _, stderr := runCLI(t, "check", path); !strings.Contains(stderr, path+":6: discount.rate: "+hint) {
		t.Errorf("check: the warning is not located at the line: %s", stderr)
	}
}

// Year conventions: the forecast's time column is the start of each period
// in years from the start (0 first), labelled so (JSON and CSV keep the key
// "year"); a --years that is not a whole number of periods gets a note on
// what is covered; plan says what periods cover budget years that are not
// a whole number of periods.
func TestYearConventions(t *testing.T) {
	five := writeFile(t, "p5.yaml", strings.Replace(base, "period_years: 1", "period_years: 5", 1))
	half := writeFile(t, "p05.yaml", strings.Replace(base, "period_years: 1", "period_years: 0.5", 1))
	for _, tc := range []struct {
		args []string
		note string // "" for none
	}{
		// 3 years on 5-year periods: one period starts within them (ceil(3/5) = 1), covering 5 years.
		{[]string{"forecast", five, "--from", "good", "--years", "3"}, "note: 3 years is not a whole number of periods of 5 years: the forecast covers the 1 period(s) that start within it, 5 years"},
		// 2.5 years on 1-year periods: periods start at 0, 1 and 2.
		{[]string{"forecast", demo, "--from", "sound", "--years", "2.5"}, "note: 2.5 years is not a whole number of periods of 1 year: the forecast covers the 3 period(s) that start within it, 3 years"},
		{[]string{"forecast", half, "--from", "good", "--years", "3"}, ""},
	} {
		code, stdout, stderr := runCLI(t, tc.args...)
		if code != 0 || strings.Contains(stderr, "note:") != (tc.note != "") || !strings.Contains(stderr, tc.note) {
			t.Errorf("%v: exit %d, want note %q: %s", tc.args, code, tc.note, stderr)
		}
		if !strings.Contains(stdout, "│ period │ starts (years) │") {
			t.Errorf("%v: the time column is not labelled starts (years):\n%.400s", tc.args, stdout)
		}
	}
	var doc struct {
		Periods []struct {
			Year float64 `json:"year"`
		} `json:"periods"`
	}
	runJSON(t, &doc, "forecast", half, "--from", "good", "--years", "2", "--format", "json")
	for k, p := range doc.Periods {
		if want := 0.5 * float64(k); math.Abs(p.Year-want) > 1e-12 {
			t.Errorf("JSON period %d: year %g, want %g (start of the period in years)", k, p.Year, want)
		}
	}
	fleet := writeFleet(t, strings.Replace(base, "period_years: 1", "period_years: 5", 1), "{years: 4, per_year: 5000}")
	code, stdout, stderr := runCLI(t, "plan", fleet, "--simulate", "0")
	const want = "budget plan over 1 period of 5 years (5 years), the periods that start within the 4 budget years (EUR)"
	if code != 0 || !strings.Contains(stdout, want) || strings.Contains(stdout, "over 4 years in 1 period") {
		t.Errorf("plan on 5-year periods: exit %d, want %q:\n%.400s%s", code, want, stdout, stderr)
	}
}
