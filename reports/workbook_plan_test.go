package reports

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// chartXML returns the XML of every chart of a workbook, in the order
// they were added (xl/charts/chart1.xml, chart2.xml, ...).
func chartXML(t *testing.T, b []byte) []string {
	t.Helper()
	entries := zipEntries(t, b)
	var out []string
	for i := 1; ; i++ {
		data, ok := entries[fmt.Sprintf("xl/charts/chart%d.xml", i)]
		if !ok {
			return out
		}
		out = append(out, data)
	}
}

// The chart of the planned spend draws the budget as a marked line over
// the columns (the line part after the bar part, so drawn on top), on the
// same axes, reading the budget column; the chart of the practice draws
// the budget first, under the thinner lines that meet it.
func TestPlanWorkbookCharts(t *testing.T) {
	r := planReport(t, testFleet(t, 1, []float64{30, 15, 5}, 20000, 5), true)
	charts := chartXML(t, xlsxBytes(t, r))
	if len(charts) != 4 {
		t.Fatalf("%d charts, want 4 (spend against the budget, practice bands, units deferred, condition mix)", len(charts))
	}
	spend := charts[0]
	bar, line := strings.Index(spend, "<barChart>"), strings.Index(spend, "<lineChart>")
	if bar < 0 || line < bar {
		t.Fatalf("spend chart: bar part at %d, line part at %d; want the line after the bars", bar, line)
	}
	axes := regexp.MustCompile(`<axId val="(\d+)"`)
	barAxes, lineAxes := axes.FindAllStringSubmatch(spend[bar:line], -1), axes.FindAllStringSubmatch(spend[line:], -1)
	if len(barAxes) != 2 || len(lineAxes) < 2 || barAxes[0][1] != lineAxes[0][1] || barAxes[1][1] != lineAxes[1][1] {
		t.Errorf("spend chart: bar axes %v, line axes %v; want the same two", barAxes, lineAxes)
	}
	budget := "<f>&#39;By year&#39;!$B$4:$B$8</f>"
	if !strings.Contains(spend[line:], budget) || !strings.Contains(spend[line:], `<symbol val="square">`) {
		t.Errorf("spend chart: the line part does not read the budget %s with square markers", budget)
	}
	bands := charts[1]
	first := strings.Index(bands, "<ser>")
	if first < 0 || !strings.HasPrefix(bands[first:], "<ser><idx val=\"0\"></idx><order val=\"0\"></order><tx><strRef><f>&#39;By year&#39;!$B$3</f>") {
		end := min(len(bands), max(first, 0)+160)
		t.Errorf("practice chart: first series %q, want the budget ('By year'!$B$3)", bands[max(first, 0):end])
	}
	// The condition mix: the class's three conditions stacked, read from
	// the Condition mix sheet, on a share axis from 0 to 1.
	if deferred := charts[2]; !strings.Contains(deferred, "<f>&#39;By period&#39;!$D$4:$D$8</f>") {
		t.Errorf("deferred chart: it does not read the units deferred ('By period'!$D$4:$D$8)")
	}
	mix := charts[3]
	for _, want := range []string{`<grouping val="stacked">`, "<f>&#39;Condition mix&#39;!$B$4:$B$8</f>", "<f>&#39;Condition mix&#39;!$D$4:$D$8</f>",
		`<max val="1">`, `<min val="0">`, `formatCode="0%"`} {
		if !strings.Contains(mix, want) {
			t.Errorf("condition mix chart: no %s", want)
		}
	}
	if n := strings.Count(mix, "<ser>"); n != 3 {
		t.Errorf("condition mix chart: %d series, want 3 (one per condition)", n)
	}
}

// A marked cell is bold on the tint, text or number; its neighbours are
// not.
func TestWorkbookMarkedCell(t *testing.T) {
	b := newWorkbook(&Header{Model: "Invented", Currency: "EUR"}, "test")
	s := b.sheet("Marks", "marks", column{"x", moneyCell}, column{"y", textCell})
	s.add(marked{1.5}, "plain")
	s.add(2.5, marked{"changed"})
	var buf bytes.Buffer
	if err := b.write(&buf); err != nil {
		t.Fatal(err)
	}
	f := openXLSX(t, buf.Bytes())
	for _, tc := range []struct {
		ref  string
		want bool
	}{{"A4", true}, {"B4", false}, {"A5", false}, {"B5", true}} {
		id, err := f.GetCellStyle("Marks", tc.ref)
		if err != nil {
			t.Fatal(err)
		}
		st, err := f.GetStyle(id)
		if err != nil {
			t.Fatal(err)
		}
		got := st.Font != nil && st.Font.Bold && len(st.Fill.Color) == 1 && st.Fill.Color[0] == markTint
		if got != tc.want {
			t.Errorf("Marks!%s: marked %v, want %v (style %+v)", tc.ref, got, tc.want, st)
		}
	}
}

// With periods of two years every other year starts no period: its rule
// says so, it has no budget price and no periods.
func TestPlanWorkbookIdleYears(t *testing.T) {
	r := planReport(t, testFleet(t, 2, []float64{30, 15, 5}, 40000, 6), false)
	f := openXLSX(t, xlsxBytes(t, r))
	for _, tc := range []struct{ ref, want string }{
		{"C4", "within budget"}, {"D4", "1"}, {"C5", "no period starts"}, {"D5", "none"}, {"G5", "-"}, {"D6", "2"},
	} {
		if got, _ := f.GetCellValue("By year", tc.ref); got != tc.want {
			t.Errorf("By year!%s = %q, want %q", tc.ref, got, tc.want)
		}
	}
	// A year that starts no period shows the mix of the period it lies in;
	// the shares of a year sum to 1.
	for _, col := range []string{"B", "C", "D"} {
		y1, _ := f.GetCellValue("Condition mix", col+"4", excelize.Options{RawCellValue: true})
		y2, _ := f.GetCellValue("Condition mix", col+"5", excelize.Options{RawCellValue: true})
		if y1 == "" || y1 != y2 {
			t.Errorf("Condition mix!%s5 = %q, want year 1's %q (year 2 lies in period 1)", col, y2, y1)
		}
	}
	sum := 0.0
	for _, col := range []string{"B", "C", "D"} {
		v, _ := f.GetCellValue("Condition mix", col+"6", excelize.Options{RawCellValue: true})
		x, err := strconv.ParseFloat(v, 64)
		if err != nil {
			t.Fatalf("Condition mix!%s6 = %q: %v", col, v, err)
		}
		sum += x
	}
	if math.Abs(sum-1) > 1e-12 {
		t.Errorf("Condition mix: year 3's shares sum to %.15g, want 1", sum)
	}
	rows, err := f.GetRows("By period")
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(rows[headRow-1][:3], "|"); got != "period|year|starts (years)" {
		t.Errorf("By period headings %q, want period|year|starts (years)", got)
	}
}

// BenchmarkPlanWorkbook writes the workbook of a plan of one invented
// class over 10 and 40 years, with its simulated practice.
func BenchmarkPlanWorkbook(b *testing.B) {
	for _, years := range []int{10, 40} {
		r := planReport(b, testFleet(b, 1, []float64{300, 150, 50}, 200000, years), true)
		b.Run(fmt.Sprintf("years=%d", years), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if err := r.WriteXLSX(io.Discard); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
