package main

import (
	"strings"
	"testing"
)

// reportGoldens are the report kinds of every command on the demo configs
// (invented data), each in every text format it writes. TestSolveGolden and
// its neighbours cover solve; these cover the rest, so that a change to any
// report shows in review.
var reportGoldens = []struct {
	name    string
	args    []string
	formats []string
}{
	{"compare-pumps", []string{"compare", demo, "--rates", "2%:8%:2%"}, []string{"table", "json", "csv"}},
	{"compare-pumps-inflation", []string{"compare", demo, "--rates", "3%,5%", "--inflation", "2%"}, []string{"csv"}},
	{"sensitivity-pumps", []string{"sensitivity", demo}, []string{"table", "json", "csv"}},
	{"forecast-pumps", []string{"forecast", demo, "--mix", "sound=40,light_wear=10,failed=2", "--years", "5"}, []string{"table", "json", "csv"}},
	{"plan-east", []string{"plan", demoFleet}, []string{"table", "json", "csv"}},
	{"fit-pumps", []string{"fit", "../../configs/pump-inspections.csv", "--config", demo}, []string{"table", "json", "yaml"}},
}

func TestReportGoldens(t *testing.T) {
	for _, tc := range reportGoldens {
		for _, format := range tc.formats {
			t.Run(tc.name+"/"+format, func(t *testing.T) {
				code, out, errOut := runCLI(t, append(tc.args, "--format", format)...)
				if code != 0 {
					t.Fatalf("exit %d: %s", code, errOut)
				}
				golden(t, tc.name+"."+format, out)
				if format == "csv" {
					checkCSVPreamble(t, out)
				}
			})
		}
	}
}

// checkCSVPreamble asserts that a CSV says what its numbers are before its
// header row: the caution first, then model, currency, period, criterion and
// the discount (or the rates a comparison runs at), as the README's "CSV
// output" section promises.
func checkCSVPreamble(t *testing.T, out string) {
	t.Helper()
	lines := strings.Split(out, "\n")
	if !strings.HasPrefix(lines[0], "# Advisory only") {
		t.Errorf("first line is not the caution: %q", lines[0])
	}
	seen := map[string]bool{}
	for _, l := range lines {
		if !strings.HasPrefix(l, "# ") {
			break
		}
		if k, _, ok := strings.Cut(strings.TrimPrefix(l, "# "), ":"); ok {
			seen[k] = true
		}
	}
	for _, k := range []string{"model", "currency", "period", "criterion"} {
		if !seen[k] {
			t.Errorf("no %q comment line before the header", k)
		}
	}
	if !seen["discount"] && !seen["rates"] {
		t.Errorf("neither a discount nor a rates comment line before the header")
	}
}
