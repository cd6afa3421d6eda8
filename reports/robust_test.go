package reports

import (
	"bytes"
	"context"
	"encoding/json"
	"strings"
	"testing"

	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/optimize/robust"
)

// tinyProblem is a three-state class written by hand: leave or replace.
func tinyProblem() *optimize.Problem {
	leave := func(cost float64, next ...condition.Entry) optimize.Choice {
		return optimize.Choice{Action: 0, Cost: cost, Next: next}
	}
	replace := func(cost float64) optimize.Choice {
		return optimize.Choice{Action: 1, Cost: cost, Next: []condition.Entry{{To: 0, P: 1}}}
	}
	return &optimize.Problem{
		States: []string{"good", "worn", "failed"}, Actions: []string{"leave", "replace"}, Discount: 0.9,
		Choices: [][]optimize.Choice{
			{leave(0, condition.Entry{To: 0, P: 0.8}, condition.Entry{To: 1, P: 0.2}), replace(100)},
			{leave(10, condition.Entry{To: 1, P: 0.6}, condition.Entry{To: 2, P: 0.4}), replace(100)},
			{replace(200)},
		},
	}
}

func robustView(t *testing.T, sets func(p *optimize.Problem) (*robust.Sets, error)) *RobustAdvice {
	t.Helper()
	p := tinyProblem()
	s, err := sets(p)
	if err != nil {
		t.Fatal(err)
	}
	a, err := robust.Analyze(context.Background(), p, s, nil)
	if err != nil {
		t.Fatal(err)
	}
	return &RobustAdvice{Header: Header{Model: "tiny", Currency: "EUR", States: p.States, Unsafe: []bool{false, false, true}},
		Problem: p, Analysis: a}
}

// The brief page carries the statement, one advice row per condition and
// the settle ranking; every output carries the statement.
func TestRobustPage(t *testing.T) {
	v := robustView(t, func(p *optimize.Problem) (*robust.Sets, error) { return robust.Uniform(p, robust.L1, 0.3, nil) })
	pg := v.Page()
	if pg.Title == "" || len(pg.Intro) < 2 || pg.Intro[1] != strings.ReplaceAll(v.Analysis.Sets.Statement, "‖", "||") {
		t.Errorf("page intro %q, want the sets' statement second", pg.Intro)
	}
	if len(pg.Advice.Rows) != 3 || len(pg.Advice.Header) != len(pg.Advice.Numeric) || len(pg.Advice.Rows[0]) != len(pg.Advice.Header) {
		t.Errorf("advice table: %d rows, header %v, right %v", len(pg.Advice.Rows), pg.Advice.Header, pg.Advice.Numeric)
	}
	if n := len(v.Analysis.Settle); n == 0 || len(pg.Settle.Rows) != min(n, settleShown) || pg.SettleIntro == "" {
		t.Errorf("settle: %d rows for %d gains, intro %q", len(pg.Settle.Rows), n, pg.SettleIntro)
	}
	for _, write := range []func(*bytes.Buffer) error{
		func(b *bytes.Buffer) error { return v.WriteTable(b) },
		func(b *bytes.Buffer) error { return v.WriteJSON(b) },
		func(b *bytes.Buffer) error { return v.WriteCSV(b) },
	} {
		var b bytes.Buffer
		if err := write(&b); err != nil {
			t.Fatal(err)
		}
		flat := strings.Join(strings.Fields(b.String()), " ")
		if !strings.Contains(flat, "within L1 distance 0.3 of the model's row") || !strings.Contains(flat, "Advisory only") {
			t.Errorf("output lacks the statement or the caution:\n%s", b.String())
		}
	}
}

// Rows without records under KL sets have radius +Inf; the JSON says
// so with a null radius and whole_simplex, and still encodes.
func TestRobustJSONWholeSimplex(t *testing.T) {
	v := robustView(t, func(p *optimize.Problem) (*robust.Sets, error) {
		return robust.FromCounts(p, robust.KL, 0.9, [][]int{nil, nil}, nil)
	})
	var b bytes.Buffer
	if err := v.WriteJSON(&b); err != nil {
		t.Fatalf("WriteJSON: %v", err)
	}
	var doc struct {
		Sets []struct {
			State, Action string
			Radius        *float64 `json:"radius"`
			WholeSimplex  bool     `json:"whole_simplex"`
		} `json:"sets"`
	}
	if err := json.Unmarshal(b.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	for _, s := range doc.Sets {
		multi := s.Action == "leave"
		if multi && (s.Radius != nil || !s.WholeSimplex) {
			t.Errorf("%s in %s: radius %v, whole simplex %v; want null and true", s.Action, s.State, s.Radius, s.WholeSimplex)
		}
		if !multi && (s.Radius == nil || *s.Radius != 0 || s.WholeSimplex) {
			t.Errorf("%s in %s (one next state): radius %v, whole simplex %v; want 0 and false", s.Action, s.State, s.Radius, s.WholeSimplex)
		}
	}
	var c bytes.Buffer
	if err := v.WriteCSV(&c); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(c.String(), "Inf") || strings.Contains(c.String(), "NaN") {
		t.Errorf("CSV prints a non-finite number:\n%s", c.String())
	}
}
