package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// withCurrency copies a model file into a temporary directory with its
// currency line set to code; class files a system or fleet file names are
// copied beside it.
func withCurrency(t *testing.T, path, code string, siblings ...string) string {
	t.Helper()
	dir := t.TempDir()
	re := regexp.MustCompile(`(?m)^currency:.*$`)
	for _, p := range append([]string{path}, siblings...) {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		data = re.ReplaceAll(data, []byte("currency: "+code))
		if err := os.WriteFile(filepath.Join(dir, filepath.Base(p)), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, filepath.Base(path))
}

// moneyFaults lists the amounts in text that print more decimals than the
// currency's minor unit (ISO 4217: JPY 0, KWD 3): a grouped number
// ("45,591,155.23") or an amount before the code ("480.50 JPY") with the
// wrong decimals. The certificate's precision figures (gap, residual,
// tolerance, the exact gain bounds g*) are skipped: the certificate page
// gives them unrounded on purpose.
func moneyFaults(text, code string) []string {
	var grouped, before *regexp.Regexp
	switch code {
	case "JPY":
		grouped = regexp.MustCompile(`\d,\d{3}\.\d+`)
		before = regexp.MustCompile(`\d\.\d+ JPY`)
	case "KWD":
		grouped = regexp.MustCompile(`\d,\d{3}\.\d{1,2}(\D|$)`)
		before = regexp.MustCompile(`\d\.\d{1,2} KWD`)
	}
	var out []string
	for _, line := range strings.Split(text, "\n") {
		low := strings.ToLower(line)
		if strings.Contains(low, "gap") || strings.Contains(low, "residual") || strings.Contains(low, "tolerance") || strings.Contains(low, "g*") {
			continue
		}
		if grouped.MatchString(line) || before.MatchString(line) {
			out = append(out, strings.TrimSpace(line))
		}
	}
	return out
}

// Every text output and every brief page prints money in the currency's
// minor unit: no yen with decimals, dinars with three. Before this the
// rate page of the class brief said "45,591,155.23 JPY" and the tables
// of solve, compare, sensitivity, forecast and the system printed two
// decimals whatever the currency.
func TestMoneyMinorUnit(t *testing.T) {
	for _, code := range []string{"JPY", "KWD"} {
		class := withCurrency(t, demo, code)
		avg := withCurrency(t, "testdata/hostile/average.yaml", code)
		sys := withCurrency(t, "../../configs/crane.yaml", code)
		fleet := withCurrency(t, "../../configs/east-zone.yaml", code, "../../configs/east-zone-inventory.csv", "../../configs/pumps.yaml", "../../configs/valves.yaml")
		runs := [][]string{
			{"solve", class},
			{"solve", class, "--criterion", "average"},
			{"solve", avg},
			{"compare", class, "--rates", "0:8%:2%"},
			{"sensitivity", class},
			{"forecast", class, "--from", "sound"},
			{"solve", "testdata/hostile/inspection.yaml"},
			{"solve", sys},
			{"plan", fleet, "--rates", "3%,6%"},
		}
		for _, args := range runs {
			code0, out, stderr := runCLI(t, args...)
			if code0 != 0 {
				t.Fatalf("%s: exit %d: %s", strings.Join(args, " "), code0, stderr)
			}
			for _, f := range moneyFaults(out, code) {
				t.Errorf("%s %s: %q prints money without the minor unit of %s", code, args[0], f, code)
			}
		}
		for _, args := range [][]string{{class, "--rates", "0:8%:2%"}, {avg}, {sys}, {fleet, "--rates", "3%,6%"}, {withCurrency(t, "testdata/hostile/inspection.yaml", code)}} {
			text := pdfText(t, writeBrief(t, args[0], args[1:]...))
			for _, f := range moneyFaults(text, code) {
				t.Errorf("%s brief %s: %q prints money without the minor unit of %s", code, filepath.Base(args[0]), f, code)
			}
		}
	}
}
