package reports

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"
)

func testDoc(t *testing.T) *doc {
	t.Helper()
	d, err := newDocWith("test", "fixpoint test brief  ·  model  ·  2026-12-01", Imprint{Date: time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)})
	if err != nil {
		t.Fatal(err)
	}
	d.pdf.AddPage()
	d.font("", smallSize, ink)
	return d
}

// Lines never exceed their width; numbers never break; a word too long
// for the line breaks after "_" or with a hyphen, never silently.
func TestWrap(t *testing.T) {
	d := testDoc(t)
	for _, tc := range []struct {
		name, text string
		width      float64
		want       []string
	}{
		{"number stays whole", "cost 38,647,410.54 EUR", 14, []string{"cost", "38,647,410.54", "EUR"}},
		{"percent stays whole", "12.00% real", 12, []string{"12.00%", "real"}},
		{"underscore break", "surface_corrosion_with_pitting", 25, []string{"surface_corrosion_", "with_pitting"}},
		{"hyphenated", "Instandsetzungsmaßnahmenüberprüfung", 25, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := d.wrap(tc.text, tc.width)
			if tc.want != nil && strings.Join(got, "|") != strings.Join(tc.want, "|") {
				t.Errorf("wrap(%q, %g) = %q, want %q", tc.text, tc.width, got, tc.want)
			}
			joined := ""
			for i, l := range got {
				if w := d.width(l); w > tc.width+1e-9 && !isNumber(l) {
					t.Errorf("wrap(%q): line %q is %.2f mm wide, over %g", tc.text, l, w, tc.width)
				}
				if i < len(got)-1 && !strings.HasSuffix(l, "-") && !strings.HasSuffix(l, "_") && tc.want == nil && !wide([]rune(l)[len([]rune(l))-1]) {
					t.Errorf("wrap(%q): line %q breaks mid-word without a hyphen", tc.text, l)
				}
				joined += strings.TrimSuffix(l, "-")
			}
			if tc.want == nil && joined != tc.text {
				t.Errorf("wrap(%q) lost text: %q", tc.text, got)
			}
		})
	}
}

// The running header shortens the model, never the date.
func TestFitHeader(t *testing.T) {
	d := testDoc(t)
	model := strings.Repeat("Kestrel Valley trunk main chambers ", 3)
	h := d.fitHeader("fixpoint maintenance policy brief  ·  "+model+"  ·  2026-12-01", contentW)
	if !strings.HasSuffix(h, "  ·  2026-12-01") || !strings.Contains(h, "…") {
		t.Errorf("fitHeader = %q, want the model shortened and the date whole", h)
	}
	if w := d.width(h); w > contentW {
		t.Errorf("fitHeader: %.1f mm wide, over %.1f", w, contentW)
	}
}

// Ticks are multiples of the step, none printed as "-0", with the
// decimals the step needs.
func TestTicks(t *testing.T) {
	for _, tc := range []struct {
		base, top, step float64
		want            string
	}{
		{-1e-17, 1, 0.2, "0.0 0.2 0.4 0.6 0.8 1.0"},
		{60, 70, 2.5, "60.0 62.5 65.0 67.5 70.0"},
		{0, 2e9, 5e8, "0 500,000,000 1,000,000,000 1,500,000,000 2,000,000,000"},
		{-0.5, 0.5, 0.25, "-0.50 -0.25 0.00 0.25 0.50"},
	} {
		var got []string
		for _, v := range ticks(tc.base, tc.top, tc.step) {
			got = append(got, tickLabel(func(v float64) string { return Money(v, 0) }, v, tc.step))
		}
		if s := strings.Join(got, " "); s != tc.want {
			t.Errorf("ticks(%g, %g, %g) = %s, want %s", tc.base, tc.top, tc.step, s, tc.want)
		}
	}
}

func TestDecimalsFor(t *testing.T) {
	for _, tc := range []struct {
		step float64
		want int
	}{{20, 0}, {1, 0}, {2.5, 1}, {0.25, 2}, {0.2, 1}, {0.05, 2}, {2.5e-3, 4}} {
		if got := decimalsFor(tc.step); got != tc.want {
			t.Errorf("decimalsFor(%g) = %d, want %d", tc.step, got, tc.want)
		}
	}
}

// Every tint is at least 15% grey, and neighbours of each palette differ
// by at least 5 in CIE lightness L* up to 12 colours (common practice, no
// source: about the smallest step a greyscale office print keeps apart).
func TestPalettesPrintable(t *testing.T) {
	if g := greyShare(rgb{217, 217, 217}); math.Abs(g-0.149) > 0.002 {
		t.Errorf("greyShare(217 grey) = %.4f, want 0.149 (tol 0.002)", g)
	}
	for name, anchors := range map[string][]rgb{"state": stateRamp, "action": actionRamp} {
		for n := 2; n <= 12; n++ {
			cols := ramp(anchors, n)
			for i, c := range cols {
				if g := greyShare(c); g < 0.15-1e-3 {
					t.Errorf("%s ramp of %d: colour %d %v is %.1f%% grey, lighter than 15%%", name, n, i, c, 100*g)
				}
				if i > 0 {
					if dl := lightness(cols[i-1]) - lightness(c); dl < 5 {
						t.Errorf("%s ramp of %d: colours %d and %d differ by %.2f in L*, want >= 5", name, n, i-1, i, dl)
					}
				}
			}
		}
	}
	if g := greyShare(rgb{tableHeadShade, tableHeadShade, tableHeadShade}); g < 0.15-1e-3 {
		t.Errorf("table header shade is %.1f%% grey", 100*g)
	}
}

// Decimal columns put every decimal point at the same x.
func TestDecimalColumn(t *testing.T) {
	d := testDoc(t)
	tb := pdfTable{header: []string{"to", "p"}, decimal: []bool{false, true},
		rows: [][]string{{"a", "0.825"}, {"b", "0.14"}, {"c", "0"}, {"d", "1"}}}
	d.table(tb)
	var points []float64
	d.font("", smallSize, ink)
	for _, p := range d.placed {
		for _, r := range tb.rows {
			if p.text == r[1] {
				whole, _, _ := strings.Cut(p.text, ".")
				points = append(points, p.x+d.width(whole))
			}
		}
	}
	if len(points) != 4 {
		t.Fatalf("found %d probabilities drawn, want 4", len(points))
	}
	for i, x := range points {
		if math.Abs(x-points[0]) > 1e-6 {
			t.Errorf("decimal point of row %d at %.3f mm, row 0 at %.3f (tol 1e-6)", i, x, points[0])
		}
	}
}

// A column grows to fit its widest number; more columns than fit go to
// further parts with the first column repeated.
func TestTableColumns(t *testing.T) {
	d := testDoc(t)
	wide := pdfTable{header: []string{"condition"}, keep: 1}
	row := []string{"worn"}
	for range 14 {
		wide.header = append(wide.header, "rate")
		wide.right = append(wide.right, false)
		row = append(row, "12,345,678,901")
	}
	wide.right = append([]bool{false}, slicesRepeat(true, 14)...)
	wide.rows = [][]string{row}
	groups := d.layoutColumns(&wide)
	if len(groups) < 2 {
		t.Fatalf("14 wide number columns in %d part(s), want several", len(groups))
	}
	for _, g := range groups {
		if g[0] != 0 {
			t.Errorf("part %v does not repeat the first column", g)
		}
		w := widthsOf(&wide, g)
		total := 0.0
		for k, c := range g {
			total += w[k]
			if w[k] < d.width(row[c])+2*cellPad-1e-9 {
				t.Errorf("column %d is %.2f mm, narrower than its number", c, w[k])
			}
		}
		if total > contentW+1e-6 {
			t.Errorf("part %v is %.1f mm wide, over %.1f", g, total, contentW)
		}
	}
}

func slicesRepeat(v bool, n int) []bool {
	out := make([]bool, n)
	for i := range out {
		out[i] = v
	}
	return out
}

// A character no font prints is refused with the field it is in.
func TestGlyphCheck(t *testing.T) {
	fs, err := newFontSet(nil)
	if err != nil {
		t.Fatal(err)
	}
	err = fs.check([]TextField{{"name", "Пример Größe — €"}, {"states[2].name", "磨损 worn"}, {"actions[0].name", "ok\xff"}})
	var ge *GlyphError
	if !errors.As(err, &ge) || len(ge.Faults) != 2 {
		t.Fatalf("check: %v, want two faults", err)
	}
	if f := ge.Faults[0]; f.Field != "states[2].name" || string(f.Chars) != "磨损" {
		t.Errorf("fault 0 = %+v", f)
	}
	if f := ge.Faults[1]; f.Field != "actions[0].name" || string(f.Chars) != "\uFFFD" {
		t.Errorf("fault 1 = %+v", f)
	}
	if !strings.Contains(err.Error(), `"磨" (U+78E8)`) {
		t.Errorf("message %q lacks the character and its code point", err)
	}
}

// The language is set in the catalog and the cross-reference offset
// still points at the xref table.
func TestWithLang(t *testing.T) {
	d := testDoc(t)
	d.put(marginX, 40, 4, "text")
	var buf bytes.Buffer
	if err := d.output(&buf); err != nil {
		t.Fatal(err)
	}
	out := buf.Bytes()
	if !bytes.Contains(out, []byte("/Type /Catalog\n/Lang (en-GB)")) {
		t.Error("no /Lang in the catalog")
	}
	i := bytes.LastIndex(out, []byte("startxref\n"))
	var off int
	if _, err := fmtSscan(string(out[i+len("startxref\n"):]), &off); err != nil {
		t.Fatal(err)
	}
	if !bytes.HasPrefix(out[off:], []byte("xref")) {
		t.Errorf("startxref %d does not point at the xref table", off)
	}
}

func TestMinorUnit(t *testing.T) {
	// ISO 4217 minor units (from memory).
	for code, want := range map[string]int{"JPY": 0, "KRW": 0, "EUR": 2, "GBP": 2, "KWD": 3, "CLF": 4, "€": 2, "XYZ": 2, "jpy": 0} {
		if got := MinorUnit(code); got != want {
			t.Errorf("MinorUnit(%q) = %d, want %d", code, got, want)
		}
	}
	h := Header{Currency: "JPY"}
	if got := h.moneyBound(2.2e-9); got != "1" {
		t.Errorf("moneyBound(2.2e-9 JPY) = %q, want 1", got)
	}
	h.Currency = "EUR"
	if got := h.moneyBound(0.0123); got != "0.02" {
		t.Errorf("moneyBound(0.0123 EUR) = %q, want 0.02", got)
	}
}

// Chart titles wrap whole, never cut.
func TestChartTitleWraps(t *testing.T) {
	d := testDoc(t)
	title := "Survival over the same 20 years: probability that one unit starting surface_corrosion_with_pitting_grade_00_kes has not yet reached coating intact minor blistering grade 11 noted"
	c := d.measureChart(contentW, 40, title, nil)
	if len(c.title) < 2 || strings.Join(c.title, " ") != title {
		t.Errorf("title lines %q do not hold the whole title", c.title)
	}
}

func fmtSscan(s string, v *int) (int, error) { return fmt.Sscan(s, v) }
