package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// periodFiles copies the demo class, system and fleet with the period
// set to years (the transition rows are kept: only the time convention
// changes) into a fresh directory.
func periodFiles(t *testing.T, years float64) (class, system, fleet string) {
	dir := t.TempDir()
	set := func(name, text string) string {
		out := strings.Replace(text, "period_years: 1\n", fmt.Sprintf("period_years: %g\n", years), 1)
		out = strings.Replace(out, "period_years: 0.5 ", fmt.Sprintf("period_years: %g ", years), 1)
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(out), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	read := func(path string) string {
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		return string(data)
	}
	class = set("pumps.yaml", read(demo))
	set("valves.yaml", read("../../configs/valves.yaml"))
	set("east-zone-inventory.csv", read("../../configs/east-zone-inventory.csv"))
	system = set("crane.yaml", read(demoSystem))
	fleet = set("east-zone.yaml", read(demoFleet))
	if !strings.Contains(read(class), fmt.Sprintf("period_years: %g\n", years)) || !strings.Contains(read(system), fmt.Sprintf("period_years: %g ", years)) {
		t.Fatal("test bug: the period was not replaced")
	}
	return class, system, fleet
}

// Every command runs with periods of 0.25 to 5 years, and what is labelled
// per year is per year.
func TestPeriodLengths(t *testing.T) {
	for _, years := range []float64{0.25, 0.5, 1, 2, 5} {
		t.Run(fmt.Sprint(years), func(t *testing.T) {
			class, system, fleet := periodFiles(t, years)
			out := t.TempDir()
			runs := [][]string{
				{"check", class}, {"check", system}, {"check", fleet},
				{"solve", class}, {"solve", system, "--format", "json"}, {"solve", class, "--criterion", "average"},
				{"compare", class, "--rates", "2%,5%"}, {"sensitivity", class},
				{"plan", fleet, "--format", "json"}, {"forecast", fleet, "--simulate", "20"},
				{"brief", class, "-o", filepath.Join(out, "class.pdf")},
				{"brief", fleet, "-o", filepath.Join(out, "fleet.pdf")},
				{"fit", demoRecords, "--config", class, "--bootstrap", "0"},
			}
			for _, args := range runs {
				if code, _, stderr := runCLI(t, args...); code != 0 {
					t.Errorf("%v: exit %d: %s", args, code, stderr)
				}
			}

			// The forecast runs over years, not periods.
			var f struct {
				Periods []struct {
					Year float64 `json:"year"`
				} `json:"periods"`
			}
			runJSON(t, &f, "forecast", class, "--from", "sound", "--years", "10", "--format", "json")
			if want := int(math.Ceil(10/years - 1e-9)); len(f.Periods) != want {
				t.Errorf("forecast over 10 years: %d periods, want %d", len(f.Periods), want)
			}
			if n := len(f.Periods); n > 1 && math.Abs(f.Periods[1].Year-years) > 1e-12 {
				t.Errorf("forecast: period 1 starts at year %g, want %g", f.Periods[1].Year, years)
			}

			// The plan's budget holds per calendar year: as many years as the
			// horizon, each year's planned spend within its budget unless
			// the year is short of its mandatory work.
			var plan struct {
				Years []struct {
					Year         int     `json:"year"`
					Budget       float64 `json:"budget"`
					Rule         string  `json:"rule"`
					PlannedSpend float64 `json:"planned_spend"`
				} `json:"years"`
			}
			runJSON(t, &plan, "plan", fleet, "--format", "json", "--simulate", "0", "--years", "4", "--budget", "70000")
			if len(plan.Years) != 4 {
				t.Errorf("plan over 4 years: %d years", len(plan.Years))
			}
			for _, y := range plan.Years {
				if y.Rule != "mandatory_only" && y.PlannedSpend > y.Budget*(1+1e-9) {
					t.Errorf("plan: year %d spends %g, over its budget %g", y.Year, y.PlannedSpend, y.Budget)
				}
			}

			// The brief's spend chart is per calendar year when a year holds
			// whole periods, and says per period otherwise.
			text := pdfText(t, filepath.Join(out, "class.pdf"))
			title := "Expected spend per year by action"
			if years > 1 {
				title = fmt.Sprintf("Expected spend per period of %g years by action", years)
			}
			if !strings.Contains(text, title) {
				t.Errorf("brief: no chart titled %q", title)
			}
		})
	}
}
