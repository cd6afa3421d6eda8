package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

const demoRecords = "../../configs/pump-inspections.csv"

// The demo records were simulated (invented) from the demo config's rows;
// the counting estimate of well-observed rows is close to them.
func TestFitDemoRecords(t *testing.T) {
	var doc struct {
		Method  string
		Actions map[string]struct {
			Rows map[string]struct {
				N            int
				P            map[string]float64
				Lower, Upper map[string]float64
			}
		}
		Generator *map[string]map[string]float64
		Fit       struct {
			Statistic float64
			DF        int
			PValue    *float64 `json:"p_value"`
		}
		Warnings []struct {
			Line    int
			Message string
		}
	}
	runJSON(t, &doc, "fit", demoRecords, "--config", demo, "--format", "json", "--bootstrap", "50")
	if doc.Method != "counting" || doc.Generator != nil {
		t.Errorf("method %q, generator %v: annual records should be counted", doc.Method, doc.Generator)
	}
	// The simulating row of leave from sound (configs/pumps.yaml).
	want := map[string]float64{"sound": 0.825, "light_wear": 0.14, "heavy_wear": 0.03, "failed": 0.005}
	row := doc.Actions["leave"].Rows["sound"]
	for s, p := range want {
		if math.Abs(row.P[s]-p) > 0.04 {
			t.Errorf("leave from sound to %s: %.4f, simulated with %.3f", s, row.P[s], p)
		}
		if row.Lower[s] > row.P[s] || row.Upper[s] < row.P[s] {
			t.Errorf("leave from sound to %s: interval [%g, %g] excludes %g", s, row.Lower[s], row.Upper[s], row.P[s])
		}
	}
	if doc.Fit.DF <= 0 || doc.Fit.PValue == nil {
		t.Errorf("goodness of fit %+v", doc.Fit)
	}
	if _, ok := doc.Actions["leave"].Rows["failed"]; ok {
		t.Error("a row with no records is reported")
	}
	var gen struct {
		Method    string
		Generator map[string]map[string]float64
	}
	runJSON(t, &gen, "fit", demoRecords, "--config", demo, "--format", "json", "--estimator", "generator", "--bootstrap", "0", "--deterioration-only")
	if gen.Method != "generator" || gen.Generator["sound"]["light_wear"] <= 0 || gen.Generator["light_wear"]["sound"] != 0 {
		t.Errorf("generator fit: %+v", gen)
	}
}

func writeRecords(t *testing.T, text string) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "rec.csv")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// Data problems are reported with their CSV lines, not silently dropped.
func TestFitReportsDataProblems(t *testing.T) {
	path := writeRecords(t, "unit,date,condition,action\n"+
		"a,2020-01-01,sound,\n"+ // 2
		"a,2021-01-02,light_wear,\n"+ // 3
		"a,2022-01-01,sound,\n"+ // 4: improvement without work
		"b,2020-01-01,sound,\n"+ // 5: single inspection
		"c,2020-01-01,worn_out,\n"+ // 6: unknown condition
		"d,2020-01-01,sound,\n"+ // 7
		"d,2020-06-01,sound,\n"+ // 8: far from the period
		"e,2021-01-01,sound,\n"+ // 9
		"e,2020-01-01,sound,\n"+ // 10: out of order
		"e,2021-01-01,light_wear,\n") // 11: same date
	code, out, stderr := runCLI(t, "fit", path, "--config", demo, "--estimator", "counting", "--bootstrap", "0")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, w := range []string{"improvements with no recorded work in 1 units (a; lines 4)", "line 5: unit b has a single inspection",
		`line 6: unknown condition "worn_out"`, "line 8: interval of 152 days", "line 10: unit e: dates out of order",
		"line 11: unit e: a second inspection on the same date"} {
		if !strings.Contains(strings.Join(strings.Fields(out), " "), w) {
			t.Errorf("output lacks %q:\n%s", w, out)
		}
	}
}

func TestFitBadInput(t *testing.T) {
	for _, tc := range []struct {
		name string
		text string
		args []string
		code int
		want string
	}{
		{"no header", "a,2020-01-01,sound\n", nil, exitInput, `the header has no "unit" column`},
		{"empty", "", nil, exitInput, "the file is empty"},
		{"no transitions", "unit,date,condition\na,2020-01-01,sound\n", nil, exitInput, "no usable transitions"},
		{"no scale", "unit,date,condition\n", []string{"--config", ""}, exitUsage, "give the scale"},
		{"bad level", "unit,date,condition\n", []string{"--level", "90"}, exitUsage, "setting level"},
		{"merge without output", "unit,date,condition\n", []string{"--merge"}, exitUsage, "--merge needs --config FILE and -o NEWFILE"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := writeRecords(t, tc.text)
			args := append([]string{"fit", path, "--config", demo}, tc.args...)
			code, _, stderr := runCLI(t, args...)
			if code != tc.code || !strings.Contains(stderr, tc.want) {
				t.Errorf("exit %d, stderr %q; want %d and %q", code, stderr, tc.code, tc.want)
			}
		})
	}
	code, _, stderr := runCLI(t, "fit", "nowhere.csv", "--states", "a,b", "--period-years", "1")
	if code != exitInput || !strings.Contains(stderr, "nowhere.csv: file not found") {
		t.Errorf("missing file: exit %d, %q", code, stderr)
	}
}

// --merge writes a valid copy of the config with the fitted rows and keeps
// the input untouched; -o may not be the input.
func TestFitMerge(t *testing.T) {
	dir := t.TempDir()
	cfg := filepath.Join(dir, "pumps.yaml")
	data, _ := os.ReadFile(demo)
	os.WriteFile(cfg, data, 0o644)
	out := filepath.Join(dir, "fitted.yaml")
	code, _, stderr := runCLI(t, "fit", demoRecords, "--config", cfg, "--merge", "-o", out, "--bootstrap", "20")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if code, _, stderr := runCLI(t, "check", out); code != 0 {
		t.Fatalf("merged config invalid: %s", stderr)
	}
	merged, _ := os.ReadFile(out)
	if !strings.Contains(string(merged), "# fitted: n=") || !strings.Contains(string(merged), "INVENTED DATA") {
		t.Errorf("merged config lacks fitted comments or the original comments:\n%s", merged)
	}
	if after, _ := os.ReadFile(cfg); string(after) != string(data) {
		t.Error("the input config was changed")
	}
	code, _, stderr = runCLI(t, "fit", demoRecords, "--config", cfg, "--merge", "-o", cfg, "--force")
	if code != exitUsage || !strings.Contains(stderr, "is the input file") {
		t.Errorf("merge over the input: exit %d, %s", code, stderr)
	}
}

// --format yaml prints transitions: blocks that paste into a config.
func TestFitYAML(t *testing.T) {
	code, out, stderr := runCLI(t, "fit", demoRecords, "--config", demo, "--format", "yaml", "--bootstrap", "20")
	if code != 0 {
		t.Fatal(stderr)
	}
	for _, w := range []string{"transitions:\n  sound: {sound: 0.", "# n=670", "interval widths", "ROUGH"} {
		if !strings.Contains(out, w) {
			t.Errorf("yaml lacks %q:\n%s", w, out)
		}
	}
	// The first block parses as YAML, and each row sums to 1 exactly as
	// printed (within the config's 1e-9).
	block := out[strings.Index(out, "transitions:"):]
	block = block[:strings.Index(block, "\n\n")]
	var rows struct{ Transitions map[string]map[string]float64 }
	if err := yaml.Unmarshal([]byte(block), &rows); err != nil {
		t.Fatalf("%v\n%s", err, block)
	}
	for from, row := range rows.Transitions {
		sum := 0.0
		for _, p := range row {
			sum += p
		}
		if math.Abs(sum-1) > 1e-9 {
			t.Errorf("row %s sums to %.12f", from, sum)
		}
	}
}
