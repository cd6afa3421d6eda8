package reports

import (
	"bytes"
	"encoding/json"
	"math"
	"slices"
	"strings"
	"testing"

	"fixpoint/condition"
)

// fitFixture is a hand-made generator fit on good, worn, failed (failed
// unsafe) with actions leave (passive) and fix: leave has data from good
// only, fix none; the generator row of worn and failed has no data; the
// goodness-of-fit test was skipped.
func fitFixture() *FitReport {
	nan := math.NaN()
	good := &condition.RowEstimate{N: 40, ESS: 38, P: []float64{0.7, 0.3, 0},
		Lower: []float64{0.6, 0.3, 0}, Upper: []float64{0.8, 0.3, 0}}
	return &FitReport{
		Source: "rec.csv", States: []string{"good", "worn", "failed"}, Unsafe: []bool{false, false, true},
		Bootstrap: 50, Seed: 1, Level: 0.9, Rough: 30,
		Fit: &condition.Fit{
			Method: condition.Generator, PeriodYears: 1, Actions: []string{"leave", "fix"},
			Rows:      [][]*condition.RowEstimate{{good, nil, nil}, {nil, nil, nil}},
			Counts:    [][][]int{{{28, 12, 0}, {0, 0, 0}, {0, 0, 0}}, {{0, 0, 0}, {0, 0, 0}, {0, 0, 0}}},
			Generator: [][]float64{{-0.36, 0.36, 0}, nil, nil},
			Fit:       condition.GoodnessOfFit{Statistic: nan, PValue: nan, Skipped: "not tested: too few records"},
		},
	}
}

// Rows without data carry a "no data" marker in every format, never a
// number; the rows a config does not admit are not listed.
func TestFitNoDataMarkers(t *testing.T) {
	f := fitFixture()
	var table, yaml, js bytes.Buffer
	if err := f.WriteTable(&table); err != nil {
		t.Fatal(err)
	}
	if err := f.WriteYAML(&yaml); err != nil {
		t.Fatal(err)
	}
	if err := f.WriteJSON(&js); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		format, out string
		want        []string
	}{
		{"table", table.String(), []string{"No data from worn: no row estimated.", "Action fix: no data (no transitions recorded with it)",
			"No data from worn, failed: no interval without recorded work starts there", "Goodness of fit: not tested: too few records."}},
		{"yaml", yaml.String(), []string{"  # no data from worn: no row estimated\n", "# action fix: no data (no transitions recorded with it)",
			"# Goodness of fit: not tested: too few records."}},
	} {
		for _, w := range tc.want {
			if !strings.Contains(strings.Join(strings.Fields(tc.out), " "), strings.Join(strings.Fields(w), " ")) {
				t.Errorf("%s output lacks %q:\n%s", tc.format, w, tc.out)
			}
		}
	}
	if strings.Contains(table.String(), "│ worn ") {
		t.Errorf("table shows a row for worn, which has no data:\n%s", table.String())
	}
	var doc struct {
		Actions map[string]struct {
			Rows   map[string]any `json:"rows"`
			NoData []string       `json:"no_data"`
		}
		Generator       map[string]map[string]float64
		GeneratorNoData []string `json:"generator_no_data"`
		Fit             struct {
			Statistic *float64
			DF        int
			Skipped   string
		}
	}
	if err := json.Unmarshal(js.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name      string
		got, want []string
	}{
		{"actions.leave.no_data", doc.Actions["leave"].NoData, []string{"worn"}}, // failed: unsafe, never left alone
		{"actions.fix.no_data", doc.Actions["fix"].NoData, []string{"good", "worn", "failed"}},
		{"generator_no_data", doc.GeneratorNoData, []string{"worn", "failed"}},
	} {
		if !slices.Equal(tc.got, tc.want) {
			t.Errorf("JSON %s = %q, want %q", tc.name, tc.got, tc.want)
		}
	}
	if _, ok := doc.Generator["worn"]; ok || len(doc.Actions["fix"].Rows) != 0 {
		t.Errorf("JSON gives numbers for rows without data: generator %v, fix rows %v", doc.Generator, doc.Actions["fix"].Rows)
	}
	if doc.Fit.Statistic != nil || doc.Fit.DF != 0 || doc.Fit.Skipped == "" {
		t.Errorf("JSON fit %+v, want a null statistic, 0 df and the reason", doc.Fit)
	}

	// With a config that admits fix only in worn, only that row is listed.
	m := &condition.Model{Actions: []condition.Action{
		{Name: "leave", Rows: [][]condition.Entry{{{To: 0, P: 1}}, {{To: 1, P: 1}}, nil}},
		{Name: "fix", Rows: [][]condition.Entry{nil, {{To: 0, P: 1}}, nil}},
	}}
	f.Model = m
	if got := f.noData(1); !slices.Equal(got, []string{"worn"}) {
		t.Errorf("noData(fix) with the config = %q, want [worn]", got)
	}
}

// An interval of zero width is never shown without a note: the notes
// count the entries at 0 or 1 and those between, as counted here by hand
// from the fixture.
func TestFitZeroWidthNotes(t *testing.T) {
	f := fitFixture()
	// good→worn [0.3, 0.3] lies between 0 and 1; good→failed [0, 0] at 0.
	warn := f.warnings()
	if len(warn) != 2 {
		t.Fatalf("warnings %v, want two notes", warn)
	}
	for i, want := range []string{
		"1 entry at 0 or 1 has 90% intervals of zero width (leave good→failed)",
		"1 entry between 0 and 1 has 90% intervals of zero width (leave good→worn)",
	} {
		if !strings.HasPrefix(warn[i].Message, want) {
			t.Errorf("note %d = %q, want it to start %q", i, warn[i].Message, want)
		}
	}
	// The bound quoted for none seen in n: 1 − (α/2)^(1/n) ≈ −ln(α/2)/n
	// (Clopper & Pearson 1934, closed form for x = 0); −ln 0.05 = 2.996.
	if !strings.Contains(warn[0].Message, "1 − (0.05)^(1/n), about 3.0/n") {
		t.Errorf("note %q lacks the bound for level 0.9", warn[0].Message)
	}
	f.Bootstrap = 0
	if warn := f.warnings(); len(warn) != 0 {
		t.Errorf("no bootstrap: notes %v, want none", warn)
	}
}
