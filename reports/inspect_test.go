package reports

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/inspect"
)

func TestDuration(t *testing.T) {
	for _, tc := range []struct {
		years float64
		want  string
	}{
		{1, "1 year"}, {2, "2 years"}, {0.5, "6 months"}, {0.25, "3 months"}, {1.5, "18 months"},
		{1.0 / 12, "1 month"}, {3.0 / 12, "3 months"}, {2.0 / 52, "2 weeks"}, {1.0 / 365.25, "1.0 days"},
	} {
		if got := Duration(tc.years); got != tc.want {
			t.Errorf("Duration(%g) = %q, want %q", tc.years, got, tc.want)
		}
	}
}

// inspectionView solves a small invented class (a half-yearly unit with a
// hidden failure) and wraps it.
func inspectionView(t *testing.T) *InspectionAdvice {
	t.Helper()
	m := &condition.Model{PeriodYears: 0.5,
		States: []condition.State{{Name: "good"}, {Name: "cracked", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 0.9}, {To: 1, P: 0.1}}, nil}},
			{Name: "repair", Rows: [][]condition.Entry{{{To: 0, P: 1}}, {{To: 0, P: 1}}}},
		}}
	c := &costs.Schedule{Currency: "EUR", Running: []float64{10, 10}, Action: [][]float64{{0, 0}, {300, 300}}}
	pl := &inspect.Plan{Cost: 40, Intervals: []int{1, 2, 4, 8}, Hidden: []int{1}, RiskCost: []float64{0, 500}, MaxIntervalYears: 2}
	ctx := context.Background()
	p, err := inspect.Build(ctx, m, c, 0.98, pl)
	if err != nil {
		t.Fatal(err)
	}
	r, err := inspect.Solve(ctx, p, nil)
	if err != nil {
		t.Fatal(err)
	}
	fixed, err := inspect.FixedIntervals(ctx, p, r, nil)
	if err != nil {
		t.Fatal(err)
	}
	lr, err := p.LongRun(r.Policy)
	if err != nil {
		t.Fatal(err)
	}
	period, _ := costs.NewPeriod(0.5)
	disc, _ := costs.Factor(0.98, period)
	return &InspectionAdvice{Header: Header{Model: "test", Currency: "EUR", Period: period, Discount: disc,
		States: p.States, Unsafe: p.Unsafe}, Plan: pl, Problem: p, Result: r, Fixed: fixed,
		FixedLongRun: make([]*inspect.LongRun, len(fixed)), LongRun: lr}
}

// The brief's page carries the statutory rule first, the limit and its
// excluded interval, one advice row per condition and one fixed-interval
// row per admissible interval (plus the advice's own).
func TestLookAgain(t *testing.T) {
	v := inspectionView(t)
	pg := v.LookAgain()
	if pg.Title != "When to look again" || len(pg.Paragraphs) < 2 || pg.Paragraphs[0] != InspectionRule {
		t.Fatalf("LookAgain: title %q, paragraphs %q", pg.Title, pg.Paragraphs)
	}
	if !strings.Contains(pg.Paragraphs[1], "not admissible here: 4 years (8 periods)") {
		t.Errorf("LookAgain: limit paragraph %q lacks the excluded interval", pg.Paragraphs[1])
	}
	if len(pg.Tables) != 2 || len(pg.Tables[0].Rows) != 2 || len(pg.Tables[1].Rows) != 1+len(v.Problem.Intervals) {
		t.Fatalf("LookAgain: tables %+v", pg.Tables)
	}
	for _, tb := range pg.Tables {
		for _, row := range tb.Rows {
			if len(row) != len(tb.Header) || len(tb.Numeric) != len(tb.Header) {
				t.Errorf("LookAgain: table %q: row %q, header %q, numeric %v of different lengths", tb.Caption, row, tb.Header, tb.Numeric)
			}
		}
	}
	if got := pg.Tables[0].Rows[1][1]; !strings.HasPrefix(got, "repair, then inspect again in ") {
		t.Errorf("LookAgain: advice in the unsafe state %q, want repair", got)
	}
}

// Margin and the unsafe-at-inspection share can be NaN; JSON says null.
func TestInspectionJSONNull(t *testing.T) {
	v := inspectionView(t)
	v.LongRun.UnsafeAtInspection = math.NaN()
	var b bytes.Buffer
	if err := v.WriteJSON(&b); err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal(b.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	if lr := doc["long_run"].(map[string]any); lr["unsafe_at_inspection"] != nil {
		t.Errorf("unsafe_at_inspection = %v, want null", lr["unsafe_at_inspection"])
	}
}
