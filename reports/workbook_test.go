package reports

import (
	"archive/zip"
	"bytes"
	"context"
	"fmt"
	"io"
	"maps"
	"math"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"

	"github.com/xuri/excelize/v2"
)

// smallAdvice solves an invented three-state class with the given names
// and currency and wraps it with its life figures.
func smallAdvice(t *testing.T, model, currency string, states, actions []string) *Advice {
	t.Helper()
	m := &condition.Model{
		PeriodYears: 1,
		States:      []condition.State{{Name: states[0]}, {Name: states[1]}, {Name: states[2], Unsafe: true}},
		Actions: []condition.Action{
			{Name: actions[0], Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 0.8}, {To: 1, P: 0.2}}, {{To: 1, P: 0.7}, {To: 2, P: 0.3}}, nil}},
			{Name: actions[1], Rows: [][]condition.Entry{{{To: 0, P: 1}}, {{To: 0, P: 1}}, {{To: 0, P: 1}}}},
		},
	}
	c := &costs.Schedule{Currency: currency, Running: []float64{10, 40, 900}, Action: [][]float64{{0, 0, 0}, {500, 500, 1200.5}}}
	period, err := costs.NewPeriod(1)
	if err != nil {
		t.Fatal(err)
	}
	d, err := costs.Rate(0.04, period)
	if err != nil {
		t.Fatal(err)
	}
	p, err := optimize.Build(m, c, d.Factor())
	if err != nil {
		t.Fatal(err)
	}
	r, err := optimize.Solve(context.Background(), p, nil)
	if err != nil {
		t.Fatal(err)
	}
	l, err := optimize.LifeFigures(m, c, r, d, optimize.WorstTarget(3), 40)
	if err != nil {
		t.Fatal(err)
	}
	h := Header{Model: model, Currency: currency, Period: period, Discount: d, States: states, Unsafe: []bool{false, false, true},
		Source: "invented.yaml", SHA256: strings.Repeat("0", 64), Version: "test"}
	return &Advice{Header: h, Passive: 0, Problem: p, Result: r, Life: l}
}

// xlsxBytes writes the workbook of a view.
func xlsxBytes(t *testing.T, a interface{ WriteXLSX(io.Writer) error }) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := a.WriteXLSX(&buf); err != nil {
		t.Fatalf("WriteXLSX: %v", err)
	}
	return buf.Bytes()
}

func openXLSX(t *testing.T, b []byte) *excelize.File {
	t.Helper()
	f, err := excelize.OpenReader(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("excelize.OpenReader: %v", err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

// Amounts are shown with the minor unit of ISO 4217 list one (from
// memory: JPY and KRW 0 decimals, EUR and USD 2, KWD and BHD 3, CLF 4);
// text that is not a code gets 2.
func TestCurrencyDecimals(t *testing.T) {
	tests := []struct {
		code   string
		want   int
		format string
	}{
		{"JPY", 0, "#,##0"}, {"KRW", 0, "#,##0"}, {"EUR", 2, "#,##0.00"}, {"USD", 2, "#,##0.00"},
		{"KWD", 3, "#,##0.000"}, {"BHD", 3, "#,##0.000"}, {"CLF", 4, "#,##0.0000"},
		{"€", 2, "#,##0.00"}, {"XYZ", 2, "#,##0.00"}, {"", 2, "#,##0.00"}, {"jpy", 0, "#,##0"},
	}
	for _, tc := range tests {
		t.Run(tc.code, func(t *testing.T) {
			if got := MinorUnit(tc.code); got != tc.want {
				t.Errorf("MinorUnit(%q) = %d, want %d", tc.code, got, tc.want)
			}
			// The workbook's money cells carry that format.
			a := smallAdvice(t, "Invented pumps", tc.code, []string{"good", "worn", "failed"}, []string{"leave", "renew"})
			f := openXLSX(t, xlsxBytes(t, a))
			id, err := f.GetCellStyle("Advice", "D4")
			if err != nil {
				t.Fatal(err)
			}
			st, err := f.GetStyle(id)
			if err != nil {
				t.Fatal(err)
			}
			if st.CustomNumFmt == nil || *st.CustomNumFmt != tc.format {
				t.Errorf("currency %q: Advice!D4 number format %v, want %q", tc.code, st.CustomNumFmt, tc.format)
			}
		})
	}
}

// Names from a config reach the workbook as text, never as formulas,
// whatever their first character (OWASP, "CSV Injection", names the
// characters a spreadsheet starts a formula with).
func TestWorkbookTextIsNotFormula(t *testing.T) {
	model := `=HYPERLINK("http://example.invalid","open me")`
	states := []string{"+1", "-2+3", "@SUM(A1)"}
	actions := []string{"=1+1", "\tcmd"}
	b := xlsxBytes(t, smallAdvice(t, model, "EUR", states, actions))
	f := openXLSX(t, b)
	cells := map[string]string{"A2": model + ": advice per condition (present value of expected costs, EUR)",
		"A4": states[0], "A5": states[1], "A6": states[2], "C4": actions[0]}
	for ref, want := range cells {
		got, err := f.GetCellValue("Advice", ref)
		if err != nil {
			t.Fatal(err)
		}
		if got != want {
			t.Errorf("Advice!%s = %q, want %q", ref, got, want)
		}
		if formula, _ := f.GetCellFormula("Advice", ref); formula != "" {
			t.Errorf("Advice!%s has formula %q, want none", ref, formula)
		}
		if typ, _ := f.GetCellType("Advice", ref); typ != excelize.CellTypeSharedString && typ != excelize.CellTypeInlineString {
			t.Errorf("Advice!%s has cell type %v, want a string", ref, typ)
		}
	}
	// No sheet of the package holds a formula element at all.
	entries := zipEntries(t, b)
	for _, name := range slices.Sorted(maps.Keys(entries)) {
		if data := entries[name]; strings.HasPrefix(name, "xl/worksheets/") && (strings.Contains(data, "<f>") || strings.Contains(data, "<f ")) {
			t.Errorf("%s holds a formula element", name)
		}
	}
}

// zipEntries returns the entries of a workbook's archive by name.
func zipEntries(t *testing.T, b []byte) map[string]string {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]string{}
	for _, zf := range zr.File {
		rc, err := zf.Open()
		if err != nil {
			t.Fatal(err)
		}
		data, err := io.ReadAll(rc)
		rc.Close()
		if err != nil {
			t.Fatal(err)
		}
		out[zf.Name] = string(data)
	}
	return out
}

// Every sheet starts with the caution and freezes the rows above its
// data; the Assumptions sheet carries the caution and the model limits.
func TestWorkbookCautionOnEverySheet(t *testing.T) {
	f := openXLSX(t, xlsxBytes(t, smallAdvice(t, "Invented pumps", "EUR", []string{"good", "worn", "failed"}, []string{"leave", "renew"})))
	want := []string{"Advice", "Summary", "Life", "Survival", "Assumptions"}
	if got := f.GetSheetList(); strings.Join(got, "|") != strings.Join(want, "|") {
		t.Fatalf("sheets %q, want %q", got, want)
	}
	for _, name := range want {
		got, _ := f.GetCellValue(name, "A1")
		if got != "CAUTION: "+Caution {
			t.Errorf("%s!A1 = %q, want the caution", name, got)
		}
		panes, err := f.GetPanes(name)
		if err != nil {
			t.Fatal(err)
		}
		if !panes.Freeze || panes.YSplit != headRow || panes.TopLeftCell != "A4" {
			t.Errorf("%s: panes %+v, want frozen above A4", name, panes)
		}
	}
	rows, err := f.GetRows("Assumptions")
	if err != nil {
		t.Fatal(err)
	}
	facts := map[string]string{}
	for _, r := range rows[headRow:] {
		if len(r) >= 2 {
			facts[r[0]] = r[1]
		}
	}
	for item, want := range map[string]string{"caution": Caution, "model limits": ModelLimits, "config SHA-256": strings.Repeat("0", 64),
		"fixpoint version": "test", "config file": "invented.yaml", "certificate": "certified"} {
		if !strings.HasPrefix(facts[item], want) {
			t.Errorf("Assumptions %q = %q, want %q", item, facts[item], want)
		}
	}
}

// The same view gives the same bytes: twice in a row, and with one or
// four threads.
func TestWorkbookDeterministic(t *testing.T) {
	a := smallAdvice(t, "Invented pumps", "EUR", []string{"good", "worn", "failed"}, []string{"leave", "renew"})
	first := xlsxBytes(t, a)
	if again := xlsxBytes(t, a); !bytes.Equal(first, again) {
		t.Errorf("two writes differ (%d and %d bytes)", len(first), len(again))
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, procs := range []int{1, 4} {
		runtime.GOMAXPROCS(procs)
		if got := xlsxBytes(t, a); !bytes.Equal(first, got) {
			t.Errorf("GOMAXPROCS %d: workbook differs from the first write", procs)
		}
	}
	// The document properties carry the fixed date, not today's.
	props, err := openXLSX(t, first).GetDocProps()
	if err != nil {
		t.Fatal(err)
	}
	if props.Created != workbookDate || props.Modified != workbookDate || props.Creator != "fixpoint" {
		t.Errorf("document properties %+v, want created and modified %s by fixpoint", props, workbookDate)
	}
}

// Numbers that are not finite are text, since a spreadsheet number cannot
// be NaN or infinite; finite numbers read back within 15 significant
// digits (what excelize writes, and what a spreadsheet keeps).
func TestWorkbookNumbers(t *testing.T) {
	b := newWorkbook(&Header{Model: "Invented", Currency: "EUR"}, "test")
	s := b.sheet("Numbers", "numbers", column{"x", numberCell}, column{"y", moneyCell})
	xs := []float64{1.0 / 3, -2.5e-9, 123456789.123456789, 0}
	for _, x := range xs {
		s.add(x, x)
	}
	s.add(nan(), inf())
	var buf bytes.Buffer
	if err := b.write(&buf); err != nil {
		t.Fatal(err)
	}
	f := openXLSX(t, buf.Bytes())
	for i, x := range xs {
		for _, col := range []string{"A", "B"} {
			ref := col + string(rune('4'+i))
			typ, _ := f.GetCellType("Numbers", ref)
			if typ != excelize.CellTypeNumber && typ != excelize.CellTypeUnset {
				t.Errorf("Numbers!%s: type %v, want a number", ref, typ)
			}
			got, _ := f.GetCellValue("Numbers", ref, excelize.Options{RawCellValue: true})
			if !near(got, x, 1e-14) {
				t.Errorf("Numbers!%s = %s, want %g (rel tol 1e-14)", ref, got, x)
			}
		}
	}
	for _, ref := range []string{"A8", "B8"} {
		if got, _ := f.GetCellValue("Numbers", ref); got != "n/a" {
			t.Errorf("Numbers!%s = %q, want n/a", ref, got)
		}
	}
}

func nan() float64 { return math.NaN() }
func inf() float64 { return math.Inf(1) }

// near reports whether the cell text s is the number x within relative
// tolerance tol.
func near(s string, x, tol float64) bool {
	got, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return false
	}
	return math.Abs(got-x) <= tol*math.Abs(x)
}

// BenchmarkWorkbook writes the advice workbook of a small class, and
// sheets of n rows of 13 cells (the shape of a joint table of three
// components), to size maxJointRows.
func BenchmarkWorkbook(b *testing.B) {
	t := &testing.T{}
	a := smallAdvice(t, "Invented pumps", "EUR", []string{"good", "worn", "failed"}, []string{"leave", "renew"})
	b.Run("advice", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if err := a.WriteXLSX(io.Discard); err != nil {
				b.Fatal(err)
			}
		}
	})
	for _, n := range []int{1000, maxJointRows} {
		b.Run(fmt.Sprintf("rows=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				wb := newWorkbook(&Header{Model: "Invented", Currency: "EUR"}, "rows")
				cols := make([]column, 13)
				for i := range cols {
					cols[i] = column{fmt.Sprintf("c%d", i), moneyCell}
				}
				for i := range 8 {
					cols[i].kind = textCell
				}
				s := wb.sheet("Rows", "rows", cols...)
				for r := range n {
					s.add("a=good,b=worn,c=fair", "good", "worn", "fair", "a=leave,b=renew,c=leave", "leave", "renew", "leave",
						float64(r)*1.5, float64(r)*1.4, float64(r)*1.6, "a=renew,b=renew,c=leave", 12.5)
				}
				if err := wb.write(io.Discard); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(n)*13/float64(b.Elapsed().Seconds())*float64(b.N), "cells/s")
		})
	}
}
