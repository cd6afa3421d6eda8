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

// Adversarial inputs kept as regression data (condition/testdata).
const (
	dates2Records  = "../../condition/testdata/dates2.csv"
	oneUnitRecords = "../../condition/testdata/one_unit.csv"
)

// dates2.csv once gave a G test on -8 degrees of freedom and rates of
// about 1,227 a year for generator rows with no data: the test is skipped
// with its reason, rows without data are marked so, and --merge never
// writes them.
func TestFitRowsWithoutData(t *testing.T) {
	var doc struct {
		Actions map[string]struct {
			Rows   map[string]any
			NoData []string `json:"no_data"`
		}
		Generator       map[string]map[string]float64
		GeneratorNoData []string `json:"generator_no_data"`
		Fit             struct {
			Statistic *float64
			DF        int
			Skipped   string
		}
	}
	runJSON(t, &doc, "fit", dates2Records, "--config", demo, "--format", "json", "--bootstrap", "20")
	if doc.Fit.DF < 0 || doc.Fit.Statistic != nil || !strings.Contains(doc.Fit.Skipped, "not tested") {
		t.Errorf("fit %+v, want the test skipped with a reason", doc.Fit)
	}
	if len(doc.Generator) != 1 || doc.Generator["sound"] == nil || strings.Join(doc.GeneratorNoData, ",") != "light_wear,heavy_wear,critical,failed" {
		t.Errorf("generator rows %v, no data %v; want sound only and the others marked", doc.Generator, doc.GeneratorNoData)
	}
	if got := strings.Join(doc.Actions["leave"].NoData, ","); got != "light_wear,heavy_wear,critical" || len(doc.Actions["leave"].Rows) != 1 {
		t.Errorf("leave: rows %v, no data %q; want sound, and light_wear,heavy_wear,critical without data", doc.Actions["leave"].Rows, got)
	}
	code, out, stderr := runCLI(t, "fit", dates2Records, "--config", demo, "--bootstrap", "20")
	if code != 0 || !strings.Contains(out, "Goodness of fit: not tested") || !strings.Contains(out, "No data from light_wear, heavy_wear, critical, failed") {
		t.Errorf("table: exit %d, %s\n%s", code, stderr, out)
	}
	if strings.Contains(out, "1227") || strings.Contains(out, "-8 degrees") {
		t.Errorf("table shows the old artefacts:\n%s", out)
	}
	merged := filepath.Join(t.TempDir(), "merged.yaml")
	if code, _, stderr := runCLI(t, "fit", dates2Records, "--config", demo, "--bootstrap", "0", "--merge", "--merge-min", "1", "-o", merged); code != 0 {
		t.Fatalf("merge: exit %d: %s", code, stderr)
	}
	data, _ := os.ReadFile(merged)
	orig, _ := os.ReadFile(demo)
	if n := strings.Count(string(data), "# fitted:"); n != 1 {
		t.Errorf("merge wrote %d rows, want 1 (leave from sound, the only row with data):\n%s", n, data)
	}
	for _, line := range []string{"light_wear: {light_wear: 0.80, heavy_wear: 0.16, critical: 0.03, failed: 0.01}", "critical:   {critical: 0.55, failed: 0.45}"} {
		if !strings.Contains(string(orig), line) {
			t.Fatalf("demo config lacks %q", line)
		}
		fields := strings.Join(strings.Fields(line), " ")
		if !strings.Contains(strings.Join(strings.Fields(string(data)), " "), fields) {
			t.Errorf("merge changed a row without data: %q is gone:\n%s", line, data)
		}
	}
}

// one_unit.csv (8,000 records of one unit) once gave intervals of zero
// width with no warning.
func TestFitOneUnit(t *testing.T) {
	code, out, stderr := runCLI(t, "fit", oneUnitRecords, "--config", demo, "--bootstrap", "20")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	flat := strings.Join(strings.Fields(out), " ")
	for _, w := range []string{"the intervals resample units, and the transitions used come from 1 unit, fewer than 30",
		"entries between 0 and 1 have 90% intervals of zero width (leave sound→sound"} {
		if !strings.Contains(flat, w) {
			t.Errorf("output lacks %q:\n%s", w, out)
		}
	}
}

// When every record is bad, fit lists the problems it found.
func TestFitAllRecordsBad(t *testing.T) {
	path := writeRecords(t, "unit,date,condition\n"+
		"a,01/02/2020,sound\n"+ // 2
		"a,2021-01-02,Sound\n"+ // 3
		",2021-01-02,sound\n"+ // 4
		"b,2022-01-01,sound\n") // 5: single inspection
	code, _, stderr := runCLI(t, "fit", path, "--config", demo)
	if code != exitInput {
		t.Errorf("exit %d, want %d", code, exitInput)
	}
	for _, w := range []string{path + ": no usable transitions; the data problems found (4):",
		path + `:2: date "01/02/2020" is not YYYY-MM-DD`, path + `:3: unknown condition "Sound"`, `did you mean "sound"?`,
		path + ":4: no unit", path + ":5: unit b has a single inspection"} {
		if !strings.Contains(stderr, w) {
			t.Errorf("stderr lacks %q:\n%s", w, stderr)
		}
	}
}
